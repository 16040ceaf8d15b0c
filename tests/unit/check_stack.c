/* check_stack.c -- the stack module: CMP lists, trace kinds, plan, run, collect.
 *
 * Sources: SEG-Y rev 1 trace identification codes (SEG-Y rev 1 (2002), standard trace header: 1 seismic,
 * 2 dead, 3 dummy, 4 time break ...); nominal roll-along fold N dg / (2 ds)
 * (Sheriff & Geldart 1995); DEVELOPERS.md "Threads" (bitwise identical output for any
 * thread count). The survey is a tiny off-end line written here with the segy
 * writer; expected folds are counted by hand below from its geometry.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "tzero/job.h"
#include "tzero/stack.h"
#include "unit.h"

#define NSH 8
#define NCH 12
#define NS 200
#define DG 10.0
#define DS 20.0

static char dir[256];

/* ---------------------------------------------------------------- CMP lists */


START_TEST(test_skip_names)
{
  ck_assert_str_eq(stack_skip_name(STACK_SKIP_DEAD), "dead");
  ck_assert_str_eq(stack_skip_name(STACK_SKIP_OFF_LINE), "off_line");
  ck_assert_str_eq(stack_skip_name(-1), "unknown");
  for (int r = 0; r < STACK_SKIP__COUNT; r++)
    ck_assert_str_ne(stack_skip_name(r), "unknown");
}
END_TEST

/* ---------------------------------------------------------------- a tiny survey */

static double ricker(double t)
{
  double a = (M_PI * 25 * t) * (M_PI * 25 * t);
  return (1 - 2 * a) * exp(-a);
}

static void write_survey(void)
{
  for (int s = 0; s < NSH; s++) {
    char path[400];
    snprintf(path, sizeof path, "%s/shot_%02d.sgy", dir, s + 1);
    segy_writer_opts o;
    memset(&o, 0, sizeof o);
    o.samples = NS;
    o.interval_us = 2000;
    o.sorting_code = 1;
    segy_writer *w = NULL;
    tz_err e;
    tz_err_init(&e);
    ck_assert_int_eq(segy_writer_open(&w, path, &o, &e), TZ_OK);
    for (int c = 0; c < NCH; c++) {
      segy_trace_header h;
      memset(&h, 0, sizeof h);
      double sx = s * DS, rx = sx + DG + c * DG, x = rx - sx;
      h.field_record = s + 1;
      h.channel = c + 1;
      /* shot 3 channel 4 dead, shot 5 channel 1 a time break (kind 4) */
      h.kind = (s == 2 && c == 3) ? 2 : (s == 4 && c == 0) ? 4 : 1;
      h.offset = x;
      h.coord_scalar = -100;
      h.source_x = sx;
      h.receiver_x = rx;
      h.coord_units = 1;
      float tr[NS];
      for (int i = 0; i < NS; i++)
        tr[i] = (float)ricker(i * 0.002 - sqrt(0.04 + x * x / (2000.0 * 2000.0)));
      ck_assert_int_eq(segy_trace_write(w, &h, tr, &e), TZ_OK);
    }
    ck_assert_int_eq(segy_writer_finish(w, &e), TZ_OK);
  }
  char p[400];
  snprintf(p, sizeof p, "%s/v.csv", dir);
  FILE *f = fopen(p, "w");
  fputs("cmp,time_ms,velocity_mps\n1,0,2000\n1,400,2000\n", f);
  fclose(f);
}

static void setup(void)
{
  snprintf(dir, sizeof dir, "%s/check_stack.XXXXXX", getenv("TMPDIR") ? getenv("TMPDIR") : "/tmp");
  ck_assert_ptr_nonnull(mkdtemp(dir));
  write_survey();
}

static void teardown(void)
{
  char cmd[600];
  snprintf(cmd, sizeof cmd, "rm -rf '%s'", dir);
  ck_assert_int_eq(system(cmd), 0);
}

static job_spec *job(const char *extra)
{
  char text[1024];
  snprintf(text, sizeof text,
           "{\"shots\": [\"shot_*.sgy\"], \"velocity\": \"v.csv\","
           " \"bins\": {\"size_m\": 5, \"origin_x_m\": 0, \"origin_y_m\": 0, \"azimuth_deg\": 90,"
           " \"first_cmp\": 1}%s}", extra ? extra : "");
  job_spec *j = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_msg(job_parse(&j, text, strlen(text), "t.json", dir, &e) == TZ_OK, "%s", e.msg);
  return j;
}

/* Hand count: midpoint of shot s, channel c = s*DS + (DG + c*DG)/2, CMP = 1 + m/5. */
static int hand_fold(int32_t cmp)
{
  int n = 0;
  for (int s = 0; s < NSH; s++)
    for (int c = 0; c < NCH; c++) {
      if ((s == 2 && c == 3) || (s == 4 && c == 0))
        continue;
      double m = s * DS + (DG + c * DG) / 2;
      n += 1 + (int32_t)lround(m / 5) == cmp;
    }
  return n;
}

