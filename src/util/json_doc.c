/* json_doc.c -- reading JSON documents with messages that name the place (json_doc.h).
 *
 * cJSON does the parsing; around it: a scan for NUL bytes and nesting depth
 * before it (so a deep document fails with the place and the limit, not with
 * cJSON's generic error), a walk for duplicate keys after it, and the typed
 * getters every document reader shares.
 */
#include "util/json_doc.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* 1-based line of byte offset `at`. */
static int64_t line_of(const char *text, size_t len, size_t at)
{
  int64_t line = 1;
  for (size_t i = 0; i < at && i < len; i++)
    line += text[i] == '\n';
  return line;
}

/* A fault at byte `at`: "[WHAT ]MSG" with the file, line and byte. */
static int fail_at(tz_err *err, const char *text, size_t len, size_t at, const char *name,
                   const char *what, const char *msg)
{
  tz_err_path(err, name);
  tz_fail_at(err, TZ_E_FORMAT, -1, (int64_t)at, "%s%s%s", what ? what : "", what ? " " : "",
             msg);
  err->line = line_of(text, len, at);
  return TZ_E_FORMAT;
}

/* Depth of arrays and objects outside strings; returns the offset where the
 * limit is passed, or len when it never is. */
static size_t depth_scan(const char *text, size_t len)
{
  int depth = 0, in_str = 0;
  for (size_t i = 0; i < len; i++) {
    char c = text[i];
    if (in_str) {
      if (c == '\\')
        i++;
      else if (c == '"')
        in_str = 0;
    } else if (c == '"') {
      in_str = 1;
    } else if (c == '[' || c == '{') {
      if (++depth > JSON_DOC_MAX_DEPTH)
        return i;
    } else if (c == ']' || c == '}') {
      depth--;
    }
  }
  return len;
}

/* The first key given twice in one object, anywhere in the tree: its path in buf. */
static int find_duplicate(const cJSON *v, char *buf, size_t cap, size_t n)
{
  for (const cJSON *c = v->child; c; c = c->next) {
    if (cJSON_IsObject(v) && c->string) {
      for (const cJSON *d = c->next; d; d = d->next)
        if (d->string && !strcmp(c->string, d->string)) {
          snprintf(buf + n, cap - n, ".%s", c->string);
          return 1;
        }
    }
  }
  size_t i = 0;
  for (const cJSON *c = v->child; c; c = c->next, i++) {
    if (!cJSON_IsObject(c) && !cJSON_IsArray(c))
      continue;
    int k = cJSON_IsObject(v) && c->string ? snprintf(buf + n, cap - n, ".%s", c->string)
                                           : snprintf(buf + n, cap - n, "[%zu]", i);
    size_t m = k > 0 && (size_t)k < cap - n ? n + (size_t)k : cap - 1;
    if (find_duplicate(c, buf, cap, m))
      return 1;
    buf[n] = '\0';
  }
  return 0;
}

int json_doc_parse(cJSON **out, const char *text, size_t len, const char *name,
                   const char *what, int st, tz_err *err)
{
  *out = NULL;
  const char *nul = memchr(text, '\0', len);
  if (nul)
    return fail_at(err, text, len, (size_t)(nul - text), name, what, "has a NUL byte");
  size_t deep = depth_scan(text, len);
  if (deep < len) {
    char msg[96];
    snprintf(msg, sizeof msg, "is nested too deeply (more than %d levels of arrays and "
             "objects)", JSON_DOC_MAX_DEPTH);
    return fail_at(err, text, len, deep, name, what, msg);
  }
  char *copy = malloc(len + 1);   /* cJSON reads to a terminator */
  if (!copy)
    return tz_fail(err, TZ_E_NOMEM, "%s text", what);
  memcpy(copy, text, len);
  copy[len] = '\0';
  const char *end = NULL;
  cJSON *root = cJSON_ParseWithOpts(copy, &end, 1);
  size_t at = end && end >= copy && end <= copy + len ? (size_t)(end - copy) : len;
  free(copy);
  if (!root)
    return fail_at(err, text, len, at, name, what, what ? "is not valid JSON" : "not valid JSON");
  char path[512] = "$";
  if (find_duplicate(root, path, sizeof path, 1)) {
    cJSON_Delete(root);
    tz_err_path(err, name);
    return tz_fail(err, st, "%s: key given twice", path);
  }
  *out = root;
  return TZ_OK;
}

const char *json_doc_kind_name(const cJSON *v)
{
  if (!v) return "nothing";
  if (cJSON_IsString(v)) return "a string";
  if (cJSON_IsNumber(v)) return "a number";
  if (cJSON_IsBool(v)) return "a boolean";
  if (cJSON_IsNull(v)) return "null";
  if (cJSON_IsArray(v)) return "an array";
  if (cJSON_IsObject(v)) return "an object";
  return "something else";
}

