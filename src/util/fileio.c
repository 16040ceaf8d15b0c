/* fileio.c -- atomic outputs, safe input opens, bounded file patterns.
 *
 * A failed or interrupted run must never leave a file that looks complete, so
 * every output is written under a temporary name in the target's own folder
 * (rename() is atomic only within one file system), flushed to the disk with
 * fsync(2) and renamed into place on success; the folder is synced after the
 * rename so the new name survives a power loss too (POSIX.1-2017, fsync()).
 *
 * Temporaries are named ".NAME.tmp-XXXXXXXX" (a random suffix, O_EXCL) and carry an
 * exclusive flock(2) for as long as their writer lives. A run that was killed
 * outright (SIGKILL, power loss) leaves them unlocked: the next run writing the
 * same output removes every unlocked temporary of that name (the sweep), and
 * never one another live run still holds.
 *
 * Process-wide registry. Signals are process-wide, so the temporaries of the
 * running process are listed in one registry (a mutex-guarded list, the only
 * mutable state of the library) that fileio_remove_temporaries() empties when
 * the front end is stopped by SIGINT, SIGTERM or SIGHUP. After that call the
 * registry stays locked: no later rename can make an output appear.
 *
 * Writes go through a stdio cookie (fopencookie(3)) so that the first OS error
 * of any write (ENOSPC, EFBIG, EIO) is kept and every "write failed" message
 * carries its reason, however the caller wrote (fwrite, fprintf, fputs).
 *
 * Inputs are opened with O_NONBLOCK and checked with fstat(2) before any read:
 * a named pipe, socket or device is refused at once ("not a regular file")
 * instead of blocking the run forever.
 */
#include "tzero/fileio.h"

#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <fnmatch.h>
#include <limits.h>
#include <pthread.h>
#include <stdatomic.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <sys/file.h>
#include <sys/random.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

/* ---------------------------------------------------------------- registry */

typedef struct tmp_entry {
  struct tmp_entry *next, *prev;
  int is_dir;
  char path[];
} tmp_entry;

static pthread_mutex_t reg_lock = PTHREAD_MUTEX_INITIALIZER;
static tmp_entry *reg_head;
/* set by fileio_remove_temporaries(): the process is ending */
static atomic_int reg_closed;

/* Removes a folder and everything under it, without following links. */
static void remove_tree_at(int parent, const char *name)
{
  int fd = openat(parent, name, O_RDONLY | O_DIRECTORY | O_NOFOLLOW | O_CLOEXEC);
  if (fd >= 0) {
    DIR *d = fdopendir(fd);
    if (d) {
      struct dirent *e;
      while ((e = readdir(d))) {
        if (!strcmp(e->d_name, ".") || !strcmp(e->d_name, ".."))
          continue;
        if (unlinkat(fd, e->d_name, 0) != 0 && (errno == EISDIR || errno == EPERM))
          remove_tree_at(fd, e->d_name);
      }
      closedir(d);
    } else {
      close(fd);
    }
  }
  unlinkat(parent, name, AT_REMOVEDIR);
}

static void remove_path(const char *path, int is_dir)
{
  if (is_dir)
    remove_tree_at(AT_FDCWD, path);
  else
    unlink(path);
}

static void reg_unlink_locked(tmp_entry *t)
{
  if (t->prev)
    t->prev->next = t->next;
  else
    reg_head = t->next;
  if (t->next)
    t->next->prev = t->prev;
}

static void reg_drop(tmp_entry *t)
{
  if (!t)
    return;
  pthread_mutex_lock(&reg_lock);
  reg_unlink_locked(t);
  pthread_mutex_unlock(&reg_lock);
  free(t);
}

void fileio_remove_temporaries(void)
{
  atomic_store(&reg_closed, 1);
  pthread_mutex_lock(&reg_lock);   /* kept locked: the process is ending */
  for (tmp_entry *t = reg_head; t; t = t->next)
    remove_path(t->path, t->is_dir);
}

/* ---------------------------------------------------------------- names */

static const char tmp_mark[] = ".tmp-";

/* 1 when `name` is ".BASE.tmp-" and 6 to 8 letters or digits for this base (8
 * hex digits now; 6 characters of mkstemp(3) in earlier versions). */
static int is_tmp_name(const char *name, const char *base, size_t bl)
{
  size_t ml = sizeof tmp_mark - 1;
  if (name[0] != '.' || strncmp(name + 1, base, bl) || strncmp(name + 1 + bl, tmp_mark, ml))
    return 0;
  const char *r = name + 1 + bl + ml;
  size_t k = 0;
  while ((r[k] >= 'a' && r[k] <= 'z') || (r[k] >= 'A' && r[k] <= 'Z') || (r[k] >= '0' && r[k] <= '9'))
    k++;
  return r[k] == '\0' && k >= 6 && k <= 8;
}

