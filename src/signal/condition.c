/* condition.c -- trace conditioning: zero-phase trapezoid band-pass, gains, AGC,
 * and the record-wide steps (Wiener deconvolution, decon.c; f-k fan, fk.c).
 *
 * A chain of steps (condition.h) is bound once to a trace time axis by
 * condition_plan_new(): band-pass corners are checked against Nyquist, the
 * trapezoid is sampled on the FFT bins, FFTW plans are made (single precision,
 * FFTW_ESTIMATE so results never depend on timing), and gain curves that depend
 * on time only are precomputed. condition_apply() then runs the steps on one
 * trace in place, with a per-thread workspace, and allocates nothing:
 *
 *   band-pass   copy into a zero-padded buffer of nfft >= 2 ns samples (so the
 *               filter response cannot wrap around onto the trace), forward
 *               real FFT, multiply bin k by A(f_k)/nfft, inverse FFT, copy back.
 *               Zero phase because A is real and even (Ormsby 1961).
 *   spherical   g(t) = t V_rms^2(t) / (t_ref V_rms^2(t_ref)) (Newman 1973;
 *               Newman 1973): t/t_ref is precomputed; V_rms comes from the
 *               caller's per-CMP samples (or is sampled into the workspace) and
 *               V_rms(t_ref) from velocity_at(), cached per CMP.
 *   power       g(t) = (t / t_ref)^exponent, precomputed.
 *   AGC         g(t) = 1 / (level over a centred window + eps), where level is
 *               the RMS or the mean absolute value, from prefix sums in double
 *               (O(ns) whatever the window); eps = 1e-6 of the whole trace's level
 *               (plus FLT_MIN), so a dead trace stays zero (common practice).
 *
 * Gains use t = max(t_i, dt): sample times at or before zero (a negative delay,
 * or the first sample) take the gain of the first positive sample time, so a
 * gain is never zero, negative or infinite.
 *
 *   deconvolution, f-k   whole records through condition_apply_record(): the
 *               design-window autocorrelation per trace or averaged over the record
 *               (each trace's normalised to a zero lag of 1, dead traces left out),
 *               a prediction error filter by Levinson's recursion, applied to the
 *               whole trace; the f-k fan on the record's offset grid (fk.c).
 *
 * Not here: reading traces, JSON (job.c fills a condition_chain), stacking.
 */
#include "tzero/condition.h"
#include "signal/signal_int.h"

#include <fftw3.h>
#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#define AGC_EPS_REL 1e-6

struct condition_plan {
  condition_chain chain;
  double t_first_s, dt_s;
  size_t ns;
  const velocity_table *table;  /* borrowed; NULL when not needed */
  int needs_vel;
  size_t nfft, nspec;           /* band-pass transform (0 without a band-pass) */
  fftwf_plan fwd, inv;
  /* per step: BANDPASS nspec gains A(f_k)/nfft; SPHERICAL, POWER ns gain factors
   * (t/t_ref and (t/t_ref)^exponent); AGC none */
  float *curve[CONDITION_MAX_STEPS];
  size_t klo[CONDITION_MAX_STEPS], khi[CONDITION_MAX_STEPS];  /* bins with A > 0 */
  size_t half[CONDITION_MAX_STEPS];                           /* AGC half window */
  size_t gap[CONDITION_MAX_STEPS], nco[CONDITION_MAX_STEPS];  /* DECON, in samples */
  size_t max_lag;                                             /* DECON: largest gap + nco */
  int has_fk;
  condition_fk *fk[CONDITION_MAX_STEPS];                      /* FK, after set_offsets */
};

struct condition_workspace {
  const condition_plan *plan;   /* the plan it was made for (its caches belong to it) */
  size_t ns, nfft;
  float *buf;                   /* nfft real samples (fftwf_malloc: plan alignment) */
  fftwf_complex *spec;          /* nfft/2 + 1 bins */
  double *prefix;               /* ns + 1 running sums for AGC */
  float *vel;                   /* ns velocities sampled here when the caller has none */
  int64_t vel_cmp;
  int vel_valid;
  int64_t vref_cmp[CONDITION_MAX_STEPS];
  int vref_valid[CONDITION_MAX_STEPS];
  float vref_scale[CONDITION_MAX_STEPS];   /* 1 / V_rms(t_ref)^2 */
  double *acf, *acf1, *pef, *lev;          /* DECON: max_lag each; Levinson 4 max_lag */
  float *coef, *tmp;                       /* DECON: max_lag coefficients, ns samples */
  condition_fk_work *fkw[CONDITION_MAX_STEPS];
};

/* ---- names ---- */

static const char *const kind_names[] = {
  [CONDITION_BANDPASS] = "bandpass",
  [CONDITION_SPHERICAL] = "spherical_divergence",
  [CONDITION_POWER] = "power_gain",
  [CONDITION_AGC] = "agc",
  [CONDITION_DECON] = "deconvolution",
  [CONDITION_FK] = "fk_filter",
};
static const char *const measure_names[] = {
  [CONDITION_AGC_RMS] = "rms",
  [CONDITION_AGC_MEAN_ABS] = "mean_abs",
};
#define NKIND (sizeof kind_names / sizeof kind_names[0])
#define NMEASURE (sizeof measure_names / sizeof measure_names[0])
static const char *const ensemble_names[] = {
  [CONDITION_ENSEMBLE_TRACE] = "trace",
  [CONDITION_ENSEMBLE_RECORD] = "record",
};
#define NENSEMBLE (sizeof ensemble_names / sizeof ensemble_names[0])

