/* strbuf.h -- a growable text buffer for writers of reports, pages and SVG (private).
 *
 * tz_buf_put() appends printf-style; an allocation failure sets `bad` and later
 * appends do nothing, so a writer checks once, at the end (tz_buf_finish()).
 */
#ifndef TZERO_UTIL_STRBUF_H
#define TZERO_UTIL_STRBUF_H

#include <stddef.h>
#include "tzero/error.h"

typedef struct tz_buf {
  char *s;          /* NUL-terminated once anything was appended */
  size_t n, cap;
  int bad;          /* an append failed: the text is incomplete */
} tz_buf;

void tz_buf_put(tz_buf *b, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
void tz_buf_add(tz_buf *b, const char *s, size_t n);     /* n bytes as they are */
/* s with &, <, >, " and ' escaped for HTML/XML text and attribute values */
void tz_buf_xml(tz_buf *b, const char *s);
/* n bytes as base64 (RFC 4648, section 4), no line breaks */
void tz_buf_base64(tz_buf *b, const unsigned char *p, size_t n);
/* Hands the text to *text (caller frees) or, after a failed append, frees it
 * and fails TZ_E_NOMEM naming `what`. An empty buffer gives "". */
int tz_buf_finish(tz_buf *b, char **text, const char *what, tz_err *err);
void tz_buf_free(tz_buf *b);

#endif
