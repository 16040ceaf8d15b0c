/* firstbreak.h -- first-arrival picking on whole shot records.
 *
 * Criterion: the energy ratio of a window after each sample to the energy
 * accumulated from the start of the search window up to it, stabilised by a
 * fraction of the trace's mean window energy or ten windows of its noise floor
 * (quietest window), whichever is larger (the energy-ratio picker of
 * Coppens 1985, "First arrival picking on common-offset trace collections for
 * automatic estimation of static corrections", Geophysical Prospecting 33,
 * 1212-1231: the accumulated energy keeps a later, stronger arrival from
 * outbidding the first one). Its maximum
 * inside a window around a linear-moveout guide (offset -> time polyline, given
 * or estimated from unguided picks) is the onset; the pick then moves to the
 * largest sample of the first strong lobe after it (a peak or trough: the
 * centre of a zero-phase wavelet), or to the zero crossing before that extremum, with parabolic
 * interpolation between samples. Quality is the signal-to-noise energy
 * fraction E_after / (E_after + E_before) of the windows after and before the
 * onset. Outliers: each pick is compared with the robust local trend of its
 * record on either side of it (neighbours in offset order on the same side of
 * the source, Theil-Sen line) and rejected when it misses both by more than
 * outlier_ms.
 *
 * Everything is per record and a pure function of its inputs: records may be
 * picked on any threads in any order with the same results.
 */
#ifndef TZERO_FIRSTBREAK_H
#define TZERO_FIRSTBREAK_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"
#include "tzero/stack.h"

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
/* Reads a guide table (CSV with a header row offset_m,time_ms; '#' comments):
 * absolute offsets strictly increasing, times finite. Errors name the line. */
int firstbreak_guide_load(firstbreak_guide *g, const char *path, tz_err *err);
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
  size_t trend_traces;   /* neighbours on each side for the trend (default 2, at most 32) */
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

/* ---- a whole line: every record of a stack plan ----
 *
 * Each field record of the plan is read whole and goes through the job's edits
 * and statics (the pre-NMO chain without its conditioning: gains and filters
 * would change the energy ratio), then is picked. Without a guide, every
 * record (or every k-th, for at most ~400) is first picked unguided and the
 * guide estimated from those picks (24 offset bins). Records are dealt to
 * threads; every record is picked alone, so the picks are the same bits for any
 * thread count. Times are on the chain's time axis: at the processing datum
 * when the job applies statics, else field times. */
typedef struct firstbreak_line_opts {
  firstbreak_params params;
  const firstbreak_guide *guide;   /* borrowed; NULL = estimate one */
  double station_interval_m;       /* station numbering; 0 = the receiver interval */
  int threads;                     /* 0 = the machine's online cores */
  stack_progress_fn progress;      /* called from the calling thread; may be NULL */
  void *progress_ctx;
} firstbreak_line_opts;

void firstbreak_line_opts_init(firstbreak_line_opts *o);

/* One live data trace of the line and its pick. */
typedef struct firstbreak_trace {
  int32_t record, channel;
  int32_t source_station, receiver_station;
  double source_along_m, receiver_along_m;   /* along the processing line */
  double offset_m;                           /* signed (SEG-Y sign) */
  double static_ms;                          /* static the chain applied */
  firstbreak_pick pick;
} firstbreak_trace;

typedef struct firstbreak_line {
  size_t n;                        /* traces in input order */
  firstbreak_trace *t;             /* owned */
  size_t records;
  size_t picked, rejected, unpicked;
  firstbreak_guide guide;          /* the guide used */
  int guide_estimated;             /* 1 = from unguided picks */
  double station_interval_m;
  int threads;
  double elapsed_s;                /* wall time of the picking passes */
} firstbreak_line;

/* On success *out owns the picks: firstbreak_line_free(). */
int firstbreak_run(const stack_plan *p, const firstbreak_line_opts *o, firstbreak_line **out,
                   tz_err *err);
void firstbreak_line_free(firstbreak_line *l);   /* NULL is a no-op */

/* ---- the stations of a line ----
 *
 * One header pass over the plan's traces (data traces with geometry, as the
 * stack sees them): every source and receiver station with its mean position
 * along the line, map position and surface elevation. Station numbers follow
 * the rule of the picks file (the nearest multiple of the interval). */
#define FIRSTBREAK_MAX_STATION_SPAN 10000000   /* highest minus lowest station number */

typedef struct firstbreak_station {
  int kind;                  /* 0 source, 1 receiver */
  int32_t station;
  double along_m, x_m, y_m, elevation_m;   /* means over the traces */
  int64_t traces;
} firstbreak_station;

typedef struct firstbreak_stations {
  size_t n;                  /* sources by station, then receivers by station */
  firstbreak_station *s;     /* owned */
  double interval_m;
} firstbreak_stations;

/* interval_m 0 = the receiver interval. On success *out owns the list:
 * firstbreak_stations_free(). */
int firstbreak_stations_scan(const stack_plan *p, double interval_m, firstbreak_stations **out,
                             tz_err *err);
void firstbreak_stations_free(firstbreak_stations *s);     /* NULL is a no-op */
const firstbreak_station *firstbreak_stations_find(const firstbreak_stations *s, int kind,
                                                   int32_t station);

/* ---- picks files (written by firstbreak_write_picks or by hand) ---- */
#define FIRSTBREAK_MAX_FILE_PICKS 50000000u

typedef struct firstbreak_file_pick {
  int32_t record, channel, source_station, receiver_station;
  double offset_m, time_ms, quality;
  int64_t line;              /* line of the file, for messages */
} firstbreak_file_pick;

/* Reads a picks file: header row with the seven columns (any order, more
 * allowed), numbers checked (NaN and Inf are not numbers), quality in [0, 1].
 * With stations != NULL a station the line does not have is an error. Every
 * error is TZ_E_FORMAT naming the file and line. On success *out owns the
 * picks (free()). */
int firstbreak_picks_load(const char *path, const firstbreak_stations *stations,
                          firstbreak_file_pick **out, size_t *n, tz_err *err);

/* The station interval of picks and station lists: interval_m when > 0, else the
 * job's statics.station_interval_m, else the receiver interval of the geometry.
 * Stations are numbered as the stack numbers them (docs/statics.md): the
 * distance s along the line from the layout's station 0, or from the processing
 * line's origin, and station = floor(s / interval + 1/2). */
double firstbreak_station_interval(const stack_plan *p, double interval_m);

/* Writes the picks file (CSV, docs/statics.md): a comment line saying the time
 * reference, then record,channel,source_station,receiver_station,offset_m,
 * time_ms,quality for every accepted pick, in input order. Through a temporary
 * file renamed on success. */
int firstbreak_write_picks(const firstbreak_line *l, const char *path, int datum_times,
                           tz_err *err);

#endif
