/* check_limits.c -- the limits file (parsing, messages) and the gate against a hand-made report.
 *
 * The report below is written by hand after docs/qc-report.md: a line of
 * nominal fold 24 (96 channels x 10 m / (2 x 20 m), the nominal-fold formula
 * of Sheriff & Geldart 1995, common practice), full-fold part CMPs 101-110,
 * with known folds, mutes and counts, so every expected value is worked out
 * by hand beside each check. Reports from real runs are checked in
 * tests/xcheck/test_limits_numpy.py.
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/limits.h"
#include "tzero/qc.h"
#include "unit.h"

/* CMPs 99-112; full-fold part 101-110 at nominal 24. Folds in the part:
 * 24 24 23 23 23 0 24 12 24 24 (CMPs 101..110); 99, 100, 111, 112 taper. */
static const char *const report =
    "{\"format\": \"tzero-qc/1\", \"line\": \"Tarrowvane gate L1\","
    " \"inputs\": [], \"parameters\": {},"
    " \"traces\": {\"read\": 1000, \"stacked\": 960, \"skipped_total\": 40, \"bad_samples\": 3,"
    "   \"skipped\": {\"dead\": 40}, \"killed\": {\"dead_channel\": 20, \"listed\": 30}},"
    " \"section\": {\"path\": \"s.sgy\", \"cmp_first\": 99, \"cmp_last\": 112, \"cmps\": 14,"
    "   \"samples\": 500, \"interval_us\": 2000, \"start_time_ms\": 0},"
    " \"geometry\": {\"line\": {\"largest_off_line_m\": 7.5}},"
    " \"cmps\": ["
    "  {\"cmp\": 99, \"x_m\": 0, \"y_m\": 0, \"fold\": 3, \"offset_min_m\": 0, \"offset_max_m\": 0, \"live_fraction\": 1},"
    "  {\"cmp\": 100, \"x_m\": 0, \"y_m\": 0, \"fold\": 12, \"offset_min_m\": 0, \"offset_max_m\": 0, \"live_fraction\": 1},"
    "  {\"cmp\": 101, \"x_m\": 0, \"y_m\": 0, \"fold\": 24, \"offset_min_m\": 0, \"offset_max_m\": 0, \"live_fraction\": 1},"
    "  {\"cmp\": 102, \"x_m\": 0, \"y_m\": 0, \"fold\": 24, \"offset_min_m\": 0, \"offset_max_m\": 0, \"live_fraction\": 1},"
    "  {\"cmp\": 103, \"x_m\": 0, \"y_m\": 0, \"fold\": 23, \"offset_min_m\": 0, \"offset_max_m\": 0, \"live_fraction\": 1},"
    "  {\"cmp\": 104, \"x_m\": 0, \"y_m\": 0, \"fold\": 23, \"offset_min_m\": 0, \"offset_max_m\": 0, \"live_fraction\": 1},"
    "  {\"cmp\": 105, \"x_m\": 0, \"y_m\": 0, \"fold\": 23, \"offset_min_m\": 0, \"offset_max_m\": 0, \"live_fraction\": 1},"
    "  {\"cmp\": 106, \"x_m\": 0, \"y_m\": 0, \"fold\": 0, \"offset_min_m\": 0, \"offset_max_m\": 0, \"live_fraction\": 0},"
    "  {\"cmp\": 107, \"x_m\": 0, \"y_m\": 0, \"fold\": 24, \"offset_min_m\": 0, \"offset_max_m\": 0, \"live_fraction\": 1},"
    "  {\"cmp\": 108, \"x_m\": 0, \"y_m\": 0, \"fold\": 12, \"offset_min_m\": 0, \"offset_max_m\": 0, \"live_fraction\": 1},"
    "  {\"cmp\": 109, \"x_m\": 0, \"y_m\": 0, \"fold\": 24, \"offset_min_m\": 0, \"offset_max_m\": 0, \"live_fraction\": 1},"
    "  {\"cmp\": 110, \"x_m\": 0, \"y_m\": 0, \"fold\": 24, \"offset_min_m\": 0, \"offset_max_m\": 0, \"live_fraction\": 1},"
    "  {\"cmp\": 111, \"x_m\": 0, \"y_m\": 0, \"fold\": 12, \"offset_min_m\": 0, \"offset_max_m\": 0, \"live_fraction\": 1},"
    "  {\"cmp\": 112, \"x_m\": 0, \"y_m\": 0, \"fold\": 0, \"offset_min_m\": 0, \"offset_max_m\": 0, \"live_fraction\": 0}],"
    " \"fold\": {\"nominal\": 24, \"min\": 0, \"max\": 24, \"mean\": 17, \"zero_fold_cmps\": 2,"
    "   \"full_fold_cmp_first\": 101, \"full_fold_cmp_last\": 110},"
    " \"mute\": {\"stretch_limit_pct\": 50, \"muted_fraction\": 0.25, \"offset_class_m\": 100,"
    "   \"by_offset\": [{\"offset_from_m\": 0, \"offset_to_m\": 100, \"traces\": 300, \"muted_fraction\": 0.5},"
    "                   {\"offset_from_m\": 100, \"offset_to_m\": 200, \"traces\": 100, \"muted_fraction\": 0.1},"
    "                   {\"offset_from_m\": 200, \"offset_to_m\": null, \"traces\": 560, \"muted_fraction\": 0.05}]},"
    " \"velocity\": {\"file\": \"v.csv\", \"control_cmps\": 2, \"warnings\": [{}, {}, {}]},"
    " \"statics\": {\"applied\": {\"traces\": 900, \"min_ms\": -14.5, \"max_ms\": 9},"
    "   \"sources\": [{\"station\": 1, \"residual_ms\": 1.5}],"
    "   \"receivers\": [{\"station\": 1, \"residual_ms\": -2.25}, {\"station\": 2}]},"
    " \"timing_s\": {}}";

