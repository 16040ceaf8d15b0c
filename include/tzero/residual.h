/* residual.h -- surface-consistent residual statics from NMO-corrected traces.
 *
 * Each iteration: shift every trace by its current source + receiver static
 * (8-point Kaiser-windowed sinc), stack each CMP (the pilot: the CMP, or the
 * CMPs within pilot_half_width of it, without the trace itself), cross-
 * correlate trace and pilot in the window within +-max_shift_ms (parabolic
 * interpolation of the peak), and decompose the picked lags as
 *   lag = source term + receiver term + CMP structure term
 *         + residual-moveout term (per block of CMPs) x offset^2
 * by Gauss-Seidel iterations of least squares (Taner, Koehler and Alhilali 1974,
 * Geophysics 39(4) 441-463; Wiggins, Larner and Wisecup 1976, Geophysics 41(5)
 * 922-938). The mean of the source and of the receiver terms (and, optionally,
 * their linear trend along the line) is removed, since the data cannot tell it
 * from structure, and each update is limited to max_shift_ms. Stack power (sum
 * of squared CMP-stack samples in the window) is measured before and after
 * every iteration; an update that lowers it is undone and the iterations stop.
 *
 * Sign: a static is the time added to the trace's time axis (negative moves
 * data earlier); a trace whose event arrives tau late gets -tau.
 *
 * Shifts and correlations run on threads, a trace's results depending on that
 * trace alone; every sum is formed in a fixed order: same input, same bits, for
 * any thread count.
 */
#ifndef TZERO_RESIDUAL_H
#define TZERO_RESIDUAL_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"
#include "tzero/firstbreak.h"
#include "tzero/stack.h"
#include "tzero/velocity.h"

#define RESIDUAL_MAX_TRACES 100000000u
#define RESIDUAL_MAX_TERMS 10000000u        /* sources, receivers or CMPs */
#define RESIDUAL_MAX_ITERATIONS 100
#define RESIDUAL_MAX_THREADS 256

/* The traces, NMO-corrected with the statics already applied, each stored
 * over `nsamp` samples of which the correlation window is [first, first+nwin);
 * the samples around the window are margin for shifting and lags (at least
 * max_shift_ms x (iterations + 1) / dt + 4 on each side is needed). */
typedef struct residual_input {
  size_t ntraces;
  size_t nsources, nreceivers, ncmps;
  const uint32_t *source, *receiver, *cmp;   /* per trace, 0-based terms; cmp in order
                                              * along the line */
  const float *samples;                       /* ntraces * nsamp */
  size_t nsamp, first, nwin;
  double dt_ms;
  const double *source_along_m, *receiver_along_m;  /* for the trend (may be NULL
                                                     * when remove_trend is 0) */
  const double *offset_m;                     /* per trace, for the residual-moveout
                                               * term (NULL: no such term) */
} residual_input;

typedef struct residual_params {
  double max_shift_ms;       /* largest lag picked and largest update (default 10) */
  int iterations;            /* pick-and-decompose rounds (default 3) */
  int sweeps;                /* Gauss-Seidel sweeps per decomposition (default 300: the
                              * wavelengths longer than a spread converge slowly) */
  int pilot_half_width;      /* CMPs on each side in the pilot (default 2) */
  double min_correlation;    /* picks of lower normalised correlation are left out
                              * (default 0.3) */
  int remove_trend;          /* 1 = remove the linear trend of the source and of the
                              * receiver terms along the line (default 1) */
  int moveout_term;          /* 1 = a residual-moveout term M x^2 (needs offsets), one
                              * M per block of moveout_cmps CMPs; default 0: at the line
                              * ends, where few offsets meet, M trades off against the
                              * end stations */
  int moveout_cmps;          /* CMPs sharing one moveout coefficient (default 100: a
                              * coefficient per CMP would also take up any cubic of
                              * station position, s^3 + r^3 = 2 m^3 + 3 m x^2 / 2) */
  double damping;            /* weight of a zero pseudo-lag in every station term
                              * (default 1): terms with few lags stay near 0 */
  int threads;               /* 0 = the machine's online cores; any count gives the
                              * same bits */
} residual_params;

