/* check_table.c -- CSV rows, comments, line numbers and checked numbers.
 *
 * Expected values follow the velocity-table format of docs/velocity-table.md ("#" comments,
 * comma-separated, header row) and C strtod/strtoll semantics (ISO C11 7.22.1);
 * CRLF line ends and blank lines are tolerated (common practice). */
#include <stdlib.h>
#include <string.h>

#include "tzero/table.h"
#include "unit.h"

START_TEST(test_rows_and_lines)
{
  const char *txt = "# comment\r\ncmp,time_ms,velocity_mps\r\n\r\n 120 , 0 ,1500\n120,180,1720";
  table_reader *t;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(table_open_mem(&t, "v.csv", txt, strlen(txt), &e), TZ_OK);
  size_t n;
  ck_assert_int_eq(table_next(t, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 3);
  ck_assert_str_eq(table_field(t, 2), "velocity_mps");
  ck_assert_int_eq(table_line(t), 2);
  ck_assert_int_eq(table_next(t, &n, &e), TZ_OK);
  ck_assert_str_eq(table_field(t, 0), "120");
  ck_assert_int_eq(table_line(t), 4);
  double v;
  ck_assert_int_eq(table_field_f64(t, 2, "velocity_mps", &v, &e), TZ_OK);
  ck_assert(v == 1500.0);
  ck_assert_int_eq(table_next(t, &n, &e), TZ_OK);
  ck_assert_int_eq(table_line(t), 5);
  ck_assert_int_eq(table_next(t, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 0);
  table_close(t);
}
END_TEST

START_TEST(test_byte_order_mark_is_skipped)
{
  /* a spreadsheet's UTF-8 export starts with EF BB BF (Unicode 15.0 section
   * 23.8); it made the first column "\xEF\xBB\xBFcmp" ("unknown column 'cmp'") */
  const char *txt = "\xEF\xBB\xBF" "cmp,time_ms,velocity_mps\n120,0,1500\n";
  table_reader *t;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(table_open_mem(&t, "v.csv", txt, strlen(txt), &e), TZ_OK);
  size_t n;
  ck_assert_int_eq(table_next(t, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 3);
  ck_assert_str_eq(table_field(t, 0), "cmp");
  ck_assert_int_eq(table_line(t), 1);
  table_close(t);
  /* a mark anywhere else is data */
  const char *mid = "cmp\n\xEF\xBB\xBF" "120\n";
  tz_err_init(&e);
  ck_assert_int_eq(table_open_mem(&t, "v.csv", mid, strlen(mid), &e), TZ_OK);
  ck_assert_int_eq(table_next(t, &n, &e), TZ_OK);
  ck_assert_int_eq(table_next(t, &n, &e), TZ_OK);
  ck_assert_str_eq(table_field(t, 0), "\xEF\xBB\xBF" "120");
  table_close(t);
}
END_TEST

START_TEST(test_bad_number_names_line)
{
  const char *txt = "a,b\n1,x2\n";
  table_reader *t;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(table_open_mem(&t, "p.csv", txt, strlen(txt), &e), TZ_OK);
  size_t n;
  table_next(t, &n, &e);
  table_next(t, &n, &e);
  double v;
  ck_assert_int_eq(table_field_f64(t, 1, "b", &v, &e), TZ_E_FORMAT);
  ck_assert_int_eq(e.line, 2);
  ck_assert_str_eq(e.path, "p.csv");
  table_close(t);
}
END_TEST

START_TEST(test_parse)
{
  int64_t i;
  double d;
  ck_assert_int_eq(table_parse_i64(" 42 ", &i), 0);
  ck_assert_int_eq(i, 42);
  ck_assert_int_eq(table_parse_i64("4.2", &i), -1);
  ck_assert_int_eq(table_parse_i64("", &i), -1);
  ck_assert_int_eq(table_parse_i64("99999999999999999999", &i), -1);
  ck_assert_int_eq(table_parse_f64("2.5e3", &d), 0);
  ck_assert(d == 2500.0);
  ck_assert_int_eq(table_parse_f64("nan", &d), -1);
  ck_assert_int_eq(table_parse_f64("inf", &d), -1);
  ck_assert_int_eq(table_parse_f64("1e999", &d), -1);
  ck_assert_int_eq(table_parse_f64("12abc", &d), -1);
  /* strtod(3) also reads C99 hexadecimal floats: "0x5dc" was taken as 1500 m/s.
   * Tables and options are decimal (common practice). */
  ck_assert_int_eq(table_parse_f64("0x5dc", &d), -1);
  ck_assert_int_eq(table_parse_f64("-0X1p4", &d), -1);
  ck_assert_int_eq(table_parse_f64("-1.5E+2", &d), 0);
  ck_assert(d == -150.0);
}
END_TEST

START_TEST(test_missing_file)
{
  table_reader *t = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(table_open(&t, "/nonexistent/v.csv", &e), TZ_E_NOINPUT);
  ck_assert_str_eq(e.path, "/nonexistent/v.csv");
  ck_assert_int_ne(e.oserr, 0);
}
END_TEST

/* Number lists as typed on command lines (our own syntax): items, ranges and
 * steps, sorted with duplicates removed; each expected list counted by hand. */
static const struct {
  const char *s;
  size_t n;
  int32_t first, last;
} lists[] = {
  { "250", 1, 250, 250 },
  { "200,250,300", 3, 200, 300 },
  { "200-300", 101, 200, 300 },
  { "200-900:50", 15, 200, 900 },
  { "300,200-210:5,200", 4, 200, 300 },   /* sorted, duplicates removed: 200 205 210 300 */
  { "-5-5", 11, -5, 5 },
};

START_TEST(test_ranges)
{
  int32_t *v = NULL;
  size_t n = 0;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(table_parse_ranges(lists[_i].s, "CMP", 2000000, &v, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, lists[_i].n);
  ck_assert_int_eq(v[0], lists[_i].first);
  ck_assert_int_eq(v[n - 1], lists[_i].last);
  for (size_t i = 1; i < n; i++)
    ck_assert_int_lt(v[i - 1], v[i]);
  free(v);
}
END_TEST

static const char *const bad_lists[] = { "", "abc", "300-200", "200-300:0", "200-300:-5",
                                         "200,,300", "1.5", "200-", "200:5", "99999999999" };

START_TEST(test_ranges_bad)
{
  int32_t *v = NULL;
  size_t n = 0;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(table_parse_ranges(bad_lists[_i], "CMP", 2000000, &v, &n, &e), TZ_E_ARG);
  ck_assert_ptr_null(v);
  ck_assert(e.msg[0]);
}
END_TEST

START_TEST(test_ranges_cap)
{
  int32_t *v = NULL;
  size_t n = 0;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(table_parse_ranges("1-11", "CMP", 10, &v, &n, &e), TZ_E_ARG);
  ck_assert_ptr_nonnull(strstr(e.msg, "more than 10"));
  ck_assert_int_eq(table_parse_ranges("1-10", "CMP", 10, &v, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 10);
  free(v);
}
END_TEST

static Suite *table_suite(void)
{
  Suite *s = suite_create("table");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_rows_and_lines);
  tcase_add_test(tc, test_byte_order_mark_is_skipped);
  tcase_add_test(tc, test_bad_number_names_line);
  tcase_add_test(tc, test_parse);
  tcase_add_test(tc, test_missing_file);
  tcase_add_loop_test(tc, test_ranges, 0, (int)(sizeof lists / sizeof lists[0]));
  tcase_add_loop_test(tc, test_ranges_bad, 0, (int)(sizeof bad_lists / sizeof bad_lists[0]));
  tcase_add_test(tc, test_ranges_cap);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(table_suite)