static qc_report *load(void)
{
  qc_report *r = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_msg(qc_report_parse(&r, report, strlen(report), "qc.json", &e) == TZ_OK, "%s", e.msg);
  return r;
}

static limits_result *check(const char *json)
{
  limits_set l;
  tz_err e;
  tz_err_init(&e);
  ck_assert_msg(limits_parse(&l, json, strlen(json), "lim.json", "$", &e) == TZ_OK, "%s", e.msg);
  qc_report *r = load();
  limits_result *res = NULL;
  ck_assert_msg(limits_check(&l, r, &res, &e) == TZ_OK, "%s", e.msg);
  qc_report_free(r);
  limits_clear(&l);
  return res;
}

static void want_ranges(const limits_outcome *o, const int32_t *pairs, size_t n)
{
  ck_assert_msg(o->nranges == n, "%s: %zu ranges, expected %zu", o->name, o->nranges, n);
  for (size_t i = 0; i < n; i++) {
    ck_assert_int_eq(o->ranges[i].first, pairs[2 * i]);
    ck_assert_int_eq(o->ranges[i].last, pairs[2 * i + 1]);
  }
}

/* Each limit once held and once broken, values worked out by hand from the report. */
START_TEST(test_each_limit)
{
  static const struct {
    const char *json;
    int held;
    double value;
  } cases[] = {
    { "{\"min_nominal_fold\": 24}", 1, 24 },
    { "{\"min_nominal_fold\": 25}", 0, 24 },
    { "{\"min_fold\": 0}", 1, 0 },           /* the zero-fold CMP 106 is the minimum */
    { "{\"min_fold\": 1}", 0, 0 },
    { "{\"min_fold_pct\": 0}", 1, 0 },
    { "{\"min_fold_pct\": 50}", 0, 0 },
    { "{\"max_zero_fold_cmps\": 2}", 1, 2 }, /* CMPs 106 and 112 (whole section) */
    { "{\"max_zero_fold_cmps\": 1}", 0, 2 },
    { "{\"min_fold\": 24, \"max_low_fold_run_cmps\": 4}", 1, 4 },  /* 103-106 */
    { "{\"min_fold\": 24, \"max_low_fold_run_cmps\": 3}", 0, 4 },
    { "{\"max_muted_pct\": 25}", 1, 25 },
    { "{\"max_muted_pct\": 24.9}", 0, 25 },
    { "{\"max_skipped_traces_pct\": 4}", 1, 4 },   /* 40 / 1000 */
    { "{\"max_skipped_traces_pct\": 3.9}", 0, 4 },
    { "{\"max_bad_samples\": 3}", 1, 3 },
    { "{\"max_bad_samples\": 2}", 0, 3 },
    { "{\"max_velocity_warnings\": 3}", 1, 3 },
    { "{\"max_velocity_warnings\": 2}", 0, 3 },
    { "{\"max_off_line_m\": 7.5}", 1, 7.5 },
    { "{\"max_off_line_m\": 7}", 0, 7.5 },
    { "{\"max_killed_traces_pct\": 5}", 1, 5 },    /* (20 + 30) / 1000 */
    { "{\"max_killed_traces_pct\": 4}", 0, 5 },
    { "{\"max_static_ms\": 14.5}", 1, 14.5 },      /* largest |total static| */
    { "{\"max_static_ms\": 14}", 0, 14.5 },
    { "{\"max_residual_static_ms\": 2.25}", 1, 2.25 },   /* largest |station residual| */
    { "{\"max_residual_static_ms\": 2}", 0, 2.25 },
  };
  limits_result *res = check(cases[_i].json);
  const char *name = cases[_i].json + 2;
  ck_assert_uint_ge(res->n, 1);
  const limits_outcome *o = &res->o[res->n - 1];
  ck_assert_msg(o->held == cases[_i].held, "%s: held %d", name, o->held);
  ck_assert_msg(fabs(o->value - cases[_i].value) < 1e-9, "%s: value %g, expected %g", name,
                o->value, cases[_i].value);
  if (res->n == 1)
    ck_assert_uint_eq(res->broken, (size_t)!cases[_i].held);
  limits_result_free(res);
}
END_TEST