const char *condition_ensemble_name(int e)
{
  return e >= 0 && (size_t)e < NENSEMBLE ? ensemble_names[e] : "unknown";
}

int condition_ensemble_parse(const char *s)
{
  for (size_t k = 0; s && k < NENSEMBLE; k++)
    if (!strcmp(s, ensemble_names[k]))
      return (int)k;
  return -1;
}

const char *condition_kind_name(int kind)
{
  return kind > 0 && (size_t)kind < NKIND && kind_names[kind] ? kind_names[kind] : "unknown";
}

int condition_kind_parse(const char *s)
{
  for (size_t k = 1; s && k < NKIND; k++)
    if (kind_names[k] && !strcmp(s, kind_names[k]))
      return (int)k;
  return -1;
}

const char *condition_agc_measure_name(int measure)
{
  return measure >= 0 && (size_t)measure < NMEASURE ? measure_names[measure] : "unknown";
}

int condition_agc_measure_parse(const char *s)
{
  for (size_t k = 0; s && k < NMEASURE; k++)
    if (!strcmp(s, measure_names[k]))
      return (int)k;
  return -1;
}

/* ---- formulas ---- */

double condition_trapezoid(const double c[4], double f_hz)
{
  double f = fabs(f_hz);
  if (f <= c[0] || f >= c[3])
    return 0.0;
  if (f < c[1])
    return (f - c[0]) / (c[1] - c[0]);
  if (f <= c[2])
    return 1.0;
  return (c[3] - f) / (c[3] - c[2]);
}

/* f^2 sinc^2(f t) with sinc(u) = sin(pi u)/(pi u); f^2 at t = 0. */
static double fsinc2(double f, double t)
{
  double u = M_PI * f * t;
  if (fabs(u) < 1e-8)
    return f * f;
  double s = sin(u) / (M_PI * t);
  return s * s;
}

double condition_ormsby_wavelet(const double c[4], double t_s)
{
  return (fsinc2(c[3], t_s) - fsinc2(c[2], t_s)) / (c[3] - c[2]) -
         (fsinc2(c[1], t_s) - fsinc2(c[0], t_s)) / (c[1] - c[0]);
}

double condition_spherical_gain(double t_s, double v_mps, double t_ref_s, double v_ref_mps)
{
  return t_s * v_mps * v_mps / (t_ref_s * v_ref_mps * v_ref_mps);
}

/* ---- the chain ---- */

void condition_chain_init(condition_chain *c)
{
  memset(c, 0, sizeof *c);
}

static condition_step *next_step(condition_chain *c, int kind, tz_err *err)
{
  if (c->n >= CONDITION_MAX_STEPS) {
    tz_fail(err, TZ_E_ARG, "a conditioning chain holds at most %d steps", CONDITION_MAX_STEPS);
    return NULL;
  }
  condition_step *s = &c->step[c->n];
  memset(s, 0, sizeof *s);
  s->kind = kind;
  return s;
}

static int check_time(double t_s, const char *what, tz_err *err)
{
  if (!isfinite(t_s) || t_s <= 0 || t_s * 1e3 > CONDITION_MAX_WINDOW_MS)
    return tz_fail(err, TZ_E_ARG, "%s %.10g ms is not between 0 (exclusive) and %g ms", what,
                   t_s * 1e3, CONDITION_MAX_WINDOW_MS);
  return TZ_OK;
}

int condition_chain_add_bandpass(condition_chain *c, const double f[4], tz_err *err)
{
  for (int k = 0; k < 4; k++)
    if (!isfinite(f[k]) || f[k] < 0)
      return tz_fail(err, TZ_E_ARG, "band-pass corner f%d = %.10g Hz is not a finite frequency >= 0",
                     k + 1, f[k]);
  if (f[1] <= f[0])
    return tz_fail(err, TZ_E_ARG, "band-pass corner f2 = %.10g Hz must be above f1 = %.10g Hz",
                   f[1], f[0]);
  if (f[2] < f[1])
    return tz_fail(err, TZ_E_ARG, "band-pass corner f3 = %.10g Hz is below f2 = %.10g Hz",
                   f[2], f[1]);
  if (f[3] <= f[2])
    return tz_fail(err, TZ_E_ARG, "band-pass corner f4 = %.10g Hz must be above f3 = %.10g Hz",
                   f[3], f[2]);
  condition_step *s = next_step(c, CONDITION_BANDPASS, err);
  if (!s)
    return err->status;
  memcpy(s->corners_hz, f, sizeof s->corners_hz);
  c->n++;
  return TZ_OK;
}

int condition_chain_add_spherical(condition_chain *c, double t_ref_s, double v_mps, tz_err *err)
{
  if (check_time(t_ref_s, "spherical divergence reference time", err))
    return err->status;
  if (!isfinite(v_mps) || (v_mps != 0 && (v_mps < VELOCITY_MIN_MPS || v_mps > VELOCITY_MAX_MPS)))
    return tz_fail(err, TZ_E_ARG,
                   "spherical divergence velocity %.10g m/s is not 0 (the velocity table) or "
                   "between %g and %g m/s",
                   v_mps, VELOCITY_MIN_MPS, VELOCITY_MAX_MPS);
  condition_step *s = next_step(c, CONDITION_SPHERICAL, err);
  if (!s)
    return err->status;
  s->reference_time_s = t_ref_s;
  s->velocity_mps = v_mps;
  c->n++;
  return TZ_OK;
}

