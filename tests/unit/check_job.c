/* check_job.c -- the job module: keys, values, defaults, patterns, overrides.
 *
 * Sources: docs/job-file.md (the contract: unknown keys rejected with the
 * nearest key suggested, values checked with the JSON path named, paths
 * relative to the job file's folder); Levenshtein distance values from the
 * textbook definition (Levenshtein 1966; "kitten"/"sitting" = 3 is the usual
 * worked example, from memory); glob(3) sorts its matches (POSIX).
 */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "tzero/job.h"
#include "unit.h"

static char dir[256];

static void touch(const char *name)
{
  char p[512];
  snprintf(p, sizeof p, "%s/%s", dir, name);
  FILE *f = fopen(p, "w");
  ck_assert_ptr_nonnull(f);
  fputs("x", f);
  fclose(f);
}

static void setup(void)
{
  snprintf(dir, sizeof dir, "%s/check_job.XXXXXX", getenv("TMPDIR") ? getenv("TMPDIR") : "/tmp");
  ck_assert_ptr_nonnull(mkdtemp(dir));
  char p[512];
  snprintf(p, sizeof p, "%s/shots", dir);
  mkdir(p, 0755);
  touch("shots/s003.sgy");
  touch("shots/s001.sgy");
  touch("shots/s002.sgy");
  touch("shots/notes.txt");
  touch("vel.csv");
  touch("layout.json");
}

static void teardown(void)
{
  char cmd[600];
  snprintf(cmd, sizeof cmd, "rm -rf '%s'", dir);
  ck_assert_int_eq(system(cmd), 0);
}

static int parse(const char *text, job_spec **j, tz_err *e)
{
  tz_err_init(e);
  return job_parse(j, text, strlen(text), "line.json", dir, e);
}

START_TEST(test_minimal_defaults)
{
  job_spec *j = NULL;
  tz_err e;
  ck_assert_int_eq(parse("{\"shots\": [\"shots/*.sgy\"], \"velocity\": \"vel.csv\"}", &j, &e),
                   TZ_OK);
  /* glob(3) sorts: s001, s002, s003; notes.txt does not match */
  ck_assert_uint_eq(j->nshots, 3);
  ck_assert_ptr_nonnull(strstr(j->shots[0], "shots/s001.sgy"));
  ck_assert_ptr_nonnull(strstr(j->shots[2], "shots/s003.sgy"));
  ck_assert_int_eq(strncmp(j->shots[0], dir, strlen(dir)), 0);  /* relative to job folder */
  ck_assert_int_eq(j->geometry, JOB_GEOMETRY_HEADERS);
  ck_assert_double_eq(j->stretch_limit_pct, 50);
  ck_assert_int_eq(j->interpolation, JOB_INTERP_LINEAR);
  ck_assert_int_eq(j->bins.first_cmp, 1);
  ck_assert_int_eq(j->bins.has_size, 0);
  ck_assert(isinf(j->offset_max_m));
  ck_assert_int_eq(j->threads, 0);
  ck_assert_ptr_null(j->section);
  job_free(j);
}
END_TEST

/* The velocity table a job names may not exist yet: `tzero semblance --job` is
 * the usual first run and writes it (the workflow of README.md). */
START_TEST(test_velocity_not_written_yet)
{
  job_spec *j = NULL;
  tz_err e;
  ck_assert_int_eq(parse("{\"shots\": [\"shots/*.sgy\"], \"velocity\": \"later.csv\"}", &j, &e),
                   TZ_OK);
  ck_assert_ptr_nonnull(strstr(j->velocity, "later.csv"));
  ck_assert_int_eq(strncmp(j->velocity, dir, strlen(dir)), 0);  /* relative to job folder */
  job_free(j);
}
END_TEST