/* Splits `path` into a malloc'd folder ("." when none) and a pointer to the name. */
static char *dir_of(const char *path, const char **name)
{
  const char *slash = strrchr(path, '/');
  *name = slash ? slash + 1 : path;
  if (!slash)
    return strdup(".");
  size_t n = slash == path ? 1 : (size_t)(slash - path);
  char *d = malloc(n + 1);
  if (d) {
    memcpy(d, path, n);
    d[n] = '\0';
  }
  return d;
}

/* The sweep: removes the unlocked ".NAME.tmp-XXXXXX" beside `target`, left by a
 * run of ours that was killed before it could clean up. */
static void sweep_stale(const char *target)
{
  const char *base;
  char *dir = dir_of(target, &base);
  if (!dir)
    return;
  size_t bl = strlen(base);
  DIR *d = bl ? opendir(dir) : NULL;
  free(dir);
  if (!d)
    return;
  int dfd = dirfd(d);
  struct dirent *e;
  while ((e = readdir(d))) {
    if (!is_tmp_name(e->d_name, base, bl))
      continue;
    struct stat st;
    if (fstatat(dfd, e->d_name, &st, AT_SYMLINK_NOFOLLOW) != 0 ||
        !(S_ISREG(st.st_mode) || S_ISDIR(st.st_mode)))
      continue;
    int fd = openat(dfd, e->d_name, O_RDONLY | O_NONBLOCK | O_NOFOLLOW | O_CLOEXEC);
    if (fd < 0)
      continue;
    if (flock(fd, LOCK_EX | LOCK_NB) == 0) {   /* no live run holds it */
      if (S_ISDIR(st.st_mode))
        remove_tree_at(dfd, e->d_name);
      else
        unlinkat(dfd, e->d_name, 0);
    }
    close(fd);   /* releases the lock */
  }
  closedir(d);
}

/* Creates the temporary ".NAME.tmp-XXXXXXXX" (eight hex digits) beside the
 * target, O_EXCL, mode 0666 (files) or 0777 (folders): the kernel applies the
 * process umask itself, so nobody changes the umask (a umask(0) round trip
 * would race with files other threads create). `tmp` holds the folder part
 * (dirlen bytes) and has room for cap more bytes. Returns the descriptor
 * (files) or 0 (folders), -1 with errno on failure. */
static int open_unique(char *tmp, size_t dirlen, size_t cap, const char *base, int folder)
{
  for (int attempt = 0; attempt < 100; attempt++) {
    uint32_t r = 0;
    if (getrandom(&r, sizeof r, 0) != (ssize_t)sizeof r)
      r = (uint32_t)getpid() * 2654435761u + (uint32_t)attempt * 40503u + (uint32_t)clock();
    snprintf(tmp + dirlen, cap, ".%s%s%08x", base, tmp_mark, (unsigned)r);
    int fd = folder ? mkdir(tmp, 0777) : open(tmp, O_RDWR | O_CREAT | O_EXCL | O_CLOEXEC, 0666);
    if (fd >= 0 || errno != EEXIST)
      return fd;
  }
  errno = EEXIST;
  return -1;
}

/* open_unique() and the registry entry in one step under the registry lock, so
 * that a signal's cleanup sees every temporary that exists: none can be made
 * between its sweep of the registry and the exit (it holds the lock for good).
 * On success *reg is the entry; -1 with errno (EINTR once the process is
 * ending, *closed set) on failure. */
static int create_registered(char *tmp, size_t dirlen, size_t cap, const char *base,
                             int folder, tmp_entry **reg, int *closed)
{
  *reg = NULL;
  *closed = 0;
  tmp_entry *t = malloc(sizeof *t + dirlen + cap + 1);
  if (!t) {
    errno = ENOMEM;
    return -1;
  }
  if ((*closed = atomic_load(&reg_closed))) {   /* the lock is held for good */
    free(t);
    errno = EINTR;
    return -1;
  }
  pthread_mutex_lock(&reg_lock);
  int fd = open_unique(tmp, dirlen, cap, base, folder);
  if (fd < 0) {
    int e = errno;
    pthread_mutex_unlock(&reg_lock);
    free(t);
    errno = e;
    return -1;
  }
  snprintf(t->path, dirlen + cap + 1, "%s", tmp);
  t->is_dir = folder;
  t->prev = NULL;
  t->next = reg_head;
  if (reg_head)
    reg_head->prev = t;
  reg_head = t;
  pthread_mutex_unlock(&reg_lock);
  *reg = t;
  return fd;
}

