/* check_lsq.c -- sparse least squares (LSQR, Paige and Saunders 1982).
 * SciPy's scipy.sparse.linalg.lsqr and NumPy's lstsq check it on random systems
 * in tests/xcheck/test_lsq_scipy.py; these are hand-derived cases. */
#include <math.h>
#include <stdlib.h>

#include "tzero/lsq.h"
#include "unit.h"

static void add(lsq_matrix *m, size_t n, const size_t *c, const double *v)
{
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(lsq_matrix_add_row(m, n, c, v, &e), TZ_OK);
}

/* Normal equations by hand (the definition of least squares, Lawson and Hanson
 * 1974, ch. 1): A = [[1,0],[0,1],[1,1]], b = [1,2,4] gives A^T A = [[2,1],[1,2]],
 * A^T b = [5,6], x = (4/3, 7/3), residual [-1/3, -1/3, 1/3]. */
START_TEST(test_normal_equations_by_hand)
{
  for (int scale = 0; scale < 2; scale++) {
    lsq_matrix m;
    tz_err e;
    tz_err_init(&e);
    ck_assert_int_eq(lsq_matrix_init(&m, 2, &e), TZ_OK);
    size_t c0[] = { 0 }, c1[] = { 1 }, c2[] = { 0, 1 };
    double v1[] = { 1 }, v2[] = { 1, 1 };
    add(&m, 1, c0, v1);
    add(&m, 1, c1, v1);
    add(&m, 2, c2, v2);
    double b[] = { 1, 2, 4 }, x[2];
    lsq_opts o;
    lsq_opts_init(&o);
    o.scale_columns = scale;
    lsq_info info;
    ck_assert_int_eq(lsq_solve(&m, b, &o, x, &info, &e), TZ_OK);
    ck_assert_double_eq_tol(x[0], 4.0 / 3.0, 1e-12);
    ck_assert_double_eq_tol(x[1], 7.0 / 3.0, 1e-12);
    ck_assert_double_eq_tol(info.residual_norm, sqrt(3.0) / 3.0, 1e-12);
    lsq_matrix_free(&m);
  }
}
END_TEST

/* Damped least squares (Tikhonov; the damped problem of Paige and Saunders
 * 1982, eq. 1.3): for A = diag(1, 2), b = (3, 4), damp d minimises
 * |Ax - b|^2 + d^2 |x|^2, so x_j = a_j b_j / (a_j^2 + d^2): (1.5, 1.6) at d = 1. */
START_TEST(test_damped)
{
  lsq_matrix m;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(lsq_matrix_init(&m, 2, &e), TZ_OK);
  size_t c0[] = { 0 }, c1[] = { 1 };
  double v1[] = { 1 }, v2[] = { 2 };
  add(&m, 1, c0, v1);
  add(&m, 1, c1, v2);
  double b[] = { 3, 4 }, x[2];
  lsq_opts o;
  lsq_opts_init(&o);
  o.damp = 1.0;
  ck_assert_int_eq(lsq_solve(&m, b, &o, x, NULL, &e), TZ_OK);
  ck_assert_double_eq_tol(x[0], 1.5, 1e-12);
  ck_assert_double_eq_tol(x[1], 1.6, 1e-12);
  lsq_matrix_free(&m);
}
END_TEST

/* A consistent tridiagonal system of 500 unknowns with a known solution (the
 * product A x_true defines b): LSQR recovers x_true (exact arithmetic would in
 * at most n steps; Paige and Saunders 1982, section 2), with and without column
 * scaling, and repeated columns in a row are summed. */
START_TEST(test_consistent_large)
{
  size_t n = 500;
  for (int scale = 0; scale < 2; scale++) {
    lsq_matrix m;
    tz_err e;
    tz_err_init(&e);
    ck_assert_int_eq(lsq_matrix_init(&m, n, &e), TZ_OK);
    double *xt = malloc(n * sizeof *xt), *x = malloc(n * sizeof *x);
    double *b = malloc((2 * n) * sizeof *b);
    for (size_t j = 0; j < n; j++)
      xt[j] = sin(0.1 * (double)j) * (j % 2 ? 100.0 : 0.01);   /* mixed scales */
    size_t nb = 0;
    for (size_t j = 0; j < n; j++) {
      size_t c[3] = { j, j + 1 < n ? j + 1 : j, j };
      double v[3] = { 2.0, -1.0, 1.0 };     /* column j twice: coefficient 3 */
      double s = 0;
      for (int k = 0; k < 3; k++)
        s += v[k] * xt[c[k]];
      add(&m, 3, c, v);
      b[nb++] = s;
    }
    for (size_t j = 0; j + 1 < n; j += 2) {
      size_t c[2] = { j, j + 1 };
      double v[2] = { 0.5, 0.25 };
      add(&m, 2, c, v);
      b[nb++] = 0.5 * xt[j] + 0.25 * xt[j + 1];
    }
    lsq_opts o;
    lsq_opts_init(&o);
    o.scale_columns = scale;
    lsq_info info;
    ck_assert_int_eq(lsq_solve(&m, b, &o, x, &info, &e), TZ_OK);
    for (size_t j = 0; j < n; j++)
      ck_assert_double_eq_tol(x[j], xt[j], 1e-7 * (1.0 + fabs(xt[j])));
    ck_assert(info.residual_norm < 1e-6);
    free(xt), free(x), free(b);
    lsq_matrix_free(&m);
  }
}
END_TEST

/* Bad arguments are refused with TZ_E_ARG, never a crash (common practice). */
START_TEST(test_bad_arguments)
{
  lsq_matrix m;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(lsq_matrix_init(&m, 0, &e), TZ_E_ARG);
  tz_err_init(&e);
  ck_assert_int_eq(lsq_matrix_init(&m, 3, &e), TZ_OK);
  size_t c[] = { 3 };
  double v[] = { 1 }, nan1[] = { NAN };
  ck_assert_int_eq(lsq_matrix_add_row(&m, 1, c, v, &e), TZ_E_ARG);
  tz_err_init(&e);
  c[0] = 1;
  ck_assert_int_eq(lsq_matrix_add_row(&m, 1, c, nan1, &e), TZ_E_ARG);
  tz_err_init(&e);
  double x[3], b[1] = { 1 };
  ck_assert_int_eq(lsq_solve(&m, b, NULL, x, NULL, &e), TZ_E_ARG);   /* no rows */
  tz_err_init(&e);
  ck_assert_int_eq(lsq_matrix_add_row(&m, 1, c, v, &e), TZ_OK);
  b[0] = INFINITY;
  ck_assert_int_eq(lsq_solve(&m, b, NULL, x, NULL, &e), TZ_E_ARG);
  tz_err_init(&e);
  b[0] = 0;                                   /* b = 0: x = 0 at once */
  ck_assert_int_eq(lsq_solve(&m, b, NULL, x, NULL, &e), TZ_OK);
  ck_assert(x[0] == 0 && x[1] == 0 && x[2] == 0);
  lsq_matrix_free(&m);
  lsq_matrix_free(NULL);
}
END_TEST

static Suite *lsq_suite(void)
{
  Suite *s = suite_create("lsq");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_normal_equations_by_hand);
  tcase_add_test(tc, test_damped);
  tcase_add_test(tc, test_consistent_large);
  tcase_add_test(tc, test_bad_arguments);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(lsq_suite)