/* CMP ranges: the CMPs of the full-fold part whose fold is below the limit. */
START_TEST(test_ranges)
{
  limits_result *res = check("{\"min_fold_pct\": 99, \"min_fold\": 20,"
                             " \"max_zero_fold_cmps\": 0}");
  ck_assert_uint_eq(res->n, 3);
  /* min_fold 20: CMPs 106 (0) and 108 (12) */
  static const int32_t mf[] = { 106, 106, 108, 108 };
  want_ranges(&res->o[0], mf, 2);
  ck_assert_str_eq(res->o[0].name, "min_fold");
  /* min_fold_pct 99 of 24 = 23.76: 103-106 and 108; taper CMPs 99, 100, 111 are outside */
  static const int32_t mp[] = { 103, 106, 108, 108 };
  want_ranges(&res->o[1], mp, 2);
  ck_assert(fabs(res->o[1].value - 0) < 1e-12);
  /* zero fold over the whole section: 106 and 112 */
  static const int32_t mz[] = { 106, 106, 112, 112 };
  want_ranges(&res->o[2], mz, 2);
  char *t = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(limits_result_text(res, &t, &e), TZ_OK);
  ck_assert_msg(strstr(t, "broken  CMP 103-106, 108") != NULL, "%s", t);
  free(t);
  ck_assert_int_eq(limits_result_brief(res, &t, &e), TZ_OK);
  ck_assert_msg(strstr(t, "min_fold_pct (CMP 103-106, 108)") != NULL, "%s", t);
  free(t);
  limits_result_free(res);
}
END_TEST

/* By offset: classes whose centre lies in the band, weighted by traces. */
START_TEST(test_by_offset)
{
  limits_result *res = check("{\"max_muted_pct_by_offset\": [[0, 200, 40], [200, null, 5],"
                             " [1000, 2000, 1]]}");
  ck_assert_uint_eq(res->n, 3);
  /* (300 x 0.5 + 100 x 0.1) / 400 = 40 % */
  ck_assert(fabs(res->o[0].value - 40) < 1e-9);
  ck_assert(res->o[0].held);
  ck_assert(fabs(res->o[1].value - 5) < 1e-9);
  ck_assert(res->o[1].held);
  ck_assert(!res->o[2].applies && res->o[2].held);   /* the open class is centred at 250 m */
  limits_result_free(res);
}
END_TEST

/* Stages not in the report: killed traces and statics do not apply. */
START_TEST(test_not_applicable)
{
  const char *plain = "{\"format\": \"tzero-qc/1\", \"inputs\": [], \"parameters\": {},"
                      " \"traces\": {\"read\": 10, \"stacked\": 10}, \"cmps\": [],"
                      " \"fold\": {\"min\": 0, \"max\": 0, \"mean\": 0},"
                      " \"mute\": {\"stretch_limit_pct\": 0, \"muted_fraction\": 0},"
                      " \"velocity\": {}, \"timing_s\": {},"
                      " \"section\": {\"cmp_first\": 1, \"cmp_last\": 0}}";
  qc_report *r = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_msg(qc_report_parse(&r, plain, strlen(plain), "old.json", &e) == TZ_OK, "%s", e.msg);
  limits_set l;
  const char *lj = "{\"max_killed_traces_pct\": 0, \"max_static_ms\": 0, "
                   "\"max_residual_static_ms\": 0}";
  ck_assert_int_eq(limits_parse(&l, lj, strlen(lj), "l", "$", &e), TZ_OK);
  limits_result *res = NULL;
  ck_assert_int_eq(limits_check(&l, r, &res, &e), TZ_OK);
  ck_assert_uint_eq(res->n, 3);
  for (size_t i = 0; i < 3; i++)
    ck_assert(!res->o[i].applies && res->o[i].held);
  limits_result_free(res);
  limits_clear(&l);
  /* a figure a given limit needs and an older report lacks: refused naming the key */
  lj = "{\"min_fold\": 3}";
  ck_assert_int_eq(limits_parse(&l, lj, strlen(lj), "l", "$", &e), TZ_OK);
  ck_assert_int_eq(limits_check(&l, r, &res, &e), TZ_E_FORMAT);
  ck_assert_msg(strstr(e.msg, "$.fold.full_fold_cmp_first") != NULL, "%s", e.msg);
  limits_clear(&l);
  qc_report_free(r);
}
END_TEST