void residual_params_init(residual_params *p);

typedef struct residual_iteration {
  double power_before, power_after;   /* stack power in the window */
  size_t picks;                        /* traces whose lag was used */
  double pick_rms_ms;                  /* RMS of the lags picked */
  double fit_rms_ms;                   /* RMS misfit of the decomposition */
  double update_rms_ms;                /* RMS change of the trace statics */
  int reverted;                        /* 1: the update lowered the stack power and was
                                        * undone; the iterations stopped there */
} residual_iteration;

typedef struct residual_result {
  size_t nsources, nreceivers, ncmps;
  double *source_ms, *receiver_ms;     /* owned: statics found (sum over iterations) */
  double *cmp_ms;                      /* structure term of the last decomposition */
  int iterations;                      /* iterations run (the last may be reverted) */
  int reverted;                        /* 1 when the last one was undone */
  residual_iteration it[RESIDUAL_MAX_ITERATIONS];
} residual_result;

/* Progress callback between iterations (may be NULL). */
typedef void (*residual_progress_fn)(void *ctx, int iteration, const residual_iteration *it);

/* On success r owns its arrays: residual_result_free(). */
int residual_solve(const residual_params *p, const residual_input *in, residual_result *r,
                   residual_progress_fn progress, void *ctx, tz_err *err);
void residual_result_free(residual_result *r);

/* Margin samples needed on each side of the window for these parameters. */
size_t residual_margin(const residual_params *p, double dt_ms);

/* Gauss-Seidel decomposition alone: lags[i] (weights w[i] >= 0, 0 = unused) into
 * source, receiver and CMP terms (arrays zeroed first) and, when rnmo is not
 * NULL and in->offset_m is given, a residual-moveout coefficient (ms per km^2)
 * per block of `block` CMPs (rnmo holds ncmps / block + 1 values), `sweeps`
 * sweeps, the source and receiver terms damped by `damping` (0 = none). Returns
 * the RMS misfit. Exposed for tests. */
double residual_decompose(const residual_input *in, const double *lags, const double *w,
                          int sweeps, double damping, double *src, double *rec, double *cmp,
                          double *rnmo, size_t block);

/* Shifts x (n samples) by shift_samples (out(t) = x(t - shift)) with the
 * 8-point Kaiser-windowed sinc (beta 5, unit DC gain); samples that need input
 * beyond the trace are 0. */
void residual_shift(const float *x, size_t n, double shift_samples, float *out);

/* ---- a whole line (the stack plan's traces through its chain and NMO) ----
 *
 * One streaming pass over the plan's records: edits, statics and conditioning
 * of the job (the stack's chain), NMO with the velocity table, then only the
 * correlation window plus the shifting margin of each trace is kept. Sources
 * and receivers are the line's stations (firstbreak_stations_scan rules); the
 * CMP term is the CMP number within the plan's range. */
typedef struct residual_line_opts {
  residual_params params;
  double window_start_ms, window_end_ms;   /* NMO-corrected time window */
  double station_interval_m;               /* 0 = the receiver interval */
  const velocity_table *velocity;          /* borrowed, required */
  stack_progress_fn progress;              /* reading pass; may be NULL */
  void *progress_ctx;
  residual_progress_fn iteration;          /* after each iteration; may be NULL */
  void *iteration_ctx;
} residual_line_opts;

void residual_line_opts_init(residual_line_opts *o);

typedef struct residual_line {
  firstbreak_stations *stations;   /* owned: sources, then receivers */
  size_t nsources, nreceivers;     /* stations->s[0..nsources) are the sources */
  residual_result result;          /* source_ms[k] is stations->s[k]; receiver_ms[k]
                                    * is stations->s[nsources + k] */
  size_t traces;                   /* traces used */
  double read_s, solve_s;          /* wall time of the pass and of the iterations */
} residual_line;

int residual_run(const stack_plan *p, const residual_line_opts *o, residual_line **out,
                 tz_err *err);
void residual_line_free(residual_line *l);     /* NULL is a no-op */

#endif
