/* poststack.h -- post-stack conditioning of a section: time-variant band-pass,
 * f-x prediction filtering, trace balancing and AGC (docs/poststack.md).
 *
 * Three layers, as for the prestack chain (condition.h):
 *   poststack_chain   a plain value: the ordered steps with their parameters (what
 *                     a job's "poststack" array or a steps file describes), built
 *                     with poststack_chain_init() and the _add_ calls, which check
 *                     every parameter. Each step remembers whether it runs after
 *                     migration.
 *   poststack_plan    the chain (or the part of it before or after migration) bound
 *                     to one section: sample axis and trace count. Corners are
 *                     checked against Nyquist, FFT plans made, blend weights and
 *                     tapers precomputed, every buffer allocated.
 *   poststack_apply() conditions a whole section in place (traces x samples,
 *                     trace-major, in line order) and allocates nothing.
 *
 * Steps (each described fully in docs/poststack.md):
 *   bandpass       time-variant zero-phase trapezoid band-pass (Ormsby 1961): each
 *                  window's trapezoid is applied to the whole trace by FFT, and the
 *                  filtered traces are blended with weights that cross-fade
 *                  linearly over the overlap of adjacent windows (1 - u and u,
 *                  u = (t - from_next) / (to_this - from_next)); before the first
 *                  window and after the last their filters are held.
 *   fx_prediction  f-x prediction filtering (Canales, L. L., 1984, "Random noise
 *                  reduction", 54th SEG Annual Meeting, Expanded Abstracts): the
 *                  section in overlapping windows of window_traces x window_ms; in
 *                  each window and at each frequency from min_hz to max_hz a complex
 *                  least-squares (Wiener) prediction filter of operator_traces
 *                  coefficients is designed forward and one backward along x, each
 *                  trace replaced by the mean of the predictions that reach it, and
 *                  the windows merged with sine-squared tapers normalised to 1.
 *   balance        each live trace scaled so its RMS amplitude in [from_ms, to_ms]
 *                  is target_rms (common practice).
 *   agc            the prestack AGC (condition.h), trace by trace.
 *
 * Dead traces (live[i] = 0: zero fold, or trace kind 2 or 3) are left untouched; f-x
 * prediction neither designs from them nor predicts from them. Only samples change:
 * the caller keeps every header.
 *
 * Threads and FFTW: poststack_plan_new() and poststack_plan_free() call FFTW's planner
 * (not thread-safe): call them from one thread. Plans use FFTW_ESTIMATE, so the same
 * input gives bitwise the same output on every run.
 */
#ifndef TZERO_POSTSTACK_H
#define TZERO_POSTSTACK_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/condition.h"
#include "tzero/error.h"

#define POSTSTACK_MAX_STEPS 16          /* steps in one chain */
#define POSTSTACK_MAX_WINDOWS 16        /* time windows of one band-pass */
#define POSTSTACK_MAX_OPERATOR 64       /* coefficients of an f-x prediction filter */
#define POSTSTACK_MAX_WINDOW_TRACES 4096
#define POSTSTACK_MAX_MS 1.0e6          /* times and window lengths, ms */

typedef enum {
  POSTSTACK_BANDPASS = 1,   /* time-variant zero-phase trapezoid band-pass */
  POSTSTACK_FX,             /* f-x prediction filtering (Canales 1984) */
  POSTSTACK_BALANCE,        /* RMS in a window scaled to a target */
  POSTSTACK_AGC             /* automatic gain control (condition.h) */
} poststack_kind;

/* Which steps a plan takes (poststack_plan_new). */
typedef enum {
  POSTSTACK_STAGE_ALL = 0,      /* every step, in order (tzero condition) */
  POSTSTACK_STAGE_BEFORE,       /* steps without after_migration: the stack */
  POSTSTACK_STAGE_AFTER         /* steps with after_migration: the migrated section */
} poststack_stage;

typedef struct poststack_window {
  double from_s, to_s;          /* from < to */
  double corners_hz[4];         /* f1 < f2 <= f3 < f4 */
} poststack_window;

/* One step. Only the fields of its kind are meaningful. */
typedef struct poststack_step {
  int kind;                     /* poststack_kind */
  int after_migration;          /* 1 = runs on the migrated section (job flow) */
  size_t nwindows;              /* BANDPASS */
  poststack_window window[POSTSTACK_MAX_WINDOWS];
  size_t window_traces;         /* FX: traces of one window (>= 2 operator_traces) */
  double window_s;              /* FX: window length; AGC: window length */
  size_t operator_traces;       /* FX: coefficients of each prediction filter */
  double prewhitening_pct;      /* FX: added to the diagonal, percent of its mean */
  double min_hz, max_hz;        /* FX: band filtered (max 0 = Nyquist); others pass */
  double from_s, to_s;          /* BALANCE: window */
  double target_rms;            /* BALANCE */
  int measure;                  /* AGC: condition_agc_measure */
} poststack_step;