/* Takes the writer's lock on a new temporary. 1 when it was swept away by a
 * concurrent run between its creation and the lock (create another), 0 when
 * held, -1 on error. */
static int lock_new(int fd)
{
  while (flock(fd, LOCK_EX) != 0)
    if (errno != EINTR)
      return -1;
  struct stat st;
  if (fstat(fd, &st) != 0)
    return -1;
  return st.st_nlink == 0;
}

/* ---------------------------------------------------------------- folders */

/* Checks (create = 0) or creates (create = 1) the folders above `path`: every
 * existing prefix must be a folder; missing ones get mode 0777 less the umask,
 * as mkdir -p makes them. TZ_E_CREATE names the prefix that is not a folder. */
static int parent_folders(const char *path, int create, tz_err *err)
{
  const char *base;
  char *dir = dir_of(path, &base);
  if (!dir)
    return tz_fail(err, TZ_E_NOMEM, "output path");
  int rc = TZ_OK;
  size_t n = strlen(dir);
  char *cut = dir;
  for (;;) {
    char *next = strchr(cut + (cut == dir && *cut == '/'), '/');
    if (next)
      *next = '\0';
    struct stat st;
    if (dir[0] && stat(dir, &st) == 0) {
      if (!S_ISDIR(st.st_mode)) {
        tz_err_path(err, path);
        rc = tz_fail(err, TZ_E_CREATE, "cannot create output: %s is not a folder", dir);
        break;
      }
    } else if (dir[0] && errno == ENOTDIR) {
      tz_err_path(err, path);
      rc = tz_fail(err, TZ_E_CREATE, "cannot create output: %s is below a file, not a folder",
                   dir);
      break;
    } else if (dir[0] && create && mkdir(dir, 0777) != 0 && errno != EEXIST) {
      int e = errno;
      tz_err_path(err, path);
      rc = tz_fail_os(err, TZ_E_CREATE, e, "cannot create the folder %s", dir);
      break;
    } else if (dir[0] && !create) {
      break;   /* the rest is missing and would be created */
    }
    if (!next || (size_t)(next - dir) >= n)
      break;
    *next = '/';
    cut = next + 1;
  }
  free(dir);
  return rc;
}

/* ---------------------------------------------------------------- outputs */

struct fileio_out {
  FILE *fp;
  int fd;          /* the temporary; holds the writer's lock until after the rename */
  int oserr;       /* errno of the first failed write, 0 if none */
  char *path;      /* as given, for messages */
  char *target;    /* what the rename replaces: path, or the file a symbolic link names */
  char *tmp;
  tmp_entry *reg;
};

static ssize_t cookie_write(void *c, const char *buf, size_t n)
{
  fileio_out *o = c;
  size_t done = 0;
  while (done < n) {
    ssize_t k = write(o->fd, buf + done, n - done);
    if (k < 0 && errno == EINTR)
      continue;
    if (k <= 0) {
      if (!o->oserr)
        o->oserr = k < 0 ? errno : EIO;
      errno = o->oserr;
      return -1;
    }
    done += (size_t)k;
  }
  return (ssize_t)done;
}

static int cookie_seek(void *c, off64_t *pos, int whence)
{
  fileio_out *o = c;
  off_t r = lseek(o->fd, (off_t)*pos, whence);
  if (r < 0)
    return -1;
  *pos = (off64_t)r;
  return 0;
}

static int cookie_close(void *c)
{
  (void)c;   /* the descriptor is closed by commit or abort, after the rename */
  return 0;
}