int condition_chain_add_power(condition_chain *c, double exponent, double t_ref_s, tz_err *err)
{
  if (!isfinite(exponent) || fabs(exponent) > CONDITION_MAX_POWER)
    return tz_fail(err, TZ_E_ARG, "power gain exponent %.10g is not between -%g and %g", exponent,
                   CONDITION_MAX_POWER, CONDITION_MAX_POWER);
  if (check_time(t_ref_s, "power gain reference time", err))
    return err->status;
  condition_step *s = next_step(c, CONDITION_POWER, err);
  if (!s)
    return err->status;
  s->exponent = exponent;
  s->reference_time_s = t_ref_s;
  c->n++;
  return TZ_OK;
}

int condition_chain_add_agc(condition_chain *c, double window_s, int measure, tz_err *err)
{
  if (check_time(window_s, "AGC window", err))
    return err->status;
  if (measure < 0 || (size_t)measure >= NMEASURE)
    return tz_fail(err, TZ_E_ARG, "AGC measure %d is not rms (0) or mean_abs (1)", measure);
  condition_step *s = next_step(c, CONDITION_AGC, err);
  if (!s)
    return err->status;
  s->window_s = window_s;
  s->measure = measure;
  c->n++;
  return TZ_OK;
}

int condition_chain_add_decon(condition_chain *c, double op_s, double gap_s, double pct,
                              const double (*w)[3], size_t nw, int ensemble, tz_err *err)
{
  double max_s = CONDITION_MAX_OPERATOR_MS * 1e-3;
  if (!isfinite(op_s) || op_s <= 0 || op_s > max_s)
    return tz_fail(err, TZ_E_ARG, "operator_ms %.10g is not between 0 (exclusive) and %g",
                   op_s * 1e3, CONDITION_MAX_OPERATOR_MS);
  if (!isfinite(gap_s) || gap_s < 0)
    return tz_fail(err, TZ_E_ARG, "gap_ms %.10g is not 0 (spiking) or more", gap_s * 1e3);
  if (gap_s >= op_s)
    return tz_fail(err, TZ_E_ARG, "gap_ms %.10g is not shorter than operator_ms %.10g",
                   gap_s * 1e3, op_s * 1e3);
  if (!isfinite(pct) || pct < 0 || pct > 100)
    return tz_fail(err, TZ_E_ARG, "prewhitening_pct %.10g is not between 0 and 100", pct);
  if (ensemble < 0 || (size_t)ensemble >= NENSEMBLE)
    return tz_fail(err, TZ_E_ARG, "ensemble %d is not trace (0) or record (1)", ensemble);
  if (nw < 1 || nw > CONDITION_MAX_WINDOW_POINTS)
    return tz_fail(err, TZ_E_ARG, "window: %zu knots, expected 1 to %d", nw,
                   CONDITION_MAX_WINDOW_POINTS);
  for (size_t i = 0; i < nw; i++) {
    double x = w[i][0], t0 = w[i][1], t1 = w[i][2];
    if (!isfinite(x) || !isfinite(t0) || !isfinite(t1) || t0 < 0 ||
        t1 * 1e3 > CONDITION_MAX_WINDOW_MS)
      return tz_fail(err, TZ_E_ARG, "window[%zu]: [%.10g m, %.10g ms, %.10g ms] is not an "
                     "offset and two times between 0 and %g ms", i, x, t0 * 1e3, t1 * 1e3,
                     CONDITION_MAX_WINDOW_MS);
    if (i && !(fabs(x) > fabs(w[i - 1][0])))
      return tz_fail(err, TZ_E_ARG, "window[%zu]: |offset| %.10g m does not increase from "
                     "window[%zu] (%.10g m)", i, fabs(x), i - 1, fabs(w[i - 1][0]));
    if (!(t1 > t0))
      return tz_fail(err, TZ_E_ARG, "window[%zu]: end %.10g ms is not after start %.10g ms", i,
                     t1 * 1e3, t0 * 1e3);
    if (t1 - t0 < op_s)
      return tz_fail(err, TZ_E_ARG, "window[%zu]: the design window (%.10g ms) is shorter than "
                     "the operator (%.10g ms)", i, (t1 - t0) * 1e3, op_s * 1e3);
  }
  condition_step *s = next_step(c, CONDITION_DECON, err);
  if (!s)
    return err->status;
  s->operator_s = op_s;
  s->gap_s = gap_s;
  s->prewhitening_pct = pct;
  s->ensemble = ensemble;
  s->nwindow = nw;
  memcpy(s->window, w, nw * sizeof *w);
  c->n++;
  return TZ_OK;
}

