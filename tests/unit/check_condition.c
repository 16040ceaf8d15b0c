/* check_condition.c -- band-pass, spherical divergence, power gain and AGC.
 *
 * References: Ormsby wavelet and trapezoid band-pass (Ormsby 1961,
 * check values §4 #26 and #27), spherical divergence correction (Newman 1973;
 * Newman 1973, check value 28 of docs/references.md), t^alpha power gain (Claerbout
 * 1985), AGC definition (common practice).
 * Sinusoid amplitudes and phases are measured by a least-squares fit of sin and cos
 * (independent of the FFT under test). */
#include <math.h>
#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/condition.h"
#include "tzero/velocity.h"
#include "unit.h"

static const double ORMSBY[4] = { 5, 10, 40, 50 };

static condition_plan *plan_of(const condition_chain *c, double tf, double dt, size_t ns,
                               const velocity_table *vt)
{
  tz_err e;
  tz_err_init(&e);
  condition_plan *p = NULL;
  int rc = condition_plan_new(&p, c, tf, dt, ns, vt, &e);
  ck_assert_msg(rc == TZ_OK, "plan: %s", e.msg);
  return p;
}

static condition_workspace *ws_of(const condition_plan *p)
{
  tz_err e;
  tz_err_init(&e);
  condition_workspace *ws = NULL;
  ck_assert_int_eq(condition_workspace_new(&ws, p, &e), TZ_OK);
  return ws;
}

static void apply_ok(const condition_plan *p, condition_workspace *ws, int64_t cmp,
                     const float *vel, float *x)
{
  tz_err e;
  tz_err_init(&e);
  int rc = condition_apply(p, ws, cmp, vel, x, &e);
  ck_assert_msg(rc == TZ_OK, "apply: %s", e.msg);
}

/* Least-squares fit y ~ a sin(w t) + b cos(w t) over samples [lo, hi). */
static void fit_sinusoid(const float *y, size_t lo, size_t hi, double f, double dt, double *amp,
                         double *phase)
{
  double ss = 0, cc = 0, sc = 0, ys = 0, yc = 0;
  for (size_t i = lo; i < hi; i++) {
    double s = sin(2 * M_PI * f * (double)i * dt), c = cos(2 * M_PI * f * (double)i * dt);
    ss += s * s;
    cc += c * c;
    sc += s * c;
    ys += y[i] * s;
    yc += y[i] * c;
  }
  double det = ss * cc - sc * sc;
  double a = (ys * cc - yc * sc) / det, b = (yc * ss - ys * sc) / det;
  *amp = hypot(a, b);
  *phase = atan2(b, a);
}

/* computed from Ormsby 1961 (check value 26 of docs/references.md): w(0) = f4 + f3 - f2 - f1 = 75, w(10 ms) = -4.716300,
 * w(23 ms) = -9.203509 for corners (5, 10, 40, 50) Hz. */
START_TEST(test_ormsby_wavelet)
{
  ck_assert_double_eq_tol(condition_ormsby_wavelet(ORMSBY, 0.0), 75.0, 1e-9);
  ck_assert_double_eq_tol(condition_ormsby_wavelet(ORMSBY, 0.010), -4.716300, 1e-6 * 4.7163);
  ck_assert_double_eq_tol(condition_ormsby_wavelet(ORMSBY, 0.023), -9.203509, 1e-6 * 9.2035);
  ck_assert_double_eq_tol(condition_ormsby_wavelet(ORMSBY, -0.023), -9.203509, 1e-6 * 9.2035);
  /* trapezoid itself (Ormsby 1961 definition) */
  ck_assert_double_eq(condition_trapezoid(ORMSBY, 5), 0);
  ck_assert_double_eq_tol(condition_trapezoid(ORMSBY, 7.5), 0.5, 1e-12);
  ck_assert_double_eq(condition_trapezoid(ORMSBY, 25), 1);
  ck_assert_double_eq_tol(condition_trapezoid(ORMSBY, -45), 0.5, 1e-12);
  ck_assert_double_eq(condition_trapezoid(ORMSBY, 60), 0);
}
END_TEST

