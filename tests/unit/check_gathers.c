/* check_gathers.c -- the job document edit of test panels (job_load_edited), the
 * panel header fields and the parsers of `tzero gathers` (gathers.h).
 *
 * Expected values: the job keys of docs/job-file.md; the panel fields of
 * docs/gathers.md (bytes 233-236 a big-endian integer, 237-240 an IEEE 754
 * single in big-endian order, as SEG-Y rev 1 (2002) stores 4-byte values); the
 * textual header as 40 cards of 80 characters (SEG-Y rev 1 (2002) section 3). */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "tzero/gathers.h"
#include "tzero/job.h"
#include "unit.h"

static char dir[256], jobpath[320];

static void setup(void)
{
  snprintf(dir, sizeof dir, "%s/check_gathers.XXXXXX", getenv("TMPDIR") ? getenv("TMPDIR") : "/tmp");
  ck_assert_ptr_nonnull(mkdtemp(dir));
  char p[400];
  snprintf(p, sizeof p, "%s/s1.sgy", dir);
  FILE *f = fopen(p, "w");
  ck_assert_ptr_nonnull(f);
  fputs("x", f);
  fclose(f);
  snprintf(jobpath, sizeof jobpath, "%s/job.json", dir);
  f = fopen(jobpath, "w");
  ck_assert_ptr_nonnull(f);
  fputs("{\"shots\": [\"s1.sgy\"], \"conditioning\": [{\"step\": \"bandpass\", "
        "\"corners_hz\": [4, 8, 40, 60]}, {\"step\": \"agc\", \"window_ms\": 250}]}", f);
  fclose(f);
}

static void teardown(void)
{
  char cmd[400];
  snprintf(cmd, sizeof cmd, "rm -rf '%s'", dir);
  ck_assert_int_eq(system(cmd), 0);
}

static int load(const char *key, const char *value, job_spec **j, tz_err *e)
{
  job_edit ed = { key, value };
  tz_err_init(e);
  *j = NULL;
  return job_load_edited(j, jobpath, &ed, e);
}

START_TEST(test_edit_sets_values)
{
  job_spec *j;
  tz_err e;
  /* a member the job leaves out is created (moveout is absent) */
  ck_assert_int_eq(load("moveout.stretch_limit_pct", "30", &j, &e), TZ_OK);
  ck_assert_double_eq(j->stretch_limit_pct, 30);
  job_free(j);
  ck_assert_int_eq(load("$.conditioning[0].corners_hz[3]", "75", &j, &e), TZ_OK);
  ck_assert_double_eq(j->conditioning.step[0].corners_hz[3], 75);
  ck_assert_double_eq(j->conditioning.step[0].corners_hz[2], 40);
  job_free(j);
  ck_assert_int_eq(load("conditioning[1].window_ms", "100", &j, &e), TZ_OK);
  ck_assert_double_eq(j->conditioning.step[1].window_s, 0.1);
  job_free(j);
  /* not JSON: a string */
  ck_assert_int_eq(load("moveout.interpolation", "sinc8", &j, &e), TZ_OK);
  ck_assert_int_eq(j->interpolation, JOB_INTERP_SINC8);
  job_free(j);
}
END_TEST

START_TEST(test_edit_bad_keys)
{
  job_spec *j;
  tz_err e;
  ck_assert_int_eq(load("moveout.stretch_limt_pct", "30", &j, &e), TZ_E_ARG);
  ck_assert_ptr_nonnull(strstr(e.msg, "$.moveout.stretch_limt_pct: unknown key"));
  ck_assert_ptr_nonnull(strstr(e.msg, "did you mean \"stretch_limit_pct\""));
  ck_assert_int_eq(load("conditioning[0].corner_hz[1]", "5", &j, &e), TZ_E_ARG);
  ck_assert_int_eq(load("conditioning[2].window_ms", "100", &j, &e), TZ_E_ARG);  /* load resets e */
  ck_assert_ptr_nonnull(strstr(e.msg, "$.conditioning has no element 2 (it has 2: 0 to 1)"));
  ck_assert_int_eq(load("conditioning[0].corners_hz[9]", "5", &j, &e), TZ_E_ARG);
  ck_assert_int_eq(load("shots.x", "5", &j, &e), TZ_E_ARG);
  ck_assert_ptr_nonnull(strstr(e.msg, "$.shots is not an object"));
  ck_assert_int_eq(load("moveout[0]", "5", &j, &e), TZ_E_ARG);
  ck_assert_int_eq(load("", "5", &j, &e), TZ_E_ARG);
  /* a value the parser refuses is a job error naming the path */
  ck_assert_int_eq(load("moveout.stretch_limit_pct", "-5", &j, &e), TZ_E_JOB);
  ck_assert_ptr_nonnull(strstr(e.msg, "$.moveout.stretch_limit_pct"));
  ck_assert_ptr_null(j);
}
END_TEST