int condition_chain_add_fk(condition_chain *c, const double v[2], int pass, double taper_pct,
                           double min_hz, tz_err *err)
{
  const char *key = pass ? "pass_mps" : "reject_mps";
  for (int k = 0; k < 2; k++)
    if (!isfinite(v[k]) || v[k] < 0 || v[k] > CONDITION_MAX_FK_MPS)
      return tz_fail(err, TZ_E_ARG, "%s[%d] = %.10g m/s is not between 0 and %g", key, k, v[k],
                     CONDITION_MAX_FK_MPS);
  if (!(v[1] > v[0]))
    return tz_fail(err, TZ_E_ARG, "%s: the fan's velocities are reversed or equal (%.10g, "
                   "%.10g m/s): give [slower, faster]", key, v[0], v[1]);
  if (!isfinite(taper_pct) || taper_pct < 0 || taper_pct > 100)
    return tz_fail(err, TZ_E_ARG, "taper_pct %.10g is not between 0 and 100", taper_pct);
  if (!isfinite(min_hz) || min_hz < 0)
    return tz_fail(err, TZ_E_ARG, "min_hz %.10g is not a frequency >= 0", min_hz);
  condition_step *s = next_step(c, CONDITION_FK, err);
  if (!s)
    return err->status;
  s->fan_mps[0] = v[0];
  s->fan_mps[1] = v[1];
  s->fan_pass = pass ? 1 : 0;
  s->taper_pct = taper_pct;
  s->min_hz = min_hz;
  c->n++;
  return TZ_OK;
}

int condition_chain_has_record_steps(const condition_chain *c)
{
  for (size_t k = 0; k < c->n; k++)
    if (c->step[k].kind == CONDITION_DECON || c->step[k].kind == CONDITION_FK)
      return 1;
  return 0;
}

int condition_chain_needs_velocity(const condition_chain *c)
{
  for (size_t k = 0; k < c->n; k++)
    if (c->step[k].kind == CONDITION_SPHERICAL && c->step[k].velocity_mps == 0)
      return 1;
  return 0;
}

/* ---- the plan ---- */

size_t condition_fast_size(size_t n)
{
  for (;; n++) {
    size_t m = n;
    while (m % 2 == 0)
      m /= 2;
    while (m % 3 == 0)
      m /= 3;
    while (m % 5 == 0)
      m /= 5;
    if (m == 1)
      return n;
  }
}

void condition_plan_free(condition_plan *p)
{
  if (!p)
    return;
  if (p->fwd)
    fftwf_destroy_plan(p->fwd);
  if (p->inv)
    fftwf_destroy_plan(p->inv);
  for (size_t k = 0; k < CONDITION_MAX_STEPS; k++) {
    free(p->curve[k]);
    condition_fk_free(p->fk[k]);
  }
  free(p);
}

static int make_fft(condition_plan *p, tz_err *err)
{
  p->nfft = condition_fast_size(2 * p->ns);
  p->nspec = p->nfft / 2 + 1;
  if (p->nfft > (size_t)INT32_MAX)
    return tz_fail(err, TZ_E_ARG, "trace of %zu samples is too long to filter", p->ns);
  float *x = fftwf_malloc(p->nfft * sizeof *x);
  fftwf_complex *X = fftwf_malloc(p->nspec * sizeof *X);
  int rc = TZ_OK;
  if (!x || !X) {
    rc = tz_fail(err, TZ_E_NOMEM, "FFT buffers of %zu samples", p->nfft);
  } else {
    p->fwd = fftwf_plan_dft_r2c_1d((int)p->nfft, x, X, FFTW_ESTIMATE);
    p->inv = fftwf_plan_dft_c2r_1d((int)p->nfft, X, x, FFTW_ESTIMATE);
    if (!p->fwd || !p->inv)
      rc = tz_fail(err, TZ_E_FFT, "FFTW cannot plan a real transform of %zu samples", p->nfft);
  }
  fftwf_free(x);
  fftwf_free(X);
  return rc;
}

static int plan_bandpass(condition_plan *p, size_t k, tz_err *err)
{
  const double *f = p->chain.step[k].corners_hz;
  double nyq = 0.5 / p->dt_s;
  for (int j = 0; j < 4; j++)
    if (f[j] >= nyq)
      return tz_fail(err, TZ_E_ARG,
                     "conditioning[%zu] (bandpass): corner f%d = %.10g Hz is at or above the "
                     "Nyquist frequency %.10g Hz (sample interval %.10g ms)",
                     k, j + 1, f[j], nyq, p->dt_s * 1e3);
  if (!p->fwd && make_fft(p, err))
    return err->status;
  float *A = malloc(p->nspec * sizeof *A);
  if (!A)
    return tz_fail(err, TZ_E_NOMEM, "band-pass response of %zu bins", p->nspec);
  p->curve[k] = A;
  double df = 1.0 / ((double)p->nfft * p->dt_s);
  size_t lo = p->nspec, hi = 0;
  for (size_t b = 0; b < p->nspec; b++) {
    A[b] = (float)(condition_trapezoid(f, (double)b * df) / (double)p->nfft);
    if (A[b] > 0) {
      if (lo == p->nspec)
        lo = b;
      hi = b + 1;
    }
  }
  if (lo == p->nspec)   /* pass band narrower than one bin: everything is removed */
    lo = hi = 0;
  p->klo[k] = lo;
  p->khi[k] = hi;
  return TZ_OK;
}

/* Deconvolution in samples; every knot's window, clipped to the trace, must hold the
 * lags the operator needs (the window length is concave in offset between knots, so
 * the knots are its shortest places). */