/* The filter's impulse response is the Ormsby wavelet sampled: h[n] = dt w(n dt)
 * (Ormsby 1961: w is the exact inverse transform of the trapezoid; the
 * discrete response differs only by the aliased tails at +-nfft dt, below 1e-3 of
 * the peak for these sizes). */
START_TEST(test_impulse_response_is_ormsby)
{
  const double dt = 0.002;
  const size_t ns = 501, mid = 250;
  condition_chain c;
  condition_chain_init(&c);
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(condition_chain_add_bandpass(&c, ORMSBY, &e), TZ_OK);
  condition_plan *p = plan_of(&c, 0, dt, ns, NULL);
  ck_assert_uint_eq(condition_plan_fft_size(p), 1024);   /* 2^10 >= 2 x 501 */
  condition_workspace *ws = ws_of(p);
  float x[501] = { 0 };
  x[mid] = 1;
  apply_ok(p, ws, 0, NULL, x);
  double peak = dt * 75.0, worst = 0;
  for (size_t i = 0; i < ns; i++) {
    double want = dt * condition_ormsby_wavelet(ORMSBY, ((double)i - (double)mid) * dt);
    worst = fmax(worst, fabs(x[i] - want));
  }
  ck_assert_msg(worst < 1e-3 * peak, "impulse response off by %g (peak %g)", worst, peak);
  condition_workspace_free(ws);
  condition_plan_free(p);
}
END_TEST

/* computed from Ormsby 1961 (check value 27 of docs/references.md): corners (5, 10, 40, 50) Hz, 4 ms, 1000 samples; unit sinusoids
 * at 25 / 7.5 / 45 / 60 Hz come out with amplitude 1.0 / 0.5 / 0.5 / 0.0. Measured
 * away from the trace ends (the zero padding makes the ends behave as a finite
 * record, as it should); zero phase: the fitted phase is unchanged. */
START_TEST(test_bandpass_sinusoids)
{
  const double dt = 0.004, freq[4] = { 25, 7.5, 45, 60 }, want[4] = { 1.0, 0.5, 0.5, 0.0 };
  const size_t ns = 1000;
  const double phase0 = 0.3;
  condition_chain c;
  condition_chain_init(&c);
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(condition_chain_add_bandpass(&c, ORMSBY, &e), TZ_OK);
  condition_plan *p = plan_of(&c, 0, dt, ns, NULL);
  condition_workspace *ws = ws_of(p);
  float x[1000];
  for (int k = 0; k < 4; k++) {
    for (size_t i = 0; i < ns; i++)
      x[i] = (float)sin(2 * M_PI * freq[k] * (double)i * dt + phase0);
    apply_ok(p, ws, 0, NULL, x);
    double amp, ph;
    fit_sinusoid(x, 200, 800, freq[k], dt, &amp, &ph);
    ck_assert_msg(fabs(amp - want[k]) < 5e-3, "%g Hz: amplitude %g, want %g", freq[k], amp,
                  want[k]);
    if (want[k] > 0)
      ck_assert_msg(fabs(ph - phase0) < 5e-3, "%g Hz: phase %g, want %g (zero phase)", freq[k],
                    ph, phase0);
  }
  condition_workspace_free(ws);
  condition_plan_free(p);
}
END_TEST