int json_doc_number(const cJSON *v, const char *path, double lo, double hi, double *out,
                    int st, tz_err *err)
{
  if (!cJSON_IsNumber(v) || !isfinite(v->valuedouble) || v->valuedouble < lo ||
      v->valuedouble > hi) {
    char los[32], his[32];
    snprintf(los, sizeof los, "%g", lo);
    snprintf(his, sizeof his, "%g", hi);
    if (isinf(lo) && isinf(hi))   /* any finite number */
      return tz_fail(err, st, "%s: expected a number, got %s", path, json_doc_kind_name(v));
    if (cJSON_IsNumber(v))
      return tz_fail(err, st, "%s: expected a number between %s and %s, got %g", path, los,
                     his, v->valuedouble);
    return tz_fail(err, st, "%s: expected a number between %s and %s, got %s", path, los, his,
                   json_doc_kind_name(v));
  }
  *out = v->valuedouble;
  return TZ_OK;
}

int json_doc_int(const cJSON *v, const char *path, int64_t lo, int64_t hi, int64_t *out,
                 int st, tz_err *err)
{
  if (!cJSON_IsNumber(v) || v->valuedouble != floor(v->valuedouble) ||
      v->valuedouble < (double)lo || v->valuedouble > (double)hi) {
    if (cJSON_IsNumber(v))
      return tz_fail(err, st, "%s: expected an integer between %lld and %lld, got %g", path,
                     (long long)lo, (long long)hi, v->valuedouble);
    return tz_fail(err, st, "%s: expected an integer between %lld and %lld, got %s", path,
                   (long long)lo, (long long)hi, json_doc_kind_name(v));
  }
  *out = (int64_t)v->valuedouble;
  return TZ_OK;
}

int json_doc_bool(const cJSON *v, const char *path, int *out, int st, tz_err *err)
{
  if (!cJSON_IsBool(v))
    return tz_fail(err, st, "%s: expected true or false, got %s", path, json_doc_kind_name(v));
  *out = cJSON_IsTrue(v) ? 1 : 0;
  return TZ_OK;
}

int json_doc_string(const cJSON *v, const char *path, const char **out, int st, tz_err *err)
{
  if (!cJSON_IsString(v) || !v->valuestring)
    return tz_fail(err, st, "%s: expected a string, got %s", path, json_doc_kind_name(v));
  if (!v->valuestring[0])
    return tz_fail(err, st, "%s: expected a non-empty string", path);
  *out = v->valuestring;
  return TZ_OK;
}

int json_doc_choice(const cJSON *v, const char *path, const char *const *names,
                    const int *values, int *out, int st, tz_err *err)
{
  const char *s;
  int rc = json_doc_string(v, path, &s, st, err);
  if (rc)
    return rc;
  char list[200] = "";
  for (size_t i = 0; names[i]; i++) {
    if (!strcmp(s, names[i])) {
      *out = values[i];
      return TZ_OK;
    }
    size_t n = strlen(list);
    snprintf(list + n, sizeof list - n, "%s\"%s\"", i ? " or " : "", names[i]);
  }
  return tz_fail(err, st, "%s: expected %s, got \"%s\"", path, list, s);
}

size_t json_doc_edit_distance(const char *a, const char *b)
{
  size_t na = strlen(a), nb = strlen(b);
  if (na > 256 || nb > 256)
    return na > nb ? na : nb;
  size_t row[257];
  for (size_t j = 0; j <= nb; j++)
    row[j] = j;
  for (size_t i = 1; i <= na; i++) {
    size_t diag = row[0];
    row[0] = i;
    for (size_t j = 1; j <= nb; j++) {
      size_t up = row[j];
      size_t best = diag + (a[i - 1] != b[j - 1]);
      if (up + 1 < best)
        best = up + 1;
      if (row[j - 1] + 1 < best)
        best = row[j - 1] + 1;
      row[j] = best;
      diag = up;
    }
  }
  return row[nb];
}

const char *json_doc_nearest(const char *k, const char *const *keys, size_t n)
{
  const char *best = NULL;
  size_t bestd = (size_t)-1;
  for (size_t i = 0; i < n; i++) {
    size_t d = json_doc_edit_distance(k, keys[i]);
    if (d < bestd) {
      bestd = d;
      best = keys[i];
    }
  }
  return best;
}

int json_doc_check_keys(const cJSON *obj, const char *path, const char *const *known, int st,
                        tz_err *err)
{
  size_t n = 0;
  while (known[n])
    n++;
  for (const cJSON *c = obj->child; c; c = c->next) {
    const char *k = c->string ? c->string : "";
    size_t i = 0;
    while (i < n && strcmp(k, known[i]))
      i++;
    if (i < n)
      continue;
    const char *best = json_doc_nearest(k, known, n);
    if (best)
      return tz_fail(err, st, "%s.%s: unknown key; did you mean \"%s\"?", path, k, best);
    return tz_fail(err, st, "%s.%s: unknown key", path, k);
  }
  return TZ_OK;
}
