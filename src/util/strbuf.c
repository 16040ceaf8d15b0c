/* strbuf.c -- growable text buffer (strbuf.h). */
#include "util/strbuf.h"

#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static int grow(tz_buf *b, size_t more)
{
  if (b->bad)
    return -1;
  if (b->s && b->n + more < b->cap)
    return 0;
  size_t nc = (b->cap ? b->cap * 2 : 1024) + more + 1;
  char *ns = realloc(b->s, nc);
  if (!ns) {
    b->bad = 1;
    return -1;
  }
  b->s = ns;
  b->cap = nc;
  return 0;
}

void tz_buf_put(tz_buf *b, const char *fmt, ...)
{
  if (b->bad)
    return;
  for (;;) {
    va_list ap;
    va_start(ap, fmt);
    int k = vsnprintf(b->s ? b->s + b->n : NULL, b->s ? b->cap - b->n : 0, fmt, ap);
    va_end(ap);
    if (k < 0) {
      b->bad = 1;
      return;
    }
    if (b->s && (size_t)k < b->cap - b->n) {
      b->n += (size_t)k;
      return;
    }
    if (grow(b, (size_t)k))
      return;
  }
}

void tz_buf_add(tz_buf *b, const char *s, size_t n)
{
  if (grow(b, n))
    return;
  memcpy(b->s + b->n, s, n);
  b->n += n;
  b->s[b->n] = '\0';
}

void tz_buf_xml(tz_buf *b, const char *s)
{
  for (const char *p = s; p && *p;) {
    size_t k = strcspn(p, "&<>\"'");
    tz_buf_add(b, p, k);
    p += k;
    if (!*p)
      break;
    const char *e = *p == '&' ? "&amp;" : *p == '<' ? "&lt;" : *p == '>' ? "&gt;"
                    : *p == '"' ? "&quot;" : "&#39;";
    tz_buf_add(b, e, strlen(e));
    p++;
  }
}

void tz_buf_base64(tz_buf *b, const unsigned char *p, size_t n)
{
  static const char a[] = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
  if (grow(b, (n + 2) / 3 * 4))
    return;
  char *o = b->s + b->n;
  size_t i = 0;
  for (; i + 2 < n; i += 3) {
    unsigned v = (unsigned)p[i] << 16 | (unsigned)p[i + 1] << 8 | p[i + 2];
    *o++ = a[v >> 18];
    *o++ = a[(v >> 12) & 63];
    *o++ = a[(v >> 6) & 63];
    *o++ = a[v & 63];
  }
  if (i < n) {
    unsigned v = (unsigned)p[i] << 16 | (i + 1 < n ? (unsigned)p[i + 1] << 8 : 0);
    *o++ = a[v >> 18];
    *o++ = a[(v >> 12) & 63];
    *o++ = i + 1 < n ? a[(v >> 6) & 63] : '=';
    *o++ = '=';
  }
  b->n = (size_t)(o - b->s);
  b->s[b->n] = '\0';
}

int tz_buf_finish(tz_buf *b, char **text, const char *what, tz_err *err)
{
  *text = NULL;
  if (!b->bad && !b->s)
    tz_buf_add(b, "", 0);
  if (b->bad || !b->s) {
    tz_buf_free(b);
    return tz_fail(err, TZ_E_NOMEM, "%s", what);
  }
  *text = b->s;
  b->s = NULL;
  b->n = b->cap = 0;
  return TZ_OK;
}

void tz_buf_free(tz_buf *b)
{
  free(b->s);
  b->s = NULL;
  b->n = b->cap = 0;
  b->bad = 0;
}
