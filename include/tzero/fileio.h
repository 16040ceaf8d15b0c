/* fileio.h -- outputs that appear only when complete, inputs that cannot block,
 * temporaries removed on a signal, bounded file patterns. */
#ifndef TZERO_FILEIO_H
#define TZERO_FILEIO_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include "tzero/error.h"

typedef struct fileio_out fileio_out;

/* Creates a temporary file ".NAME.tmp-XXXXXXXX" beside `path` (same folder), after
 * creating missing folders above it (mode 0777 less the umask) and removing
 * temporaries of the same name that a killed run left (unlocked ones only).
 * On success *out owns the handle: finish with fileio_commit() or fileio_abort().
 * Failure to create is TZ_E_CREATE with the path recorded; a path through an
 * existing file that is not a folder is TZ_E_CREATE naming that file. */
int fileio_create(fileio_out **out, const char *path, tz_err *err);
FILE *fileio_stream(fileio_out *o);                /* borrowed */
const char *fileio_path(const fileio_out *o);      /* the final path */
/* Flushes, fsyncs, closes and renames into place (a replaced file's permission
 * bits are kept), then fsyncs the folder; takes the handle (always freed).
 * On failure the temporary file is removed and nothing appears at `path`.
 * A write error is TZ_E_IO with the OS reason of the first failed write. */
int fileio_commit(fileio_out *o, tz_err *err);
/* Closes and removes the temporary file; takes the handle. NULL is a no-op. */
void fileio_abort(fileio_out *o);
/* Records a write failure on the stream as TZ_E_IO "write failed" with the OS
 * reason of the first failed write (ENOSPC, EFBIG, ...) and the path; `trace`
 * (0-based, -1 for none) is recorded too. Returns the status. The handle stays
 * the caller's (abort it). */
int fileio_fail(fileio_out *o, int64_t trace, tz_err *err);

/* The TZ_E_CREATE that fileio_create() would give, found before a long run
 * rather than after it. Creates nothing (missing folders are checked, not made). */
int fileio_probe(const char *path, tz_err *err);

/* Temporary folders (a survey written as a whole): ".NAME.tmp-XXXXXXXX" beside
 * `target`, registered and swept like temporary files. *out owns the handle;
 * finish with fileio_tmpdir_commit() (renames it to `target`, which must not
 * exist) or fileio_tmpdir_remove() (removes it and all it holds). */
typedef struct fileio_tmpdir fileio_tmpdir;
int fileio_tmpdir_create(fileio_tmpdir **out, const char *target, tz_err *err);
const char *fileio_tmpdir_path(const fileio_tmpdir *d);     /* borrowed */
int fileio_tmpdir_commit(fileio_tmpdir *d, const char *target, tz_err *err);
void fileio_tmpdir_remove(fileio_tmpdir *d);                /* NULL is a no-op */
/* fsync(2) of a folder (after files were renamed into it). TZ_E_IO on failure. */
int fileio_sync_folder(const char *path, tz_err *err);

/* Removes every temporary file and folder this process has open, and makes
 * every later fileio_create() fail and every later commit wait forever: for
 * the front end's signal handling thread, right before it exits. Not async-
 * signal-safe: call it from a thread that took the signal with sigwait(3). */
void fileio_remove_temporaries(void);

/* 1 when `a` and `b` both exist and are the same file (device and inode), so
 * that writing one would replace the other; 0 otherwise. */
int fileio_same_file(const char *a, const char *b);
/* 1 when writing `a` and `b` would write one file: the same existing file, or
 * the same name in the same folder (folders compared by identity, links
 * followed, "." and ".." resolved), whether or not the files exist yet. */
int fileio_same_output(const char *a, const char *b);
/* Tidies a path in place for printing and recording, as the shell would reach
 * the same file: repeated '/' become one, "." components go, and "NAME/.."
 * is folded away when NAME is a plain folder (kept when NAME is a symbolic
 * link, where ".." leaves the link's target, or when NAME is missing);
 * "demo/tarrowvane/../out//x" becomes "demo/out/x". A trailing '/' goes
 * (except for "/"); an empty result is ".". Returns path. */
char *fileio_path_clean(char *path);
/* dir + "/" + rel cleaned as above (rel alone when it is absolute or dir is
 * NULL, "" or "."). The caller owns the string (free()); NULL when out of memory. */
char *fileio_path_join(const char *dir, const char *rel);

/* TZ_E_CREATE (path `out`) when writing `out` would replace the input `in`:
 * "WHAT would overwrite the input IN; choose another output". NULLs are fine. */
int fileio_check_not_input(const char *out, const char *in, const char *what, tz_err *err);

/* TZ_E_NOINPUT (path recorded) unless `path` is a regular file (or a link to
 * one): missing, a folder, or "not a regular file" (pipe, socket, device).
 * Never opens, so never blocks. */
int fileio_check_input(const char *path, tz_err *err);
/* Opens a regular file for reading without blocking on a named pipe: the same
 * refusals as fileio_check_input(), checked on the open descriptor. *fd is the
 * caller's (close(2) it). */
int fileio_open_input(const char *path, int *fd, tz_err *err);
/* Reads a whole regular file into a NUL-terminated buffer the caller owns
 * (free()). Files larger than `max` bytes are TZ_E_FORMAT. */
int fileio_read_all(const char *path, size_t max, char **out, size_t *len, tz_err *err);

/* File patterns (fnmatch(3) per path component, '*' and '?' not matching a
 * leading '.', matches sorted by name within each folder) with bounds, so a
 * pattern cannot walk the whole file system: at most `max_matches` paths,
 * `max_entries` folder entries read and `max_depth` components with wildcards.
 * A bound reached is TZ_E_FORMAT naming the pattern and the bound. No match is
 * not an error (*n = 0). *paths is the caller's: fileio_glob_free(). */
#define FILEIO_GLOB_MAX_MATCHES 100000u
#define FILEIO_GLOB_MAX_ENTRIES 1000000u
#define FILEIO_GLOB_MAX_DEPTH 4u
typedef struct fileio_glob_limits {
  size_t max_matches, max_entries, max_depth;
} fileio_glob_limits;
int fileio_glob(const char *pattern, const fileio_glob_limits *lim, char ***paths, size_t *n,
                tz_err *err);
void fileio_glob_free(char **paths, size_t n);

#endif
