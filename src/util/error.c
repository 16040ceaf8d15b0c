/* error.c -- the error record: first failure wins, context travels with it.
 *
 * The library never prints. Each failure site fills a tz_err with what went
 * wrong and where (file, line, trace, byte offset); the front end formats it
 * and maps the status to a <sysexits.h> exit code.
 */
#include "tzero/error.h"
#include "util/json_doc.h"

#include <stdio.h>
#include <string.h>
#include <sysexits.h>

void tz_err_init(tz_err *e)
{
  /* the two strings are empty, not zero-filled: a trace loop initialises one of
   * these per trace, and clearing 1 KB each time showed in profiles */
  e->status = TZ_OK;
  e->oserr = 0;
  e->path[0] = '\0';
  e->msg[0] = '\0';
  e->line = e->trace = e->byte = -1;
}

static int vfail(tz_err *e, int status, int oserr, int64_t line, int64_t trace,
                 int64_t byte, const char *fmt, va_list ap)
{
  if (!e || e->status != TZ_OK)
    return e ? e->status : status;
  e->status = status;
  e->oserr = oserr;
  e->line = line;
  e->trace = trace;
  e->byte = byte;
  vsnprintf(e->msg, sizeof e->msg, fmt, ap);
  return status;
}

int tz_fail(tz_err *e, int status, const char *fmt, ...)
{
  va_list ap;
  va_start(ap, fmt);
  int rc = vfail(e, status, 0, -1, -1, -1, fmt, ap);
  va_end(ap);
  return rc;
}

int tz_fail_at(tz_err *e, int status, int64_t trace, int64_t byte, const char *fmt, ...)
{
  va_list ap;
  va_start(ap, fmt);
  int rc = vfail(e, status, 0, -1, trace, byte, fmt, ap);
  va_end(ap);
  return rc;
}

int tz_fail_line(tz_err *e, int status, int64_t line, const char *fmt, ...)
{
  va_list ap;
  va_start(ap, fmt);
  int rc = vfail(e, status, 0, line, -1, -1, fmt, ap);
  va_end(ap);
  return rc;
}

int tz_fail_os(tz_err *e, int status, int oserr, const char *fmt, ...)
{
  va_list ap;
  va_start(ap, fmt);
  int rc = vfail(e, status, oserr, -1, -1, -1, fmt, ap);
  va_end(ap);
  return rc;
}

int tz_err_path(tz_err *e, const char *path)
{
  if (e && path && !e->path[0])
    snprintf(e->path, sizeof e->path, "%s", path);
  return e ? e->status : TZ_OK;
}

static const char *const names[TZ_E__COUNT] = {
  [TZ_OK] = "success",
  [TZ_E_NOMEM] = "out of memory",
  [TZ_E_IO] = "I/O error",
  [TZ_E_FORMAT] = "malformed input",
  [TZ_E_ARG] = "invalid argument",
  [TZ_E_JOB] = "invalid job",
  [TZ_E_FFT] = "FFT planning failed",
  [TZ_E_NOINPUT] = "cannot open input",
  [TZ_E_CREATE] = "cannot create output",
  [TZ_E_INTERNAL] = "internal error",
};

const char *tz_strstatus(int status)
{
  if (status < 0 || status >= TZ_E__COUNT || !names[status])
    return "unknown status";
  return names[status];
}

int tz_exit_status(int status)
{
  switch (status) {
  case TZ_OK: return EX_OK;
  case TZ_E_ARG: return EX_USAGE;
  case TZ_E_FORMAT: return EX_DATAERR;
  case TZ_E_JOB: return EX_DATAERR;
  case TZ_E_NOINPUT: return EX_NOINPUT;
  case TZ_E_CREATE: return EX_CANTCREAT;
  case TZ_E_IO: return EX_IOERR;
  case TZ_E_NOMEM: return EX_OSERR;
  default: return EX_SOFTWARE;
  }
}

