/* check_fit.c -- x^2-t^2 least squares (Green 1938; Sheriff's Encyclopedic Dictionary, X2-T2 analysis; check value 22 of docs/references.md). */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "tzero/fit.h"
#include "unit.h"

/* computed from Green 1938 (check value 22 of docs/references.md): picks from t0 = 1 s, v = 2000 m/s at
 * x = 0..2000 m give slope 2.5e-7 s^2/m^2, v = 2000 m/s, t0 = 1.000 s. */
START_TEST(test_exact_hyperbola)
{
  const double x[] = { 0, 500, 1000, 1500, 2000 };
  const double t[] = { 1.0, 1.030776406, 1.118033989, 1.25, 1.414213562 };
  fit_result r;
  double res[5];
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(fit_x2t2(x, t, 5, &r, res, &e), TZ_OK);
  ck_assert_double_eq_tol(r.slope_s2_per_m2, 2.5e-7, 2.5e-7 * 1e-6);
  ck_assert_double_eq_tol(r.velocity_mps, 2000.0, 2000.0 * 1e-6);
  ck_assert_double_eq_tol(r.t0_s, 1.0, 1e-6);
  ck_assert_double_eq_tol(r.r_squared, 1.0, 1e-9);
  ck_assert(r.rms_residual_ms < 1e-5);
  for (int i = 0; i < 5; i++)
    ck_assert(fabs(res[i]) < 1e-5);
}
END_TEST

/* Deterministic pseudo-noise (a fixed LCG, common practice) added to exact
 * picks: +-2 ms uniform on 24 offsets to 1200 m, t0 = 0.8 s, v = 2500 m/s.
 * With 24 picks spanning x/(v t0) up to 0.6 the slope is known to a few per
 * cent; tolerance 2 % in v and 2 ms in t0 (the noise amplitude): that is what
 * the noise allows the method, it cannot be tighter. The implementation itself
 * is held much closer: the least-squares line of these very picks, computed
 * here from the normal equations (textbook ordinary least squares, in long
 * double), must come out to 1e-9. */
START_TEST(test_noisy_picks)
{
  double x[24], t[24];
  unsigned long s = 12345;
  for (int i = 0; i < 24; i++) {
    s = (s * 1103515245ul + 12345ul) & 0x7ffffffful;
    double u = (double)s / 2147483648.0 * 2.0 - 1.0;
    x[i] = 50.0 * (i + 1);
    t[i] = sqrt(0.8 * 0.8 + x[i] * x[i] / (2500.0 * 2500.0)) + 0.002 * u;
  }
  fit_result r;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(fit_x2t2(x, t, 24, &r, NULL, &e), TZ_OK);
  ck_assert_double_eq_tol(r.velocity_mps, 2500.0, 50.0);
  ck_assert_double_eq_tol(r.t0_s, 0.8, 0.002);
  long double mx = 0, my = 0, sxy = 0, sxx = 0;
  for (int i = 0; i < 24; i++) {
    mx += (long double)x[i] * x[i] / 24;
    my += (long double)t[i] * t[i] / 24;
  }
  for (int i = 0; i < 24; i++) {
    long double dx = (long double)x[i] * x[i] - mx, dy = (long double)t[i] * t[i] - my;
    sxy += dx * dy;
    sxx += dx * dx;
  }
  long double b = sxy / sxx, a = my - b * mx;
  ck_assert_double_eq_tol(r.velocity_mps, (double)(1 / sqrtl(b)), 1e-9 * 2500);
  ck_assert_double_eq_tol(r.t0_s, (double)sqrtl(a), 1e-9);
  ck_assert(r.rms_residual_ms > 0.3 && r.rms_residual_ms < 2.0);
  ck_assert(r.r_squared > 0.99 && r.r_squared < 1.0);
}
END_TEST

/* A line needs two distinct abscissae; x = +-500 are the same x^2 (from memory: a
 * regression on one abscissa has no slope). Falling times give no real velocity. */
START_TEST(test_degenerate)
{
  const double x1[] = { 500, -500, 500 };
  const double t1[] = { 1.0, 1.1, 1.2 };
  const double x2[] = { 0, 1000 };
  const double t2[] = { 1.2, 1.0 };
  fit_result r;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(fit_x2t2(x1, t1, 3, &r, NULL, &e), TZ_E_ARG);
  ck_assert(strstr(e.msg, "same offset") != NULL);
  tz_err_init(&e);
  ck_assert_int_eq(fit_x2t2(x2, t2, 2, &r, NULL, &e), TZ_E_ARG);
  ck_assert(strstr(e.msg, "not positive") != NULL);
  tz_err_init(&e);
  ck_assert_int_eq(fit_x2t2(x2, t2, 1, &r, NULL, &e), TZ_E_ARG);
}
END_TEST

static char *write_tmp(const char *text)
{
  char *path = strdup("/tmp/check_fit.XXXXXX");
  int fd = mkstemp(path);
  ck_assert_int_ge(fd, 0);
  ck_assert_int_eq(write(fd, text, strlen(text)), (ssize_t)strlen(text));
  close(fd);
  return path;
}

START_TEST(test_read_picks)
{
  char *p = write_tmp("# picks, reflector A\ntime_ms,offset_m,quality\n1000,0,good\n"
                      "1118.034,1000,fair\n");
  double *x, *t;
  size_t n;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(fit_read_picks(p, &x, &t, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 2);
  ck_assert(x[1] == 1000.0);
  ck_assert_double_eq_tol(t[1], 1.118034, 1e-12);
  free(x);
  free(t);
  unlink(p);
  free(p);
}
END_TEST

START_TEST(test_read_errors)
{
  static const struct { const char *text; long line; const char *what; } cases[] = {
    { "offset_m,time_ms\n0,1000\n500,abc\n", 3, "time_ms" },
    { "x,t\n0,1000\n", 1, "header row" },
    { "offset_m,time_ms\n0,-5\n", 2, "negative" },
    { "offset_m,time_ms\n0\n", 2, "fields" },
  };
  char *p = write_tmp(cases[_i].text);
  double *x = NULL, *t = NULL;
  size_t n;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(fit_read_picks(p, &x, &t, &n, &e), TZ_E_FORMAT);
  ck_assert_int_eq(e.line, cases[_i].line);
  ck_assert_str_eq(e.path, p);
  ck_assert_msg(strstr(e.msg, cases[_i].what) != NULL, "message: %s", e.msg);
  ck_assert_ptr_null(x);
  unlink(p);
  free(p);
}
END_TEST

static Suite *fit_suite(void)
{
  Suite *s = suite_create("fit");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_exact_hyperbola);
  tcase_add_test(tc, test_noisy_picks);
  tcase_add_test(tc, test_degenerate);
  tcase_add_test(tc, test_read_picks);
  tcase_add_loop_test(tc, test_read_errors, 0, 4);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(fit_suite)
