/* check_fileio_mode -- outputs get the mode the process umask gives, with no umask change.
 *
 * Source: POSIX open(2) and umask(2): a file created with mode 0666 gets
 * 0666 & ~umask. fileio_create() makes its temporary with O_EXCL and that
 * mode, so the committed output has it too, and the umask is never touched
 * (a umask(0) round trip would race with files other threads create).
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "unit.h"
#include "tzero/fileio.h"

static mode_t made_mode(mode_t um)
{
  char dir[] = "/tmp/tz-fileio-XXXXXX";
  ck_assert_ptr_nonnull(mkdtemp(dir));
  char path[128];
  snprintf(path, sizeof path, "%s/out.txt", dir);
  mode_t old = umask(um);
  fileio_out *o = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(fileio_create(&o, path, &e), TZ_OK);
  ck_assert_uint_eq(umask(um), um);           /* still the caller's umask while open */
  fputs("x\n", fileio_stream(o));
  ck_assert_int_eq(fileio_commit(o, &e), TZ_OK);
  umask(old);
  struct stat st;
  ck_assert_int_eq(stat(path, &st), 0);
  unlink(path);
  rmdir(dir);
  return st.st_mode & 0777;
}

START_TEST(test_mode_follows_umask)
{
  ck_assert_uint_eq(made_mode(022), 0644);
  ck_assert_uint_eq(made_mode(027), 0640);
  ck_assert_uint_eq(made_mode(077), 0600);
  ck_assert_uint_eq(made_mode(002), 0664);
}
END_TEST

static Suite *suite(void)
{
  Suite *s = suite_create("fileio_mode");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_mode_follows_umask);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(suite)