static int plan_decon(condition_plan *p, size_t k, tz_err *err)
{
  const condition_step *s = &p->chain.step[k];
  double nop = floor(s->operator_s / p->dt_s + 0.5), ngap = floor(s->gap_s / p->dt_s + 0.5);
  if (s->gap_s > 0 && ngap < 1)
    return tz_fail(err, TZ_E_ARG, "conditioning[%zu].gap_ms (deconvolution): %.10g ms is less "
                   "than one sample (%.10g ms)", k, s->gap_s * 1e3, p->dt_s * 1e3);
  if (s->gap_s == 0 && nop < 2)
    return tz_fail(err, TZ_E_ARG, "conditioning[%zu].operator_ms (deconvolution): %.10g ms is "
                   "fewer than two samples at %.10g ms", k, s->operator_s * 1e3, p->dt_s * 1e3);
  if (nop < 1)
    return tz_fail(err, TZ_E_ARG, "conditioning[%zu].operator_ms (deconvolution): %.10g ms is "
                   "less than one sample (%.10g ms)", k, s->operator_s * 1e3, p->dt_s * 1e3);
  /* The operator is the whole prediction error filter: gap samples (1 for spiking)
   * then operator - gap prediction coefficients. */
  p->gap[k] = s->gap_s == 0 ? 1 : (size_t)ngap;
  if ((size_t)nop <= p->gap[k])
    return tz_fail(err, TZ_E_ARG, "conditioning[%zu].gap_ms (deconvolution): the gap (%zu "
                   "samples) leaves no prediction coefficients in the %.0f-sample operator",
                   k, p->gap[k], nop);
  p->nco[k] = (size_t)nop - p->gap[k];
  size_t nlag = p->gap[k] + p->nco[k];
  for (size_t i = 0; i < s->nwindow; i++) {
    size_t i0, i1;
    condition_decon_window(s, s->window[i][0], p->t_first_s, p->dt_s, p->ns, &i0, &i1);
    if (i1 - i0 <= nlag)
      return tz_fail(err, TZ_E_ARG, "conditioning[%zu].window[%zu] (deconvolution): the "
                     "record (%zu samples from %.10g ms) holds %zu samples of the design "
                     "window, fewer than the %zu + 1 the operator needs", k, i, p->ns,
                     p->t_first_s * 1e3, i1 - i0, nlag);
  }
  if (nlag > p->max_lag)
    p->max_lag = nlag;
  return TZ_OK;
}

static int plan_gain(condition_plan *p, size_t k, tz_err *err)
{
  const condition_step *s = &p->chain.step[k];
  float *g = malloc(p->ns * sizeof *g);
  if (!g)
    return tz_fail(err, TZ_E_NOMEM, "gain curve of %zu samples", p->ns);
  p->curve[k] = g;
  for (size_t i = 0; i < p->ns; i++) {
    double t = p->t_first_s + (double)i * p->dt_s;
    double te = t > p->dt_s ? t : p->dt_s;   /* see "Gains use t = max(t_i, dt)" above */
    double r = te / s->reference_time_s;
    double gi = s->kind == CONDITION_POWER ? pow(r, s->exponent) : r;
    if (!(gi <= CONDITION_MAX_GAIN))
      return tz_fail(err, TZ_E_ARG, "conditioning[%zu] (%s): the gain reaches %.3g at %.10g ms, "
                     "beyond %g", k, condition_kind_name(s->kind), gi, te * 1e3, CONDITION_MAX_GAIN);
    g[i] = (float)gi;
  }
  return TZ_OK;
}

int condition_plan_new(condition_plan **out, const condition_chain *c, double t_first_s,
                       double dt_s, size_t ns, const velocity_table *table, tz_err *err)
{
  if (!isfinite(dt_s) || dt_s <= 0 || !isfinite(t_first_s))
    return tz_fail(err, TZ_E_ARG, "conditioning: sample interval %.10g s / first time %.10g s "
                   "is not usable", dt_s, t_first_s);
  if (ns < 1 || ns > CONDITION_MAX_SAMPLES)
    return tz_fail(err, TZ_E_ARG, "conditioning: %zu samples per trace is not between 1 and %d",
                   ns, CONDITION_MAX_SAMPLES);
  if (c->n > CONDITION_MAX_STEPS)
    return tz_fail(err, TZ_E_ARG, "conditioning: %zu steps (at most %d)", c->n,
                   CONDITION_MAX_STEPS);
  if (condition_chain_needs_velocity(c) && !table)
    return tz_fail(err, TZ_E_ARG, "conditioning: spherical divergence from the velocity table, "
                   "but there is no velocity table (give the step a velocity_mps)");
  condition_plan *p = calloc(1, sizeof *p);
  if (!p)
    return tz_fail(err, TZ_E_NOMEM, "conditioning plan");
  p->chain = *c;
  p->t_first_s = t_first_s;
  p->dt_s = dt_s;
  p->ns = ns;
  p->needs_vel = condition_chain_needs_velocity(c);
  p->table = p->needs_vel ? table : NULL;
  int rc = TZ_OK;
  for (size_t k = 0; k < c->n && !rc; k++) {
    const condition_step *s = &c->step[k];
    switch (s->kind) {
    case CONDITION_BANDPASS:
      rc = plan_bandpass(p, k, err);
      break;
    case CONDITION_SPHERICAL:
    case CONDITION_POWER:
      rc = plan_gain(p, k, err);
      break;
    case CONDITION_AGC:
      p->half[k] = (size_t)floor(s->window_s / (2 * dt_s) + 0.5);
      if (p->half[k] < 1)
        rc = tz_fail(err, TZ_E_ARG, "conditioning[%zu] (agc): window %.10g ms gives fewer than "
                     "three samples at the %.10g ms sample interval", k, s->window_s * 1e3,
                     dt_s * 1e3);
      break;
    case CONDITION_DECON:
      rc = plan_decon(p, k, err);
      break;
    case CONDITION_FK:
      p->has_fk = 1;   /* grid and transforms: condition_plan_set_offsets() */
      break;
    default:
      rc = tz_fail(err, TZ_E_ARG, "conditioning[%zu]: unknown step kind %d", k, s->kind);
    }
  }
  if (rc) {
    condition_plan_free(p);
    return rc;
  }
  *out = p;
  return TZ_OK;
}

