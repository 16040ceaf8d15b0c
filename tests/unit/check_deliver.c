/* check_deliver.c -- the processing sequence and the textual header's card text.
 *
 * Card layout from SEG-Y rev 1 (2002) section 3: 40 cards of 80 characters, "Cnn "
 * in columns 1-4, cards 39-40 reserved (the writer adds them), so the text of cards
 * 1-38 holds at most 38 lines of 76 characters. Job keys as docs/job-file.md gives
 * them; the polarity codes of binary header bytes 3257-3258 from the same standard.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "tzero/deliver.h"
#include "unit.h"

static const char *job_text =
  "{\"name\": \"Quillmere line Q-7\", \"shots\": [\"*.none\"], \"velocity\": \"v.csv\","
  " \"client\": \"Quillmere Parish Council\", \"contractor\": \"Tarrowvane Field Geophysics\","
  " \"crs\": \"EPSG:32630\", \"polarity\": \"negative\","
  " \"statics\": {\"datum_m\": 120, \"replacement_velocity_mps\": 1800},"
  " \"conditioning\": [{\"step\": \"bandpass\", \"corners_hz\": [8, 12, 60, 80]},"
  "                    {\"step\": \"agc\", \"window_ms\": 250}],"
  " \"mute\": {\"top\": [[0, 10], [300, 200]]},"
  " \"output\": {\"section\": \"s.sgy\", \"navigation\": \"n.csv\", \"history\": \"h.md\"}}";

START_TEST(test_steps_add)
{
  static deliver_steps s;
  deliver_steps_init(&s);
  deliver_steps_add(&s, "first %d\nsecond line", 1);
  ck_assert_uint_eq(s.n, 1);
  ck_assert_str_eq(s.step[0], "first 1 second line");
  for (int i = 0; i < DELIVER_MAX_STEPS + 3; i++)
    deliver_steps_add(&s, "step %d", i);
  ck_assert_uint_eq(s.n, DELIVER_MAX_STEPS);
  ck_assert_uint_eq(s.dropped, 4);
  char big[DELIVER_STEP_BYTES * 2];
  memset(big, 'x', sizeof big - 1);
  big[sizeof big - 1] = '\0';
  deliver_steps_init(&s);
  deliver_steps_add(&s, "%s", big);
  ck_assert_uint_eq(strlen(s.step[0]), DELIVER_STEP_BYTES - 1);
}
END_TEST

START_TEST(test_date)
{
  char d[11];
  deliver_date(0, d);
  ck_assert_str_eq(d, "1970-01-01");
  deliver_date(951782400, d);          /* 2000-02-29 00:00:00 UTC, a leap day */
  ck_assert_str_eq(d, "2000-02-29");
}
END_TEST

/* Builds a job in a temporary folder with one (empty) shot file so job_parse's
 * shot pattern matches. */
static job_spec *job_in_folder(char *dir)
{
  ck_assert_ptr_nonnull(mkdtemp(dir));
  char p[512];
  snprintf(p, sizeof p, "%s/a.none", dir);
  FILE *f = fopen(p, "w");
  ck_assert_ptr_nonnull(f);
  fclose(f);
  job_spec *j = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(job_parse(&j, job_text, strlen(job_text), "line.json", dir, &e), TZ_OK);
  remove(p);
  return j;
}

