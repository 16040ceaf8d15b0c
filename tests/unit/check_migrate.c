/* check_migrate.c -- migrate_run on sections built in memory: the AVX2 and portable
 * phase-shift kernels give the same bits, a zero section stays zero, parameters are
 * checked. The methods themselves are checked against published laws and an independent
 * NumPy phase shift in tests/xcheck/test_migrate.py. */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/migrate.h"
#include "unit.h"

static migrate_section *section(size_t ntr, size_t ns, unsigned seed)
{
  migrate_section *s = calloc(1, sizeof *s);
  s->ntraces = ntr;
  s->ns = ns;
  s->dt_s = 0.004;
  s->interval_us = 4000;
  s->format_code = 5;
  s->cmp_step = 1;
  s->cmp_interval_m = 12.5;
  s->headers = calloc(ntr, sizeof *s->headers);
  s->samples = calloc(ntr * ns, sizeof *s->samples);
  for (size_t i = 0; i < ntr; i++)
    s->headers[i].cmp = (int32_t)(100 + i);
  for (size_t i = 0; i < ntr * ns && seed; i++) {
    seed = seed * 1103515245u + 12345u;
    s->samples[i] = (float)((seed >> 8) & 0xffff) / 32768.0f - 1.0f;
  }
  return s;
}

static velocity_table *table(void)
{
  velocity_table *v = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(velocity_table_new(&v, 0, &e), TZ_OK);
  ck_assert_int_eq(velocity_table_add(v, 100, 0.0, 1800, 0, &e), TZ_OK);
  ck_assert_int_eq(velocity_table_add(v, 100, 0.8, 2600, 0, &e), TZ_OK);
  return v;
}

START_TEST(test_simd_same_bits)
{
  /* common practice for SIMD kernels: the same operations in the same order */
  migrate_section *s = section(37, 203, 7);
  velocity_table *v = table();
  migrate_params p;
  migrate_params_init(&p);
  p.threads = 2;
  float *a = NULL, *b = NULL;
  size_t na = 0, nb = 0;
  migrate_info info;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(migrate_run(s, v, &p, &a, &na, &info, &e), TZ_OK);
  p.simd = -1;
  p.threads = 1;
  ck_assert_int_eq(migrate_run(s, v, &p, &b, &nb, &info, &e), TZ_OK);
  ck_assert_uint_eq(na, nb);
  ck_assert(memcmp(a, b, na * s->ns * sizeof *a) == 0);
  free(a);
  free(b);
  velocity_table_free(v);
  migrate_section_free(s);
}
END_TEST

START_TEST(test_zero_section)
{
  for (int m = 0; m < 2; m++) {
    migrate_section *s = section(20, 100, 0);
    velocity_table *v = table();
    migrate_params p;
    migrate_params_init(&p);
    p.method = m;
    float *a = NULL;
    size_t n = 0;
    migrate_info info;
    tz_err e;
    tz_err_init(&e);
    ck_assert_int_eq(migrate_run(s, v, &p, &a, &n, &info, &e), TZ_OK);
    ck_assert_uint_eq(n, 20);
    for (size_t i = 0; i < n * s->ns; i++)
      ck_assert(a[i] == 0.0f);
    free(a);
    velocity_table_free(v);
    migrate_section_free(s);
  }
}
END_TEST

START_TEST(test_parameters_checked)
{
  migrate_section *s = section(20, 100, 3);
  velocity_table *v = table();
  migrate_params p;
  float *a = NULL;
  size_t n = 0;
  migrate_info info;
  tz_err e;
  const double pct[] = { 0, 9.9, 300.1, NAN };
  for (size_t i = 0; i < 4; i++) {
    migrate_params_init(&p);
    p.velocity_pct = pct[i];
    tz_err_init(&e);
    ck_assert_int_eq(migrate_run(s, v, &p, &a, &n, &info, &e), TZ_E_FORMAT);
  }
  migrate_params_init(&p);
  p.method = MIGRATE_KIRCHHOFF;
  p.aperture_m = 10;                 /* below the 12.5 m CMP spacing */
  tz_err_init(&e);
  ck_assert_int_eq(migrate_run(s, v, &p, &a, &n, &info, &e), TZ_E_FORMAT);
  migrate_params_init(&p);
  p.method = MIGRATE_KIRCHHOFF;
  p.max_dip_deg = 90;
  tz_err_init(&e);
  ck_assert_int_eq(migrate_run(s, v, &p, &a, &n, &info, &e), TZ_E_FORMAT);
  migrate_params_init(&p);
  p.first_cmp = 500;
  p.last_cmp = 600;                  /* no trace there */
  tz_err_init(&e);
  ck_assert_int_eq(migrate_run(s, v, &p, &a, &n, &info, &e), TZ_E_ARG);
  ck_assert_int_eq(migrate_method_parse("kirchhoff"), MIGRATE_KIRCHHOFF);
  ck_assert_int_eq(migrate_method_parse("phase-shift"), MIGRATE_PHASE_SHIFT);
  ck_assert_int_eq(migrate_method_parse("stolt"), -1);
  velocity_table_free(v);
  migrate_section_free(s);
}
END_TEST

static Suite *migrate_suite(void)
{
  Suite *s = suite_create("migrate");
  TCase *tc = tcase_create("core");
  tcase_set_timeout(tc, 60);
  tcase_add_test(tc, test_simd_same_bits);
  tcase_add_test(tc, test_zero_section);
  tcase_add_test(tc, test_parameters_checked);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(migrate_suite)
