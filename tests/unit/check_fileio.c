/* check_fileio.c -- outputs that appear only when complete, inputs that cannot
 * block, temporaries that a signal or the next run removes, output identity,
 * bounded file patterns.
 *
 * Sources: POSIX.1-2017 (rename, fsync, mkfifo, flock semantics as in Linux
 * flock(2)), setrlimit(2) for RLIMIT_FSIZE and EFBIG, glob(7) for what a
 * pattern matches ('*' does not match a leading '.'). Every case runs in a
 * fresh folder under /tmp, removed at the end.
 */
#include <check.h>
#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/file.h>
#include <sys/resource.h>
#include <sys/stat.h>
#include <unistd.h>

#include "tzero/fileio.h"
#include "unit.h"

static char dir[64];

static void setup(void)
{
  snprintf(dir, sizeof dir, "/tmp/tzero-fileio-XXXXXX");
  ck_assert_ptr_nonnull(mkdtemp(dir));
}

static void rm_tree(const char *p)
{
  struct stat st;
  if (lstat(p, &st) != 0)
    return;
  if (S_ISDIR(st.st_mode)) {
    DIR *d = opendir(p);
    struct dirent *e;
    while (d && (e = readdir(d))) {
      if (!strcmp(e->d_name, ".") || !strcmp(e->d_name, ".."))
        continue;
      char q[512];
      snprintf(q, sizeof q, "%s/%s", p, e->d_name);
      rm_tree(q);
    }
    if (d)
      closedir(d);
    rmdir(p);
  } else {
    unlink(p);
  }
}

static void teardown(void) { rm_tree(dir); }

static const char *at(const char *name)
{
  static char buf[4][512];
  static int k;
  k = (k + 1) % 4;
  snprintf(buf[k], sizeof buf[k], "%s/%s", dir, name);
  return buf[k];
}

/* Number of entries of `d` whose name contains ".tmp-" (our temporaries). */
static int count_tmp(const char *d)
{
  DIR *dd = opendir(d);
  int n = 0;
  struct dirent *e;
  while (dd && (e = readdir(dd)))
    if (strstr(e->d_name, ".tmp-"))
      n++;
  if (dd)
    closedir(dd);
  return n;
}

static void put(const char *path, const char *text)
{
  FILE *fp = fopen(path, "w");
  ck_assert_ptr_nonnull(fp);
  fputs(text, fp);
  fclose(fp);
}

START_TEST(test_write_error_carries_the_os_reason)
{
  /* setrlimit(2): a write beyond RLIMIT_FSIZE fails with EFBIG once SIGXFSZ
   * is ignored. The message must carry the reason, and nothing may remain. */
  signal(SIGXFSZ, SIG_IGN);
  struct rlimit rl = { 1000, 1000 };
  ck_assert_int_eq(setrlimit(RLIMIT_FSIZE, &rl), 0);
  fileio_out *o;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(fileio_create(&o, at("big.bin"), &e), TZ_OK);
  char block[4096];
  memset(block, 7, sizeof block);
  fwrite(block, 1, sizeof block, fileio_stream(o));   /* may be buffered */
  ck_assert_int_eq(fileio_commit(o, &e), TZ_E_IO);
  ck_assert_int_eq(e.oserr, EFBIG);
  ck_assert_str_eq(e.msg, "write failed");
  ck_assert_int_eq(access(at("big.bin"), F_OK), -1);
  ck_assert_int_eq(count_tmp(dir), 0);
  /* the same through fileio_fail, as writers report a short fwrite */
  tz_err_init(&e);
  ck_assert_int_eq(fileio_create(&o, at("big.bin"), &e), TZ_OK);
  for (int i = 0; i < 4 && fwrite(block, 1, sizeof block, fileio_stream(o)) == sizeof block; i++)
    ;
  fflush(fileio_stream(o));
  ck_assert_int_eq(fileio_fail(o, 12, &e), TZ_E_IO);
  ck_assert_int_eq(e.oserr, EFBIG);
  ck_assert_int_eq(e.trace, 12);
  fileio_abort(o);
  ck_assert_int_eq(count_tmp(dir), 0);
}
END_TEST

