/* check_firstbreak.c -- first-break picking on records made with the Ricker
 * wavelet (Ricker 1953, r(t) = (1 - 2 pi^2 f^2 t^2) exp(-pi^2 f^2 t^2)) at known
 * times, evaluated here, not by the code under test. */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/firstbreak.h"
#include "unit.h"

#define PI 3.14159265358979323846
#define NT 48
#define NS 500

static double ricker(double f, double t)
{
  double a = PI * PI * f * f * t * t;
  return (1.0 - 2.0 * a) * exp(-a);
}

static double lcg_uniform(unsigned long *s)   /* a fixed LCG (common practice) */
{
  *s = (*s * 1103515245ul + 12345ul) & 0x7ffffffful;
  return (double)*s / 2147483648.0 * 2.0 - 1.0;
}

/* Split spread, offsets -235..235 m every 10 m, first arrival at 20 ms +
 * |x| / 1800 m/s, a reflection 150 ms later, noise of 2 % of the arrival.
 * Returns the true first-arrival times (ms). */
static void make_record(float *s, double *off, double *tt, double noise, unsigned long seed)
{
  for (int i = 0; i < NT; i++) {
    off[i] = -235.0 + 10.0 * i;
    tt[i] = 20.0 + 1000.0 * fabs(off[i]) / 1800.0;
    double pol = i % 3 ? 1.0 : -1.0;
    for (int k = 0; k < NS; k++) {
      double t = (double)k;  /* 1 ms samples */
      s[i * NS + k] = (float)(pol * ricker(30.0, (t - tt[i]) / 1000.0) +
                              0.5 * ricker(30.0, (t - tt[i] - 150.0) / 1000.0) +
                              noise * lcg_uniform(&seed));
    }
  }
}

/* Picks within one sample of the true arrival on every trace (the issue's
 * criterion), guided by the true linear moveout and unguided. */
START_TEST(test_picks_within_a_sample)
{
  float *s = malloc(NT * NS * sizeof *s);
  double off[NT], tt[NT];
  make_record(s, off, tt, 0.02, 7);
  firstbreak_params p;
  firstbreak_params_init(&p);
  firstbreak_guide g;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(firstbreak_guide_linear(&g, 1800.0, 20.0, 300.0, &e), TZ_OK);
  firstbreak_pick pk[NT];
  for (int guided = 0; guided < 2; guided++) {
    ck_assert_int_eq(firstbreak_pick_record(&p, guided ? &g : NULL, s, NT, NS, 1.0, 0.0, off,
                                            NULL, pk, &e), TZ_OK);
    for (int i = 0; i < NT; i++) {
      ck_assert_int_eq(pk[i].status, FIRSTBREAK_OK);
      ck_assert_double_eq_tol(pk[i].time_ms, tt[i], 1.0);
      ck_assert(pk[i].quality > 0.9 && pk[i].quality <= 1.0);
    }
  }
  /* zero crossing before the main lobe: 1 / (pi f sqrt 2) = 7.503 ms before the
   * centre at 30 Hz (root of 1 - 2 pi^2 f^2 t^2) */
  p.refine = FIRSTBREAK_REFINE_ZERO;
  ck_assert_int_eq(firstbreak_pick_record(&p, &g, s, NT, NS, 1.0, 0.0, off, NULL, pk, &e),
                   TZ_OK);
  for (int i = 0; i < NT; i++)
    ck_assert_double_eq_tol(pk[i].time_ms, tt[i] - 1000.0 / (PI * 30.0 * sqrt(2.0)), 0.6);
  free(s);
}
END_TEST

/* Dead traces give no pick; a trace with a strong early burst is picked on the
 * burst and rejected against the record's trend; the neighbours keep theirs. */
