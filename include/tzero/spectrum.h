/* spectrum.h -- average amplitude spectra of traces (FFTW, tapered), and of chosen
 * records, channels, offsets and time windows of SEG-Y files (docs/spectra.md).
 *
 * Two layers:
 *   spectrum_plan / spectrum_acc   a window length and taper bound to FFTW plans
 *                  (made single-threaded), and a per-thread accumulator that adds
 *                  the amplitude spectrum |X(f)| of each window it is given.
 *   spectrum_of_files()  reads SEG-Y files, selects traces by field record, channel
 *                  and |offset|, takes one time window of each and averages their
 *                  amplitude spectra; the result is normalised to 1 at its peak.
 */
#ifndef TZERO_SPECTRUM_H
#define TZERO_SPECTRUM_H

#include <stddef.h>
#include <stdint.h>

#include "tzero/error.h"
#include "tzero/picture.h"
#include "tzero/segy.h"

#define SPECTRUM_MAX_SAMPLES 1000000   /* longest window */
#define SPECTRUM_MAX_RANGES 256         /* ranges in one --records / --channels list */
#define SPECTRUM_FLOOR_DB (-200.0)      /* dB given for a zero amplitude */

typedef struct spectrum_plan spectrum_plan;
typedef struct spectrum_acc spectrum_acc;

/* A plan for windows of nwin samples at dt_s: a cosine (Tukey) taper over taper_pct
 * percent of the window at each end (0 = none, 50 = a Hann window), zero-padded to
 * nfft = the smallest 2^a 3^b 5^c at least 2 nwin (and at least 64). TZ_E_ARG for
 * bad values, TZ_E_FFT when FFTW cannot plan. Not thread-safe (FFTW planner). */
int spectrum_plan_new(spectrum_plan **out, size_t nwin, double dt_s, double taper_pct,
                      tz_err *err);
void spectrum_plan_free(spectrum_plan *p);            /* NULL is a no-op */
size_t spectrum_plan_nfreq(const spectrum_plan *p);   /* nfft / 2 + 1 */
double spectrum_plan_df_hz(const spectrum_plan *p);   /* 1 / (nfft dt) */
size_t spectrum_plan_nwin(const spectrum_plan *p);

/* Per-thread sums. *out owns it: spectrum_acc_free(). */
int spectrum_acc_new(spectrum_acc **out, const spectrum_plan *p, tz_err *err);
void spectrum_acc_free(spectrum_acc *a);
/* Adds |X(f_k)| of one window of nwin samples (tapered); allocates nothing. */
void spectrum_acc_add(spectrum_acc *a, const float *x);
int64_t spectrum_acc_count(const spectrum_acc *a);
/* mean[k] = the mean amplitude at f_k = k df of the windows added (0 when none),
 * scaled so that a sinusoid of amplitude A filling the window gives about A at its
 * frequency (|X| * 2 / sum of the taper). */
void spectrum_acc_mean(const spectrum_acc *a, double *mean);

/* dB relative to the largest value: 20 log10(v / max), SPECTRUM_FLOOR_DB for 0. */
void spectrum_to_db(const double *v, size_t n, double *db);

/* ---- spectra of SEG-Y files ---- */

typedef struct spectrum_range {
  int64_t lo, hi;                  /* inclusive */
} spectrum_range;

/* Parses "10-20,25,40-41" (positive or negative integers, a-b with a <= b). TZ_E_ARG
 * naming the bad item. */
int spectrum_parse_ranges(const char *s, spectrum_range *out, size_t max, size_t *n,
                          tz_err *err);

typedef struct spectrum_request {
  const spectrum_range *records;   /* field record numbers (bytes 9-12); n = 0: all */
  size_t nrecords;
  const spectrum_range *channels;  /* channel within the record (bytes 13-16); 0: all */
  size_t nchannels;
  double offset_min_m, offset_max_m;   /* |offset| (bytes 37-40) range; max < 0 = none */
  double start_ms, end_ms;         /* time window on the trace axis; end <= start = all */
  double taper_pct;
  const segy_open_opts *open;      /* borrowed; NULL = defaults */
} spectrum_request;