START_TEST(test_replaced_output_keeps_its_permission_bits)
{
  put(at("keep.csv"), "old\n");
  ck_assert_int_eq(chmod(at("keep.csv"), 0640), 0);
  fileio_out *o;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(fileio_create(&o, at("keep.csv"), &e), TZ_OK);
  fputs("new\n", fileio_stream(o));
  ck_assert_int_eq(fileio_commit(o, &e), TZ_OK);
  struct stat st;
  ck_assert_int_eq(stat(at("keep.csv"), &st), 0);
  ck_assert_uint_eq(st.st_mode & 0777, 0640);
  /* a new output gets 0666 less the umask */
  mode_t old = umask(027);
  tz_err_init(&e);
  ck_assert_int_eq(fileio_create(&o, at("new.csv"), &e), TZ_OK);
  ck_assert_int_eq(fileio_commit(o, &e), TZ_OK);
  umask(old);
  ck_assert_int_eq(stat(at("new.csv"), &st), 0);
  ck_assert_uint_eq(st.st_mode & 0777, 0640);
}
END_TEST

START_TEST(test_missing_output_folders_are_created)
{
  fileio_out *o;
  tz_err e;
  tz_err_init(&e);
  /* the probe finds no obstacle and creates nothing */
  ck_assert_int_eq(fileio_probe(at("a/b/c/x.sgy"), &e), TZ_OK);
  ck_assert_int_eq(access(at("a"), F_OK), -1);
  mode_t old = umask(022);
  ck_assert_int_eq(fileio_create(&o, at("a/b/c/x.sgy"), &e), TZ_OK);
  umask(old);
  fputs("x", fileio_stream(o));
  ck_assert_int_eq(fileio_commit(o, &e), TZ_OK);
  struct stat st;
  ck_assert_int_eq(stat(at("a/b/c/x.sgy"), &st), 0);
  ck_assert_int_eq(stat(at("a/b"), &st), 0);
  ck_assert_uint_eq(st.st_mode & 0777, 0755);   /* mkdir(2) mode 0777 less the umask */
}
END_TEST

START_TEST(test_output_through_a_file_is_refused)
{
  put(at("plain"), "x");
  fileio_out *o = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(fileio_probe(at("plain/sub/x.sgy"), &e), TZ_E_CREATE);
  ck_assert_ptr_nonnull(strstr(e.msg, "is not a folder"));
  tz_err_init(&e);
  ck_assert_int_eq(fileio_create(&o, at("plain/x.sgy"), &e), TZ_E_CREATE);
  ck_assert_ptr_nonnull(strstr(e.msg, "plain is not a folder"));
  ck_assert_str_eq(e.path, at("plain/x.sgy"));
}
END_TEST

