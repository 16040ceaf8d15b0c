/* check_qc.c -- reading tzero-qc/1 reports back: validation, summary, CMP detail, CSV.
 *
 * The report below is written by hand following docs/qc-report.md (the
 * format of docs/qc-report.md); building reports from real runs is
 * checked end to end in tests/e2e/test_report.sh and test_stack.sh.
 */
#include <stdlib.h>
#include <string.h>

#include "tzero/qc.h"
#include "unit.h"

static const char *const report =
    "{\"format\": \"tzero-qc/1\", \"line\": \"Tarrowvane test L2\","
    " \"inputs\": [{\"path\": \"a.sgy\", \"bytes\": 2000000, \"traces\": 48, \"bad\": false},"
    "              {\"path\": \"b.sgy\", \"bytes\": 10, \"traces\": 0, \"bad\": true,"
    "               \"error\": \"b.sgy: byte 10: too short\"}],"
    " \"parameters\": {}, \"traces\": {\"read\": 48, \"stacked\": 46,"
    "   \"skipped\": {\"dead\": 2, \"auxiliary\": 0}},"
    " \"section\": {\"path\": \"st.sgy\", \"cmp_first\": 10, \"cmp_last\": 12, \"cmps\": 3,"
    "   \"samples\": 500, \"interval_us\": 2000, \"start_time_ms\": 0},"
    " \"geometry\": {\"line\": {\"origin_x_m\": 1, \"origin_y_m\": 2, \"azimuth_deg\": 90,"
    "   \"bin_size_m\": 5, \"first_cmp\": 1, \"origin\": \"job\"}, \"nominal_fold\": 24},"
    " \"cmps\": [{\"cmp\": 10, \"x_m\": 45, \"y_m\": 2, \"fold\": 0, \"offset_min_m\": 0,"
    "   \"offset_max_m\": 0, \"live_fraction\": 0, \"full_fold_ms\": null},"
    "  {\"cmp\": 11, \"x_m\": 50, \"y_m\": 2, \"fold\": 23, \"offset_min_m\": 12.5,"
    "   \"offset_max_m\": 300, \"live_fraction\": 0.875, \"full_fold_ms\": 412.5},"
    "  {\"cmp\": 12, \"x_m\": 55, \"y_m\": 2, \"fold\": 23, \"offset_min_m\": 12.5,"
    "   \"offset_max_m\": 300, \"live_fraction\": 0.9, \"full_fold_ms\": 400}],"
    " \"fold\": {\"nominal\": 24, \"min\": 0, \"max\": 23, \"mean\": 15.3333, \"zero_fold_cmps\": 1},"
    " \"mute\": {\"stretch_limit_pct\": 50, \"muted_fraction\": 0.125,"
    "   \"stretch_muted_fraction\": 0.1, \"top_muted_fraction\": 0.025, \"by_offset\": []},"
    " \"velocity\": {\"file\": \"v.csv\", \"control_cmps\": 2, \"warnings\":"
    "   [{\"kind\": \"imaginary\", \"message\": \"cmp 11: imaginary interval velocity\"}]},"
    " \"timing_s\": {\"header_pass\": 0.1, \"data_pass\": 0.5, \"write\": 0.01, \"total\": 0.61},"
    " \"throughput\": {\"traces_per_s\": 96, \"input_mb_per_s\": 4, \"threads\": 2}}";

static qc_report *load(void)
{
  qc_report *r = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_msg(qc_report_parse(&r, report, strlen(report), "qc.json", &e) == TZ_OK, "%s", e.msg);
  return r;
}

START_TEST(test_summary)
{
  qc_report *r = load();
  char *t = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(qc_report_summary(r, &t, &e), TZ_OK);
  const char *want[] = { "Tarrowvane test L2", "2 shot files", "48 read, 46 stacked",
                         "skipped: dead 2", "b.sgy: byte 10: too short", "CMPs 10-12",
                         "nominal 24.0; min 0, max 23, mean 15.33; 1 zero-fold CMPs",
                         "12.50 % of stacked samples muted", "1 warning",
                         "imaginary interval velocity", "2 threads" };
  for (size_t i = 0; i < sizeof want / sizeof want[0]; i++)
    ck_assert_msg(strstr(t, want[i]) != NULL, "summary lacks '%s':\n%s", want[i], t);
  free(t);
  qc_report_free(r);
}
END_TEST

START_TEST(test_cmp_detail)
{
  qc_report *r = load();
  char *t = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(qc_report_cmp_detail(r, 11, &t, &e), TZ_OK);
  ck_assert_ptr_nonnull(strstr(t, "fold            23 (nominal 24.0)"));
  ck_assert_ptr_nonnull(strstr(t, "12.5 to 300.0 m"));
  ck_assert_ptr_nonnull(strstr(t, "412.5 ms"));
  free(t);
  ck_assert_int_eq(qc_report_cmp_detail(r, 99, &t, &e), TZ_E_ARG);
  ck_assert_ptr_nonnull(strstr(e.msg, "CMP 99 is not in this report (CMPs 10-12)"));
  qc_report_free(r);
}
END_TEST

START_TEST(test_fold_csv)
{
  qc_report *r = load();
  char *t = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(qc_report_fold_csv(r, &t, &e), TZ_OK);
  ck_assert_str_eq(t, "cmp,x_m,y_m,fold,offset_min_m,offset_max_m,live_fraction,full_fold_ms\n"
                      "10,45.000,2.000,0,0.000,0.000,0.000000,\n"
                      "11,50.000,2.000,23,12.500,300.000,0.875000,412.500\n"
                      "12,55.000,2.000,23,12.500,300.000,0.900000,400.000\n");
  free(t);
  qc_report_free(r);
}
END_TEST

static const struct {
  const char *text;
  const char *want;
} bad[] = {
  { "{\"format\": \"tzero-qc/2\"}", "$.format: expected \"tzero-qc/1\"" },
  { "{\"format\": \"tzero-qc/1\"}", "$.inputs: required key missing" },
  { "[1]", "$.format" },
  { "{\"format\": ", "not valid JSON" },
};

START_TEST(test_bad_reports)
{
  qc_report *r = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(qc_report_parse(&r, bad[_i].text, strlen(bad[_i].text), "x.json", &e),
                   TZ_E_FORMAT);
  ck_assert_ptr_null(r);
  ck_assert_msg(strstr(e.msg, bad[_i].want) != NULL, "'%s' lacks '%s'", e.msg, bad[_i].want);
  ck_assert_str_eq(e.path, "x.json");
}
END_TEST

static Suite *qc_suite(void)
{
  Suite *s = suite_create("qc");
  TCase *tc = tcase_create("read");
  tcase_add_test(tc, test_summary);
  tcase_add_test(tc, test_cmp_detail);
  tcase_add_test(tc, test_fold_csv);
  tcase_add_loop_test(tc, test_bad_reports, 0, (int)(sizeof bad / sizeof bad[0]));
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(qc_suite)