/* Bad limits: the JSON path, a suggestion for a misspelt key (job-file rules). */
START_TEST(test_bad_limits)
{
  static const struct {
    const char *json, *want;
  } cases[] = {
    { "{\"min_fold_pc\": 90}", "$.min_fold_pc: unknown limit; did you mean \"min_fold_pct\"?" },
    { "{\"max_mutted_pct\": 9}", "did you mean \"max_muted_pct\"?" },
    { "{\"max_muted_pct\": \"20\"}", "$.max_muted_pct: expected a number, got a string" },
    { "{\"max_muted_pct\": -1}", "$.max_muted_pct: expected a value of 0 or more, got -1" },
    { "{\"min_fold_pct\": 120}", "$.min_fold_pct: expected a percentage from 0 to 100" },
    { "{\"max_zero_fold_cmps\": 1.5}", "$.max_zero_fold_cmps: expected a whole number" },
    { "{\"max_muted_pct_by_offset\": [[0, 100]]}", "$.max_muted_pct_by_offset[0]: expected" },
    { "{\"max_muted_pct_by_offset\": [[100, 50, 3]]}", "must be larger than offset_from_m" },
    { "{\"max_muted_pct_by_offset\": [[0, 50, -3]]}", "[0][2] (pct): expected a value of 0" },
    { "{\"max_low_fold_run_cmps\": 3}", "needs min_fold or min_fold_pct" },
    { "{\"min_fold\": 3, \"min_fold\": 4}", "$.min_fold: key given twice" },
    { "[1, 2]", "$: expected an object of limits" },
  };
  limits_set l;
  tz_err e;
  tz_err_init(&e);
  int rc = limits_parse(&l, cases[_i].json, strlen(cases[_i].json), "lim.json", "$", &e);
  ck_assert_int_eq(rc, TZ_E_JOB);
  ck_assert_msg(strstr(e.msg, cases[_i].want) != NULL, "'%s' lacks '%s'", e.msg, cases[_i].want);
  ck_assert_str_eq(e.path, "lim.json");
  /* not JSON: the line of the fault */
  tz_err_init(&e);
  ck_assert_int_eq(limits_parse(&l, "{\n\"min_fold\": ,\n}", 16, "x.json", "$", &e), TZ_E_FORMAT);
  ck_assert_int_eq(e.line, 2);
}
END_TEST

/* Round trip: limits_to_json reads back to the same limits (consistency check). */
START_TEST(test_round_trip)
{
  const char *lj = "{\"min_fold_pct\": 99, \"max_muted_pct_by_offset\": [[0, 500, 30], [500, null, 60]],"
                   " \"max_static_ms\": 12.5, \"description\": \"Tarrowvane survey limits\"}";
  limits_set a, b;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(limits_parse(&a, lj, strlen(lj), "l", "$", &e), TZ_OK);
  char *t = NULL;
  ck_assert_int_eq(limits_to_json(&a, &t, &e), TZ_OK);
  ck_assert_int_eq(limits_parse(&b, t, strlen(t), "t", "$", &e), TZ_OK);
  for (int k = 0; k < LIMITS__COUNT; k++)
    ck_assert(isnan(a.value[k]) ? isnan(b.value[k]) : a.value[k] == b.value[k]);
  ck_assert_uint_eq(b.nbands, 2);
  ck_assert(isinf(b.bands[1].offset_to_m));
  free(t);
  limits_clear(&a);
  limits_clear(&b);
}
END_TEST

static Suite *limits_suite(void)
{
  Suite *s = suite_create("limits");
  TCase *tc = tcase_create("core");
  tcase_add_loop_test(tc, test_each_limit, 0, 26);
  tcase_add_test(tc, test_ranges);
  tcase_add_test(tc, test_by_offset);
  tcase_add_test(tc, test_not_applicable);
  tcase_add_loop_test(tc, test_bad_limits, 0, 12);
  tcase_add_test(tc, test_round_trip);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(limits_suite)