/* The chain: a plain value. `root` is the JSON path of the array the steps came from
 * ("$.poststack" in a job, "$" for a steps file), used in messages. */
typedef struct poststack_chain {
  size_t n;
  poststack_step step[POSTSTACK_MAX_STEPS];
  char root[24];
} poststack_chain;

void poststack_chain_init(poststack_chain *c, const char *root);

/* Append one step after checking it. On failure TZ_E_JOB with a message that starts
 * with the key it is about, relative to the step ("windows[2].corners_hz: corner f3
 * = 8 Hz is below f2 = 10 Hz"), so a parser can prefix the step's JSON path; the
 * chain is unchanged. Nyquist and the trace length are checked by the plan. */
int poststack_chain_add_bandpass(poststack_chain *c, const poststack_window *w, size_t n,
                                 int after_migration, tz_err *err);
int poststack_chain_add_fx(poststack_chain *c, size_t window_traces, double window_s,
                           size_t operator_traces, double prewhitening_pct, double min_hz,
                           double max_hz, int after_migration, tz_err *err);
int poststack_chain_add_balance(poststack_chain *c, double from_s, double to_s,
                                double target_rms, int after_migration, tz_err *err);
int poststack_chain_add_agc(poststack_chain *c, double window_s, int measure,
                            int after_migration, tz_err *err);

/* Steps of the stage (POSTSTACK_STAGE_ALL: all). */
size_t poststack_chain_count(const poststack_chain *c, int stage);

/* "bandpass", "fx_prediction", "balance", "agc"; "unknown" otherwise. Parse: -1 when
 * unknown. */
const char *poststack_kind_name(int kind);
int poststack_kind_parse(const char *s);

/* One step with its main parameters, short enough for a textual header card:
 * "fx_prediction 20 tr x 200 ms, op 4, pw 1 %, 3-80 Hz" (traces x window, operator
 * traces, prewhitening, band), "bandpass 0-800 ms 8/12/60/80 Hz, 600-2000 ms ...",
 * "balance RMS 200-1600 ms to 1", "agc 500 ms rms"; NUL-terminated; returns the
 * length it needed. */
size_t poststack_step_text(const poststack_step *s, char *buf, size_t cap);

/* One line per step of the stage (lines separated by '\n', none after the last), at
 * most 76 characters each, numbered by the step's place in the chain, for textual
 * headers and summaries, e.g.
 * "poststack 1: bandpass 0-800 ms 8/12/60/80 Hz, 700-2000 ms 6/10/40/60 Hz";
 * in the after-migration stage "poststack 3 (after migration): agc 500 ms rms".
 * Always NUL-terminated; returns the length it needed (as snprintf). */
size_t poststack_describe(const poststack_chain *c, int stage, char *buf, size_t cap);

/* ---- the plan ---- */

typedef struct poststack_plan poststack_plan;

/* Binds the stage's steps to a section of ntraces traces of ns samples on the axis
 * t_i = t_first_s + i dt_s. Checks every band-pass corner and f-x frequency against
 * Nyquist 1/(2 dt), balance windows that hold at least one sample, AGC windows of at
 * least three samples: TZ_E_JOB naming the value by its JSON path
 * ("$.poststack[1].windows[2].corners_hz: ..."); TZ_E_FFT when FFTW cannot plan.
 * A stage without steps gives a plan that does nothing. Not thread-safe (FFTW). */
int poststack_plan_new(poststack_plan **out, const poststack_chain *c, int stage,
                       double t_first_s, double dt_s, size_t ns, size_t ntraces, tz_err *err);
void poststack_plan_free(poststack_plan *p);   /* NULL is a no-op; not thread-safe */
size_t poststack_plan_steps(const poststack_plan *p);

/* Conditions the section in place: samples holds ntraces x ns floats (the plan's),
 * trace-major, in line order; live[i] = 0 marks a dead trace (never changed, never
 * used by f-x prediction); live may be NULL (all live). TZ_E_FORMAT naming the trace
 * (err->trace) for a non-finite sample. Allocates nothing; the plan holds the
 * scratch, so one plan serves one thread at a time. */
int poststack_apply(poststack_plan *p, float *samples, const unsigned char *live,
                    tz_err *err);

/* ---- formulas, exposed for tests and docs ---- */

/* Weight of band-pass window k at time t_s (the blend of docs/poststack.md); the
 * weights of all windows sum to 1 at every time. */
double poststack_blend_weight(const poststack_window *w, size_t n, size_t k, double t_s);

#endif
