/* check_decon_fk.c -- the record-wide conditioning steps: Wiener deconvolution
 * (Levinson's recursion) and the f-k fan filter. NumPy/SciPy comparisons of the
 * same code are in tests/xcheck/test_decon_fk.py. */
#include <math.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>

#include "signal/signal_int.h"
#include "tzero/condition.h"
#include "unit.h"

/* Worked values of the Wiener normal equations (Robinson & Treitel 1980; the numbers
 * computed with NumPy from the formulas): spiking filter of r = [1, 0.5, 0.25]. */
START_TEST(test_levinson_worked_values)
{
  double a[3], work[12], pef[3];
  tz_err e;
  tz_err_init(&e);
  const double r[3] = { 1, 0.5, 0.25 }, g[3] = { 1, 0, 0 }, rw[3] = { 1.01, 0.5, 0.25 };
  ck_assert_int_eq(condition_levinson(r, g, 3, a, work, &e), TZ_OK);
  ck_assert_double_eq_tol(a[0], 4.0 / 3, 1e-12);
  ck_assert_double_eq_tol(a[1], -2.0 / 3, 1e-12);
  ck_assert_double_eq_tol(a[2], 0, 1e-12);
  ck_assert_int_eq(condition_levinson(rw, g, 3, a, work, &e), TZ_OK);
  ck_assert_double_eq_tol(a[0], 1.311532, 1e-6);
  ck_assert_double_eq_tol(a[1], -0.647165, 1e-6);
  ck_assert_double_eq_tol(a[2], -0.004258, 1e-6);
  /* AR(1) series: prediction distance 1, two coefficients -> [1, -0.5, 0] */
  const double r4[4] = { 1, 0.5, 0.25, 0.125 };
  ck_assert_int_eq(condition_wiener_pef(r4, 1, 2, 0, pef, work, &e), TZ_OK);
  ck_assert_double_eq_tol(pef[0], 1, 1e-15);
  ck_assert_double_eq_tol(pef[1], -0.5, 1e-12);
  ck_assert_double_eq_tol(pef[2], 0, 1e-12);
  /* not positive definite: |r1| > r0 */
  const double bad[2] = { 1, 2 }, g2[2] = { 1, 0 };
  ck_assert_int_eq(condition_levinson(bad, g2, 2, a, work, &e), TZ_E_ARG);
}
END_TEST

static const double WIN[2][3] = { { 0, 0.1, 1.0 }, { 500, 0.4, 1.4 } };

START_TEST(test_chain_refusals)
{
  condition_chain c;
  condition_chain_init(&c);
  tz_err e;
  tz_err_init(&e);
  /* gap >= operator */
  ck_assert_int_eq(condition_chain_add_decon(&c, 0.1, 0.1, 1, WIN, 2, 0, &e), TZ_E_ARG);
  ck_assert(strstr(e.msg, "gap_ms") != NULL);
  /* operator longer than the design window (900 ms at the first knot) */
  tz_err_init(&e);
  ck_assert_int_eq(condition_chain_add_decon(&c, 0.95, 0, 1, WIN, 2, 0, &e), TZ_E_ARG);
  ck_assert(strstr(e.msg, "window[0]") != NULL);
  /* |offset| must increase */
  const double w2[2][3] = { { 300, 0.1, 1.0 }, { -200, 0.2, 1.2 } };
  tz_err_init(&e);
  ck_assert_int_eq(condition_chain_add_decon(&c, 0.1, 0, 1, w2, 2, 0, &e), TZ_E_ARG);
  ck_assert(strstr(e.msg, "window[1]") != NULL);
  /* fan velocities reversed, taper out of range */
  const double rev[2] = { 600, 0 }, fan[2] = { 0, 600 };
  tz_err_init(&e);
  ck_assert_int_eq(condition_chain_add_fk(&c, rev, 0, 10, 0, &e), TZ_E_ARG);
  ck_assert(strstr(e.msg, "reject_mps") != NULL && strstr(e.msg, "reversed") != NULL);
  tz_err_init(&e);
  ck_assert_int_eq(condition_chain_add_fk(&c, fan, 1, 120, 0, &e), TZ_E_ARG);
  ck_assert(strstr(e.msg, "taper_pct") != NULL);
  ck_assert_uint_eq(c.n, 0);
  ck_assert_int_eq(condition_chain_has_record_steps(&c), 0);
  ck_assert_int_eq(condition_chain_add_fk(&c, fan, 0, 10, 0, &e), TZ_OK);
  ck_assert_int_eq(condition_chain_has_record_steps(&c), 1);
  ck_assert_str_eq(condition_kind_name(c.step[0].kind), "fk_filter");
  ck_assert_int_eq(condition_kind_parse("deconvolution"), CONDITION_DECON);
  ck_assert_int_eq(condition_ensemble_parse("record"), CONDITION_ENSEMBLE_RECORD);
}
END_TEST

