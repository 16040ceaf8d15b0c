/* firstbreak.h -- first-arrival picking on whole shot records.
 *
 * Criterion: the energy ratio of a window after each sample to the window
 * before it, stabilised by a fraction of the trace's mean energy (the
 * energy-ratio picker; Coppens 1985, Geophysical Prospecting 33, 1212-1231,
 * and Wong, Han, Bancroft and Stewart 2009, CSEG conference abstract, "Automatic
 * time-picking of first arrivals on noisy microseismic data"). Its maximum
 * inside a window around a linear-moveout guide (offset -> time polyline, given
 * or estimated from unguided picks) is the onset; the pick then moves to the
 * first strong extremum after it (a peak or trough: the centre of a zero-phase
 * wavelet), or to the zero crossing before that extremum, with parabolic
 * interpolation between samples. Quality is the signal-to-noise energy
 * fraction s^2 / (1 + s^2) of the windows after and before the onset. Outliers:
 * each pick is compared with a robust local trend of its record (neighbours in
 * offset order on the same side of the source, Theil-Sen slope, median
 * prediction) and rejected beyond outlier_ms.
 *
 * Everything is per record and a pure function of its inputs: records may be
 * picked on any threads in any order with the same results.
 */
#ifndef TZERO_FIRSTBREAK_H
#define TZERO_FIRSTBREAK_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"

#define FIRSTBREAK_MAX_GUIDE 256          /* points of a guide polyline */
#define FIRSTBREAK_MAX_TRACES 1000000u    /* traces of one record */

/* Absolute offset (m) -> time (ms), linear between points (offsets strictly
 * increasing), extended along the end segments (a single point: constant). */
typedef struct firstbreak_guide {
  size_t n;
  double offset_m[FIRSTBREAK_MAX_GUIDE];
  double time_ms[FIRSTBREAK_MAX_GUIDE];
} firstbreak_guide;

double firstbreak_guide_time(const firstbreak_guide *g, double offset_abs_m);
/* A straight guide t = intercept + |x| / velocity over [0, max_offset_m]. */
int firstbreak_guide_linear(firstbreak_guide *g, double velocity_mps, double intercept_ms,
                            double max_offset_m, tz_err *err);
/* Estimates a guide from picks: median time in `nbins` equal bins of absolute
 * offset up to the largest one, empty bins left out, times made
 * non-decreasing with offset. TZ_E_ARG with fewer than 2 bins filled. */
int firstbreak_guide_estimate(const double *offset_m, const double *time_ms, size_t n,
                              size_t nbins, firstbreak_guide *g, tz_err *err);

enum firstbreak_refine {
  FIRSTBREAK_REFINE_PEAK = 0,    /* first strong extremum after the onset (default) */
  FIRSTBREAK_REFINE_ZERO,        /* zero crossing before that extremum */
  FIRSTBREAK_REFINE_NONE         /* the energy-ratio onset itself */
};

typedef struct firstbreak_params {
  double window_ms;      /* energy window (default 16 ms) */
  double search_ms;      /* half-width of the search window about the guide (default 40) */
  double stabilise;      /* fraction of the mean window energy added below (default 0.01) */
  int refine;            /* enum firstbreak_refine */
  double outlier_ms;     /* reject beyond this from the record's trend (default 6; 0 = off) */
  size_t trend_traces;   /* neighbours on each side for the trend (default 4) */
} firstbreak_params;

void firstbreak_params_init(firstbreak_params *p);
int firstbreak_params_check(const firstbreak_params *p, tz_err *err);

enum firstbreak_status {
  FIRSTBREAK_OK = 0,
  FIRSTBREAK_NONE,       /* dead trace or no energy in the search window */
  FIRSTBREAK_REJECTED    /* picked, but off the record's trend */
};

typedef struct firstbreak_pick {
  double time_ms;        /* NAN for FIRSTBREAK_NONE */
  double quality;        /* 0..1 */
  int status;            /* enum firstbreak_status */
} firstbreak_pick;

/* Picks one record: ntraces traces of ns samples (trace-major), sample
 * interval dt_ms, time of the first sample t0_ms, signed offsets (m; the sign
 * tells the two sides of a split spread apart), live flags (NULL = all live).
 * guide NULL searches the whole trace. out gets ntraces picks. */
int firstbreak_pick_record(const firstbreak_params *p, const firstbreak_guide *guide,
                           const float *samples, size_t ntraces, size_t ns, double dt_ms,
                           double t0_ms, const double *offset_m, const unsigned char *live,
                           firstbreak_pick *out, tz_err *err);

#endif