START_TEST(test_job_keys_and_steps)
{
  char dir[] = "/tmp/tzero-deliver-XXXXXX";
  job_spec *j = job_in_folder(dir);
  ck_assert_str_eq(j->client, "Quillmere Parish Council");
  ck_assert_str_eq(j->contractor, "Tarrowvane Field Geophysics");
  ck_assert_str_eq(j->crs, "EPSG:32630");
  ck_assert_int_eq(j->polarity, 1);
  ck_assert_int_eq(deliver_polarity_code(j), 1);
  ck_assert_ptr_nonnull(strstr(j->navigation, "n.csv"));
  ck_assert_ptr_nonnull(strstr(j->history, "h.md"));
  static deliver_steps s;
  deliver_steps_init(&s);
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(deliver_steps_job(&s, j, &e), TZ_OK);
  const char *want[] = { "input:", "geometry:", "statics:", "bandpass:", "agc:", "NMO:",
                         "top mute:", "stack:" };
  ck_assert_uint_eq(s.n, sizeof want / sizeof want[0]);
  for (size_t i = 0; i < s.n; i++)
    ck_assert_msg(!strncmp(s.step[i], want[i], strlen(want[i])), "step %zu: %s", i, s.step[i]);
  ck_assert_ptr_nonnull(strstr(s.step[3], "[8,12,60,80]"));
  ck_assert_ptr_nonnull(strstr(s.step[4], "window_ms 250"));

  /* card text: at most 38 cards of 76 characters; the items of the header */
  deliver_steps_add(&s, "fx_prediction: window_traces 20 (a later stage)");
  deliver_run run = { .version = "9.9.9", .time_s = 951782400 };
  char text[DELIVER_TEXT_BYTES];
  deliver_section_text(j, NULL, 1, 100, "stacked section", &s, &run, text, sizeof text);
  int cards = 1;
  size_t len = 0;
  for (const char *c = text; *c; c++) {
    if (*c == '\n') {
      ck_assert_uint_le(len, 76);
      cards++;
      len = 0;
    } else {
      len++;
    }
  }
  ck_assert_int_le(cards, 38);
  const char *items[] = { "tzero 9.9.9 stacked section, written 2000-02-29", "Quillmere line Q-7",
                          "client: Quillmere Parish Council", "EPSG:32630",
                          "datum elevation 120 m, replacement velocity 1800 m/s",
                          "negative (SEG-Y code 1)", " 9 fx_prediction: window_traces 20" };
  for (size_t i = 0; i < sizeof items / sizeof items[0]; i++)
    ck_assert_msg(strstr(text, items[i]) != NULL, "missing '%s' in\n%s", items[i], text);

  /* too many steps: the last card says how many more */
  for (int i = 0; i < 40; i++)
    deliver_steps_add(&s, "extra %d", i);
  deliver_section_text(j, NULL, 1, 100, "stacked section", &s, &run, text, sizeof text);
  cards = 1;
  for (const char *c = text; *c; c++)
    cards += *c == '\n';
  ck_assert_int_eq(cards, 38);
  ck_assert_ptr_nonnull(strstr(text, "more steps (see the processing history)"));
  job_free(j);
  rmdir(dir);
}
END_TEST

/* A tzero section's header carried on by a later step: the input's cards as a reader
 * decodes them (40 cards of 80 characters with "Cnn " prefixes). */
START_TEST(test_continue)
{
  char dir[] = "/tmp/tzero-deliver-XXXXXX";
  job_spec *j = job_in_folder(dir);
  static deliver_steps s;
  deliver_steps_init(&s);
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(deliver_steps_job(&s, j, &e), TZ_OK);
  deliver_run run = { .version = "9.9.9", .time_s = 0 };
  char text[DELIVER_TEXT_BYTES], cards[3201], out[DELIVER_TEXT_BYTES];
  deliver_section_text(j, NULL, 1, 100, "stacked section", &s, &run, text, sizeof text);
  const char *p = text;
  for (int c = 0; c < 40; c++) {
    char line[81];
    int n = snprintf(line, sizeof line, "C%2d ", c + 1);
    const char *nl = strchr(p, '\n');
    size_t len = c < 38 && *p ? (nl ? (size_t)(nl - p) : strlen(p)) : 0;
    memcpy(line + n, p, len);
    memset(line + n + len, ' ', 80 - n - len);
    memcpy(cards + 80 * c, line, 80);
    p = len || nl ? (nl ? nl + 1 : p + len) : p;
  }
  cards[3200] = '\0';
  run.time_s = 951782400;
  ck_assert_int_eq(deliver_section_text_continue(cards, "time-migrated section",
                                                 "time migration: Kirchhoff", &run, out,
                                                 sizeof out), 1);
  ck_assert_ptr_nonnull(strstr(out, "tzero 9.9.9 time-migrated section, written 2000-02-29"));
  char want[64];
  snprintf(want, sizeof want, "\n%2zu time migration: Kirchhoff", s.n + 1);
  ck_assert_msg(strstr(out, want) != NULL, "no '%s' in\n%s", want + 1, out);
  ck_assert_ptr_nonnull(strstr(out, "client: Quillmere Parish Council"));
  /* not tzero's: refused, the output untouched */
  memset(cards, ' ', 3200);
  memcpy(cards, "C 1 CLIENT SOMEONE", 18);
  strcpy(out, "x");
  ck_assert_int_eq(deliver_section_text_continue(cards, "m", "s", &run, out, sizeof out), 0);
  ck_assert_str_eq(out, "x");
  job_free(j);
  rmdir(dir);
}
END_TEST

static Suite *deliver_suite(void)
{
  Suite *s = suite_create("deliver");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_steps_add);
  tcase_add_test(tc, test_date);
  tcase_add_test(tc, test_job_keys_and_steps);
  tcase_add_test(tc, test_continue);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(deliver_suite)
