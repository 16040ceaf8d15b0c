/* check_error.c -- the error record and the status -> exit code map. */
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

static Suite *error_suite(void)
{
  Suite *s = suite_create("error");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_first_failure_wins);
  tcase_add_loop_test(tc, test_exit_codes, 0, sizeof exits / sizeof exits[0]);
  tcase_add_test(tc, test_strstatus_never_null);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(error_suite)
