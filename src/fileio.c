/* fileio.c -- atomic outputs and whole-file reads.
 *
 * A failed run must never leave a file that looks complete, so every output
 * is written under a temporary name in the target's own folder (rename() is
 * atomic only within one file system) and renamed into place on success.
 */
#include "tzero/fileio.h"

#include <errno.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

struct fileio_out {
  FILE *fp;
  char *path;
  char *tmp;
};

int fileio_create(fileio_out **out, const char *path, tz_err *err)
{
  struct stat st;
  if (stat(path, &st) == 0 && S_ISDIR(st.st_mode)) {
    /* found now rather than at the rename, after all the work */
    tz_err_path(err, path);
    return tz_fail(err, TZ_E_CREATE, "is a folder; give a file name for the output");
  }
  fileio_out *o = calloc(1, sizeof *o);
  size_t n = strlen(path);
  if (!o || !(o->path = strdup(path)) || !(o->tmp = malloc(n + 32))) {
    if (o) {
      free(o->path);
      free(o);
    }
    return tz_fail(err, TZ_E_NOMEM, "output handle");
  }
  const char *slash = strrchr(path, '/');
  size_t dirlen = slash ? (size_t)(slash - path) + 1 : 0;
  memcpy(o->tmp, path, dirlen);
  snprintf(o->tmp + dirlen, n + 32 - dirlen, ".%s.tmp-XXXXXX", path + dirlen);
  int fd = mkstemp(o->tmp);
  if (fd < 0) {
    int e = errno;
    free(o->tmp);
    free(o->path);
    free(o);
    tz_err_path(err, path);
    return tz_fail_os(err, TZ_E_CREATE, e, "cannot create output");
  }
  /* mkstemp makes 0600; outputs get the usual umask-governed mode. */
  mode_t um = umask(0);
  umask(um);
  if (fchmod(fd, 0666 & ~um) != 0) {
    /* not fatal: the file is still usable by its owner */
  }
  o->fp = fdopen(fd, "wb");
  if (!o->fp) {
    int e = errno;
    close(fd);
    unlink(o->tmp);
    free(o->tmp);
    free(o->path);
    free(o);
    tz_err_path(err, path);
    return tz_fail_os(err, TZ_E_CREATE, e, "cannot create output");
  }
  *out = o;
  return TZ_OK;
}

FILE *fileio_stream(fileio_out *o) { return o->fp; }
const char *fileio_path(const fileio_out *o) { return o->path; }

static void release(fileio_out *o)
{
  free(o->tmp);
  free(o->path);
  free(o);
}

int fileio_commit(fileio_out *o, tz_err *err)
{
  int rc = TZ_OK;
  if (fflush(o->fp) != 0 || ferror(o->fp)) {
    int e = errno;
    fclose(o->fp);
    unlink(o->tmp);
    tz_err_path(err, o->path);
    rc = tz_fail_os(err, TZ_E_IO, e, "write failed");
  } else if (fclose(o->fp) != 0) {
    int e = errno;
    unlink(o->tmp);
    tz_err_path(err, o->path);
    rc = tz_fail_os(err, TZ_E_IO, e, "write failed on close");
  } else if (rename(o->tmp, o->path) != 0) {
    int e = errno;
    unlink(o->tmp);
    tz_err_path(err, o->path);
    rc = tz_fail_os(err, TZ_E_CREATE, e, "cannot move output into place");
  }
  release(o);
  return rc;
}

void fileio_abort(fileio_out *o)
{
  if (!o)
    return;
  if (o->fp)
    fclose(o->fp);
  unlink(o->tmp);
  release(o);
}

int fileio_same_file(const char *a, const char *b)
{
  struct stat sa, sb;
  return stat(a, &sa) == 0 && stat(b, &sb) == 0 && sa.st_dev == sb.st_dev &&
         sa.st_ino == sb.st_ino;
}

int fileio_check_not_input(const char *out, const char *in, const char *what, tz_err *err)
{
  if (!out || !in || !fileio_same_file(out, in))
    return TZ_OK;
  tz_err_path(err, out);
  return tz_fail(err, TZ_E_CREATE, "%s would overwrite the input %s; choose another output",
                 what, in);
}

int fileio_read_all(const char *path, size_t max, char **out, size_t *len, tz_err *err)
{
  FILE *fp = fopen(path, "rb");
  if (!fp) {
    int e = errno;
    tz_err_path(err, path);
    return tz_fail_os(err, TZ_E_NOINPUT, e, "cannot open");
  }
  /* fopen() opens a folder for reading on Linux; the first read then fails
   * with EISDIR, which would be reported as an I/O error. */
  struct stat st;
  if (fstat(fileno(fp), &st) == 0 && S_ISDIR(st.st_mode)) {
    fclose(fp);
    tz_err_path(err, path);
    return tz_fail(err, TZ_E_NOINPUT, "is a folder, expected a file");
  }
  size_t cap = 4096, n = 0;
  char *buf = malloc(cap);
  int rc = TZ_OK;
  if (!buf) {
    rc = tz_fail(err, TZ_E_NOMEM, "file buffer");
    goto done;
  }
  for (;;) {
    if (cap - n < 2) {
      if (cap > max + 1) {
        tz_err_path(err, path);
        rc = tz_fail(err, TZ_E_FORMAT, "file larger than %zu bytes", max);
        goto done;
      }
      char *nb = realloc(buf, cap * 2);
      if (!nb) {
        rc = tz_fail(err, TZ_E_NOMEM, "file buffer");
        goto done;
      }
      buf = nb;
      cap *= 2;
    }
    size_t got = fread(buf + n, 1, cap - n - 1, fp);
    n += got;
    if (!got)
      break;
  }
  if (ferror(fp)) {
    int e = errno;
    tz_err_path(err, path);
    rc = tz_fail_os(err, TZ_E_IO, e, "read failed");
    goto done;
  }
  if (n > max) {
    tz_err_path(err, path);
    rc = tz_fail(err, TZ_E_FORMAT, "file larger than %zu bytes", max);
    goto done;
  }
  buf[n] = '\0';
  *out = buf;
  *len = n;
  buf = NULL;
done:
  free(buf);
  fclose(fp);
  return rc;
}