START_TEST(test_full_job)
{
  const char *t =
      "{\"name\": \"Harrow Flats L7\", \"shots\": [\"shots/s002.sgy\", \"shots/*.sgy\"],"
      " \"geometry\": {\"layout\": \"layout.json\"},"
      " \"bins\": {\"size_m\": 2.5, \"origin_x_m\": 10, \"origin_y_m\": 20, \"azimuth_deg\": 90,"
      "          \"first_cmp\": 100},"
      " \"velocity\": \"vel.csv\","
      " \"moveout\": {\"stretch_limit_pct\": 40, \"interpolation\": \"sinc8\"},"
      " \"mute\": {\"top\": [[0, 20], [250, 160]]},"
      " \"selection\": {\"cmp_first\": 120, \"cmp_last\": 300, \"offset_max_m\": 1200},"
      " \"output\": {\"section\": \"out/st.sgy\", \"report\": \"/abs/qc.json\"},"
      " \"threads\": 2, \"skip_bad_files\": true}";
  job_spec *j = NULL;
  tz_err e;
  ck_assert_msg(parse(t, &j, &e) == TZ_OK, "%s", e.msg);
  /* s002 first (pattern order), then the others once each */
  ck_assert_uint_eq(j->nshots, 3);
  ck_assert_ptr_nonnull(strstr(j->shots[0], "s002"));
  ck_assert_ptr_nonnull(strstr(j->shots[1], "s001"));
  ck_assert_int_eq(j->geometry, JOB_GEOMETRY_LAYOUT);
  ck_assert_ptr_nonnull(strstr(j->geometry_file, "layout.json"));
  ck_assert_double_eq(j->bins.size_m, 2.5);
  ck_assert_int_eq(j->bins.first_cmp, 100);
  ck_assert_int_eq(j->interpolation, JOB_INTERP_SINC8);
  ck_assert_uint_eq(j->nmute, 2);
  ck_assert_double_eq(j->mute_top[0].offset_m, 0);
  ck_assert_double_eq(j->mute_top[1].time_ms, 160);
  ck_assert_int_eq(j->has_cmp_range, 1);
  ck_assert_double_eq(j->offset_max_m, 1200);
  ck_assert_str_eq(j->report, "/abs/qc.json");            /* absolute kept */
  ck_assert_int_eq(strncmp(j->section, dir, strlen(dir)), 0);
  ck_assert_int_eq(j->threads, 2);
  ck_assert_int_eq(j->skip_bad_files, 1);

  /* the resolved job is valid JSON with the defaults filled in */
  char *s = NULL;
  ck_assert_int_eq(job_to_json(j, &s, &e), TZ_OK);
  cJSON *r = cJSON_Parse(s);
  ck_assert_ptr_nonnull(r);
  cJSON *mv = cJSON_GetObjectItem(r, "moveout");
  ck_assert_double_eq(cJSON_GetObjectItem(mv, "stretch_limit_pct")->valuedouble, 40);
  ck_assert_str_eq(cJSON_GetObjectItem(mv, "interpolation")->valuestring, "sinc8");
  ck_assert_int_eq(cJSON_GetArraySize(cJSON_GetObjectItem(r, "shot_files")), 3);
  cJSON_Delete(r);
  free(s);
  job_free(j);
}
END_TEST