START_TEST(test_plan_fold)
{
  job_spec *j = job(NULL);
  stack_plan *p = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_msg(stack_plan_build(&p, j, NULL, NULL, &e) == TZ_OK, "%s", e.msg);
  ck_assert_int_eq(stack_plan_traces(p), NSH * NCH);
  ck_assert_int_eq(stack_plan_skipped(p, STACK_SKIP_DEAD), 1);
  ck_assert_int_eq(stack_plan_skipped(p, STACK_SKIP_AUXILIARY), 1);
  ck_assert_int_eq(stack_plan_stackable(p), NSH * NCH - 2);
  /* nominal N dg / (2 ds) = 12 * 10 / 40 = 3 (Sheriff & Geldart 1995; common practice) */
  ck_assert_double_eq_tol(stack_plan_nominal_fold(p), 3.0, 1e-9);
  ck_assert_int_eq(stack_plan_first_cmp(p), 2);    /* first midpoint 5 m: CMP 1 + 5/5 */
  for (int32_t c = stack_plan_first_cmp(p); c <= stack_plan_last_cmp(p); c++) {
    stack_cmp_plan cp;
    stack_plan_cmp(p, c, &cp);
    ck_assert_msg(cp.fold == hand_fold(c), "CMP %d: fold %lld, hand count %d", c,
                  (long long)cp.fold, hand_fold(c));
    ck_assert_double_eq_tol(cp.x_m, (c - 1) * 5.0, 1e-9);
  }
  stack_plan_free(p);
  job_free(j);
}
END_TEST

static stack_section *run(const stack_plan *p, const velocity_table *v, int threads)
{
  stack_run_opts o;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(stack_run_opts_init(&o, p, v, &e), TZ_OK);
  o.threads = threads;
  stack_section *s = NULL;
  ck_assert_msg(stack_run(p, &o, &s, &e) == TZ_OK, "%s", e.msg);
  return s;
}

/* The header pass on 1 and 3 threads gives the same plan (DEVELOPERS.md, threads: bitwise-identical output for any thread count). */
START_TEST(test_plan_threads)
{
  job_spec *j1 = job(", \"threads\": 1"), *j3 = job(", \"threads\": 3");
  stack_plan *a = NULL, *b = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(stack_plan_build(&a, j1, NULL, NULL, &e), TZ_OK);
  ck_assert_int_eq(stack_plan_build(&b, j3, NULL, NULL, &e), TZ_OK);
  ck_assert_int_eq(stack_plan_first_cmp(a), stack_plan_first_cmp(b));
  ck_assert_int_eq(stack_plan_last_cmp(a), stack_plan_last_cmp(b));
  ck_assert_int_eq(stack_plan_stackable(a), stack_plan_stackable(b));
  for (int r = 0; r < STACK_SKIP__COUNT; r++)
    ck_assert_int_eq(stack_plan_skipped(a, r), stack_plan_skipped(b, r));
  for (int32_t c = stack_plan_first_cmp(a); c <= stack_plan_last_cmp(a); c++) {
    stack_cmp_plan x, y;
    stack_plan_cmp(a, c, &x);
    stack_plan_cmp(b, c, &y);
    ck_assert(x.fold == y.fold && x.x_m == y.x_m && x.y_m == y.y_m &&
              x.offset_min_m == y.offset_min_m && x.offset_max_m == y.offset_max_m);
  }
  stack_plan_free(a);
  stack_plan_free(b);
  job_free(j1);
  job_free(j3);
}
END_TEST

START_TEST(test_run_threads_identical)
{
  job_spec *j = job(NULL);
  stack_plan *p = NULL;
  velocity_table *v = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(stack_plan_build(&p, j, NULL, NULL, &e), TZ_OK);
  ck_assert_int_eq(velocity_table_load(&v, j->velocity, &e), TZ_OK);
  stack_section *a = run(p, v, 1);
  ck_assert_int_eq(a->traces_stacked, NSH * NCH - 2);
  for (int t = 2; t <= 4; t++) {
    stack_section *b = run(p, v, t);
    ck_assert_int_eq(b->threads, t);
    ck_assert_msg(!memcmp(a->samples, b->samples, a->ncmps * NS * sizeof(float)),
                  "%d threads differ from 1", t);
    for (size_t c = 0; c < a->ncmps; c++)
      ck_assert_int_eq(a->cmps[c].fold, b->cmps[c].fold);
    stack_section_free(b);
  }
  /* the fold of the run equals the plan's; the event sits at t0 = 200 ms (sample 100) */
  for (size_t c = 0; c < a->ncmps; c++) {
    stack_cmp_plan cp;
    stack_plan_cmp(p, a->cmps[c].cmp, &cp);
    ck_assert_int_eq(a->cmps[c].fold, cp.fold);
    if (cp.fold) {
      const float *tr = a->samples + c * NS;
      size_t k = 0;
      for (size_t i = 1; i < NS; i++)
        if (tr[i] > tr[k])
          k = i;
      ck_assert_msg(k == 100, "CMP %d peaks at sample %zu", a->cmps[c].cmp, k);
    }
  }
  /* a CMP sub-range (header-guided reads) gives the same bits for those CMPs */
  stack_run_opts o;
  ck_assert_int_eq(stack_run_opts_init(&o, p, v, &e), TZ_OK);
  o.first_cmp = 8;
  o.last_cmp = 15;
  o.threads = 2;
  stack_section *sub = NULL;
  ck_assert_int_eq(stack_run(p, &o, &sub, &e), TZ_OK);
  ck_assert_uint_eq(sub->ncmps, 8);
  ck_assert(!memcmp(sub->samples, a->samples + (size_t)(8 - a->first_cmp) * NS,
                    8 * NS * sizeof(float)));
  ck_assert_int_gt(sub->skipped[STACK_SKIP_CMP_RANGE], 0);
  stack_section_free(sub);
  stack_section_free(a);
  velocity_table_free(v);
  stack_plan_free(p);
  job_free(j);
}
END_TEST

