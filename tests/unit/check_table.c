/* check_table.c -- CSV rows, comments, line numbers and checked numbers.
 *
 * Expected values follow the velocity-table format of docs/velocity-table.md ("#" comments,
 * comma-separated, header row) and C strtod/strtoll semantics (ISO C11 7.22.1);
 * CRLF line ends and blank lines are tolerated (common practice). */
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

static Suite *table_suite(void)
{
  Suite *s = suite_create("table");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_rows_and_lines);
  tcase_add_test(tc, test_byte_order_mark_is_skipped);
  tcase_add_test(tc, test_bad_number_names_line);
  tcase_add_test(tc, test_parse);
  tcase_add_test(tc, test_missing_file);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(table_suite)