START_TEST(test_bandpass_arguments)
{
  struct { double f[4]; const char *needle; } bad[] = {
    { { 10, 5, 40, 50 }, "f2 = 5 Hz must be above f1 = 10 Hz" },
    { { 5, 10, 8, 50 }, "f3 = 8 Hz is below f2 = 10 Hz" },
    { { 5, 10, 40, 40 }, "f4 = 40 Hz must be above f3 = 40 Hz" },
    { { -1, 10, 40, 50 }, "f1 = -1 Hz" },
    { { 5, NAN, 40, 50 }, "f2 = nan Hz" },
  };
  for (size_t k = 0; k < sizeof bad / sizeof bad[0]; k++) {
    condition_chain c;
    condition_chain_init(&c);
    tz_err e;
    tz_err_init(&e);
    ck_assert_int_eq(condition_chain_add_bandpass(&c, bad[k].f, &e), TZ_E_ARG);
    ck_assert_msg(strstr(e.msg, bad[k].needle), "message '%s' lacks '%s'", e.msg, bad[k].needle);
    ck_assert_uint_eq(c.n, 0);
  }
  /* f2 == f3 is a triangle, allowed (Ormsby 1961: f2 <= f3) */
  condition_chain c;
  condition_chain_init(&c);
  tz_err e;
  tz_err_init(&e);
  const double tri[4] = { 5, 20, 20, 40 };
  ck_assert_int_eq(condition_chain_add_bandpass(&c, tri, &e), TZ_OK);
  /* Nyquist of 4 ms is 125 Hz: a corner at or above it is refused at plan time */
  const double high[4] = { 5, 10, 100, 125 };
  ck_assert_int_eq(condition_chain_add_bandpass(&c, high, &e), TZ_OK);
  condition_plan *p = NULL;
  ck_assert_int_eq(condition_plan_new(&p, &c, 0, 0.004, 500, NULL, &e), TZ_E_ARG);
  ck_assert_ptr_null(p);
  ck_assert_msg(strstr(e.msg, "conditioning[1] (bandpass): corner f4 = 125 Hz") &&
                    strstr(e.msg, "Nyquist frequency 125 Hz"),
                "%s", e.msg);
  /* a bad axis */
  tz_err_init(&e);
  ck_assert_int_eq(condition_plan_new(&p, &c, 0, 0, 500, NULL, &e), TZ_E_ARG);
  tz_err_init(&e);
  ck_assert_int_eq(condition_plan_new(&p, &c, 0, 0.004, 0, NULL, &e), TZ_E_ARG);
}
END_TEST

static velocity_table *linear_table(void)
{
  /* V_rms = 1500 + 500 t (s): 2000 m/s at 1 s, 2500 m/s at 2 s, at CMP 10 */
  tz_err e;
  tz_err_init(&e);
  velocity_table *vt = NULL;
  ck_assert_int_eq(velocity_table_new(&vt, 0, &e), TZ_OK);
  ck_assert_int_eq(velocity_table_add(vt, 10, 0.0, 1500, 0, &e), TZ_OK);
  ck_assert_int_eq(velocity_table_add(vt, 10, 3.0, 3000, 0, &e), TZ_OK);
  return vt;
}

/* computed from Newman 1973 (check value 28 of docs/references.md): t = 2 s, V_rms = 2500 m/s, reference t = 1 s,
 * V_rms = 2000 m/s gives g = 3.125. */
START_TEST(test_spherical_divergence)
{
  ck_assert_double_eq_tol(condition_spherical_gain(2.0, 2500, 1.0, 2000), 3.125, 1e-12);
  const double dt = 0.004;
  const size_t ns = 600;
  velocity_table *vt = linear_table();
  condition_chain c;
  condition_chain_init(&c);
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(condition_chain_add_spherical(&c, 1.0, 0, &e), TZ_OK);
  ck_assert_int_eq(condition_chain_needs_velocity(&c), 1);
  condition_plan *none = NULL;
  ck_assert_int_eq(condition_plan_new(&none, &c, 0, dt, ns, NULL, &e), TZ_E_ARG);
  condition_plan *p = plan_of(&c, 0, dt, ns, vt);
  condition_workspace *ws = ws_of(p);
  float x[600], y[600], vel[600];
  for (size_t i = 0; i < ns; i++)
    x[i] = y[i] = 1.0f;
  apply_ok(p, ws, 10, NULL, x);                 /* velocities sampled by the workspace */
  velocity_sample(vt, 10, 0, dt, ns, vel, NULL);
  apply_ok(p, ws, 10, vel, y);                  /* velocities from the caller */
  ck_assert_double_eq_tol(x[500], 3.125, 3.125e-5);   /* t = 2.000 s */
  ck_assert_double_eq_tol(x[250], 1.0, 1e-5);         /* t = 1.000 s: the reference */
  ck_assert_double_eq_tol(x[125], 0.5 * 1750.0 * 1750 / (2000.0 * 2000), 1e-5);
  ck_assert(memcmp(x, y, sizeof x) == 0);
  ck_assert(x[0] > 0 && x[0] < x[1]);           /* t = 0 takes the time of one sample */
  /* constant velocity: V cancels, g = t / t_ref (Newman 1973) */
  condition_chain_init(&c);
  ck_assert_int_eq(condition_chain_add_spherical(&c, 0.5, 1800, &e), TZ_OK);
  ck_assert_int_eq(condition_chain_needs_velocity(&c), 0);
  condition_plan *pc = plan_of(&c, 0, dt, ns, NULL);
  condition_workspace *wc = ws_of(pc);
  for (size_t i = 0; i < ns; i++)
    x[i] = 1.0f;
  apply_ok(pc, wc, 0, NULL, x);
  ck_assert_double_eq_tol(x[500], 4.0, 4e-6);
  condition_workspace_free(wc);
  condition_plan_free(pc);
  /* bad parameters name the value */
  tz_err_init(&e);
  ck_assert_int_eq(condition_chain_add_spherical(&c, 0, 0, &e), TZ_E_ARG);
  ck_assert_msg(strstr(e.msg, "reference time 0 ms"), "%s", e.msg);
  tz_err_init(&e);
  ck_assert_int_eq(condition_chain_add_spherical(&c, 1, -5, &e), TZ_E_ARG);
  ck_assert_msg(strstr(e.msg, "-5 m/s"), "%s", e.msg);
  condition_workspace_free(ws);
  condition_plan_free(p);
  velocity_table_free(vt);
}
END_TEST