static void release(fileio_out *o)
{
  free(o->tmp);
  free(o->target);
  free(o->path);
  free(o);
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
  int exists = stat(path, &st) == 0;
  mode_t keep = exists ? (st.st_mode & 0777) : 0;
  /* A symbolic link is written through: renaming onto the link itself would
   * replace the link (for root, /dev/stdout) instead of the file it names. */
  char *real = NULL;
  if (lstat(path, &st) == 0 && S_ISLNK(st.st_mode) && !(real = realpath(path, NULL))) {
    int e = errno;
    tz_err_path(err, path);
    return tz_fail_os(err, TZ_E_CREATE, e, "is a symbolic link to a file that cannot be "
                      "written");
  }
  int rc = real ? TZ_OK : parent_folders(path, 1, err);
  if (rc)
    return rc;
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
  o->fd = -1;
  sweep_stale(target);
  const char *slash = strrchr(target, '/');
  size_t dirlen = slash ? (size_t)(slash - target) + 1 : 0;
  for (int tries = 0;; tries++) {
    memcpy(o->tmp, target, dirlen);
    int closed = 0;
    int fd = create_registered(o->tmp, dirlen, n + 32 - dirlen, target + dirlen, 0, &o->reg,
                               &closed);
    if (fd < 0) {
      int e = errno;
      tz_err_path(err, path);
      rc = tz_fail_os(err, TZ_E_CREATE, e, "cannot create output");
      release(o);
      return rc;
    }
    int lk = lock_new(fd);
    if (lk == 0) {
      o->fd = fd;
      break;
    }
    int e = errno;
    reg_drop(o->reg);
    o->reg = NULL;
    close(fd);
    if (lk < 0 || tries >= 3) {
      if (lk < 0)
        unlink(o->tmp);
      tz_err_path(err, path);
      rc = tz_fail_os(err, TZ_E_CREATE, lk < 0 ? e : EAGAIN, "cannot create output");
      release(o);
      return rc;
    }
  }
  /* a new output has 0666 less the umask from open(2); a replaced one keeps
   * its permission bits */
  if (exists && fchmod(o->fd, keep) != 0) {
    /* not fatal: the file is still usable by its owner */
  }
  cookie_io_functions_t io = { .write = cookie_write, .seek = cookie_seek,
                               .close = cookie_close };
  o->fp = fopencookie(o, "wb", io);
  if (!o->fp) {
    int e = errno;
    fileio_abort(o);
    tz_err_path(err, path);
    return tz_fail_os(err, TZ_E_CREATE, e, "cannot create output");
  }
  *out = o;
  return TZ_OK;
}

int fileio_probe(const char *path, tz_err *err)
{
  struct stat st;
  int rc = parent_folders(path, 0, err);
  if (rc)
    return rc;
  const char *base;
  char *dir = dir_of(path, &base);
  if (!dir)
    return tz_fail(err, TZ_E_NOMEM, "output path");
  int have_dir = stat(dir, &st) == 0;
  if (!have_dir && lstat(path, &st) != 0) {
    /* the folder will be created: check the nearest folder that exists */
    char *p = dir;
    for (;;) {
      char *s = strrchr(p, '/');
      if (!s) {
        strcpy(p, ".");
        break;
      }
      if (s == p) {
        p[1] = '\0';
        break;
      }
      *s = '\0';
      if (stat(p, &st) == 0)
        break;
    }
    if (access(p, W_OK | X_OK) != 0) {
      int e = errno;
      tz_err_path(err, path);
      rc = tz_fail_os(err, TZ_E_CREATE, e, "cannot create output: cannot create folders in %s",
                      p);
    }
    free(dir);
    return rc;
  }
  free(dir);
  fileio_out *o;
  rc = fileio_create(&o, path, err);
  if (!rc)
    fileio_abort(o);
  return rc;
}

FILE *fileio_stream(fileio_out *o) { return o->fp; }
const char *fileio_path(const fileio_out *o) { return o->path; }

int fileio_fail(fileio_out *o, int64_t trace, tz_err *err)
{
  int e = o->oserr ? o->oserr : errno;
  int first = err && err->status == TZ_OK;
  tz_err_path(err, o->path);
  int rc = tz_fail_os(err, TZ_E_IO, e ? e : EIO, "write failed");
  if (first)
    err->trace = trace;
  return rc;
}

/* fsync of a folder after a rename in it (the new name is data of the folder).
 * File systems that cannot sync folders say EINVAL: nothing more can be done. */
static int sync_folder_of(const char *target)
{
  const char *base;
  char *dir = dir_of(target, &base);
  if (!dir)
    return ENOMEM;
  int fd = open(dir, O_RDONLY | O_DIRECTORY | O_CLOEXEC);
  free(dir);
  if (fd < 0)
    return errno;
  int e = fsync(fd) == 0 || errno == EINVAL || errno == EROFS ? 0 : errno;
  close(fd);
  return e;
}

int fileio_commit(fileio_out *o, tz_err *err)
{
  int rc = TZ_OK;
  int flushed = fflush(o->fp) == 0 && !ferror(o->fp);
  int e = o->oserr ? o->oserr : errno;
  fclose(o->fp);
  o->fp = NULL;
  if (flushed && !o->oserr && fsync(o->fd) != 0 && errno != EINVAL) {
    e = errno;
    flushed = 0;
  }
  if (!flushed) {
    tz_err_path(err, o->path);
    rc = tz_fail_os(err, TZ_E_IO, e ? e : EIO, "write failed");
  } else {
    /* the rename and the registry entry go together, so that a signal's cleanup
     * sees either the temporary or the finished output, never half of each */
    pthread_mutex_lock(&reg_lock);
    if (rename(o->tmp, o->target) != 0) {
      e = errno;
      rc = TZ_E_CREATE;
    }
    reg_unlink_locked(o->reg);
    pthread_mutex_unlock(&reg_lock);
    free(o->reg);
    o->reg = NULL;
    if (rc) {
      unlink(o->tmp);
      tz_err_path(err, o->path);
      rc = tz_fail_os(err, TZ_E_CREATE, e, "cannot move output into place");
    } else if ((e = sync_folder_of(o->target))) {
      tz_err_path(err, o->path);
      rc = tz_fail_os(err, TZ_E_IO, e, "written, but its folder could not be synced");
    }
  }
  if (o->reg) {
    unlink(o->tmp);
    reg_drop(o->reg);
  }
  close(o->fd);   /* releases the writer's lock */
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
  reg_drop(o->reg);
  if (o->fd >= 0)
    close(o->fd);
  release(o);
}