/* Error cases: text, expected status, a fragment the message must contain. */
static const struct {
  const char *text;
  int status;
  const char *want;
} bad[] = {
  { "{\"shots\": [\"shots/*.sgy\"], \"moveout\": {\"strech_limit_pct\": 30}}", TZ_E_JOB,
    "$.moveout.strech_limit_pct: unknown key; did you mean \"stretch_limit_pct\"?" },
  { "{\"shot\": [\"shots/*.sgy\"]}", TZ_E_JOB, "$.shot: unknown key; did you mean \"shots\"?" },
  { "{\"shots\": [\"shots/*.sgy\"], \"moveout\": {\"stretch_limit_pct\": \"40\"}}", TZ_E_JOB,
    "$.moveout.stretch_limit_pct: expected a number between 0 and 1000, got a string" },
  { "{\"shots\": [\"shots/*.sgy\"], \"moveout\": {\"stretch_limit_pct\": 4000}}", TZ_E_JOB,
    "$.moveout.stretch_limit_pct: expected a number between 0 and 1000, got 4000" },
  { "{\"shots\": [\"shots/*.sgy\"], \"moveout\": {\"interpolation\": \"cubic\"}}", TZ_E_JOB,
    "$.moveout.interpolation: expected \"linear\" or \"sinc8\", got \"cubic\"" },
  { "{\"shots\": [\"nothing/*.sgy\"]}", TZ_E_NOINPUT, "$.shots[0]: pattern" },
  { "{\"shots\": []}", TZ_E_JOB, "$.shots: expected at least one file pattern" },
  { "{\"velocity\": \"vel.csv\"}", TZ_E_JOB, "$.shots: required key missing" },
  { "{\"shots\": [\"shots/*.sgy\"], \"geometry\": \"layout\"}", TZ_E_JOB, "$.geometry: expected" },
  { "{\"shots\": [\"shots/*.sgy\"], \"geometry\": {\"table\": \"nope.csv\"}}", TZ_E_NOINPUT,
    "$.geometry.table: cannot open" },
  { "{\"shots\": [\"shots/*.sgy\"], \"mute\": {\"top\": [[0, 20], [100]]}}", TZ_E_JOB,
    "$.mute.top[1]: expected a pair" },
  /* Mutes along the line (docs/job-file.md, "Mutes"): the path of the fault. */
  { "{\"shots\": [\"shots/*.sgy\"], \"mute\": {\"top\": [[250, 160], [0, 20]]}}", TZ_E_JOB,
    "$.mute.top: point 1: offset 0 m is not after 250 m (offsets must increase)" },
  { "{\"shots\": [\"shots/*.sgy\"], \"mute\": {\"top\": {\"controls\": ["
    "{\"cmp\": 200, \"polyline\": [[0, 20], [480, 260]]},"
    "{\"cmp\": 100, \"polyline\": [[0, 30], [480, 280]]}]}}}", TZ_E_JOB,
    "$.mute.top.controls[1]: CMP 100 is not after the previous control's CMP 200" },
  { "{\"shots\": [\"shots/*.sgy\"], \"mute\": {\"bottom\": {\"controls\": ["
    "{\"cmp\": 100, \"polyline\": [[0, 900], [480, 1100]]},"
    "{\"cmp\": 200, \"polyline\": [[0, 900], [480, 1100], [300, 1200]]}]}}}", TZ_E_JOB,
    "$.mute.bottom.controls[1].polyline: point 2: offset 300 m is not after 480 m" },
  { "{\"shots\": [\"shots/*.sgy\"], \"mute\": {\"inner\": {\"controls\": ["
    "{\"cmp\": 100, \"polyline\": [[0, 0, 100], [600, 1500, 1800]]},"
    "{\"cmp\": 300, \"polyline\": [[0, 0, 100], [600, 1500, 1400]]}]}}}", TZ_E_JOB,
    "$.mute.inner.controls[1].polyline: point 1: the cone is inverted at offset 600 m" },
  { "{\"shots\": [\"shots/*.sgy\"], \"mute\": {\"inner\": [[0, 0], [600, 1500]]}}", TZ_E_JOB,
    "$.mute.inner[0]: expected a triple [offset_m, time_ms, time_end_ms]" },
  { "{\"shots\": [\"shots/*.sgy\"], \"mute\": {\"top\": [[0, 20]], \"top_file\": \"t.csv\"}}",
    TZ_E_JOB, "$.mute.top_file: give either top or top_file, not both" },
  { "{\"shots\": [\"shots/*.sgy\"], \"mute\": {\"top\": {\"control\": []}}}", TZ_E_JOB,
    "$.mute.top.control: unknown key; did you mean \"controls\"?" },
  { "{\"shots\": [\"shots/*.sgy\"], \"mute\": {\"top\": {\"after_first_break_ms\": 20}}}",
    TZ_E_JOB, "$.mute.top.picks: required with after_first_break_ms" },
  { "{\"shots\": [\"shots/*.sgy\"], \"mute\": {\"top_file\": \"none.csv\"}}", TZ_E_NOINPUT,
    "$.mute.top_file: cannot open" },
  { "{\"shots\": [\"shots/*.sgy\"], \"threads\": 1.5}", TZ_E_JOB,
    "$.threads: expected an integer between 0 and 256, got 1.5" },
  { "{\"shots\": [\"shots/*.sgy\"], \"bins\": {\"size_m\": -1}}", TZ_E_JOB, "$.bins.size_m:" },
  { "{\"shots\": [\"shots/*.sgy\"], \"bins\": {\"azimuth_deg\": 90}}", TZ_E_JOB,
    "give all three or none" },
  { "{\"shots\": [\"shots/*.sgy\"], \"selection\": {\"cmp_first\": 9, \"cmp_last\": 3}}",
    TZ_E_JOB, "$.selection.cmp_last: 3 is before cmp_first 9" },
  { "{\"shots\": [\"shots/*.sgy\"], \"skip_bad_files\": 1}", TZ_E_JOB,
    "$.skip_bad_files: expected true or false, got a number" },
  { "{\"shots\": [\"shots/*.sgy\"], \"threads\": 1, \"threads\": 2}", TZ_E_JOB, "given twice" },
  { "[1, 2]", TZ_E_JOB, "$: expected an object, got an array" },
  { "{\"shots\": [\"shots/*.sgy\"],\n \"velocity\": }", TZ_E_FORMAT, "not valid JSON" },
  { "{\"shots\": [\"shots/*.sgy\"]} trailing", TZ_E_FORMAT, "not valid JSON" },
};

START_TEST(test_bad_jobs)
{
  job_spec *j = NULL;
  tz_err e;
  int rc = parse(bad[_i].text, &j, &e);
  ck_assert_ptr_null(j);
  ck_assert_msg(rc == bad[_i].status, "case %d: status %d (%s), expected %d", _i, rc, e.msg,
                bad[_i].status);
  ck_assert_msg(strstr(e.msg, bad[_i].want) != NULL, "case %d: message '%s' lacks '%s'", _i,
                e.msg, bad[_i].want);
  ck_assert_str_eq(e.path, "line.json");
}
END_TEST