/* A record too short for the design window is refused when the plan is made, naming
 * the knot; a record-wide chain refuses the per-trace call. */
START_TEST(test_plan_refusals)
{
  condition_chain c;
  condition_chain_init(&c);
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(condition_chain_add_decon(&c, 0.2, 0.024, 0.1, WIN, 2, 1, &e), TZ_OK);
  condition_plan *p = NULL;
  /* 300 samples at 2 ms end at 598 ms: the second knot's window starts at 400 ms and
   * holds 100 samples, the operator needs 101 */
  ck_assert_int_eq(condition_plan_new(&p, &c, 0, 0.002, 300, NULL, &e), TZ_E_ARG);
  ck_assert_msg(strstr(e.msg, "conditioning[0].window[1]") != NULL, "%s", e.msg);
  tz_err_init(&e);
  ck_assert_int_eq(condition_plan_new(&p, &c, 0, 0.002, 800, NULL, &e), TZ_OK);
  ck_assert_int_eq(condition_plan_record_wide(p), 1);
  condition_workspace *ws = NULL;
  ck_assert_int_eq(condition_workspace_new(&ws, p, &e), TZ_OK);
  float x[800] = { 0 };
  ck_assert_int_eq(condition_apply(p, ws, 0, NULL, x, &e), TZ_E_ARG);
  condition_workspace_free(ws);
  condition_plan_free(p);
  /* an f-k step needs the line's offsets before a workspace */
  condition_chain_init(&c);
  const double fan[2] = { 0, 600 };
  ck_assert_int_eq(condition_chain_add_fk(&c, fan, 0, 10, 0, &e), TZ_OK);
  ck_assert_int_eq(condition_plan_new(&p, &c, 0, 0.002, 800, NULL, &e), TZ_OK);
  tz_err_init(&e);
  ck_assert_int_eq(condition_workspace_new(&ws, p, &e), TZ_E_ARG);
  ck_assert_int_eq(condition_plan_set_offsets(p, 0, -100, 100, &e), TZ_E_ARG);
  condition_plan_free(p);
}
END_TEST

/* The fan's weight at chosen points of the f-k plane (docs/conditioning.md). */
START_TEST(test_fk_weight)
{
  condition_step s;
  memset(&s, 0, sizeof s);
  s.kind = CONDITION_FK;
  s.fan_mps[0] = 0;
  s.fan_mps[1] = 600;
  s.taper_pct = 10;   /* 60 m/s */
  ck_assert_double_eq_tol(condition_fk_weight(&s, 30, 0.1), 0, 1e-15);     /* 300 m/s */
  ck_assert_double_eq_tol(condition_fk_weight(&s, 30, -0.1), 0, 1e-15);    /* either side */
  ck_assert_double_eq_tol(condition_fk_weight(&s, 63, 0.1), 0.5, 1e-12);   /* taper middle */
  ck_assert_double_eq_tol(condition_fk_weight(&s, 70, 0.1), 1, 1e-15);     /* 700 m/s */
  ck_assert_double_eq_tol(condition_fk_weight(&s, 30, 0), 1, 1e-15);       /* k = 0 */
  s.fan_pass = 1;
  ck_assert_double_eq_tol(condition_fk_weight(&s, 30, 0.1), 1, 1e-15);
  ck_assert_double_eq_tol(condition_fk_weight(&s, 30, 0), 0, 1e-15);
  s.fan_pass = 0;
  s.min_hz = 10;      /* ramp 10 .. 11 Hz */
  ck_assert_double_eq_tol(condition_fk_weight(&s, 5, 0.1), 1, 1e-15);
  ck_assert_double_eq_tol(condition_fk_weight(&s, 10.5, 0.1), 0.5, 1e-12);
  ck_assert_double_eq_tol(condition_fk_weight(&s, 20, 0.1), 0, 1e-15);
}
END_TEST

#define RNS 700
#define RNTR 48
struct rjob {
  const condition_plan *p;
  float *data;                     /* 3 records of RNTR x RNS */
  const condition_trace_info *ti;  /* RNTR */
  int rc;
};

