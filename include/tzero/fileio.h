/* fileio.h -- outputs that appear only when complete, and whole-file reads. */
#ifndef TZERO_FILEIO_H
#define TZERO_FILEIO_H

#include <stddef.h>
#include <stdio.h>
#include "tzero/error.h"

typedef struct fileio_out fileio_out;

/* Creates a temporary file beside `path` (same folder, hidden name). On success
 * *out owns the handle: finish with fileio_commit() or fileio_abort().
 * Failure to create is TZ_E_CREATE with the path recorded. */
int fileio_create(fileio_out **out, const char *path, tz_err *err);
FILE *fileio_stream(fileio_out *o);                /* borrowed */
const char *fileio_path(const fileio_out *o);      /* the final path */
/* Flushes, closes and renames into place; takes the handle (always freed).
 * On failure the temporary file is removed and nothing appears at `path`. */
int fileio_commit(fileio_out *o, tz_err *err);
/* Closes and removes the temporary file; takes the handle. NULL is a no-op. */
void fileio_abort(fileio_out *o);

/* Creates and removes a temporary file beside `path`: the same TZ_E_CREATE as
 * fileio_create() would give, found before a long run rather than after it. */
int fileio_probe(const char *path, tz_err *err);

/* 1 when `a` and `b` both exist and are the same file (device and inode), so
 * that writing one would replace the other; 0 otherwise. */
int fileio_same_file(const char *a, const char *b);
/* TZ_E_CREATE (path `out`) when writing `out` would replace the input `in`:
 * "WHAT would overwrite the input IN; choose another output". NULLs are fine. */
int fileio_check_not_input(const char *out, const char *in, const char *what, tz_err *err);

/* Reads a whole file into a NUL-terminated buffer the caller owns (free()).
 * Files larger than `max` bytes are TZ_E_FORMAT. */
int fileio_read_all(const char *path, size_t max, char **out, size_t *len, tz_err *err);

#endif