int condition_plan_set_offsets(condition_plan *p, double spacing_m, double omin, double omax,
                               tz_err *err)
{
  for (size_t k = 0; k < p->chain.n; k++) {
    if (p->chain.step[k].kind != CONDITION_FK)
      continue;
    condition_fk *fk = NULL;
    int rc = condition_fk_new(&fk, &p->chain.step[k], k, p->ns, p->dt_s, spacing_m, omin, omax,
                              err);
    if (rc)
      return rc;
    condition_fk_free(p->fk[k]);
    p->fk[k] = fk;
  }
  return TZ_OK;
}

size_t condition_plan_ns(const condition_plan *p) { return p->ns; }
size_t condition_plan_fft_size(const condition_plan *p) { return p->nfft; }
int condition_plan_needs_velocity(const condition_plan *p) { return p->needs_vel; }

/* ---- workspace ---- */

void condition_workspace_free(condition_workspace *ws)
{
  if (!ws)
    return;
  fftwf_free(ws->buf);
  fftwf_free(ws->spec);
  free(ws->prefix);
  free(ws->vel);
  free(ws->acf);
  free(ws->acf1);
  free(ws->pef);
  free(ws->lev);
  free(ws->coef);
  free(ws->tmp);
  for (size_t k = 0; k < CONDITION_MAX_STEPS; k++)
    condition_fk_work_free(ws->fkw[k]);
  free(ws);
}

int condition_workspace_new(condition_workspace **out, const condition_plan *p, tz_err *err)
{
  condition_workspace *ws = calloc(1, sizeof *ws);
  if (!ws)
    return tz_fail(err, TZ_E_NOMEM, "conditioning workspace");
  ws->plan = p;
  ws->ns = p->ns;
  ws->nfft = p->nfft;
  int bad = 0;
  if (p->nfft) {
    ws->buf = fftwf_malloc(p->nfft * sizeof *ws->buf);
    ws->spec = fftwf_malloc(p->nspec * sizeof *ws->spec);
    bad |= !ws->buf || !ws->spec;
  }
  ws->prefix = malloc((p->ns + 1) * sizeof *ws->prefix);
  bad |= !ws->prefix;
  if (p->needs_vel) {
    ws->vel = malloc(p->ns * sizeof *ws->vel);
    bad |= !ws->vel;
  }
  if (p->max_lag) {
    size_t m = p->max_lag;
    ws->acf = malloc(m * sizeof *ws->acf);
    ws->acf1 = malloc(m * sizeof *ws->acf1);
    ws->pef = malloc(m * sizeof *ws->pef);
    ws->lev = malloc(4 * m * sizeof *ws->lev);
    ws->coef = malloc(m * sizeof *ws->coef);
    ws->tmp = malloc(p->ns * sizeof *ws->tmp);
    bad |= !ws->acf || !ws->acf1 || !ws->pef || !ws->lev || !ws->coef || !ws->tmp;
  }
  for (size_t k = 0; k < p->chain.n && !bad; k++) {
    if (p->chain.step[k].kind != CONDITION_FK)
      continue;
    if (!p->fk[k]) {
      condition_workspace_free(ws);
      return tz_fail(err, TZ_E_ARG, "conditioning[%zu] (fk_filter): the line's trace spacing "
                     "and offsets were never given (condition_plan_set_offsets)", k);
    }
    if (condition_fk_work_new(&ws->fkw[k], p->fk[k], err)) {
      condition_workspace_free(ws);
      return err->status;
    }
  }
  if (bad) {
    condition_workspace_free(ws);
    return tz_fail(err, TZ_E_NOMEM, "conditioning workspace for %zu samples", p->ns);
  }
  *out = ws;
  return TZ_OK;
}

/* ---- per trace ---- */

