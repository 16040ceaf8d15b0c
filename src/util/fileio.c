/* fileio.c -- atomic outputs and whole-file reads.
 *
 * A failed run must never leave a file that looks complete, so every output
 * is written under a temporary name in the target's own folder (rename() is
 * atomic only within one file system) and renamed into place on success.
 */
#include "tzero/fileio.h"

#include <errno.h>
#include <fcntl.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/random.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

struct fileio_out {
  FILE *fp;
  char *path;     /* as given, for messages */
  char *target;   /* what the rename replaces: path, or the file a symbolic link names */
  char *tmp;
};

/* Creates the temporary ".NAME.tmp-XXXXXXXX" beside the target with a random
 * suffix, O_EXCL, mode 0666: the kernel applies the process umask itself, so
 * outputs get the usual umask-governed mode without anyone changing the umask
 * (a umask(0) round trip would race with files other threads create). */
static int open_unique(char *tmp, size_t dirlen, size_t cap, const char *base)
{
  for (int attempt = 0; attempt < 100; attempt++) {
    uint32_t r = 0;
    if (getrandom(&r, sizeof r, 0) != (ssize_t)sizeof r)
      r = (uint32_t)getpid() * 2654435761u + (uint32_t)attempt * 40503u + (uint32_t)clock();
    snprintf(tmp + dirlen, cap, ".%s.tmp-%08x", base, (unsigned)r);
    int fd = open(tmp, O_RDWR | O_CREAT | O_EXCL | O_CLOEXEC, 0666);
    if (fd >= 0 || errno != EEXIST)
      return fd;
  }
  errno = EEXIST;
  return -1;
}

int fileio_create(fileio_out **out, const char *path, tz_err *err)
{
  struct stat st;
  if (stat(path, &st) == 0 && S_ISDIR(st.st_mode)) {
    /* found now rather than at the rename, after all the work */
    tz_err_path(err, path);
    return tz_fail(err, TZ_E_CREATE, "is a folder; give a file name for the output");
  }
  if (stat(path, &st) == 0 && !S_ISREG(st.st_mode)) {
    /* the rename would replace a device, pipe or socket (or a link to one, such as
     * /dev/stdout) by a plain file: for root, in /dev itself */
    tz_err_path(err, path);
    return tz_fail(err, TZ_E_CREATE, "is a device, pipe or socket; outputs are written to a "
                   "temporary file and renamed into place, so give a file name");
  }
  /* A symbolic link is written through: renaming onto the link itself would
   * replace the link (for root, /dev/stdout) instead of the file it names. */
  char *real = NULL;
  if (lstat(path, &st) == 0 && S_ISLNK(st.st_mode) && !(real = realpath(path, NULL))) {
    int e = errno;
    tz_err_path(err, path);
    return tz_fail_os(err, TZ_E_CREATE, e, "is a symbolic link to a file that cannot be "
                      "written");
  }
  const char *target = real ? real : path;
  fileio_out *o = calloc(1, sizeof *o);
  size_t n = strlen(target);
  if (!o || !(o->path = strdup(path)) || !(o->target = real ? real : strdup(path)) ||
      !(o->tmp = malloc(n + 32))) {
    if (o) {
      free(o->path);
      if (!o->target)
        free(real);
      free(o->target);
      free(o);
    } else {
      free(real);
    }
    return tz_fail(err, TZ_E_NOMEM, "output handle");
  }
  const char *slash = strrchr(target, '/');
  size_t dirlen = slash ? (size_t)(slash - target) + 1 : 0;
  memcpy(o->tmp, target, dirlen);
  int fd = open_unique(o->tmp, dirlen, n + 32 - dirlen, target + dirlen);
  if (fd < 0) {
    int e = errno;
    free(o->tmp);
    free(o->target);
    free(o->path);
    free(o);
    tz_err_path(err, path);
    return tz_fail_os(err, TZ_E_CREATE, e, "cannot create output");
  }
  o->fp = fdopen(fd, "wb");
  if (!o->fp) {
    int e = errno;
    close(fd);
    unlink(o->tmp);
    free(o->tmp);
    free(o->target);
    free(o->path);
    free(o);
    tz_err_path(err, path);
    return tz_fail_os(err, TZ_E_CREATE, e, "cannot create output");
  }
  *out = o;
  return TZ_OK;
}

int fileio_probe(const char *path, tz_err *err)
{
  fileio_out *o;
  int rc = fileio_create(&o, path, err);
  if (!rc)
    fileio_abort(o);
  return rc;
}

FILE *fileio_stream(fileio_out *o) { return o->fp; }
const char *fileio_path(const fileio_out *o) { return o->path; }

static void release(fileio_out *o)
{
  free(o->tmp);
  free(o->target);
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
  } else if (rename(o->tmp, o->target) != 0) {
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