/* Power gain (t / t_ref)^alpha (alpha = 2 as argued by Claerbout 1985). */
START_TEST(test_power_gain)
{
  condition_chain c;
  condition_chain_init(&c);
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(condition_chain_add_power(&c, 2.0, 1.0, &e), TZ_OK);
  condition_plan *p = plan_of(&c, -0.1, 0.002, 1200, NULL);   /* 100 ms delay before zero */
  condition_workspace *ws = ws_of(p);
  float x[1200];
  for (size_t i = 0; i < 1200; i++)
    x[i] = -2.0f;
  apply_ok(p, ws, 0, NULL, x);
  ck_assert_double_eq_tol(x[300], -2.0 * 0.25, 1e-6);       /* t = 0.5 s */
  ck_assert_double_eq_tol(x[1050], -2.0 * 4.0, 1e-5);       /* t = 2.0 s */
  ck_assert(x[0] < 0 && x[0] == x[50]);                     /* t <= dt: gain of dt */
  ck_assert_int_eq(condition_chain_add_power(&c, 11, 1.0, &e), TZ_E_ARG);
  /* a workspace belongs to its plan */
  condition_plan *other = plan_of(&c, -0.1, 0.002, 1200, NULL);
  tz_err_init(&e);
  ck_assert_int_eq(condition_apply(other, ws, 0, NULL, x, &e), TZ_E_ARG);
  condition_plan_free(other);
  /* a gain beyond single-precision comfort is refused: (1 ms / 1000 s)^-4 = 1e24 */
  condition_chain_init(&c);
  tz_err_init(&e);
  ck_assert_int_eq(condition_chain_add_power(&c, -4, 1000.0, &e), TZ_OK);
  ck_assert_int_eq(condition_plan_new(&other, &c, 0, 0.001, 100, NULL, &e), TZ_E_ARG);
  ck_assert_msg(strstr(e.msg, "conditioning[0] (power_gain): the gain reaches 1e+24"), "%s",
                e.msg);
  condition_workspace_free(ws);
  condition_plan_free(p);
}
END_TEST

/* Peak |y| over each whole period in [lo, hi), returned as min and max. */
static void envelope_range(const float *y, size_t lo, size_t hi, size_t period, double *mn,
                           double *mx)
{
  *mn = INFINITY;
  *mx = 0;
  for (size_t a = lo; a + period <= hi; a += period) {
    double pk = 0;
    for (size_t i = a; i < a + period; i++)
      pk = fmax(pk, fabs(y[i]));
    *mn = fmin(*mn, pk);
    *mx = fmax(*mx, pk);
  }
}

/* AGC (common practice): a constant-amplitude sinusoid comes out
 * flat, with unit RMS (peak sqrt 2) or unit mean |y| (peak pi/2). A decaying sinusoid
 * is balanced to the same level. */
