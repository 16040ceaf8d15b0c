/* condition.h -- trace conditioning before NMO: zero-phase band-pass, gains, AGC,
 * Wiener deconvolution and the f-k fan filter.
 *
 * Three layers (docs/conditioning.md):
 *   condition_chain      a plain value: an ordered list of steps with their
 *                        parameters (what a job file describes). Built on the
 *                        stack with condition_chain_init() and the _add_ calls,
 *                        which check every parameter.
 *   condition_plan       the chain bound to one trace time axis: corners checked
 *                        against Nyquist, FFT plans made, time-only gain curves
 *                        precomputed. Read-only once built; share it between threads.
 *   condition_workspace  per-thread scratch (FFT buffers, running sums). One per
 *                        thread; never share one between threads.
 * condition_apply() then conditions one trace in place and allocates nothing.
 *
 * Threads and FFTW: FFTW's planner is not thread-safe. condition_plan_new() and
 * condition_plan_free() make and destroy plans; call them from one thread, never
 * while another thread is planning with FFTW. condition_apply() only executes
 * plans (the new-array interface on the workspace's own buffers) and is safe on
 * many threads at once, each with its own workspace. Plans are made with
 * FFTW_ESTIMATE, so the same input gives bitwise the same output on every run.
 */
#ifndef TZERO_CONDITION_H
#define TZERO_CONDITION_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"
#include "tzero/velocity.h"

#define CONDITION_MAX_STEPS 16          /* steps in one chain */
#define CONDITION_MAX_SAMPLES 1000000   /* longest trace a plan accepts */
#define CONDITION_MAX_POWER 10.0        /* |exponent| of the power gain */
#define CONDITION_MAX_WINDOW_MS 1.0e6   /* AGC window and reference times, ms */
#define CONDITION_MAX_GAIN 1.0e20       /* largest time-only gain a plan accepts */
#define CONDITION_MAX_WINDOW_POINTS 16  /* knots of a deconvolution design window */
#define CONDITION_MAX_OPERATOR_MS 2000.0 /* longest deconvolution operator or gap, ms */
#define CONDITION_MAX_FK_SLOTS 4096     /* regularised trace positions of one f-k grid */
#define CONDITION_MAX_FK_MPS 1.0e6      /* largest apparent velocity of an f-k fan */

typedef enum {
  CONDITION_BANDPASS = 1,   /* zero-phase trapezoid (Ormsby) band-pass */
  CONDITION_SPHERICAL,      /* spherical divergence t V_rms^2(t) / (t_ref V_rms^2(t_ref)) */
  CONDITION_POWER,          /* power gain (t / t_ref)^exponent */
  CONDITION_AGC,            /* automatic gain control, sliding window */
  CONDITION_DECON,          /* Wiener spiking or predictive deconvolution (record-wide) */
  CONDITION_FK              /* f-k fan filter of a whole record (record-wide) */
} condition_kind;

typedef enum {
  CONDITION_ENSEMBLE_TRACE = 0,   /* deconvolution: one operator per trace */
  CONDITION_ENSEMBLE_RECORD       /* one operator per record, from its mean autocorrelation */
} condition_ensemble;

typedef enum {
  CONDITION_AGC_RMS = 0,    /* divide by the RMS amplitude in the window */
  CONDITION_AGC_MEAN_ABS    /* divide by the mean absolute amplitude in the window */
} condition_agc_measure;

/* One step. Only the fields of its kind are meaningful. */
typedef struct condition_step {
  int kind;                   /* condition_kind */
  double corners_hz[4];       /* BANDPASS: f1 < f2 <= f3 < f4, f1 >= 0 */
  double reference_time_s;    /* SPHERICAL, POWER: gain is 1 at this time (> 0) */
  double velocity_mps;        /* SPHERICAL: constant velocity; 0 = the velocity table
                               * at the trace's CMP */
  double exponent;            /* POWER */
  double window_s;            /* AGC: window length (centred on each sample) */
  int measure;                /* AGC: condition_agc_measure */
  double operator_s;          /* DECON: length of the prediction error filter */
  double gap_s;               /* DECON: prediction distance; 0 = spiking */
  double prewhitening_pct;    /* DECON: added to the zero lag, percent of it */
  int ensemble;               /* DECON: condition_ensemble */
  size_t nwindow;             /* DECON: design window knots (|offset| strictly increasing) */
  double window[CONDITION_MAX_WINDOW_POINTS][3];   /* DECON: offset_m, start_s, end_s */
  double fan_mps[2];          /* FK: apparent velocities v1 < v2 bounding the fan */
  int fan_pass;               /* FK: 0 = reject the fan, 1 = pass only the fan */
  double taper_pct;           /* FK: cosine taper, percent of v2 - v1 (and of min_hz) */
  double min_hz;              /* FK: frequencies below are left untouched */
} condition_step;

/* The chain: a plain value, copy it freely. Steps run in order. */
typedef struct condition_chain {
  size_t n;
  condition_step step[CONDITION_MAX_STEPS];
} condition_chain;

