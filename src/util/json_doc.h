/* json_doc.h -- the library's one way to read a JSON document (job files, layouts,
 * earth models, header maps, QC reports). Private to the library; never included
 * by the front end.
 *
 * json_doc_parse() refuses what cJSON would let through silently or report
 * without a place: a NUL byte, nesting deeper than JSON_DOC_MAX_DEPTH ("nested
 * too deeply"), and a key given twice in one object (cJSON keeps both); a
 * syntax error names the line and byte of the fault. The getters check one
 * value's type and range and name its JSON path ("$.bins.size_m") in the
 * message; json_doc_check_keys() refuses unknown keys with the nearest known
 * key (Levenshtein edit distance) as a suggestion.
 *
 * Every function that can fail takes the status to fail with (`st`): TZ_E_JOB
 * for job files, TZ_E_FORMAT for data files. A malformed document (syntax,
 * depth, NUL, duplicate key) is always TZ_E_FORMAT, except that a duplicate
 * key fails with `st` since it is a content error.
 */
#ifndef TZERO_JSON_DOC_H
#define TZERO_JSON_DOC_H

#include <cjson/cJSON.h>
#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"

#define JSON_DOC_MAX_DEPTH 64   /* nesting of arrays and objects any of our documents may have */

/* Parses exactly `len` bytes of `text` (no terminator needed). `name` is the file
 * for messages; `what` names the document in them ("layout is not valid JSON";
 * NULL: the file name says it, "not valid JSON"). On success *out owns the tree
 * (cJSON_Delete). */
int json_doc_parse(cJSON **out, const char *text, size_t len, const char *name,
                   const char *what, int st, tz_err *err);

/* "a string", "a number", ... for messages. */
const char *json_doc_kind_name(const cJSON *v);

/* Typed getters: `v` may be NULL (then "got nothing"); `path` names the value.
 * A number must be finite and within [lo, hi] (-HUGE_VAL, HUGE_VAL: any). */
int json_doc_number(const cJSON *v, const char *path, double lo, double hi, double *out,
                    int st, tz_err *err);
int json_doc_int(const cJSON *v, const char *path, int64_t lo, int64_t hi, int64_t *out,
                 int st, tz_err *err);
int json_doc_bool(const cJSON *v, const char *path, int *out, int st, tz_err *err);
/* A non-empty string (borrowed from the tree). */
int json_doc_string(const cJSON *v, const char *path, const char **out, int st, tz_err *err);
/* One of names[] (NULL-terminated); *out gets the matching values[i]. */
int json_doc_choice(const cJSON *v, const char *path, const char *const *names,
                    const int *values, int *out, int st, tz_err *err);

/* Every key of object `obj` must be in `known` (NULL-terminated): else
 * "PATH.KEY: unknown key; did you mean "NEAREST"?". */
int json_doc_check_keys(const cJSON *obj, const char *path, const char *const *known, int st,
                        tz_err *err);

/* Levenshtein edit distance (insertions, deletions, substitutions); strings
 * over 256 bytes count as the longer length. */
size_t json_doc_edit_distance(const char *a, const char *b);
/* The entry of keys[0..n-1] nearest to k by edit distance (NULL when n is 0). */
const char *json_doc_nearest(const char *k, const char *const *keys, size_t n);

#endif
