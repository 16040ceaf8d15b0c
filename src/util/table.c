/* table.c -- comma-separated tables: rows, fields, line numbers, checked numbers.
 *
 * Every text table tzero reads (velocity tables, geometry tables, picks) goes
 * through here, so that blank lines, '#' comments, CRLF endings and number
 * syntax are handled once and errors always carry the table's line number.
 * No quoting: fields never contain commas in tzero's own formats.
 */
#include "tzero/table.h"
#include "tzero/digest.h"

#include "tzero/fileio.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

struct table_reader {
  char sha256[DIGEST_HEX_LEN + 1]; /* of the bytes as read */
  char *name;
  char *text;        /* whole input, NUL-terminated; rows are cut in place */
  size_t len, pos;
  int64_t line;      /* line of the current row */
  int64_t next_line; /* line number of text[pos] */
  size_t nf;
  const char *fields[TABLE_MAX_FIELDS];
  const char *comment;  /* the last '#' line passed over (in text), NULL if none */
};

static int make(table_reader **out, const char *name, char *text, size_t len, tz_err *err)
{
  table_reader *t = calloc(1, sizeof *t);
  if (!t) {
    free(text);
    return tz_fail(err, TZ_E_NOMEM, "table reader");
  }
  t->name = strdup(name ? name : "");
  if (!t->name) {
    free(text);
    free(t);
    return tz_fail(err, TZ_E_NOMEM, "table reader");
  }
  t->text = text;
  t->len = len;
  t->next_line = 1;
  int rc = digest_buffer(text, len, t->sha256, err);
  if (rc) {
    table_close(t);
    return rc;
  }
  /* A UTF-8 byte-order mark (EF BB BF, Unicode 15.0 section 23.8), as spreadsheet
   * programs write, is not part of the first column's name. */
  if (len >= 3 && (unsigned char)text[0] == 0xEF && (unsigned char)text[1] == 0xBB &&
      (unsigned char)text[2] == 0xBF)
    t->pos = 3;
  *out = t;
  return TZ_OK;
}

int table_open(table_reader **out, const char *path, tz_err *err)
{
  char *buf;
  size_t len;
  int rc = fileio_read_all(path, TABLE_MAX_BYTES, &buf, &len, err);
  if (rc)
    return rc;
  return make(out, path, buf, len, err);
}

int table_open_mem(table_reader **out, const char *name, const char *text, size_t len,
                   tz_err *err)
{
  char *buf = malloc(len + 1);
  if (!buf)
    return tz_fail(err, TZ_E_NOMEM, "table buffer");
  memcpy(buf, text, len);
  buf[len] = '\0';
  return make(out, name, buf, len, err);
}

const char *table_sha256(const table_reader *t)
{
  return t->sha256;
}

void table_close(table_reader *t)
{
  if (!t)
    return;
  free(t->name);
  free(t->text);
  free(t);
}

static char *trim(char *s)
{
  while (*s == ' ' || *s == '\t')
    s++;
  char *e = s + strlen(s);
  while (e > s && (e[-1] == ' ' || e[-1] == '\t' || e[-1] == '\r'))
    *--e = '\0';
  return s;
}

const char *table_last_comment(const table_reader *t)
{
  return t->comment;
}

int table_next(table_reader *t, size_t *nfields, tz_err *err)
{
  *nfields = 0;
  t->nf = 0;
  while (t->pos < t->len) {
    char *ln = t->text + t->pos;
    char *nl = memchr(ln, '\n', t->len - t->pos);
    size_t n = nl ? (size_t)(nl - ln) : t->len - t->pos;
    t->line = t->next_line++;
    t->pos += n + (nl ? 1 : 0);
    if (n > TABLE_MAX_LINE) {
      tz_err_path(err, t->name);
      return tz_fail_line(err, TZ_E_FORMAT, t->line, "line longer than %d bytes",
                          TABLE_MAX_LINE);
    }
    ln[n] = '\0';
    if (memchr(ln, '\0', n)) {
      tz_err_path(err, t->name);
      return tz_fail_line(err, TZ_E_FORMAT, t->line, "NUL byte in text table");
    }
    char *s = trim(ln);
    if (*s == '#')
      t->comment = s;
    if (!*s || *s == '#')
      continue;
    for (;;) {
      char *c = strchr(s, ',');
      if (c)
        *c = '\0';
      if (t->nf == TABLE_MAX_FIELDS) {
        tz_err_path(err, t->name);
        return tz_fail_line(err, TZ_E_FORMAT, t->line, "more than %d fields",
                            TABLE_MAX_FIELDS);
      }
      t->fields[t->nf++] = trim(s);
      if (!c)
        break;
      s = c + 1;
    }
    *nfields = t->nf;
    return TZ_OK;
  }
  return TZ_OK;
}

const char *table_field(const table_reader *t, size_t i)
{
  return i < t->nf ? t->fields[i] : "";
}

int64_t table_line(const table_reader *t) { return t->line; }
const char *table_name(const table_reader *t) { return t->name; }