START_TEST(test_stale_temporaries_are_swept_but_locked_ones_kept)
{
  /* a killed run left one unlocked temporary; a live run holds another */
  put(at(".out.sgy.tmp-AbC123"), "stale");
  put(at(".out.sgy.tmp-LIVE00"), "live");
  put(at(".other.sgy.tmp-AbC123"), "not this output's");
  put(at(".out.sgy.tmp-tooooolong9"), "not our naming");
  ck_assert_int_eq(mkdir(at(".out.sgy.tmp-Dir456"), 0777), 0);
  put(at(".out.sgy.tmp-Dir456/shot.sgy"), "stale folder content");
  int live = open(at(".out.sgy.tmp-LIVE00"), O_RDONLY);
  ck_assert_int_ge(live, 0);
  ck_assert_int_eq(flock(live, LOCK_EX), 0);
  fileio_out *o;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(fileio_create(&o, at("out.sgy"), &e), TZ_OK);
  ck_assert_int_eq(access(at(".out.sgy.tmp-AbC123"), F_OK), -1);
  ck_assert_int_eq(access(at(".out.sgy.tmp-Dir456"), F_OK), -1);
  ck_assert_int_eq(access(at(".out.sgy.tmp-LIVE00"), F_OK), 0);
  ck_assert_int_eq(access(at(".other.sgy.tmp-AbC123"), F_OK), 0);
  ck_assert_int_eq(access(at(".out.sgy.tmp-tooooolong9"), F_OK), 0);
  /* and this run's own temporary is locked against another run's sweep */
  DIR *d = opendir(dir);
  struct dirent *de;
  int mine = 0;
  while ((de = readdir(d))) {
    if (strncmp(de->d_name, ".out.sgy.tmp-", 13) || !strcmp(de->d_name, ".out.sgy.tmp-LIVE00") ||
        !strcmp(de->d_name, ".out.sgy.tmp-tooooolong9"))
      continue;
    int fd = open(at(de->d_name), O_RDONLY);
    ck_assert_int_ge(fd, 0);
    ck_assert_int_eq(flock(fd, LOCK_EX | LOCK_NB), -1);
    ck_assert_int_eq(errno, EWOULDBLOCK);
    close(fd);
    mine++;
  }
  closedir(d);
  ck_assert_int_eq(mine, 1);
  fileio_abort(o);
  close(live);
}
END_TEST

START_TEST(test_signal_cleanup_removes_temporaries)
{
  /* runs in Check's forked child: the registry stays locked afterwards, and
   * the handles stay allocated as in a process about to exit (static: still
   * reachable, not a leak) */
  static fileio_out *o;
  static fileio_tmpdir *d;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(fileio_create(&o, at("sec.sgy"), &e), TZ_OK);
  fputs("partial", fileio_stream(o));
  fflush(fileio_stream(o));
  ck_assert_int_eq(fileio_tmpdir_create(&d, at("survey"), &e), TZ_OK);
  char inner[512];
  snprintf(inner, sizeof inner, "%s/shot_000001.sgy", fileio_tmpdir_path(d));
  put(inner, "partial shot");
  ck_assert_int_eq(count_tmp(dir), 2);
  fileio_remove_temporaries();
  ck_assert_int_eq(count_tmp(dir), 0);
  ck_assert_int_eq(access(at("sec.sgy"), F_OK), -1);
  ck_assert_int_eq(access(at("survey"), F_OK), -1);
  /* nothing new can be started */
  fileio_out *o2 = NULL;
  tz_err_init(&e);
  ck_assert_int_eq(fileio_create(&o2, at("late.sgy"), &e), TZ_E_CREATE);
  ck_assert_int_eq(count_tmp(dir), 0);
}
END_TEST

START_TEST(test_tmpdir_commit_moves_the_folder_into_place)
{
  fileio_tmpdir *d;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(fileio_tmpdir_create(&d, at("new/survey"), &e), TZ_OK);
  char inner[512];
  snprintf(inner, sizeof inner, "%s/a.sgy", fileio_tmpdir_path(d));
  put(inner, "a");
  ck_assert_int_eq(fileio_tmpdir_commit(d, at("new/survey"), &e), TZ_OK);
  ck_assert_int_eq(access(at("new/survey/a.sgy"), F_OK), 0);
  ck_assert_int_eq(count_tmp(at("new")), 0);
}
END_TEST

