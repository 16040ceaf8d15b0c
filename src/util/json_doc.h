/* json_doc.h -- parse a whole JSON document with a message naming file, line and byte.
 * Private to the library (geometry.c, synth.c); never included by the front end. */
#ifndef TZERO_JSON_DOC_H
#define TZERO_JSON_DOC_H

#include <cjson/cJSON.h>
#include "tzero/error.h"

/* Parses NUL-terminated text (cJSON_ParseWithOpts with the end pointer, never the
 * global error pointer). On success *out owns the tree (cJSON_Delete). */
static inline int json_doc_parse(cJSON **out, const char *json, size_t len, const char *name,
                                 const char *what, tz_err *err)
{
  const char *end = NULL;
  *out = cJSON_ParseWithOpts(json, &end, 1);
  if (*out)
    return TZ_OK;
  tz_err_path(err, name);
  size_t off = end ? (size_t)(end - json) : 0;
  long long line = 1;
  for (size_t i = 0; i < off && i < len; i++)
    line += json[i] == '\n';
  return tz_fail_at(err, TZ_E_FORMAT, -1, (int64_t)off, "%s: invalid JSON (line %lld)", what,
                    line);
}

#endif