int table_parse_i64(const char *s, int64_t *out)
{
  if (!s)
    return -1;
  while (isspace((unsigned char)*s))
    s++;
  if (!*s)
    return -1;
  errno = 0;
  char *end;
  long long v = strtoll(s, &end, 10);
  if (errno || end == s)
    return -1;
  while (isspace((unsigned char)*end))
    end++;
  if (*end)
    return -1;
  *out = v;
  return 0;
}

int table_parse_f64(const char *s, double *out)
{
  if (!s)
    return -1;
  while (isspace((unsigned char)*s))
    s++;
  if (!*s)
    return -1;
  /* decimal only: strtod(3) would also take hexadecimal floats ("0x5dc") */
  const char *digits = s + (*s == '+' || *s == '-');
  if (digits[0] == '0' && (digits[1] == 'x' || digits[1] == 'X'))
    return -1;
  errno = 0;
  char *end;
  double v = strtod(s, &end);
  if (errno == ERANGE && fabs(v) > 1.0)
    return -1;
  if (end == s || !isfinite(v))
    return -1;
  while (isspace((unsigned char)*end))
    end++;
  if (*end)
    return -1;
  *out = v;
  return 0;
}

int table_field_i64(const table_reader *t, size_t i, const char *column, int64_t *out,
                    tz_err *err)
{
  const char *s = table_field(t, i);
  if (table_parse_i64(s, out)) {
    tz_err_path(err, t->name);
    return tz_fail_line(err, TZ_E_FORMAT, t->line, "column %s: expected an integer, got '%s'",
                        column, s);
  }
  return TZ_OK;
}

int table_field_f64(const table_reader *t, size_t i, const char *column, double *out,
                    tz_err *err)
{
  const char *s = table_field(t, i);
  if (table_parse_f64(s, out)) {
    tz_err_path(err, t->name);
    return tz_fail_line(err, TZ_E_FORMAT, t->line, "column %s: expected a number, got '%s'",
                        column, s);
  }
  return TZ_OK;
}

/* ---------------------------------------------------------------- number lists */

static int cmp_int32(const void *a, const void *b)
{
  int32_t x = *(const int32_t *)a, y = *(const int32_t *)b;
  return (x > y) - (x < y);
}

static int parse_part(const char *s, size_t n, int64_t *v)
{
  char buf[32];
  if (n == 0 || n >= sizeof buf)
    return -1;
  memcpy(buf, s, n);
  buf[n] = '\0';
  return table_parse_i64(buf, v);
}

int table_parse_ranges(const char *s, const char *what, size_t max, int32_t **out, size_t *n,
                       tz_err *err)
{
  size_t cap = 64, cnt = 0;
  int32_t *v = malloc(cap * sizeof *v);
  if (!v)
    return tz_fail(err, TZ_E_NOMEM, "%s list", what);
  const char *p = s;
  if (!*s) {
    free(v);
    return tz_fail(err, TZ_E_ARG, "empty %s list (expected e.g. 250, 200,250,300, 200-300 or "
                   "200-900:50)", what);
  }
  for (;;) {
    const char *e = strchr(p, ',');
    size_t len = e ? (size_t)(e - p) : strlen(p);
    /* item: A | A-B | A-B:S (A may be negative: a '-' after the first char splits) */
    int64_t a = 0, b = 0, step = 1;
    const char *dash = NULL, *colon = memchr(p, ':', len);
    size_t lim = colon ? (size_t)(colon - p) : len;
    for (size_t i = 1; i < lim; i++)
      if (p[i] == '-') {
        dash = p + i;
        break;
      }
    size_t alen = dash ? (size_t)(dash - p) : (colon ? (size_t)(colon - p) : len);
    int bad = parse_part(p, alen, &a);
    b = a;
    if (!bad && dash) {
      size_t blen = (colon ? (size_t)(colon - dash) : (size_t)(p + len - dash)) - 1;
      bad = parse_part(dash + 1, blen, &b);
    }
    if (!bad && colon) {
      bad = !dash || parse_part(colon + 1, (size_t)(p + len - colon) - 1, &step) || step <= 0;
    }
    if (!bad && (b < a || a < INT32_MIN || b > INT32_MAX))
      bad = 1;
    if (bad) {
      free(v);
      return tz_fail(err, TZ_E_ARG, "%s list item '%.*s': expected N, FIRST-LAST or "
                     "FIRST-LAST:STEP with FIRST <= LAST and STEP > 0", what, (int)len, p);
    }
    for (int64_t c = a; c <= b; c += step) {
      if (cnt >= max) {
        free(v);
        return tz_fail(err, TZ_E_ARG, "%s list: more than %zu %ss", what, max, what);
      }
      if (cnt == cap) {
        int32_t *nv = realloc(v, cap * 2 * sizeof *v);
        if (!nv) {
          free(v);
          return tz_fail(err, TZ_E_NOMEM, "%s list", what);
        }
        v = nv;
        cap *= 2;
      }
      v[cnt++] = (int32_t)c;
    }
    if (!e)
      break;
    p = e + 1;
  }
  qsort(v, cnt, sizeof *v, cmp_int32);
  size_t k = 0;
  for (size_t i = 0; i < cnt; i++)
    if (!k || v[i] != v[k - 1])
      v[k++] = v[i];
  *out = v;
  *n = k;
  return TZ_OK;
}
