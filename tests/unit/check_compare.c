/* check_compare.c -- CMP-by-CMP comparison of two stacks. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "tzero/compare.h"
#include "tzero/segy.h"
#include "unit.h"

static void ricker(float *s, size_t ns, double dt_s, double t, double amp)
{
  /* Ricker (1953) wavelet, 30 Hz peak frequency. */
  for (size_t j = 0; j < ns; j++) {
    double u = M_PI * 30.0 * ((double)j * dt_s - t);
    s[j] += (float)(amp * (1 - 2 * u * u) * exp(-u * u));
  }
}

/* Identical traces: zero difference, 0 dB, correlation 1 at lag 0 (definitions,
 * common practice). B = 2 A: energy ratio 4 = 6.0206 dB (10 log10 4, from
 * memory), relative difference 1. */
START_TEST(test_traces)
{
  enum { NS = 200 };
  float a[NS] = { 0 }, b[NS] = { 0 };
  ricker(a, NS, 0.002, 0.2, 1.0);
  compare_cmp c;
  compare_traces(a, a, NS, 10, 2.0, 0.5, &c);
  ck_assert(c.rms_difference == 0.0);
  ck_assert(c.energy_ratio_db == 0.0);
  ck_assert_double_eq_tol(c.peak_correlation, 1.0, 1e-12);
  ck_assert(c.lag_ms == 0.0);
  ck_assert_int_eq(c.verdict, COMPARE_SIMILAR);
  for (int j = 0; j < NS; j++)
    b[j] = 2 * a[j];
  compare_traces(a, b, NS, 10, 2.0, 0.5, &c);
  ck_assert_double_eq_tol(c.energy_ratio, 4.0, 1e-9);
  ck_assert_double_eq_tol(c.energy_ratio_db, 6.0206, 1e-4);
  ck_assert_double_eq_tol(c.relative_difference, 1.0, 1e-9);
  ck_assert_int_eq(c.verdict, COMPARE_STRONGER);
  compare_traces(b, a, NS, 10, 2.0, 0.5, &c);
  ck_assert_int_eq(c.verdict, COMPARE_WEAKER);
}
END_TEST

/* B is A delayed by 3 samples (6 ms): the correlation peaks at +6 ms with a
 * value near 1; beyond the lag limit it cannot be found. */
START_TEST(test_lag)
{
  enum { NS = 300 };
  float a[NS] = { 0 }, b[NS] = { 0 };
  ricker(a, NS, 0.002, 0.25, 1.0);
  ricker(b, NS, 0.002, 0.256, 1.0);
  compare_cmp c;
  compare_traces(a, b, NS, 10, 2.0, 0.5, &c);
  ck_assert_double_eq_tol(c.lag_ms, 6.0, 1e-12);
  ck_assert(c.peak_correlation > 0.999);
  compare_traces(b, a, NS, 10, 2.0, 0.5, &c);
  ck_assert_double_eq_tol(c.lag_ms, -6.0, 1e-12);
  compare_traces(a, b, NS, 2, 2.0, 0.5, &c);
  ck_assert(fabs(c.lag_ms) <= 4.0);
  ck_assert(c.peak_correlation < 0.999);
}
END_TEST

/* Silent traces: both silent are identical; one silent is no correlation. */
START_TEST(test_silent)
{
  float z[50] = { 0 }, a[50] = { 0 };
  a[10] = 1;
  compare_cmp c;
  compare_traces(z, z, 50, 5, 2.0, 0.5, &c);
  ck_assert(c.peak_correlation == 1.0 && c.energy_ratio_db == 0.0);
  ck_assert_int_eq(c.verdict, COMPARE_SIMILAR);
  compare_traces(a, z, 50, 5, 2.0, 0.5, &c);
  ck_assert(c.peak_correlation == 0.0);
  ck_assert_int_eq(c.verdict, COMPARE_WEAKER);
  compare_traces(z, a, 50, 5, 2.0, 0.5, &c);
  ck_assert(isnan(c.energy_ratio) == 0 && isinf(c.energy_ratio));
  ck_assert_int_eq(c.verdict, COMPARE_STRONGER);
}
END_TEST

struct sec { int32_t first, n, dup; uint32_t ns, dt_us; double amp; };

static char *write_section(const struct sec *s)
{
  char *path = strdup("/tmp/check_compare.XXXXXX");
  int fd = mkstemp(path);
  ck_assert_int_ge(fd, 0);
  close(fd);
  segy_writer_opts o = { .samples = s->ns, .interval_us = s->dt_us, .sorting_code = 4 };
  segy_writer *w;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(segy_writer_open(&w, path, &o, &e), TZ_OK);
  float *tr = calloc(s->ns, sizeof *tr);
  for (int32_t i = 0; i < s->n; i++) {
    segy_trace_header h;
    memset(&h, 0, sizeof h);
    h.cmp = s->dup && i == s->n - 1 ? s->first : s->first + i;
    h.kind = SEGY_KIND_SEISMIC;
    h.stacked_traces = 12;
    memset(tr, 0, s->ns * sizeof *tr);
    ricker(tr, s->ns, s->dt_us * 1e-6, 0.1 + 0.001 * i, s->amp * (1 + 0.1 * i));
    ck_assert_int_eq(segy_trace_write(w, &h, tr, &e), TZ_OK);
  }
  ck_assert_int_eq(segy_writer_finish(w, &e), TZ_OK);
  free(tr);
  return path;
}