/* Length of the well-formed UTF-8 sequence at p (RFC 3629 section 4), 0 if none. */
static size_t utf8_len(const unsigned char *p)
{
  if (p[0] < 0x80)
    return 1;
  size_t n = p[0] >= 0xC2 && p[0] <= 0xDF ? 2 : p[0] >= 0xE0 && p[0] <= 0xEF ? 3
             : p[0] >= 0xF0 && p[0] <= 0xF4 ? 4 : 0;
  if (!n)
    return 0;
  for (size_t i = 1; i < n; i++)
    if ((p[i] & 0xC0) != 0x80)
      return 0;
  /* overlong three- and four-byte forms, surrogates, beyond U+10FFFF */
  if ((p[0] == 0xE0 && p[1] < 0xA0) || (p[0] == 0xED && p[1] > 0x9F) ||
      (p[0] == 0xF0 && p[1] < 0x90) || (p[0] == 0xF4 && p[1] > 0x8F))
    return 0;
  return n;
}

size_t tz_escape(const char *s, char *buf, size_t cap)
{
  size_t n = 0;
  const unsigned char *p = (const unsigned char *)(s ? s : "");
  while (*p) {
    char tmp[8];
    size_t k;
    const char *piece = tmp;
    size_t u = utf8_len(p);
    if (*p < 0x20 || *p == 0x7F) {
      switch (*p) {
      case '\n': piece = "\\n"; break;
      case '\r': piece = "\\r"; break;
      case '\t': piece = "\\t"; break;
      case 0x1B: piece = "\\e"; break;
      default: snprintf(tmp, sizeof tmp, "\\x%02X", *p);
      }
      k = strlen(piece);
      u = 1;
    } else if (u == 2 && p[0] == 0xC2 && p[1] <= 0x9F) {
      snprintf(tmp, sizeof tmp, "\\u%04X", p[1]);
      k = strlen(tmp);
    } else if (!u) {
      snprintf(tmp, sizeof tmp, "\\x%02X", *p);
      k = strlen(tmp);
      u = 1;
    } else {
      piece = (const char *)p;
      k = u;
    }
    if (cap && n + k < cap)
      memcpy(buf + n, piece, k);
    else if (cap && n < cap)
      cap = n + 1;   /* stop at a whole piece */
    n += k;
    p += u;
  }
  if (cap)
    buf[n < cap ? n : cap - 1] = '\0';
  return n;
}

/* Whether the message already says what its status says, so the status in
 * parentheses would only repeat it: "cannot open (cannot open input)". */
static int says_status(const char *msg, int status)
{
  static const char *const phrase[TZ_E__COUNT] = {
    [TZ_E_NOMEM] = "out of memory",
    [TZ_E_NOINPUT] = "cannot open",
    [TZ_E_CREATE] = "cannot create",
  };
  const char *name = tz_strstatus(status);
  if (strstr(msg, name))
    return 1;
  return status >= 0 && status < TZ_E__COUNT && phrase[status] && strstr(msg, phrase[status]);
}

void tz_err_format(const tz_err *e, char *buf, size_t cap)
{
  size_t n = 0;
  if (!cap)
    return;
  buf[0] = '\0';
#define PUT(...) do { int k_ = snprintf(buf + n, cap - n, __VA_ARGS__); \
    if (k_ > 0) n = (size_t)k_ >= cap - n ? cap - 1 : n + (size_t)k_; } while (0)
  char safe[4 * sizeof e->msg];   /* escaping at most quadruples a byte */
  tz_escape(e->path, safe, sizeof safe);
  if (e->path[0]) PUT("%s: ", safe);
  if (e->line >= 0) PUT("line %lld: ", (long long)e->line);
  if (e->trace >= 0) PUT("trace %lld: ", (long long)e->trace + 1); /* 1-based, as SEG-Y counts */
  if (e->byte >= 0) PUT("byte %lld: ", (long long)e->byte);
  tz_escape(e->msg, safe, sizeof safe);
  if (says_status(e->msg, e->status))
    PUT("%s", safe);
  else
    PUT("%s (%s)", safe, tz_strstatus(e->status));
#undef PUT
}

const char *tz_nearest(const char *word, const char *const *cands, size_t n, size_t max_dist)
{
  const char *best = json_doc_nearest(word ? word : "", cands, n);
  if (!best || json_doc_edit_distance(word ? word : "", best) > max_dist)
    return NULL;
  return best;
}