START_TEST(test_panel_fields)
{
  segy_trace_header h;
  memset(&h, 0, sizeof h);
  double v;
  ck_assert_int_eq(gathers_panel_get(&h, &v), 0);
  gathers_panel_set(&h, 3, 12.5);
  ck_assert_int_eq(gathers_panel_get(&h, &v), 3);
  ck_assert_double_eq(v, 12.5);
  /* 12.5 = 0x41480000 in IEEE 754 single, big-endian at byte 237 */
  ck_assert_int_eq(h.raw[235], 3);
  ck_assert_int_eq(h.raw[236], 0x41);
  ck_assert_int_eq(h.raw[237], 0x48);
  gathers_panel_set(&h, 1, NAN);
  ck_assert_int_eq(gathers_panel_get(&h, &v), 1);
  ck_assert(isnan(v));
}
END_TEST

START_TEST(test_panel_labels)
{
  /* as a file's textual header decodes: 80-character cards, no newlines */
  char text[3201];
  memset(text, ' ', 3200);
  text[3200] = '\0';
  const char *cards[] = { "C 1 tzero gathers", "C 2 varied: moveout.stretch_limit_pct",
                          "C 3 panel 1: 30", "C 4 panel 2: sinc8" };
  for (size_t i = 0; i < 4; i++)
    memcpy(text + 80 * i, cards[i], strlen(cards[i]));
  char buf[96];
  ck_assert_int_eq(gathers_panel_key(text, buf, sizeof buf), 1);
  ck_assert_str_eq(buf, "moveout.stretch_limit_pct");
  ck_assert_int_eq(gathers_panel_label(text, 2, buf, sizeof buf), 1);
  ck_assert_str_eq(buf, "sinc8");
  ck_assert_int_eq(gathers_panel_label(text, 3, buf, sizeof buf), 0);
  ck_assert_int_eq(gathers_panel_label("x\npanel 1: 50\npanel 2: 70\n", 1, buf, sizeof buf), 1);
  ck_assert_str_eq(buf, "50");
}
END_TEST

START_TEST(test_steps_and_selections)
{
  job_spec *j;
  tz_err e;
  ck_assert_int_eq(load("moveout.stretch_limit_pct", "50", &j, &e), TZ_OK);
  gathers_step st;
  ck_assert_int_eq(gathers_step_parse("agc", j, &st, &e), TZ_OK);
  ck_assert_int_eq(st.through, STACK_STEP_CONDITIONING);
  ck_assert_uint_eq(st.conditioning_steps, 2);
  ck_assert_int_eq(gathers_step_parse("conditioning[0]", j, &st, &e), TZ_OK);
  ck_assert_uint_eq(st.conditioning_steps, 1);
  ck_assert_str_eq(st.label, "conditioning[0] (bandpass)");
  ck_assert_int_eq(gathers_step_parse("nmo", j, &st, &e), TZ_OK);
  ck_assert_int_eq(st.through, STACK_STEP_NMO);
  ck_assert_int_eq(gathers_step_parse("conditioning[2]", j, &st, &e), TZ_E_ARG);
  tz_err_init(&e);   /* the first failure's message is kept: start afresh */
  ck_assert_int_eq(gathers_step_parse("statcs", j, &st, &e), TZ_E_ARG);
  ck_assert_ptr_nonnull(strstr(e.msg, "did you mean 'statics'"));
  job_free(j);
  gathers_select s;
  ck_assert_int_eq(gathers_select_parse(GATHERS_SORT_OFFSET, "0-1000:300,1500-1600", &s, &e),
                   TZ_OK);
  ck_assert_uint_eq(s.nranges, 5);   /* 0-300, 300-600, 600-900, 900-1000, 1500-1600 */
  ck_assert_double_eq(s.ranges[3][0], 900);
  ck_assert_double_eq(s.ranges[3][1], 1000);
  ck_assert_double_eq(s.ranges[4][0], 1500);
  gathers_select_free(&s);
  ck_assert_int_eq(gathers_select_parse(GATHERS_SORT_OFFSET, "100-50", &s, &e), TZ_E_ARG);
  ck_assert_int_eq(gathers_select_parse(GATHERS_SORT_SHOT, "30-32,40", &s, &e), TZ_OK);
  ck_assert_uint_eq(s.nvalues, 4);
  gathers_select_free(&s);
  ck_assert_int_eq(gathers_select_parse(GATHERS_SORT_CMP, NULL, &s, &e), TZ_OK);
  ck_assert_int_eq(s.all, 1);
  ck_assert_int_eq(gathers_sort_parse("receiver"), GATHERS_SORT_RECEIVER);
  ck_assert_int_eq(gathers_sort_parse("station"), -1);
}
END_TEST

static Suite *gathers_suite(void)
{
  Suite *s = suite_create("gathers");
  TCase *tc = tcase_create("core");
  tcase_add_checked_fixture(tc, setup, teardown);
  tcase_add_test(tc, test_edit_sets_values);
  tcase_add_test(tc, test_edit_bad_keys);
  tcase_add_test(tc, test_panel_fields);
  tcase_add_test(tc, test_panel_labels);
  tcase_add_test(tc, test_steps_and_selections);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(gathers_suite)