static void apply_bandpass(const condition_plan *p, size_t k, condition_workspace *ws, float *x)
{
  size_t ns = p->ns, lo = p->klo[k], hi = p->khi[k];
  const float *A = p->curve[k];
  memcpy(ws->buf, x, ns * sizeof *x);
  memset(ws->buf + ns, 0, (p->nfft - ns) * sizeof *ws->buf);
  fftwf_execute_dft_r2c(p->fwd, ws->buf, ws->spec);
  float *S = (float *)ws->spec;   /* interleaved re, im (FFTW's documented layout) */
  memset(S, 0, 2 * lo * sizeof *S);
  for (size_t b = lo; b < hi; b++) {
    S[2 * b] *= A[b];
    S[2 * b + 1] *= A[b];
  }
  memset(S + 2 * hi, 0, 2 * (p->nspec - hi) * sizeof *S);
  fftwf_execute_dft_c2r(p->inv, ws->spec, ws->buf);
  memcpy(x, ws->buf, ns * sizeof *x);
}

static void apply_curve(const float *restrict g, float *restrict x, size_t ns)
{
  for (size_t i = 0; i < ns; i++)
    x[i] *= g[i];
}

static void apply_spherical_table(const float *restrict g, const float *restrict v, float s,
                                  float *restrict x, size_t ns)
{
  for (size_t i = 0; i < ns; i++)
    x[i] *= g[i] * (v[i] * v[i]) * s;
}

static void apply_spherical(const condition_plan *p, size_t k, condition_workspace *ws,
                            int64_t cmp, const float *vel, float *x)
{
  const condition_step *s = &p->chain.step[k];
  if (s->velocity_mps > 0) {   /* constant V: t V^2 / (t_ref V^2) = t / t_ref */
    apply_curve(p->curve[k], x, p->ns);
    return;
  }
  if (!vel) {
    if (!ws->vel_valid || ws->vel_cmp != cmp) {
      velocity_sample(p->table, cmp, p->t_first_s, p->dt_s, p->ns, ws->vel, NULL);
      ws->vel_cmp = cmp;
      ws->vel_valid = 1;
    }
    vel = ws->vel;
  }
  if (!ws->vref_valid[k] || ws->vref_cmp[k] != cmp) {
    double vr = velocity_at(p->table, cmp, s->reference_time_s, NULL);
    ws->vref_scale[k] = (float)(1.0 / (vr * vr));
    ws->vref_cmp[k] = cmp;
    ws->vref_valid[k] = 1;
  }
  apply_spherical_table(p->curve[k], vel, ws->vref_scale[k], x, p->ns);
}

/* Level over samples [lo, hi) from the prefix sums. */
static inline double agc_level(const double *P, size_t lo, size_t hi, int rms)
{
  double m = (P[hi] - P[lo]) / (double)(hi - lo);
  return rms ? sqrt(m > 0 ? m : 0) : m;
}

static void apply_agc(const condition_plan *p, size_t k, condition_workspace *ws, float *x)
{
  size_t ns = p->ns, h = p->half[k];
  int rms = p->chain.step[k].measure == CONDITION_AGC_RMS;
  double *P = ws->prefix;
  P[0] = 0;
  if (rms)
    for (size_t i = 0; i < ns; i++)
      P[i + 1] = P[i] + (double)x[i] * x[i];
  else
    for (size_t i = 0; i < ns; i++)
      P[i + 1] = P[i] + fabs((double)x[i]);
  double eps = AGC_EPS_REL * agc_level(P, 0, ns, rms) + FLT_MIN;
  size_t i = 0;
  for (; i < ns && i < h; i++) {     /* head: window cut at sample 0 */
    size_t hi = i + h + 1 < ns ? i + h + 1 : ns;
    x[i] = (float)(x[i] / (agc_level(P, 0, hi, rms) + eps));
  }
  double inv_n = 1.0 / (double)(2 * h + 1);
  if (rms)
    for (; i + h < ns; i++)
      x[i] = (float)(x[i] / (sqrt(fmax((P[i + h + 1] - P[i - h]) * inv_n, 0)) + eps));
  else
    for (; i + h < ns; i++)
      x[i] = (float)(x[i] / ((P[i + h + 1] - P[i - h]) * inv_n + eps));
  for (; i < ns; i++)                /* tail: window cut at the last sample */
    x[i] = (float)(x[i] / (agc_level(P, i - h, ns, rms) + eps));
}

/* Step k (a per-trace kind) on one trace. */
static void apply_trace_step(const condition_plan *p, size_t k, condition_workspace *ws,
                             int64_t cmp, const float *vel_mps, float *x)
{
  switch (p->chain.step[k].kind) {
  case CONDITION_BANDPASS:
    apply_bandpass(p, k, ws, x);
    break;
  case CONDITION_SPHERICAL:
    apply_spherical(p, k, ws, cmp, vel_mps, x);
    break;
  case CONDITION_POWER:
    apply_curve(p->curve[k], x, p->ns);
    break;
  case CONDITION_AGC:
    apply_agc(p, k, ws, x);
    break;
  }
}

/* TZ_E_FORMAT naming the first non-finite sample of x. */
static int check_finite(const float *x, size_t ns, tz_err *err)
{
  double sum = 0;   /* one branch-free pass: any NaN or infinity makes the sum non-finite */
  for (size_t i = 0; i < ns; i++)
    sum += x[i];
  if (!isfinite(sum))
    for (size_t i = 0; i < ns; i++)
      if (!isfinite(x[i]))
        return tz_fail(err, TZ_E_FORMAT, "conditioning: sample %zu is not a finite number", i);
  return TZ_OK;
}