START_TEST(test_agc)
{
  const double dt = 0.002, f = 25;           /* period 40 ms = 20 samples */
  const size_t ns = 1500;
  float x[1500];
  struct { double window_s; int measure; double peak, tol; double decay; } cases[] = {
    { 0.200, CONDITION_AGC_RMS, M_SQRT2, 2e-3, 0 },       /* window of 5 periods + 1 sample */
    { 0.250, CONDITION_AGC_RMS, M_SQRT2, 1e-2, 0 },       /* 6.25 periods */
    { 0.200, CONDITION_AGC_MEAN_ABS, M_PI / 2, 2e-3, 0 },
    { 0.200, CONDITION_AGC_RMS, M_SQRT2, 1e-2, 1.5 },     /* amplitude e^(-1.5 t) */
  };
  for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
    condition_chain c;
    condition_chain_init(&c);
    tz_err e;
    tz_err_init(&e);
    ck_assert_int_eq(condition_chain_add_agc(&c, cases[k].window_s, cases[k].measure, &e), TZ_OK);
    condition_plan *p = plan_of(&c, 0, dt, ns, NULL);
    condition_workspace *ws = ws_of(p);
    for (size_t i = 0; i < ns; i++) {
      double t = (double)i * dt;
      x[i] = (float)(3.0 * exp(-cases[k].decay * t) * sin(2 * M_PI * f * t + M_PI / 2));   /* samples hit the peaks */
    }
    apply_ok(p, ws, 0, NULL, x);
    double mn, mx;
    envelope_range(x, 100, ns - 100, 20, &mn, &mx);
    /* level within 2 % (a window of 2h+1 samples is not a whole number of periods:
     * its mean of sin^2 is off 1/2 by up to 1/(2 pi periods); nor is a decaying
     * signal's window RMS its centre value); flatness within the case's tolerance */
    ck_assert_msg(fabs(mn - cases[k].peak) < 2e-2 * cases[k].peak &&
                      fabs(mx - cases[k].peak) < 2e-2 * cases[k].peak &&
                      mx - mn < cases[k].tol * cases[k].peak,
                  "case %zu: envelope %g..%g, want %g", k, mn, mx, cases[k].peak);
    condition_workspace_free(ws);
    condition_plan_free(p);
  }
  /* a dead trace stays zero (guard epsilon), not NaN */
  condition_chain c;
  condition_chain_init(&c);
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(condition_chain_add_agc(&c, 0.5, CONDITION_AGC_RMS, &e), TZ_OK);
  condition_plan *p = plan_of(&c, 0, dt, ns, NULL);
  condition_workspace *ws = ws_of(p);
  memset(x, 0, sizeof x);
  apply_ok(p, ws, 0, NULL, x);
  for (size_t i = 0; i < ns; i++)
    ck_assert(x[i] == 0.0f);
  /* a window longer than the trace is the whole trace; shorter than 3 samples fails */
  condition_workspace_free(ws);
  condition_plan_free(p);
  condition_chain_init(&c);
  ck_assert_int_eq(condition_chain_add_agc(&c, 0.0009, CONDITION_AGC_RMS, &e), TZ_OK);
  ck_assert_int_eq(condition_plan_new(&p, &c, 0, dt, ns, NULL, &e), TZ_E_ARG);
  ck_assert_msg(strstr(e.msg, "conditioning[0] (agc): window 0.9 ms gives fewer than three samples"), "%s", e.msg);
  condition_chain_init(&c);
  tz_err_init(&e);
  ck_assert_int_eq(condition_chain_add_agc(&c, 10.0, CONDITION_AGC_RMS, &e), TZ_OK);
  p = plan_of(&c, 0, dt, 100, NULL);
  ws = ws_of(p);
  for (size_t i = 0; i < 100; i++)
    x[i] = i % 2 ? 2.0f : -2.0f;
  apply_ok(p, ws, 0, NULL, x);
  for (size_t i = 0; i < 100; i++)
    ck_assert_double_eq_tol(fabs(x[i]), 1.0, 1e-5);
  ck_assert_int_eq(condition_chain_add_agc(&c, 0.5, 7, &e), TZ_E_ARG);
  condition_workspace_free(ws);
  condition_plan_free(p);
}
END_TEST