START_TEST(test_same_output_by_folder_identity_and_name)
{
  ck_assert_int_eq(mkdir(at("real"), 0777), 0);
  ck_assert_int_eq(symlink("real", at("link")), 0);
  char here[512];
  ck_assert_ptr_nonnull(getcwd(here, sizeof here));
  ck_assert_int_eq(chdir(dir), 0);
  /* neither exists yet */
  ck_assert_int_eq(fileio_same_output("x.sgy", "./x.sgy"), 1);
  ck_assert_int_eq(fileio_same_output("x.sgy", "real/../x.sgy"), 1);
  ck_assert_int_eq(fileio_same_output("link/x.sgy", "real/x.sgy"), 1);
  ck_assert_int_eq(fileio_same_output(at("real/x.sgy"), "link//./x.sgy"), 1);
  ck_assert_int_eq(fileio_same_output("new/x.sgy", "new/./x.sgy"), 1);
  ck_assert_int_eq(fileio_same_output("new/a/../x.sgy", "new/x.sgy"), 1);
  ck_assert_int_eq(fileio_same_output("x.sgy", "y.sgy"), 0);
  ck_assert_int_eq(fileio_same_output("real/x.sgy", "x.sgy"), 0);
  /* an existing file reached through a link to it */
  put("real/f.csv", "1");
  ck_assert_int_eq(symlink("real/f.csv", "f-link.csv"), 0);
  ck_assert_int_eq(fileio_same_output("f-link.csv", "link/f.csv"), 1);
  ck_assert_int_eq(chdir(here), 0);
}
END_TEST

START_TEST(test_paths_are_tidied_for_printing)
{
  /* lexical clean-up as POSIX path resolution (XBD 4.13) reaches the same
   * file: "//" is one separator, "." names the folder itself, "NAME/.." is the
   * folder holding NAME unless NAME is a symbolic link */
  ck_assert_int_eq(mkdir(at("demo"), 0777), 0);
  ck_assert_int_eq(mkdir(at("demo/tarrowvane"), 0777), 0);
  ck_assert_int_eq(mkdir(at("real"), 0777), 0);
  ck_assert_int_eq(mkdir(at("real/sub"), 0777), 0);
  ck_assert_int_eq(symlink("real/sub", at("link")), 0);
  char here[512];
  ck_assert_ptr_nonnull(getcwd(here, sizeof here));
  ck_assert_int_eq(chdir(dir), 0);
  static const char *const cases[][2] = {
    { "demo/tarrowvane/../out/x", "demo/out/x" },
    { "demo//out///x.sgy", "demo/out/x.sgy" },
    { "./demo/./out/", "demo/out" },
    { "demo/tarrowvane/../../y", "y" },
    { "../a/b", "../a/b" },
    { "missing/../x", "missing/../x" },   /* nothing to say where it leads */
    { "link/../x", "link/../x" },         /* real/x, not ./x */
    { "/", "/" },
    { "//x//", "/x" },
    { "/..", "/" },
    { ".", "." },
    { "./", "." },
  };
  for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
    char buf[64];
    snprintf(buf, sizeof buf, "%s", cases[i][0]);
    ck_assert_str_eq(fileio_path_clean(buf), cases[i][1]);
  }
  char *j = fileio_path_join("demo/tarrowvane", "../out/gw01_stack.sgy");
  ck_assert_str_eq(j, "demo/out/gw01_stack.sgy");
  free(j);
  j = fileio_path_join("demo/out/", "shot_1.sgy");
  ck_assert_str_eq(j, "demo/out/shot_1.sgy");
  free(j);
  j = fileio_path_join("demo", "/abs//x");
  ck_assert_str_eq(j, "/abs/x");
  free(j);
  ck_assert_int_eq(chdir(here), 0);
}
END_TEST

START_TEST(test_named_pipe_input_is_refused_without_blocking)
{
  /* opening a FIFO for reading blocks until a writer comes (POSIX open());
   * a hang here fails the test by Check's timeout */
  ck_assert_int_eq(mkfifo(at("pipe"), 0600), 0);
  int fd = -1;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(fileio_open_input(at("pipe"), &fd, &e), TZ_E_NOINPUT);
  ck_assert_ptr_nonnull(strstr(e.msg, "not a regular file"));
  ck_assert_str_eq(e.path, at("pipe"));
  char *text;
  size_t len;
  tz_err_init(&e);
  ck_assert_int_eq(fileio_read_all(at("pipe"), 1000, &text, &len, &e), TZ_E_NOINPUT);
  tz_err_init(&e);
  ck_assert_int_eq(fileio_check_input(at("pipe"), &e), TZ_E_NOINPUT);
  tz_err_init(&e);
  ck_assert_int_eq(fileio_check_input(dir, &e), TZ_E_NOINPUT);
  ck_assert_ptr_nonnull(strstr(e.msg, "is a folder"));
  /* a regular file opens, and reads block normally afterwards */
  put(at("ok.txt"), "abc");
  tz_err_init(&e);
  ck_assert_int_eq(fileio_open_input(at("ok.txt"), &fd, &e), TZ_OK);
  ck_assert_int_eq(fcntl(fd, F_GETFL) & O_NONBLOCK, 0);
  close(fd);
}
END_TEST