/* Consistency check: a section against itself gives zero difference everywhere. A section
 * with amplitudes doubled on a shifted CMP range: B stronger by 6.02 dB on the
 * overlap, and the CMPs outside it are counted, not compared. */
START_TEST(test_sections)
{
  struct sec sa = { 100, 20, 0, 250, 2000, 1.0 }, sb = { 110, 20, 0, 250, 2000, 2.0 };
  char *pa = write_section(&sa), *pb = write_section(&sb);
  compare_params p;
  compare_params_init(&p);
  compare_result *r;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(compare_sections(pa, pa, &p, &r, &e), TZ_OK);
  ck_assert_uint_eq(r->n, 20);
  ck_assert_uint_eq(r->similar, 20);
  ck_assert(r->mean_rms_difference == 0.0);
  ck_assert(r->energy_ratio_db == 0.0);
  ck_assert_uint_eq(r->nruns, 1);
  for (size_t i = 0; i < r->n; i++)
    ck_assert(r->cmps[i].rms_difference == 0.0 && r->cmps[i].lag_ms == 0.0);
  compare_result_free(r);
  ck_assert_int_eq(compare_sections(pa, pb, &p, &r, &e), TZ_OK);
  ck_assert_uint_eq(r->n, 10);
  ck_assert_uint_eq(r->only_a, 10);
  ck_assert_uint_eq(r->only_b, 10);
  ck_assert_int_eq(r->cmps[0].cmp, 110);
  /* CMP 110 is trace 10 of A (amplitude 2.0, t 0.110) and trace 0 of B
   * (amplitude 2.0, t 0.100): equal energy, B 10 ms earlier. */
  ck_assert_double_eq_tol(r->cmps[0].lag_ms, -10.0, 1e-9);
  ck_assert_double_eq_tol(r->cmps[0].energy_ratio_db, 0.0, 0.05);
  compare_result_free(r);
  unlink(pa);
  unlink(pb);
  free(pa);
  free(pb);
}
END_TEST

/* Errors name both files or the trace: different axes, repeated CMPs, no overlap. */
START_TEST(test_errors)
{
  struct sec s1 = { 1, 5, 0, 250, 2000, 1.0 }, s2 = { 1, 5, 0, 250, 4000, 1.0 },
             s3 = { 1, 5, 1, 250, 2000, 1.0 }, s4 = { 50, 5, 0, 250, 2000, 1.0 },
             s5 = { 1, 5, 0, 300, 2000, 1.0 };
  char *p1 = write_section(&s1), *p2 = write_section(&s2), *p3 = write_section(&s3),
       *p4 = write_section(&s4), *p5 = write_section(&s5);
  compare_params p;
  compare_params_init(&p);
  compare_result *r = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(compare_sections(p1, p2, &p, &r, &e), TZ_E_FORMAT);
  ck_assert(strstr(e.msg, "different sample axes") && strstr(e.msg, "4000 us"));
  tz_err_init(&e);
  ck_assert_int_eq(compare_sections(p1, p5, &p, &r, &e), TZ_E_FORMAT);
  ck_assert(strstr(e.msg, "300 samples") != NULL);
  tz_err_init(&e);
  ck_assert_int_eq(compare_sections(p1, p3, &p, &r, &e), TZ_E_FORMAT);
  ck_assert(strstr(e.msg, "CMP 1 appears in traces 1 and 5") != NULL);
  ck_assert_str_eq(e.path, p3);
  tz_err_init(&e);
  ck_assert_int_eq(compare_sections(p1, p4, &p, &r, &e), TZ_E_FORMAT);
  ck_assert(strstr(e.msg, "no CMP number") != NULL);
  tz_err_init(&e);
  ck_assert_int_eq(compare_sections(p1, "/nonexistent/b.sgy", &p, &r, &e), TZ_E_NOINPUT);
  ck_assert_str_eq(e.path, "/nonexistent/b.sgy");
  p.time_min_ms = 600;
  p.time_max_ms = 700;
  tz_err_init(&e);
  ck_assert_int_eq(compare_sections(p1, p1, &p, &r, &e), TZ_E_ARG);
  ck_assert_ptr_null(r);
  char *ps[] = { p1, p2, p3, p4, p5 };
  for (int i = 0; i < 5; i++) {
    unlink(ps[i]);
    free(ps[i]);
  }
}
END_TEST

static Suite *compare_suite(void)
{
  Suite *s = suite_create("compare");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_traces);
  tcase_add_test(tc, test_lag);
  tcase_add_test(tc, test_silent);
  tcase_add_test(tc, test_sections);
  tcase_add_test(tc, test_errors);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(compare_suite)