void condition_chain_init(condition_chain *c);    /* empty chain */

/* Append one step after checking its parameters. TZ_E_ARG with a message naming the
 * bad value (e.g. "corner f3 = 8 Hz is below f2 = 10 Hz"), or when the chain is full;
 * the chain is unchanged on failure. Nyquist is checked later, by condition_plan_new(). */
int condition_chain_add_bandpass(condition_chain *c, const double corners_hz[4], tz_err *err);
/* velocity_mps = 0 takes V_rms from the velocity table at each trace's CMP. */
int condition_chain_add_spherical(condition_chain *c, double reference_time_s,
                                  double velocity_mps, tz_err *err);
int condition_chain_add_power(condition_chain *c, double exponent, double reference_time_s,
                              tz_err *err);
int condition_chain_add_agc(condition_chain *c, double window_s, int measure, tz_err *err);
/* Wiener deconvolution (docs/conditioning.md): operator_s > 0 is the length of the whole
 * prediction error filter, 0 <= gap_s < operator_s its prediction distance (0 =
 * spiking), 0 <= prewhitening_pct <= 100; window: nwindow >= 1 knots [offset_m,
 * start_s, end_s] with |offset| strictly increasing, start < end, and end - start at
 * least the operator at every knot. Messages name the key (operator_ms, gap_ms,
 * window[i], ...) so the job parser can prefix the JSON path. */
int condition_chain_add_decon(condition_chain *c, double operator_s, double gap_s,
                              double prewhitening_pct, const double (*window)[3],
                              size_t nwindow, int ensemble, tz_err *err);
/* f-k fan filter: 0 <= v1 < v2 <= CONDITION_MAX_FK_MPS apparent velocities, pass = 0
 * rejects the fan, 1 keeps only it; 0 <= taper_pct <= 100; min_hz >= 0. */
int condition_chain_add_fk(condition_chain *c, const double fan_mps[2], int pass,
                           double taper_pct, double min_hz, tz_err *err);
/* 1 when the chain holds a step that needs whole records (deconvolution, f-k):
 * such a chain must be applied with condition_apply_record(), never condition_apply(). */
int condition_chain_has_record_steps(const condition_chain *c);

/* 1 when some step needs the velocity table (spherical divergence without a constant). */
int condition_chain_needs_velocity(const condition_chain *c);

/* Names used in job files and reports: "bandpass", "spherical_divergence",
 * "power_gain", "agc", "deconvolution", "fk_filter"; "rms", "mean_abs"; "trace",
 * "record". Never NULL ("unknown"). The parse functions return -1 for anything else. */
const char *condition_kind_name(int kind);
int condition_kind_parse(const char *s);
const char *condition_agc_measure_name(int measure);
int condition_agc_measure_parse(const char *s);
const char *condition_ensemble_name(int ensemble);
int condition_ensemble_parse(const char *s);

/* ---- plan: the chain on one time axis ---- */

typedef struct condition_plan condition_plan;

/* Binds the chain to the axis t_i = t_first_s + i dt_s, i < ns (a copy of the chain
 * is kept). Checks: dt_s > 0, 1 <= ns <= CONDITION_MAX_SAMPLES, every band-pass
 * corner below Nyquist 1/(2 dt_s), an AGC window of at least one sample, and a
 * velocity table when the chain needs one (`table` is borrowed and must outlive the
 * plan; NULL is fine otherwise), power and t/t_ref gains below CONDITION_MAX_GAIN
 * over the axis. TZ_E_ARG naming the value; TZ_E_FFT when FFTW cannot
 * plan. Not thread-safe (FFTW planner): see the top of this file. On success *out
 * owns the plan: condition_plan_free(). An empty chain gives a plan that does nothing. */
int condition_plan_new(condition_plan **out, const condition_chain *c, double t_first_s,
                       double dt_s, size_t ns, const velocity_table *table, tz_err *err);
void condition_plan_free(condition_plan *p);      /* NULL is a no-op; not thread-safe */

size_t condition_plan_ns(const condition_plan *p);
/* Transform length used by the band-pass (0 without one): the smallest 2^a 3^b 5^c
 * at least twice ns, so the filter's response does not wrap around the trace. */
size_t condition_plan_fft_size(const condition_plan *p);
int condition_plan_needs_velocity(const condition_plan *p);

/* ---- per-thread workspace and the per-trace call ---- */

typedef struct condition_workspace condition_workspace;

/* Scratch for one plan (and only that plan: it caches per-CMP velocities). *out owns
 * it: condition_workspace_free(). */
int condition_workspace_new(condition_workspace **out, const condition_plan *p, tz_err *err);
void condition_workspace_free(condition_workspace *ws);   /* NULL is a no-op */