START_TEST(test_chain_rules)
{
  condition_chain c;
  condition_chain_init(&c);
  tz_err e;
  tz_err_init(&e);
  for (int k = 0; k < CONDITION_MAX_STEPS; k++)
    ck_assert_int_eq(condition_chain_add_power(&c, 1, 1, &e), TZ_OK);
  ck_assert_int_eq(condition_chain_add_agc(&c, 0.5, 0, &e), TZ_E_ARG);
  ck_assert_uint_eq(c.n, CONDITION_MAX_STEPS);
  for (int k = CONDITION_BANDPASS; k <= CONDITION_AGC; k++)
    ck_assert_int_eq(condition_kind_parse(condition_kind_name(k)), k);
  ck_assert_int_eq(condition_kind_parse("bandpas"), -1);
  ck_assert_str_eq(condition_kind_name(99), "unknown");
  ck_assert_int_eq(condition_agc_measure_parse("mean_abs"), CONDITION_AGC_MEAN_ABS);
  ck_assert_int_eq(condition_agc_measure_parse("rms"), CONDITION_AGC_RMS);
  ck_assert_int_eq(condition_agc_measure_parse(NULL), -1);
  /* an empty chain does nothing; a NaN sample is refused with its index */
  condition_chain_init(&c);
  condition_plan *p = plan_of(&c, 0, 0.004, 8, NULL);
  condition_workspace *ws = ws_of(p);
  float x[8] = { 1, 2, 3, 4, 5, 6, 7, 8 }, y[8];
  memcpy(y, x, sizeof x);
  apply_ok(p, ws, 0, NULL, x);
  ck_assert(memcmp(x, y, sizeof x) == 0);
  condition_workspace_free(ws);
  condition_plan_free(p);
  const double f[4] = { 5, 10, 40, 50 };
  ck_assert_int_eq(condition_chain_add_bandpass(&c, f, &e), TZ_OK);
  p = plan_of(&c, 0, 0.004, 8, NULL);
  ck_assert_uint_eq(condition_plan_fft_size(p), 16);
  ws = ws_of(p);
  x[5] = NAN;
  tz_err_init(&e);
  ck_assert_int_eq(condition_apply(p, ws, 0, NULL, x, &e), TZ_E_FORMAT);
  ck_assert_msg(strstr(e.msg, "sample 5 is not a finite number"), "%s", e.msg);
  condition_workspace_free(ws);
  condition_plan_free(p);
}
END_TEST

/* The record-level call: every live trace conditioned exactly as one
 * condition_apply() call would (consistency check), dead traces untouched, and an
 * error names the trace's index within the record. */
START_TEST(test_apply_record)
{
  velocity_table *vt = linear_table();
  condition_chain c;
  condition_chain_init(&c);
  tz_err e;
  tz_err_init(&e);
  const double f[4] = { 4, 8, 60, 90 };
  ck_assert_int_eq(condition_chain_add_spherical(&c, 1.0, 0, &e), TZ_OK);
  ck_assert_int_eq(condition_chain_add_bandpass(&c, f, &e), TZ_OK);
  ck_assert_int_eq(condition_chain_add_agc(&c, 0.3, CONDITION_AGC_RMS, &e), TZ_OK);
  condition_plan *p = plan_of(&c, 0, 0.002, 500, vt);
  ck_assert_int_eq(condition_plan_record_wide(p), 0);
  condition_workspace *ws = ws_of(p);
  enum { NT = 6, NS = 500 };
  static float rec[NT * NS], ref[NT * NS];
  condition_trace_info info[NT];
  unsigned s = 777;
  for (size_t i = 0; i < NT * NS; i++) {
    s = s * 1103515245u + 12345u;
    rec[i] = ref[i] = (float)((double)(s >> 8) / (1 << 24) - 0.5);
  }
  for (size_t k = 0; k < NT; k++) {
    info[k].cmp = 10 + (int64_t)k;
    info[k].vel_mps = NULL;
    info[k].offset_m = 25.0 * (double)k - 50;
    info[k].live = k != 2;
    if (info[k].live)
      apply_ok(p, ws, info[k].cmp, NULL, ref + k * NS);
  }
  ck_assert_int_eq(condition_apply_record(p, ws, rec, NT, info, &e), TZ_OK);
  ck_assert(memcmp(rec, ref, sizeof rec) == 0);
  rec[4 * NS + 7] = NAN;
  tz_err_init(&e);
  ck_assert_int_eq(condition_apply_record(p, ws, rec, NT, info, &e), TZ_E_FORMAT);
  ck_assert_int_eq(e.trace, 4);
  condition_workspace_free(ws);
  condition_plan_free(p);
  velocity_table_free(vt);
}
END_TEST