/* ---------------------------------------------------------------- temporary folders */

struct fileio_tmpdir {
  int fd;          /* the folder itself: holds the writer's lock */
  char *path;
  tmp_entry *reg;
};

int fileio_tmpdir_create(fileio_tmpdir **out, const char *target, tz_err *err)
{
  int rc = parent_folders(target, 1, err);
  if (rc)
    return rc;
  fileio_tmpdir *d = calloc(1, sizeof *d);
  size_t n = strlen(target);
  while (n > 1 && target[n - 1] == '/')
    n--;
  if (!d || !(d->path = malloc(n + 32))) {
    free(d);
    return tz_fail(err, TZ_E_NOMEM, "temporary folder");
  }
  char *t = d->path;
  memcpy(t, target, n);
  t[n] = '\0';
  sweep_stale(t);
  char *slash = strrchr(t, '/');
  size_t pl = slash ? (size_t)(slash - t) + 1 : 0;
  char name[NAME_MAX + 1];
  snprintf(name, sizeof name, "%s", t + pl);
  for (int tries = 0;; tries++) {
    int closed = 0;
    int e = 0;
    if (create_registered(t, pl, n + 32 - pl, name, 1, &d->reg, &closed) != 0)   /* 0777 less the umask */
      e = errno;
    int fd = e ? -1 : open(t, O_RDONLY | O_DIRECTORY | O_CLOEXEC);
    int lk = fd < 0 ? -1 : lock_new(fd);
    if (!e && lk == 0) {
      d->fd = fd;
      break;
    }
    if (!e)
      e = errno;
    if (fd >= 0)
      close(fd);
    if (d->reg) {
      if (lk < 0)
        rmdir(t);
      reg_drop(d->reg);
      d->reg = NULL;
    }
    if (lk != 1 || tries >= 3) {
      snprintf(t + pl, n + 32 - pl, "%s", name);
      tz_err_path(err, t);
      rc = tz_fail_os(err, TZ_E_CREATE, e ? e : EAGAIN,
                      "cannot create a temporary folder beside it");
      free(d->path);
      free(d);
      return rc;
    }
  }
  *out = d;
  return TZ_OK;
}

const char *fileio_tmpdir_path(const fileio_tmpdir *d) { return d->path; }

int fileio_tmpdir_commit(fileio_tmpdir *d, const char *target, tz_err *err)
{
  pthread_mutex_lock(&reg_lock);
  int rc = rename(d->path, target) == 0 ? 0 : errno;
  reg_unlink_locked(d->reg);
  pthread_mutex_unlock(&reg_lock);
  free(d->reg);
  d->reg = NULL;
  if (rc) {
    tz_err_path(err, target);
    tz_fail_os(err, TZ_E_CREATE, rc, "cannot move the folder into place");
    fileio_tmpdir_remove(d);
    return TZ_E_CREATE;
  }
  int e = sync_folder_of(target);
  close(d->fd);
  free(d->path);
  free(d);
  if (e) {
    tz_err_path(err, target);
    return tz_fail_os(err, TZ_E_IO, e, "written, but its folder could not be synced");
  }
  return TZ_OK;
}

void fileio_tmpdir_remove(fileio_tmpdir *d)
{
  if (!d)
    return;
  remove_tree_at(AT_FDCWD, d->path);
  reg_drop(d->reg);
  close(d->fd);
  free(d->path);
  free(d);
}

int fileio_sync_folder(const char *path, tz_err *err)
{
  int fd = open(path, O_RDONLY | O_DIRECTORY | O_CLOEXEC);
  int e = fd < 0 ? errno : fsync(fd) == 0 || errno == EINVAL || errno == EROFS ? 0 : errno;
  if (fd >= 0)
    close(fd);
  if (!e)
    return TZ_OK;
  tz_err_path(err, path);
  return tz_fail_os(err, TZ_E_IO, e, "cannot sync the folder");
}

/* ---------------------------------------------------------------- identity */

