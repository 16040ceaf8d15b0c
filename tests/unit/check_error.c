/* check_error.c -- the error record and the status -> exit code map. */
#include <stdio.h>
#include <string.h>
#include <sysexits.h>

#include "tzero/error.h"
#include "unit.h"

START_TEST(test_first_failure_wins)
{
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(e.trace, -1);
  ck_assert_int_eq(tz_fail_at(&e, TZ_E_FORMAT, 1206, 1500394, "sample count %u out of range", 0u),
                   TZ_E_FORMAT);
  tz_fail(&e, TZ_E_IO, "later, less specific");
  tz_err_path(&e, "line.sgy");
  char buf[512];
  tz_err_format(&e, buf, sizeof buf);
  ck_assert_str_eq(buf, "line.sgy: trace 1207: byte 1500394: sample count 0 out of range "
                        "(malformed input)");
}
END_TEST

/* <sysexits.h> meanings (BSD sysexits(3)): 64 usage, 65 data, 66 no input,
 * 73 cannot create, 74 I/O, 70 software. */
static const struct { int status, code; } exits[] = {
  { TZ_OK, 0 }, { TZ_E_ARG, 64 }, { TZ_E_FORMAT, 65 }, { TZ_E_JOB, 65 },
  { TZ_E_NOINPUT, 66 }, { TZ_E_CREATE, 73 }, { TZ_E_IO, 74 }, { TZ_E_INTERNAL, 70 },
};

/* Control characters from input files must not reach a terminal: ECMA-48
 * (5th ed., 1991) sections 5.2-5.4 define C0, DEL and the C1 set (U+0080 to
 * U+009F) that terminals act on; RFC 3629 section 3 defines well-formed UTF-8. */
START_TEST(test_control_characters_are_escaped)
{
  char b[128];
  ck_assert_uint_eq(tz_escape("line 4\n\x1b[2Jgone", b, sizeof b), strlen("line 4\\n\\e[2Jgone"));
  ck_assert_str_eq(b, "line 4\\n\\e[2Jgone");
  tz_escape("a\tb\rc\x01\x7f", b, sizeof b);
  ck_assert_str_eq(b, "a\\tb\\rc\\x01\\x7F");
  tz_escape("\xc2\x9b" "31m", b, sizeof b);              /* C1 CSI in UTF-8 */
  ck_assert_str_eq(b, "\\u009B31m");
  tz_escape("caf\xc3\xa9 \xe2\x82\xac", b, sizeof b);   /* printable UTF-8 stays */
  ck_assert_str_eq(b, "caf\xc3\xa9 \xe2\x82\xac");
  tz_escape("bad \xff\xc3(", b, sizeof b);               /* not UTF-8 */
  ck_assert_str_eq(b, "bad \\xFF\\xC3(");
  tz_escape("\xed\xa0\x80", b, sizeof b);               /* a surrogate */
  ck_assert_str_eq(b, "\\xED\\xA0\\x80");
  /* cut at a whole piece, always terminated */
  ck_assert_uint_eq(tz_escape("ab\ncd", b, 4), 6);
  ck_assert_str_eq(b, "ab");
  /* the formatted error is one line */
  tz_err e;
  tz_err_init(&e);
  snprintf(e.path, sizeof e.path, "job\n.json");
  tz_fail(&e, TZ_E_JOB, "$.name: \x1b]0;title\x07");
  tz_err_format(&e, b, sizeof b);
  ck_assert_ptr_null(strchr(b, '\n'));
  ck_assert_ptr_null(strchr(b, 0x1b));
  ck_assert_str_eq(b, "job\\n.json: $.name: \\e]0;title\\x07 (invalid job)");
}
END_TEST

START_TEST(test_exit_codes)
{
  ck_assert_int_eq(tz_exit_status(exits[_i].status), exits[_i].code);
}
END_TEST

START_TEST(test_strstatus_never_null)
{
  for (int s = -3; s < TZ_E__COUNT + 3; s++)
    ck_assert_ptr_nonnull(tz_strstatus(s));
}
END_TEST

/* The status in parentheses is left out when the message already says it
 * (consistency check of the formatting rule in error.h). */
START_TEST(test_status_not_repeated)
{
  char b[256];
  tz_err e;
  tz_err_init(&e);
  tz_err_path(&e, "in.sgy");
  tz_fail_os(&e, TZ_E_NOINPUT, 2, "cannot open");
  tz_err_format(&e, b, sizeof b);
  ck_assert_str_eq(b, "in.sgy: cannot open");
  tz_err_init(&e);
  tz_fail(&e, TZ_E_CREATE, "cannot create output");
  tz_err_format(&e, b, sizeof b);
  ck_assert_str_eq(b, "cannot create output");
  tz_err_init(&e);
  tz_fail(&e, TZ_E_CREATE, "exists and is not a folder");
  tz_err_format(&e, b, sizeof b);
  ck_assert_str_eq(b, "exists and is not a folder (cannot create output)");
  tz_err_init(&e);
  tz_fail(&e, TZ_E_NOMEM, "out of memory: trace buffer");
  tz_err_format(&e, b, sizeof b);
  ck_assert_str_eq(b, "out of memory: trace buffer");
}
END_TEST

static Suite *error_suite(void)
{
  Suite *s = suite_create("error");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_first_failure_wins);
  tcase_add_test(tc, test_control_characters_are_escaped);
  tcase_add_loop_test(tc, test_exit_codes, 0, sizeof exits / sizeof exits[0]);
  tcase_add_test(tc, test_strstatus_never_null);
  tcase_add_test(tc, test_status_not_repeated);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(error_suite)