START_TEST(test_json_error_offset)
{
  job_spec *j = NULL;
  tz_err e;
  const char *t = "{\"shots\": [\"shots/*.sgy\"],\n \"velocity\": }";
  ck_assert_int_eq(parse(t, &j, &e), TZ_E_FORMAT);
  ck_assert_int_eq(e.line, 2);
  /* cJSON stops at the offending '}' (byte 41, 0-based) */
  ck_assert_int_eq(e.byte, (int64_t)(strchr(t + 10, '}') - t));
}
END_TEST

START_TEST(test_overrides)
{
  job_spec *j = NULL;
  tz_err e;
  ck_assert_int_eq(parse("{\"shots\": [\"shots/*.sgy\"], \"velocity\": \"vel.csv\","
                         " \"output\": {\"section\": \"a.sgy\"}}", &j, &e), TZ_OK);
  job_overrides o;
  job_overrides_init(&o);
  o.section = "new.sgy";
  o.stretch_limit_pct = 30;
  o.threads = 3;
  ck_assert_int_eq(job_apply_overrides(j, &o, &e), TZ_OK);
  ck_assert_str_eq(j->section, "new.sgy");     /* as given, not joined with the job folder */
  ck_assert_double_eq(j->stretch_limit_pct, 30);
  ck_assert_int_eq(j->threads, 3);
  ck_assert_ptr_nonnull(strstr(j->velocity, "vel.csv"));   /* untouched */

  job_overrides_init(&o);
  o.velocity = "/nonexistent/revised.csv";
  tz_err_init(&e);
  ck_assert_int_eq(job_apply_overrides(j, &o, &e), TZ_E_NOINPUT);
  ck_assert_ptr_nonnull(strstr(e.msg, "--velocity"));
  job_overrides_init(&o);
  o.stretch_limit_pct = -5;
  tz_err_init(&e);
  ck_assert_int_eq(job_apply_overrides(j, &o, &e), TZ_E_ARG);
  job_free(j);
}
END_TEST

START_TEST(test_load_relative)
{
  char p[512];
  snprintf(p, sizeof p, "%s/line.json", dir);
  FILE *f = fopen(p, "w");
  fputs("{\"shots\": \"shots/s00[12].sgy\", \"velocity\": \"vel.csv\"}", f);
  fclose(f);
  job_spec *j = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(job_load(&j, p, &e), TZ_OK);
  ck_assert_uint_eq(j->nshots, 2);
  char want[600];
  snprintf(want, sizeof want, "%s/shots/s001.sgy", dir);
  ck_assert_str_eq(j->shots[0], want);
  job_free(j);
  tz_err_init(&e);
  snprintf(p, sizeof p, "%s/absent.json", dir);
  ck_assert_int_eq(job_load(&j, p, &e), TZ_E_NOINPUT);
}
END_TEST

/* Never a crash (project rule): every prefix and every single-byte change of a
 * valid job either parses or fails with a status and a message. */
START_TEST(test_mutations)
{
  const char *t = "{\"shots\": [\"shots/*.sgy\"], \"velocity\": \"vel.csv\","
                  " \"moveout\": {\"stretch_limit_pct\": 40}, \"mute\": {\"top\": [[0, 20]]},"
                  " \"selection\": {\"cmp_first\": 1, \"cmp_last\": 9}, \"threads\": 2}";
  size_t n = strlen(t);
  char buf[512];
  static const char repl[] = "\"{}[],:0-x ";
  for (size_t cut = 0; cut <= n; cut++) {
    job_spec *j = NULL;
    tz_err e;
    tz_err_init(&e);
    int rc = job_parse(&j, t, cut, "m.json", dir, &e);
    ck_assert(rc == TZ_OK ? j != NULL : (j == NULL && e.msg[0]));
    job_free(j);
  }
  for (size_t i = 0; i < n; i++)
    for (size_t k = 0; k < sizeof repl - 1; k++) {
      memcpy(buf, t, n + 1);
      buf[i] = repl[k];
      job_spec *j = NULL;
      tz_err e;
      tz_err_init(&e);
      int rc = job_parse(&j, buf, n, "m.json", dir, &e);
      ck_assert(rc == TZ_OK ? j != NULL : (j == NULL && e.msg[0]));
      job_free(j);
    }
}
END_TEST

static Suite *job_suite(void)
{
  Suite *s = suite_create("job");
  TCase *tc = tcase_create("job");
  tcase_add_checked_fixture(tc, setup, teardown);
  tcase_add_test(tc, test_minimal_defaults);
  tcase_add_test(tc, test_full_job);
  tcase_add_test(tc, test_velocity_not_written_yet);
  tcase_add_loop_test(tc, test_bad_jobs, 0, (int)(sizeof bad / sizeof bad[0]));
  tcase_add_test(tc, test_json_error_offset);
  tcase_add_test(tc, test_overrides);
  tcase_add_test(tc, test_load_relative);
  tcase_add_test(tc, test_mutations);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(job_suite)