/* Conditions one trace of condition_plan_ns() samples in place, step by step.
 *   cmp      the trace's CMP (used only by the velocity-table spherical gain)
 *   vel_mps  ns RMS velocities of that CMP sampled on the plan's axis
 *            (velocity_sample()), when the caller already has them (the stacker
 *            caches them per CMP); NULL = the workspace samples them itself.
 *            Ignored when the plan needs no velocity.
 * Allocates nothing; thread-safe with one workspace per thread. A non-finite input
 * sample is TZ_E_FORMAT (bad data) naming the sample: it would smear over the whole
 * filtered trace. */
int condition_apply(const condition_plan *p, condition_workspace *ws, int64_t cmp,
                    const float *vel_mps, float *trace, tz_err *err);

/* ---- whole records: deconvolution, f-k, and every other step ---- */

/* The f-k step works on a grid of trace positions: signed offset x goes to slot
 * round(x / spacing_m); every record of a line shares one grid covering the line's
 * signed offsets [offset_min_m, offset_max_m] (from the geometry of all records, so a
 * part of a line and the whole line give the same bits). Call once, single-threaded,
 * after condition_plan_new() and before condition_workspace_new(), when the chain has
 * an f-k step (a no-op otherwise). TZ_E_ARG for a spacing <= 0 or a grid beyond
 * CONDITION_MAX_FK_SLOTS; TZ_E_FFT when FFTW cannot plan. */
int condition_plan_set_offsets(condition_plan *p, double spacing_m, double offset_min_m,
                               double offset_max_m, tz_err *err);

/* ---- per record ---- */

/* What the record-level call knows about each trace of a record. */
typedef struct condition_trace_info {
  int64_t cmp;              /* the trace's CMP (velocity-table spherical gain) */
  const float *vel_mps;     /* ns V_rms samples of that CMP, or NULL (as condition_apply) */
  double offset_m;          /* signed source-receiver offset, SEG-Y sign rule (bytes 37-40) */
  int live;                 /* 0: killed, not read or not data; left untouched and
                             * never used by record-wide steps */
} condition_trace_info;

/* Conditions one whole record (the traces of one field record, in recorded
 * order) in place: samples holds ntraces x condition_plan_ns() floats,
 * trace-major; info[k] describes trace k. The steps run in the chain's order:
 * per-trace steps on each live trace exactly as condition_apply() would (same
 * bits); deconvolution per trace, or with the autocorrelation averaged over the
 * record's live traces; the f-k fan on the record's live traces placed on the
 * offset grid of condition_plan_set_offsets(). Dead traces are left as they are.
 * On failure err->trace is the index of the trace within the record (the caller
 * turns it into a file trace number); TZ_E_FORMAT for a non-finite sample,
 * TZ_E_ARG for an offset outside the f-k grid. Allocates nothing; one workspace
 * per thread; the result depends only on the record and the plan. */
int condition_apply_record(const condition_plan *p, condition_workspace *ws, float *samples,
                           size_t ntraces, const condition_trace_info *info, tz_err *err);
/* 1 when some step of the plan needs the whole record at once (so a run that
 * produces only some CMPs must still read every trace of each record it uses). */
int condition_plan_record_wide(const condition_plan *p);
/* 1 when the plan has an f-k step (condition_plan_set_offsets() must be called). */
int condition_plan_has_fk(const condition_plan *p);

/* ---- Wiener filters (Levinson 1947; Robinson & Treitel 1980), for tests and docs ---- */

/* Solves the symmetric Toeplitz system R a = g, R[i][j] = r[|i - j|], n >= 1, by
 * Levinson's recursion in O(n^2); work holds 2 n doubles. TZ_E_ARG when R is not
 * positive definite (a prediction error <= 0 on the way). */
int condition_levinson(const double *r, const double *g, size_t n, double *a, double *work,
                       tz_err *err);
/* Prediction error filter of gap g >= 1 and n prediction coefficients from the
 * autocorrelation r[0 .. g + n - 1] (r[0] > 0), pre-whitened by pct percent:
 * pef[0] = 1, pef[1 .. g-1] = 0, pef[g + j] = -a[j] with sum_j a[j] r[|i - j|] = r[g + i].
 * gap 1 is spiking deconvolution scaled to a leading 1. work holds 4 n doubles. */
int condition_wiener_pef(const double *r, size_t gap, size_t n, double pct, double *pef,
                         double *work, tz_err *err);

/* ---- formulas (Newman 1973; Claerbout 1985; Ormsby 1961), exposed for tests and docs ---- */

/* Trapezoid amplitude A(|f|) for corners f[0..3] (Ormsby 1961). */
double condition_trapezoid(const double corners_hz[4], double f_hz);
/* Ormsby wavelet: the inverse Fourier transform of the unit trapezoid at time t
 * (seconds); w(0) = f4 + f3 - f2 - f1 (Ormsby 1961). */
double condition_ormsby_wavelet(const double corners_hz[4], double t_s);
/* Spherical divergence correction t V^2 / (t_ref V_ref^2) (Newman 1973). */
double condition_spherical_gain(double t_s, double v_mps, double t_ref_s, double v_ref_mps);

#endif
