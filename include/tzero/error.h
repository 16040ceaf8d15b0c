/* error.h -- status codes and the error record every library call fills. */
#ifndef TZERO_ERROR_H
#define TZERO_ERROR_H

#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

/* Append-only: never renumber, never reuse a slot. */
typedef enum {
  TZ_OK = 0,
  TZ_E_NOMEM,     /* 1: allocation failed */
  TZ_E_IO,        /* 2: the OS refused a read, write or seek */
  TZ_E_FORMAT,    /* 3: bytes arrived but make no sense (malformed file, bad table) */
  TZ_E_ARG,       /* 4: caller passed something invalid (bad option value) */
  TZ_E_JOB,       /* 5: JSON parsed, but it is not a valid job */
  TZ_E_FFT,       /* 6: FFTW could not make a plan */
  TZ_E_NOINPUT,   /* 7: input file missing or unreadable */
  TZ_E_CREATE,    /* 8: cannot create an output file */
  TZ_E_INTERNAL,  /* 9: a bug: an invariant did not hold */
  TZ_E__COUNT     /* keep last; never returned */
} tz_status;

/* The first failure wins: tz_fail* write only while status is TZ_OK, so the
 * most specific cause survives and callers higher up just pass the status on.
 * Messages have no trailing newline and no program name. */
typedef struct tz_err {
  int status;         /* TZ_OK until the first failure */
  int oserr;          /* errno at the failure, 0 if none */
  char path[512];     /* file being processed, "" if none */
  int64_t line;       /* 1-based line of a text file, -1 if n/a */
  int64_t trace;      /* 0-based trace index in the file, -1 if n/a */
  int64_t byte;       /* 0-based byte offset in the file, -1 if n/a */
  char msg[512];
} tz_err;

void tz_err_init(tz_err *e);
/* Returns `status` so failure sites can write `return tz_fail(...)`. */
int tz_fail(tz_err *e, int status, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));
int tz_fail_at(tz_err *e, int status, int64_t trace, int64_t byte,
               const char *fmt, ...) __attribute__((format(printf, 5, 6)));
int tz_fail_line(tz_err *e, int status, int64_t line, const char *fmt, ...)
    __attribute__((format(printf, 4, 5)));
/* As tz_fail but records errno (pass the saved value). */
int tz_fail_os(tz_err *e, int status, int oserr, const char *fmt, ...)
    __attribute__((format(printf, 4, 5)));
/* Sets e->path unless a path is already recorded. Always returns e->status. */
int tz_err_path(tz_err *e, const char *path);

const char *tz_strstatus(int status);   /* static strings, never NULL */
int tz_exit_status(int status);         /* <sysexits.h> code for a status */

/* Copies `s` into `buf` (`cap` bytes, always NUL-terminated, cut short when it
 * does not fit) with what a terminal would act on made visible: C0 controls and
 * DEL as \n, \r, \t, \e or \xHH, C1 controls (U+0080 to U+009F, UTF-8 C2 80 to
 * C2 9F) as \u00HH, and bytes that are not well-formed UTF-8 as \xHH. Text from
 * input files (names, keys, paths, headers) goes through it before printing.
 * Returns the length the whole escaped text has (as snprintf does). */
size_t tz_escape(const char *s, char *buf, size_t cap);

/* Formats the record as one line: "PATH: line L: trace T: byte B: MSG (STATUS)",
 * with T counted from 1 as SEG-Y trace sequence numbers are. PATH and MSG are
 * escaped with tz_escape(), so the line is always one line. The "(STATUS)" is
 * left out when MSG already says it ("cannot open", "cannot create ...",
 * "out of memory", or the status name itself).
 * Does not include strerror(oserr); the front end appends it. */
void tz_err_format(const tz_err *e, char *buf, size_t cap);

/* For a did-you-mean: the entry of names[0..n-1] nearest to `word` by
 * Levenshtein edit distance, or NULL when none is within `max_dist` edits
 * (or n is 0). Ties go to the earlier entry. */
const char *tz_nearest(const char *word, const char *const *names, size_t n, size_t max_dist);

#endif