START_TEST(test_collect)
{
  job_spec *j = job(NULL);
  stack_plan *p = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(stack_plan_build(&p, j, NULL, NULL, &e), TZ_OK);
  int32_t want[] = { 12, 9, 12, 500 };
  stack_gathers *g = NULL;
  ck_assert_msg(stack_collect(p, want, 4, NULL, NULL, &g, &e) == TZ_OK, "%s", e.msg);
  ck_assert_uint_eq(g->n, 3);                     /* sorted, duplicates removed */
  ck_assert_int_eq(g->g[0].cmp, 9);
  ck_assert_int_eq(g->g[1].cmp, 12);
  ck_assert_uint_eq(g->g[2].ntraces, 0);           /* CMP 500 has no traces */
  for (size_t i = 0; i < 2; i++) {
    ck_assert_uint_eq(g->g[i].ntraces, (size_t)hand_fold(g->g[i].cmp));
    for (size_t k = 1; k < g->g[i].ntraces; k++)
      ck_assert(g->g[i].offset_m[k - 1] <= g->g[i].offset_m[k]);
    for (size_t k = 0; k < g->g[i].ntraces; k++) {
      const segy_trace_header *h = &g->g[i].headers[k];
      ck_assert_double_eq_tol(g->g[i].offset_m[k], h->receiver_x - h->source_x, 1e-6);
    }
  }
  stack_gathers_free(g);
  stack_plan_free(p);
  job_free(j);
}
END_TEST

START_TEST(test_selection)
{
  job_spec *j = job(", \"selection\": {\"cmp_first\": 10, \"cmp_last\": 20, \"offset_max_m\": 60}");
  stack_plan *p = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(stack_plan_build(&p, j, NULL, NULL, &e), TZ_OK);
  ck_assert_int_eq(stack_plan_first_cmp(p), 10);
  ck_assert_int_eq(stack_plan_last_cmp(p), 20);
  ck_assert_int_gt(stack_plan_skipped(p, STACK_SKIP_OFFSET), 0);
  ck_assert_int_gt(stack_plan_skipped(p, STACK_SKIP_CMP_RANGE), 0);
  int64_t sum = stack_plan_stackable(p);
  for (int r = 0; r < STACK_SKIP__COUNT; r++)
    sum += stack_plan_skipped(p, r);
  ck_assert_int_eq(sum, stack_plan_traces(p));     /* every trace accounted for */
  stack_plan_free(p);
  job_free(j);
}
END_TEST

START_TEST(test_bad_file)
{
  char p[400];
  snprintf(p, sizeof p, "%s/shot_04.sgy", dir);
  FILE *f = fopen(p, "w");
  fputs("short", f);
  fclose(f);
  job_spec *j = job(NULL);
  stack_plan *pl = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(stack_plan_build(&pl, j, NULL, NULL, &e), TZ_E_FORMAT);
  ck_assert_ptr_nonnull(strstr(e.path, "shot_04.sgy"));
  ck_assert_ptr_null(pl);
  job_free(j);
  j = job(", \"skip_bad_files\": true");
  tz_err_init(&e);
  ck_assert_int_eq(stack_plan_build(&pl, j, NULL, NULL, &e), TZ_OK);
  ck_assert_int_eq(stack_plan_input(pl, 3)->bad, 1);
  ck_assert_int_eq(stack_plan_traces(pl), (NSH - 1) * NCH);
  stack_plan_free(pl);
  job_free(j);
}
END_TEST

static Suite *stack_suite(void)
{
  Suite *s = suite_create("stack");
  TCase *tc = tcase_create("lists");
  tcase_add_test(tc, test_skip_names);
  suite_add_tcase(s, tc);
  tc = tcase_create("survey");
  tcase_set_timeout(tc, 30);
  tcase_add_checked_fixture(tc, setup, teardown);
  tcase_add_test(tc, test_plan_fold);
  tcase_add_test(tc, test_plan_threads);
  tcase_add_test(tc, test_run_threads_identical);
  tcase_add_test(tc, test_collect);
  tcase_add_test(tc, test_selection);
  tcase_add_test(tc, test_bad_file);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(stack_suite)