START_TEST(test_patterns_are_bounded)
{
  ck_assert_int_eq(mkdir(at("sv"), 0777), 0);
  put(at("sv/b.sgy"), "");
  put(at("sv/a.sgy"), "");
  put(at("sv/.hidden.sgy"), "");
  put(at("sv/c.txt"), "");
  char pat[512];
  char **p;
  size_t n;
  tz_err e;
  tz_err_init(&e);
  snprintf(pat, sizeof pat, "%s/sv/*.sgy", dir);
  ck_assert_int_eq(fileio_glob(pat, NULL, &p, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 2);   /* glob(7): '*' does not match the leading '.' */
  ck_assert_str_eq(p[0], at("sv/a.sgy"));
  ck_assert_str_eq(p[1], at("sv/b.sgy"));
  fileio_glob_free(p, n);
  /* escaped wildcard: the literal name only */
  put(at("sv/x*y.sgy"), "");
  snprintf(pat, sizeof pat, "%s/sv/x\\*y.sgy", dir);
  ck_assert_int_eq(fileio_glob(pat, NULL, &p, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 1);
  fileio_glob_free(p, n);
  /* no match is not an error */
  snprintf(pat, sizeof pat, "%s/sv/*.wav", dir);
  ck_assert_int_eq(fileio_glob(pat, NULL, &p, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 0);
  fileio_glob_free(p, n);
  /* depth: a pattern with more wildcard levels than the bound */
  ck_assert_int_eq(fileio_glob("//*/*///*/*/*", NULL, &p, &n, &e), TZ_E_FORMAT);
  ck_assert_ptr_nonnull(strstr(e.msg, "levels with wildcards"));
  /* entries read and matches */
  fileio_glob_limits lim = { 100, 3, 4 };
  tz_err_init(&e);
  snprintf(pat, sizeof pat, "%s/sv/*", dir);
  ck_assert_int_eq(fileio_glob(pat, &lim, &p, &n, &e), TZ_E_FORMAT);
  ck_assert_ptr_nonnull(strstr(e.msg, "more than 3 folder entries"));
  fileio_glob_limits lim2 = { 2, 1000, 4 };
  tz_err_init(&e);
  ck_assert_int_eq(fileio_glob(pat, &lim2, &p, &n, &e), TZ_E_FORMAT);
  ck_assert_ptr_nonnull(strstr(e.msg, "more than 2 files"));
}
END_TEST

static Suite *fileio_suite(void)
{
  Suite *s = suite_create("fileio");
  TCase *tc = tcase_create("core");
  tcase_add_checked_fixture(tc, setup, teardown);
  tcase_add_test(tc, test_write_error_carries_the_os_reason);
  tcase_add_test(tc, test_replaced_output_keeps_its_permission_bits);
  tcase_add_test(tc, test_missing_output_folders_are_created);
  tcase_add_test(tc, test_output_through_a_file_is_refused);
  tcase_add_test(tc, test_stale_temporaries_are_swept_but_locked_ones_kept);
  tcase_add_test(tc, test_signal_cleanup_removes_temporaries);
  tcase_add_test(tc, test_tmpdir_commit_moves_the_folder_into_place);
  tcase_add_test(tc, test_same_output_by_folder_identity_and_name);
  tcase_add_test(tc, test_paths_are_tidied_for_printing);
  tcase_add_test(tc, test_named_pipe_input_is_refused_without_blocking);
  tcase_add_test(tc, test_patterns_are_bounded);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(fileio_suite)