int fileio_same_file(const char *a, const char *b)
{
  struct stat sa, sb;
  return stat(a, &sa) == 0 && stat(b, &sb) == 0 && sa.st_dev == sb.st_dev &&
         sa.st_ino == sb.st_ino;
}

/* The path an output at `path` will have once written: the longest prefix that
 * exists resolved by realpath(3) (folders by identity, links followed), the rest
 * (folders to be created, the new name) appended with "." and ".." applied.
 * The caller owns the result; NULL when out of memory or the folder of the
 * current directory cannot be found. */
static char *output_identity(const char *path)
{
  char *abs;
  if (path[0] == '/') {
    abs = strdup(path);
  } else {
    char *cwd = getcwd(NULL, 0);
    if (!cwd)
      return NULL;
    size_t n = strlen(cwd) + strlen(path) + 2;
    abs = malloc(n);
    if (abs)
      snprintf(abs, n, "%s/%s", cwd, path);
    free(cwd);
  }
  if (!abs)
    return NULL;
  size_t n = strlen(abs);
  char *rest = abs + n;   /* the part that does not exist */
  char *res = NULL;
  for (;;) {
    char save = *rest;
    *rest = '\0';
    res = realpath(abs[0] ? abs : "/", NULL);
    *rest = save;
    if (res || rest == abs)
      break;
    do
      rest--;
    while (rest > abs && *rest != '/');
  }
  if (!res) {
    free(abs);
    return NULL;
  }
  size_t cap = strlen(res) + strlen(rest) + 2;
  char *out = realloc(res, cap);
  if (!out) {
    free(res);
    free(abs);
    return NULL;
  }
  size_t len = strlen(out);
  for (char *c = rest; *c;) {
    while (*c == '/')
      c++;
    char *e = c;
    while (*e && *e != '/')
      e++;
    size_t cl = (size_t)(e - c);
    if (cl == 1 && c[0] == '.') {
      /* nothing */
    } else if (cl == 2 && c[0] == '.' && c[1] == '.') {
      while (len > 1 && out[len - 1] != '/')
        len--;
      if (len > 1)
        len--;
      out[len] = '\0';
    } else if (cl) {
      if (len > 1 || out[0] != '/')
        out[len++] = '/';
      memcpy(out + len, c, cl);
      len += cl;
      out[len] = '\0';
    }
    c = e;
  }
  free(abs);
  return out;
}

int fileio_same_output(const char *a, const char *b)
{
  if (!a || !b)
    return 0;
  if (!strcmp(a, b) || fileio_same_file(a, b))
    return 1;
  char *ia = output_identity(a), *ib = output_identity(b);
  int same = ia && ib && !strcmp(ia, ib);
  free(ia);
  free(ib);
  return same;
}

int fileio_check_not_input(const char *out, const char *in, const char *what, tz_err *err)
{
  if (!out || !in || !fileio_same_file(out, in))
    return TZ_OK;
  tz_err_path(err, out);
  return tz_fail(err, TZ_E_CREATE, "%s would overwrite the input %s; choose another output",
                 what, in);
}

/* ---------------------------------------------------------------- inputs */

static int input_kind(const char *path, const struct stat *st, tz_err *err)
{
  if (S_ISREG(st->st_mode))
    return TZ_OK;
  tz_err_path(err, path);
  if (S_ISDIR(st->st_mode))
    return tz_fail(err, TZ_E_NOINPUT, "is a folder, expected a file");
  return tz_fail(err, TZ_E_NOINPUT, "not a regular file (%s); give a file",
                 S_ISFIFO(st->st_mode) ? "a named pipe" : S_ISSOCK(st->st_mode) ? "a socket"
                 : S_ISCHR(st->st_mode) || S_ISBLK(st->st_mode) ? "a device" : "not a file");
}

int fileio_check_input(const char *path, tz_err *err)
{
  struct stat st;
  if (stat(path, &st) != 0) {
    int e = errno;
    tz_err_path(err, path);
    return tz_fail_os(err, TZ_E_NOINPUT, e, "cannot open");
  }
  return input_kind(path, &st, err);
}

int fileio_open_input(const char *path, int *fd_out, tz_err *err)
{
  /* O_NONBLOCK: opening a named pipe for reading waits for a writer otherwise */
  int fd = open(path, O_RDONLY | O_NONBLOCK | O_NOCTTY | O_CLOEXEC);
  if (fd < 0) {
    int e = errno;
    tz_err_path(err, path);
    return tz_fail_os(err, TZ_E_NOINPUT, e, "cannot open");
  }
  struct stat st;
  if (fstat(fd, &st) != 0) {
    int e = errno;
    close(fd);
    tz_err_path(err, path);
    return tz_fail_os(err, TZ_E_NOINPUT, e, "cannot open");
  }
  int rc = input_kind(path, &st, err);
  if (rc) {
    close(fd);
    return rc;
  }
  int fl = fcntl(fd, F_GETFL);
  if (fl >= 0)
    fcntl(fd, F_SETFL, fl & ~O_NONBLOCK);
  *fd_out = fd;
  return TZ_OK;
}