START_TEST(test_dead_and_outlier)
{
  float *s = malloc(NT * NS * sizeof *s);
  double off[NT], tt[NT];
  make_record(s, off, tt, 0.01, 11);
  memset(s + 5 * NS, 0, NS * sizeof *s);          /* all-zero trace */
  for (int k = 0; k < NS; k++)                     /* burst 25 ms early on trace 30 */
    s[30 * NS + k] += (float)(4.0 * ricker(30.0, ((double)k - tt[30] + 25.0) / 1000.0));
  unsigned char live[NT];
  memset(live, 1, sizeof live);
  live[40] = 0;
  firstbreak_params p;
  firstbreak_params_init(&p);
  firstbreak_pick pk[NT];
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(firstbreak_pick_record(&p, NULL, s, NT, NS, 1.0, 0.0, off, live, pk, &e),
                   TZ_OK);
  ck_assert_int_eq(pk[5].status, FIRSTBREAK_NONE);
  ck_assert(isnan(pk[5].time_ms));
  ck_assert_int_eq(pk[40].status, FIRSTBREAK_NONE);
  ck_assert_int_eq(pk[30].status, FIRSTBREAK_REJECTED);
  ck_assert_double_eq_tol(pk[30].time_ms, tt[30] - 25.0, 1.0);
  for (int i = 0; i < NT; i++)
    if (i != 5 && i != 30 && i != 40) {
      ck_assert_int_eq(pk[i].status, FIRSTBREAK_OK);
      ck_assert_double_eq_tol(pk[i].time_ms, tt[i], 1.0);
    }
  free(s);
}
END_TEST

/* A guide estimated from picks (median per offset bin) follows the linear
 * moveout they came from, and a bad parameter is refused. */
START_TEST(test_guide_estimate)
{
  double off[200], t[200];
  for (int i = 0; i < 200; i++) {
    off[i] = (i % 2 ? -1.0 : 1.0) * (5.0 + 2.5 * i);
    t[i] = 10.0 + 1000.0 * fabs(off[i]) / 2000.0 + (i == 17 ? 80.0 : 0.0);
  }
  firstbreak_guide g;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(firstbreak_guide_estimate(off, t, 200, 20, &g, &e), TZ_OK);
  ck_assert_uint_eq(g.n, 20);
  for (double x = 50.0; x < 480.0; x += 37.0)
    ck_assert_double_eq_tol(firstbreak_guide_time(&g, x), 10.0 + x / 2.0, 1.5);
  ck_assert_int_eq(firstbreak_guide_estimate(off, t, 1, 20, &g, &e), TZ_E_ARG);
  firstbreak_params p;
  firstbreak_params_init(&p);
  p.window_ms = 0.0;
  tz_err_init(&e);
  ck_assert_int_eq(firstbreak_params_check(&p, &e), TZ_E_ARG);
}
END_TEST

/* A late, weak first arrival under noise (0.3 amplitude at 150-270 ms, uniform
 * noise of 0.03): unguided, the energy accumulated before a sample is tiny near
 * the trace start, and without the stabilisation at ten windows of the noise
 * floor the noise there would outbid the arrival (with 1 % of the mean window
 * energy alone its ratio is about 18 against the arrival's 15). */
START_TEST(test_late_weak_arrival)
{
  float *s = malloc(NT * NS * sizeof *s);
  double off[NT], tt[NT];
  unsigned long seed = 3;
  for (int i = 0; i < NT; i++) {
    off[i] = -235.0 + 10.0 * i;
    tt[i] = 150.0 + fabs(off[i]) / 2.0;
    for (int k = 0; k < NS; k++)
      s[i * NS + k] = (float)(0.3 * ricker(30.0, ((double)k - tt[i]) / 1000.0) +
                              0.03 * lcg_uniform(&seed));
  }
  firstbreak_params p;
  firstbreak_params_init(&p);
  firstbreak_pick pk[NT];
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(firstbreak_pick_record(&p, NULL, s, NT, NS, 1.0, 0.0, off, NULL, pk, &e),
                   TZ_OK);
  int good = 0;
  for (int i = 0; i < NT; i++)
    good += pk[i].status == FIRSTBREAK_OK && fabs(pk[i].time_ms - tt[i]) <= 1.0;
  ck_assert_int_ge(good, NT - 2);   /* at a signal-to-noise ratio of 17 */
  free(s);
}
END_TEST

static Suite *firstbreak_suite(void)
{
  Suite *s = suite_create("firstbreak");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_picks_within_a_sample);
  tcase_add_test(tc, test_dead_and_outlier);
  tcase_add_test(tc, test_guide_estimate);
  tcase_add_test(tc, test_late_weak_arrival);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(firstbreak_suite)