int condition_apply(const condition_plan *p, condition_workspace *ws, int64_t cmp,
                    const float *vel_mps, float *x, tz_err *err)
{
  if (ws->plan != p)
    return tz_fail(err, TZ_E_ARG, "conditioning workspace was made for another plan");
  if (!p->chain.n)
    return TZ_OK;
  if (condition_chain_has_record_steps(&p->chain))
    return tz_fail(err, TZ_E_ARG, "conditioning: the chain has record-wide steps "
                   "(deconvolution, fk_filter): condition whole records");
  if (check_finite(x, p->ns, err))
    return err->status;
  for (size_t k = 0; k < p->chain.n; k++)
    apply_trace_step(p, k, ws, cmp, vel_mps, x);
  return TZ_OK;
}

/* Autocorrelation of trace x in its design window into r[0 .. nlag), normalised to
 * r[0] = 1; 0 for a trace with no energy there (left out of averages, not filtered). */
static int trace_acf(const condition_plan *p, const condition_step *s, double offset_m,
                     const float *x, size_t nlag, double *r)
{
  size_t i0, i1;
  condition_decon_window(s, offset_m, p->t_first_s, p->dt_s, p->ns, &i0, &i1);
  memset(r, 0, nlag * sizeof *r);
  condition_decon_acf_add(x, i0, i1, nlag, r);
  if (!(r[0] > 0))
    return 0;
  double inv = 1.0 / r[0];
  for (size_t l = 0; l < nlag; l++)
    r[l] *= inv;
  return 1;
}

/* Prediction error filter from acf into ws->coef (the coefficients after the gap). */
static int decon_operator(const condition_plan *p, size_t k, condition_workspace *ws,
                          const double *acf, tz_err *err)
{
  const condition_step *s = &p->chain.step[k];
  size_t g = p->gap[k], n = p->nco[k];
  tz_err why;
  tz_err_init(&why);
  if (condition_wiener_pef(acf, g, n, s->prewhitening_pct, ws->pef, ws->lev, &why))
    return tz_fail(err, TZ_E_FORMAT, "conditioning[%zu] (deconvolution): %s; raise "
                   "prewhitening_pct", k, why.msg);
  for (size_t j = 0; j < n; j++)
    ws->coef[j] = (float)ws->pef[g + j];
  return TZ_OK;
}

static int apply_decon(const condition_plan *p, size_t k, condition_workspace *ws,
                       float *samples, size_t ntr, const condition_trace_info *info,
                       tz_err *err)
{
  const condition_step *s = &p->chain.step[k];
  size_t ns = p->ns, g = p->gap[k], n = p->nco[k], nlag = g + n;
  if (s->ensemble == CONDITION_ENSEMBLE_RECORD) {
    size_t nlive = 0;
    memset(ws->acf, 0, nlag * sizeof *ws->acf);
    for (size_t j = 0; j < ntr; j++)
      if (info[j].live && trace_acf(p, s, info[j].offset_m, samples + j * ns, nlag, ws->acf1)) {
        nlive++;
        for (size_t l = 0; l < nlag; l++)
          ws->acf[l] += ws->acf1[l];
      }
    if (!nlive)
      return TZ_OK;   /* a dead record stays dead */
    if (decon_operator(p, k, ws, ws->acf, err))
      return err->status;
    for (size_t j = 0; j < ntr; j++)
      if (info[j].live)
        condition_decon_filter(ws->coef, g, n, samples + j * ns, ws->tmp, ns);
    return TZ_OK;
  }
  for (size_t j = 0; j < ntr; j++) {
    float *x = samples + j * ns;
    if (!info[j].live || !trace_acf(p, s, info[j].offset_m, x, nlag, ws->acf))
      continue;
    if (decon_operator(p, k, ws, ws->acf, err)) {
      err->trace = (int64_t)j;
      return err->status;
    }
    condition_decon_filter(ws->coef, g, n, x, ws->tmp, ns);
  }
  return TZ_OK;
}

int condition_apply_record(const condition_plan *p, condition_workspace *ws, float *samples,
                           size_t ntr, const condition_trace_info *info, tz_err *err)
{
  if (ws->plan != p)
    return tz_fail(err, TZ_E_ARG, "conditioning workspace was made for another plan");
  if (!p->chain.n)
    return TZ_OK;
  size_t ns = p->ns;
  for (size_t j = 0; j < ntr; j++)
    if (info[j].live && check_finite(samples + j * ns, ns, err)) {
      err->trace = (int64_t)j;
      return err->status;
    }
  for (size_t k = 0; k < p->chain.n; k++) {
    int kind = p->chain.step[k].kind, rc = TZ_OK;
    if (kind == CONDITION_DECON)
      rc = apply_decon(p, k, ws, samples, ntr, info, err);
    else if (kind == CONDITION_FK)
      rc = condition_fk_apply(p->fk[k], ws->fkw[k], samples, ntr, info, err);
    else
      for (size_t j = 0; j < ntr; j++)
        if (info[j].live)
          apply_trace_step(p, k, ws, info[j].cmp, info[j].vel_mps, samples + j * ns);
    if (rc)
      return rc;
  }
  return TZ_OK;
}

int condition_plan_record_wide(const condition_plan *p)
{
  return condition_chain_has_record_steps(&p->chain);
}

int condition_plan_has_fk(const condition_plan *p)
{
  return p->has_fk;
}