/* Threads: one plan, a workspace per thread; the same traces come out bitwise the same
 * as a serial run (DEVELOPERS.md, threads: identical output for any thread count). */
#define TNS 1500
#define TNTR 64
struct tjob {
  const condition_plan *p;
  float *data;          /* TNTR x TNS, conditioned in place */
  int rc;
};

static void *thread_run(void *arg)
{
  struct tjob *j = arg;
  tz_err e;
  tz_err_init(&e);
  condition_workspace *ws = NULL;
  j->rc = condition_workspace_new(&ws, j->p, &e);
  for (size_t t = 0; t < TNTR && !j->rc; t++)
    j->rc = condition_apply(j->p, ws, 10 + (int64_t)(t % 3), NULL, j->data + t * TNS, &e);
  condition_workspace_free(ws);
  return NULL;
}

START_TEST(test_threads_bitwise)
{
  velocity_table *vt = linear_table();
  condition_chain c;
  condition_chain_init(&c);
  tz_err e;
  tz_err_init(&e);
  const double f[4] = { 4, 8, 60, 90 };
  ck_assert_int_eq(condition_chain_add_spherical(&c, 1.0, 0, &e), TZ_OK);
  ck_assert_int_eq(condition_chain_add_bandpass(&c, f, &e), TZ_OK);
  ck_assert_int_eq(condition_chain_add_agc(&c, 0.3, CONDITION_AGC_RMS, &e), TZ_OK);
  condition_plan *p = plan_of(&c, 0, 0.002, TNS, vt);
  size_t n = (size_t)TNTR * TNS;
  float *ref = malloc(n * sizeof *ref), *a = malloc(n * sizeof *a), *b = malloc(n * sizeof *b);
  ck_assert(ref && a && b);
  unsigned s = 12345;
  for (size_t i = 0; i < n; i++) {
    s = s * 1103515245u + 12345u;
    ref[i] = a[i] = b[i] = (float)((double)(s >> 8) / (1 << 24) - 0.5);
  }
  struct tjob serial = { p, ref, 0 };
  thread_run(&serial);
  ck_assert_int_eq(serial.rc, TZ_OK);
  struct tjob ja = { p, a, 0 }, jb = { p, b, 0 };
  pthread_t ta, tb;
  ck_assert_int_eq(pthread_create(&ta, NULL, thread_run, &ja), 0);
  ck_assert_int_eq(pthread_create(&tb, NULL, thread_run, &jb), 0);
  pthread_join(ta, NULL);
  pthread_join(tb, NULL);
  ck_assert_int_eq(ja.rc, TZ_OK);
  ck_assert_int_eq(jb.rc, TZ_OK);
  ck_assert(memcmp(ref, a, n * sizeof *a) == 0);
  ck_assert(memcmp(ref, b, n * sizeof *b) == 0);
  free(ref);
  free(a);
  free(b);
  condition_plan_free(p);
  velocity_table_free(vt);
}
END_TEST

static Suite *condition_suite(void)
{
  Suite *s = suite_create("condition");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_ormsby_wavelet);
  tcase_add_test(tc, test_impulse_response_is_ormsby);
  tcase_add_test(tc, test_bandpass_sinusoids);
  tcase_add_test(tc, test_bandpass_arguments);
  tcase_add_test(tc, test_spherical_divergence);
  tcase_add_test(tc, test_power_gain);
  tcase_add_test(tc, test_agc);
  tcase_add_test(tc, test_chain_rules);
  tcase_add_test(tc, test_threads_bitwise);
  tcase_add_test(tc, test_apply_record);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(condition_suite)
