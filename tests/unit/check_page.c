/* check_page.c -- HTML QC pages built from reports written here: the page reads what a
 * report holds and skips what it lacks (a minimal report, then one with per-CMP
 * numbers and sections the page does not know), escapes report text (W3C HTML:
 * "<" in text must be written as "&lt;"), and names the default page path.
 * (The pages in a real browser: tests/e2e/test_page.sh.) */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "tzero/page.h"
#include "unit.h"

static char dir[] = "/tmp/check_page_XXXXXX";

static const char *write_report(const char *name, const char *extra_cmp, const char *extra_top)
{
  static char path[256];
  snprintf(path, sizeof path, "%s/%s", dir, name);
  FILE *f = fopen(path, "w");
  ck_assert_ptr_nonnull(f);
  fprintf(f,
          "{\"format\": \"tzero-qc/1\", \"line\": \"Line <A&B>\", \"inputs\": [], \"parameters\": {},"
          " \"traces\": {\"read\": 6, \"stacked\": 6, \"skipped\": {\"dead\": 0}},"
          " \"section\": {\"cmp_first\": 10, \"cmp_last\": 12, \"cmps\": 3, \"path\": \"none.sgy\"},"
          " \"fold\": {\"nominal\": 3, \"min\": 1, \"max\": 3, \"mean\": 2},"
          " \"mute\": {\"stretch_limit_pct\": 50, \"muted_fraction\": 0.1}, \"velocity\": {},"
          " \"timing_s\": {\"total\": 1}, %s"
          " \"cmps\": [{\"cmp\": 10, \"x_m\": 0, \"y_m\": 0, \"fold\": 1, \"offset_min_m\": 5,"
          " \"offset_max_m\": 5, \"live_fraction\": 1 %s},"
          " {\"cmp\": 11, \"x_m\": 1, \"y_m\": 0, \"fold\": 2, \"offset_min_m\": 5, \"offset_max_m\": 9,"
          " \"live_fraction\": 0.5 %s}, {\"cmp\": 12, \"x_m\": 2, \"y_m\": 0, \"fold\": 3,"
          " \"offset_min_m\": 1, \"offset_max_m\": 9, \"live_fraction\": 0.25 %s}]}\n",
          extra_top, extra_cmp, extra_cmp, extra_cmp);
  fclose(f);
  return path;
}

START_TEST(test_minimal_report)
{
  ck_assert_ptr_nonnull(mkdtemp(dir));
  const char *rp = write_report("a_qc.json", "", "");
  char page[300];
  snprintf(page, sizeof page, "%s/a.html", dir);
  page_line_opts o = { .report_path = rp, .page_path = page };
  char *html = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(page_line(&o, &html, &e), TZ_OK);
  ck_assert_ptr_nonnull(strstr(html, "<h1>Line &lt;A&amp;B&gt;</h1>"));
  ck_assert_ptr_null(strstr(html, "Line <A&B>"));
  ck_assert_ptr_nonnull(strstr(html, "data-cmp=\"11\" data-fold=\"2\""));
  ck_assert_ptr_nonnull(strstr(html, "data-chart=\"fold\""));
  ck_assert_ptr_null(strstr(html, "data-chart=\"velocity\""));  /* no functions: no chart */
  ck_assert_ptr_null(strstr(html, "data-chart=\"mute\""));      /* no classes: no chart */
  ck_assert_ptr_null(strstr(html, "data-chart=\"statics\""));
  ck_assert_ptr_nonnull(strstr(html, "id=\"no-thumbnail\""));   /* none.sgy is not there */
  ck_assert_ptr_nonnull(strstr(html, "href=\"a_qc.json\""));    /* relative to the page */
  ck_assert_ptr_nonnull(strstr(html, "@media print"));
  free(html);

  /* a per-CMP number and a section the page does not know: a chart and a JSON block */
  rp = write_report("b_qc.json", ", \"residual_static_ms\": 1.5",
                    "\"migration\": {\"aperture_m\": 250},");
  o.report_path = rp;
  ck_assert_int_eq(page_line(&o, &html, &e), TZ_OK);
  ck_assert_ptr_nonnull(strstr(html, "data-chart=\"residual_static_ms\""));
  ck_assert_ptr_nonnull(strstr(html, ">Residual static (ms) per CMP</h3>"));
  ck_assert_ptr_nonnull(strstr(html, "id=\"report-migration\""));
  ck_assert_ptr_nonnull(strstr(html, "&quot;aperture_m&quot;:\t250"));
  free(html);

  char *p = NULL;
  ck_assert_int_eq(page_path_for_report("out/l4_qc.json", &p, &e), TZ_OK);
  ck_assert_str_eq(p, "out/l4_qc.html");
  free(p);
  ck_assert_int_eq(page_path_for_report("out/l4.report", &p, &e), TZ_OK);
  ck_assert_str_eq(p, "out/l4.report.html");
  free(p);
  tz_err_init(&e);
  o.report_path = "/nonexistent/qc.json";
  ck_assert_int_eq(page_line(&o, &html, &e), TZ_E_NOINPUT);
  ck_assert_ptr_null(html);
  char cmd[400];
  snprintf(cmd, sizeof cmd, "rm -rf '%s'", dir);
  ck_assert_int_eq(system(cmd), 0);
}
END_TEST

static Suite *page_suite(void)
{
  Suite *s = suite_create("page");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_minimal_report);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(page_suite)