typedef struct spectrum_result {
  size_t nfreq;
  double df_hz;
  double *amplitude;               /* nfreq, 1 at the peak (owned) */
  double *db;                      /* nfreq (owned) */
  double peak_hz;
  int64_t traces;                  /* traces averaged */
  int64_t traces_dead;             /* selected but all zero in the window (left out) */
  double start_ms, end_ms;         /* the window used (first to last sample time) */
  size_t samples;                  /* samples in the window */
  double interval_ms;
} spectrum_result;

/* The average amplitude spectrum of the selected traces of files paths[0 .. n-1]
 * (data traces only: trace identification code 1 or 0). The files must share one
 * sample interval, count and delay (else TZ_E_FORMAT naming the file). No trace
 * selected is TZ_E_ARG. On success *out owns its arrays: spectrum_result_free(). */
int spectrum_of_files(const char *const *paths, size_t n, const spectrum_request *rq,
                      spectrum_result *out, tz_err *err);
void spectrum_result_free(spectrum_result *r);
/* The same for traces in memory (n headers and n x ns samples at interval_us; the
 * delay of each header places the window), e.g. after the job's conditioning. */
int spectrum_of_traces(const segy_trace_header *h, const float *samples, size_t n, size_t ns,
                       uint32_t interval_us, const spectrum_request *rq, spectrum_result *out,
                       tz_err *err);
/* 1 when the request selects this trace (data trace, record, channel, |offset|). */
int spectrum_selects(const spectrum_request *rq, const segy_trace_header *h);

/* ---- pictures (docs/spectra.md) ---- */

#define SPECTRUM_MAX_CURVES 8
#define SPECTRUM_MAX_ROWS 1000000

/* One curve of a CSV written by `tzero spectrum` (columns frequency_hz and
 * amplitude_db, found by name). */
typedef struct spectrum_curve {
  double *hz, *db;             /* owned: spectrum_curve_free() */
  size_t n;
} spectrum_curve;

void spectrum_curve_free(spectrum_curve *c);      /* NULL is a no-op */
/* TZ_E_NOINPUT for a missing file; TZ_E_FORMAT naming the line otherwise. */
int spectrum_curve_load(spectrum_curve *c, const char *path, tz_err *err);

/* dB against frequency, curves n <= SPECTRUM_MAX_CURVES with their labels (NULL: none),
 * from 0 to max_hz (<= 0: the largest frequency) and min_db (< 0) to 0 dB. width and
 * height 0 choose 720 x 420. *out: picture_ctx_free(). */
int spectrum_draw(const spectrum_curve *c, size_t n, const char *const *labels,
                  const char *title, double max_hz, double min_db, uint32_t width,
                  uint32_t height, int format, picture_ctx **out, tz_err *err);

/* The f-k amplitude spectrum of one record: its data traces placed at slot
 * round(offset / spacing) (spacing <= 0: the median step between the sorted signed
 * offsets, or the span over the steps between distinct offsets when that is within
 * 25 % of it: header offsets are often whole metres), each slot's trace tapered like spectrum_plan_new() in time, a 2D FFT, in
 * dB against the peak. nk wavenumbers (k from -1/(2 dx), increasing), nf frequencies
 * from 0 Hz; db[jf * nk + ik]. */
typedef struct spectrum_fk {
  float *db;                  /* owned: spectrum_fk_free() */
  size_t nk, nf;
  double dk, df;              /* cycles per metre, Hz */
  double k0;                  /* wavenumber of column 0 */
  double spacing_m;
  int64_t traces;
} spectrum_fk;

void spectrum_fk_free(spectrum_fk *f);
int spectrum_fk_of_record(const char *path, int64_t field_record, double spacing_m,
                          const segy_open_opts *open, spectrum_fk *out, tz_err *err);
/* Draws it (frequencies up to max_hz, <= 0: Nyquist; colours from min_db to 0 dB),
 * with dashed lines f = v |k| for the nfan velocities (m/s) given. */
int spectrum_draw_fk(const spectrum_fk *f, const char *title, double max_hz, double min_db,
                     const double *fan_mps, size_t nfan, uint32_t width, uint32_t height,
                     int format, picture_ctx **out, tz_err *err);

#endif