int fileio_read_all(const char *path, size_t max, char **out, size_t *len, tz_err *err)
{
  int fd;
  int rc = fileio_open_input(path, &fd, err);
  if (rc)
    return rc;
  FILE *fp = fdopen(fd, "rb");
  if (!fp) {
    close(fd);
    return tz_fail(err, TZ_E_NOMEM, "file buffer");
  }
  size_t cap = 4096, n = 0;
  char *buf = malloc(cap);
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

/* ---------------------------------------------------------------- patterns */

typedef struct glob_state {
  const fileio_glob_limits *lim;
  size_t entries;        /* folder entries read so far */
  char **paths;
  size_t n, cap;
  tz_err *err;
  const char *pattern;
} glob_state;

static int has_magic(const char *s, size_t n)
{
  for (size_t i = 0; i < n; i++)
    if (s[i] == '*' || s[i] == '?' || s[i] == '[' || s[i] == '\\')
      return 1;
  return 0;
}

static int cmp_str(const void *a, const void *b)
{
  return strcmp(*(char *const *)a, *(char *const *)b);
}

static int glob_add(glob_state *g, const char *path)
{
  if (g->n >= g->lim->max_matches)
    return tz_fail(g->err, TZ_E_FORMAT, "pattern '%s' matches more than %zu files",
                   g->pattern, g->lim->max_matches);
  if (g->n == g->cap) {
    size_t nc = g->cap ? g->cap * 2 : 16;
    char **np = realloc(g->paths, nc * sizeof *np);
    if (!np)
      return tz_fail(g->err, TZ_E_NOMEM, "file list");
    g->paths = np;
    g->cap = nc;
  }
  if (!(g->paths[g->n] = strdup(path)))
    return tz_fail(g->err, TZ_E_NOMEM, "file list");
  g->n++;
  return TZ_OK;
}

/* Expands the components of `rest` below the folder `base` (already matched). */
static int glob_walk(glob_state *g, const char *base, const char *rest)
{
  while (*rest == '/')
    rest++;
  if (!*rest) {
    struct stat st;
    return lstat(base, &st) == 0 ? glob_add(g, base) : TZ_OK;
  }
  const char *end = strchr(rest, '/');
  size_t cl = end ? (size_t)(end - rest) : strlen(rest);
  const char *after = rest + cl;
  size_t bl = strlen(base);
  int sep = bl && base[bl - 1] != '/';
  if (!has_magic(rest, cl)) {
    /* a plain component: no folder read */
    char *p = malloc(bl + cl + 2);
    if (!p)
      return tz_fail(g->err, TZ_E_NOMEM, "file list");
    snprintf(p, bl + cl + 2, "%s%s%.*s", base, sep ? "/" : "", (int)cl, rest);
    struct stat st;
    int rc = TZ_OK;
    if (*after ? stat(p, &st) == 0 && S_ISDIR(st.st_mode) : lstat(p, &st) == 0)
      rc = glob_walk(g, p, after);
    free(p);
    return rc;
  }
  char *comp = strndup(rest, cl);
  if (!comp)
    return tz_fail(g->err, TZ_E_NOMEM, "file list");
  DIR *d = opendir(bl ? base : ".");
  if (!d) {
    free(comp);
    return TZ_OK;   /* as glob(3) without GLOB_ERR: an unreadable folder matches nothing */
  }
  char **names = NULL;
  size_t nn = 0, nc = 0;
  int rc = TZ_OK;
  struct dirent *e;
  while (!rc && (e = readdir(d))) {
    if (++g->entries > g->lim->max_entries) {
      rc = tz_fail(g->err, TZ_E_FORMAT, "pattern '%s' reaches more than %zu folder entries; "
                   "give a narrower pattern", g->pattern, g->lim->max_entries);
      break;
    }
    if (!strcmp(e->d_name, ".") || !strcmp(e->d_name, ".."))
      continue;
    if (fnmatch(comp, e->d_name, FNM_PERIOD) != 0)
      continue;
    if (nn == nc) {
      size_t k = nc ? nc * 2 : 16;
      char **np = realloc(names, k * sizeof *np);
      if (!np) {
        rc = tz_fail(g->err, TZ_E_NOMEM, "file list");
        break;
      }
      names = np;
      nc = k;
    }
    if (!(names[nn] = strdup(e->d_name)))
      rc = tz_fail(g->err, TZ_E_NOMEM, "file list");
    else
      nn++;
  }
  closedir(d);
  free(comp);
  if (!rc && nn > 1)
    qsort(names, nn, sizeof *names, cmp_str);
  for (size_t i = 0; !rc && i < nn; i++) {
    size_t k = bl + strlen(names[i]) + 2;
    char *p = malloc(k);
    if (!p) {
      rc = tz_fail(g->err, TZ_E_NOMEM, "file list");
      break;
    }
    snprintf(p, k, "%s%s%s", base, sep ? "/" : "", names[i]);
    struct stat st;
    if (!*after || (stat(p, &st) == 0 && S_ISDIR(st.st_mode)))
      rc = glob_walk(g, p, after);
    free(p);
  }
  for (size_t i = 0; i < nn; i++)
    free(names[i]);
  free(names);
  return rc;
}

int fileio_glob(const char *pattern, const fileio_glob_limits *lim, char ***paths, size_t *n,
                tz_err *err)
{
  static const fileio_glob_limits def = { FILEIO_GLOB_MAX_MATCHES, FILEIO_GLOB_MAX_ENTRIES,
                                          FILEIO_GLOB_MAX_DEPTH };
  if (!lim)
    lim = &def;
  size_t depth = 0;
  for (const char *c = pattern; *c;) {
    while (*c == '/')
      c++;
    const char *e = c;
    while (*e && *e != '/')
      e++;
    if (has_magic(c, (size_t)(e - c)))
      depth++;
    c = e;
  }
  if (depth > lim->max_depth)
    return tz_fail(err, TZ_E_FORMAT, "pattern '%s' has %zu levels with wildcards, more than "
                   "%zu", pattern, depth, lim->max_depth);
  glob_state g = { .lim = lim, .err = err, .pattern = pattern };
  int rc = glob_walk(&g, pattern[0] == '/' ? "/" : "", pattern);
  if (rc) {
    for (size_t i = 0; i < g.n; i++)
      free(g.paths[i]);
    free(g.paths);
    return rc;
  }
  *paths = g.paths;
  *n = g.n;
  return TZ_OK;
}

void fileio_glob_free(char **paths, size_t n)
{
  for (size_t i = 0; paths && i < n; i++)
    free(paths[i]);
  free(paths);
}

/* ---------------------------------------------------------------- path text */

/* Whether the first n bytes of path name a folder that is not a symbolic link
 * (so "NAME/.." is the folder holding it). */
static int plain_folder(const char *path, size_t n)
{
  char buf[PATH_MAX];
  if (n == 0 || n >= sizeof buf)
    return 0;
  memcpy(buf, path, n);
  buf[n] = '\0';
  struct stat st;
  return lstat(buf, &st) == 0 && S_ISDIR(st.st_mode);
}

char *fileio_path_clean(char *path)
{
  if (!path)
    return path;
  int absolute = path[0] == '/';
  size_t w = absolute ? 1 : 0;   /* write position; components end before it */
  size_t depth = 0;              /* components written that ".." may fold */
  const char *r = path;
  while (*r) {
    while (*r == '/')
      r++;
    size_t len = strcspn(r, "/");
    if (len == 0)
      break;
    if (len == 1 && r[0] == '.') {
      r += len;
      continue;
    }
    if (len == 2 && r[0] == '.' && r[1] == '.') {
      if (depth > 0) {
        size_t end = w > 0 && path[w - 1] == '/' ? w - 1 : w;
        if (plain_folder(path, end)) {
          size_t start = end;   /* back to the start of the last component */
          while (start > 0 && path[start - 1] != '/')
            start--;
          w = start;
          depth--;
          r += len;
          continue;
        }
      } else if (absolute) {   /* "/.." is "/" */
        r += len;
        continue;
      }
    }
    if (w > 0 && path[w - 1] != '/')
      path[w++] = '/';
    memmove(path + w, r, len);
    int dots = len == 2 && r[0] == '.' && r[1] == '.';
    w += len;
    r += len;
    if (!dots)
      depth++;
    else
      depth = 0;   /* a kept ".." cannot be folded by a later one */
  }
  if (w > 1 && path[w - 1] == '/')
    w--;
  if (w == 0)
    path[w++] = absolute ? '/' : '.';
  path[w] = '\0';
  return path;
}

char *fileio_path_join(const char *dir, const char *rel)
{
  if (!rel)
    return NULL;
  char *p;
  if (rel[0] == '/' || !dir || !dir[0] || !strcmp(dir, ".")) {
    p = strdup(rel);
  } else {
    size_t n = strlen(dir) + strlen(rel) + 2;
    p = malloc(n);
    if (p)
      snprintf(p, n, "%s/%s", dir, rel);
  }
  return p ? fileio_path_clean(p) : NULL;
}