static void *record_run(void *arg)
{
  struct rjob *j = arg;
  tz_err e;
  tz_err_init(&e);
  condition_workspace *ws = NULL;
  j->rc = condition_workspace_new(&ws, j->p, &e);
  for (size_t r = 0; r < 3 && !j->rc; r++)
    j->rc = condition_apply_record(j->p, ws, j->data + r * RNTR * RNS, RNTR, j->ti, &e);
  condition_workspace_free(ws);
  return NULL;
}

/* One plan on two threads gives bitwise what one thread gives; dead traces are neither
 * used nor changed (a consistency check of the implementation). */
START_TEST(test_records_threads_bitwise)
{
  condition_chain c;
  condition_chain_init(&c);
  tz_err e;
  tz_err_init(&e);
  const double fan[2] = { 0, 600 }, bp[4] = { 3, 6, 60, 80 };
  ck_assert_int_eq(condition_chain_add_bandpass(&c, bp, &e), TZ_OK);
  ck_assert_int_eq(condition_chain_add_decon(&c, 0.1, 0, 1, WIN, 2, CONDITION_ENSEMBLE_RECORD,
                                             &e), TZ_OK);
  ck_assert_int_eq(condition_chain_add_fk(&c, fan, 0, 10, 2, &e), TZ_OK);
  ck_assert_int_eq(condition_chain_add_decon(&c, 0.08, 0.02, 1, WIN, 2, CONDITION_ENSEMBLE_TRACE,
                                             &e), TZ_OK);
  condition_plan *p = NULL;
  ck_assert_int_eq(condition_plan_new(&p, &c, 0, 0.002, RNS, NULL, &e), TZ_OK);
  ck_assert_int_eq(condition_plan_set_offsets(p, 10, -300, 300, &e), TZ_OK);
  condition_trace_info ti[RNTR];
  for (size_t j = 0; j < RNTR; j++) {
    ti[j].cmp = 100 + (int64_t)j / 2;
    ti[j].vel_mps = NULL;
    ti[j].offset_m = -235.0 + 10.0 * (double)j;
    ti[j].live = j != 7;
  }
  size_t n = (size_t)3 * RNTR * RNS;
  float *ref = malloc(n * sizeof *ref), *a = malloc(n * sizeof *a), *b = malloc(n * sizeof *b);
  ck_assert(ref && a && b);
  unsigned s = 777;
  for (size_t i = 0; i < n; i++) {
    s = s * 1103515245u + 12345u;
    ref[i] = a[i] = b[i] = (float)((double)(s >> 8) / (1 << 24) - 0.5);
  }
  float dead[RNS];
  memcpy(dead, ref + 7 * RNS, sizeof dead);
  struct rjob serial = { p, ref, ti, 0 }, ja = { p, a, ti, 0 }, jb = { p, b, ti, 0 };
  record_run(&serial);
  ck_assert_int_eq(serial.rc, TZ_OK);
  pthread_t ta, tb;
  ck_assert_int_eq(pthread_create(&ta, NULL, record_run, &ja), 0);
  ck_assert_int_eq(pthread_create(&tb, NULL, record_run, &jb), 0);
  pthread_join(ta, NULL);
  pthread_join(tb, NULL);
  ck_assert_int_eq(ja.rc, TZ_OK);
  ck_assert_int_eq(jb.rc, TZ_OK);
  ck_assert(memcmp(ref, a, n * sizeof *a) == 0);
  ck_assert(memcmp(ref, b, n * sizeof *b) == 0);
  ck_assert(memcmp(dead, ref + 7 * RNS, sizeof dead) == 0);
  double e0 = 0;
  for (size_t i = 0; i < RNS; i++)
    e0 += fabs(ref[8 * RNS + i]);
  ck_assert(isfinite(e0) && e0 > 0);
  /* a trace outside the line's offsets is refused, naming it */
  ti[5].offset_m = 900;
  struct rjob bad = { p, a, ti, 0 };
  record_run(&bad);
  ck_assert_int_eq(bad.rc, TZ_E_ARG);
  free(ref);
  free(a);
  free(b);
  condition_plan_free(p);
}
END_TEST

static Suite *decon_fk_suite(void)
{
  Suite *s = suite_create("decon_fk");
  TCase *tc = tcase_create("core");
  tcase_set_timeout(tc, 60);
  tcase_add_test(tc, test_levinson_worked_values);
  tcase_add_test(tc, test_chain_refusals);
  tcase_add_test(tc, test_plan_refusals);
  tcase_add_test(tc, test_fk_weight);
  tcase_add_test(tc, test_records_threads_bitwise);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(decon_fk_suite)
