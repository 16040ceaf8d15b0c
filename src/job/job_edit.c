/* job_edit.c -- a value set at a JSON path of the job document before the job
 * is parsed (test panels: `tzero gathers --vary`, `tzero stack --vary`).
 *
 * The path is walked on the cJSON tree of the job file: "name" steps into an
 * object member, "[k]" into an array element. Members missing on the way are
 * created (objects in the middle, the value at the end), so a key the job
 * leaves at its default can be varied too; whether the parser knows a key is
 * left to the parser itself: the edited tree is printed and parsed as any job,
 * and an "unknown key" failure at one of the members created here (the parser's
 * message carries the nearest known key) becomes a usage error, since the key
 * came from the command line, not from the file. Array elements are never
 * created: an index past the end is a usage error giving the array's length.
 *
 * Not here: what the values mean (job.c checks them as usual).
 */
#include "tzero/job.h"

#include <cjson/cJSON.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/fileio.h"
#include "util/json_doc.h"

#define MAX_CREATED 16
#define MAX_KEY 400

/* The folder of the job file, for its relative paths (as job_load does). */
static void job_dir(const char *path, char *dir, size_t cap)
{
  const char *slash = strrchr(path, '/');
  size_t n = slash ? (size_t)(slash - path) : 0;
  if (!slash) {
    dir[0] = '\0';
    return;
  }
  if (n >= cap)
    n = cap - 1;
  memcpy(dir, path, n ? n : 1);   /* "/job.json" keeps the root "/" */
  dir[n ? n : 1] = '\0';
}

/* The value as JSON text, else as a string. */
static cJSON *value_of(const char *text)
{
  const char *end = NULL;
  cJSON *v = cJSON_ParseWithOpts(text, &end, 1);
  if (v)
    return v;
  return cJSON_CreateString(text);
}

typedef struct walk {
  char jpath[MAX_KEY + 8];          /* "$.moveout.stretch_limit_pct" as walked so far */
  char created[MAX_CREATED][MAX_KEY + 8];   /* JSON paths of the members made here */
  size_t ncreated;
} walk;

/* Walks `key` from root, creating members; puts `val` at the end (takes it). */
static int apply(cJSON *root, const char *key, cJSON *val, walk *wk, tz_err *err)
{
  const char *s = key;
  if (!strncmp(s, "$.", 2))
    s += 2;
  else if (s[0] == '$' && s[1] == '[')
    s += 1;
  snprintf(wk->jpath, sizeof wk->jpath, "$");
  cJSON *node = root, *parent = NULL;
  char name[MAX_KEY + 1];
  int rc = TZ_OK;
  if (!*s) {
    cJSON_Delete(val);
    return tz_fail(err, TZ_E_ARG, "--vary: empty key");
  }
  while (*s) {
    size_t jl = strlen(wk->jpath);
    if (*s == '[') {
      char *end;
      long k = strtol(s + 1, &end, 10);
      if (end == s + 1 || *end != ']' || k < 0) {
        rc = tz_fail(err, TZ_E_ARG, "%s: expected [INDEX] after %s", key, wk->jpath);
        break;
      }
      if (!cJSON_IsArray(node)) {
        rc = tz_fail(err, TZ_E_ARG, "%s: %s is not an array", key, wk->jpath);
        break;
      }
      int n = cJSON_GetArraySize(node);
      if (k >= n) {
        rc = n ? tz_fail(err, TZ_E_ARG, "%s: %s has no element %ld (it has %d: 0 to %d)", key,
                         wk->jpath, k, n, n - 1)
               : tz_fail(err, TZ_E_ARG, "%s: %s is empty", key, wk->jpath);
        break;
      }
      snprintf(wk->jpath + jl, sizeof wk->jpath - jl, "[%ld]", k);
      s = end + 1;
      if (*s == '.')
        s++;
      parent = node;
      node = cJSON_GetArrayItem(node, (int)k);
      if (!*s) {
        cJSON_ReplaceItemInArray(parent, (int)k, val);
        return TZ_OK;
      }
      continue;
    }
    size_t n = strcspn(s, ".[");
    if (n == 0 || n > MAX_KEY) {
      rc = tz_fail(err, TZ_E_ARG, "%s: expected a key name after %s", key, wk->jpath);
      break;
    }
    memcpy(name, s, n);
    name[n] = '\0';
    s += n;
    if (*s == '.')
      s++;
    if (!cJSON_IsObject(node)) {
      rc = tz_fail(err, TZ_E_ARG, "%s: %s is not an object", key, wk->jpath);
      break;
    }
    snprintf(wk->jpath + jl, sizeof wk->jpath - jl, ".%s", name);
    cJSON *next = cJSON_GetObjectItemCaseSensitive(node, name);
    if (!*s) {
      if (next)
        cJSON_ReplaceItemInObjectCaseSensitive(node, name, val);
      else
        cJSON_AddItemToObject(node, name, val);
      if (!next && wk->ncreated < MAX_CREATED)
        memcpy(wk->created[wk->ncreated++], wk->jpath, strlen(wk->jpath) + 1);
      return TZ_OK;
    }
    if (!next) {
      if (*s == '[') {
        rc = tz_fail(err, TZ_E_ARG, "%s: the job has no array %s", key, wk->jpath);
        break;
      }
      next = cJSON_AddObjectToObject(node, name);
      if (!next) {
        rc = tz_fail(err, TZ_E_NOMEM, "--vary");
        break;
      }
      if (wk->ncreated < MAX_CREATED)
        memcpy(wk->created[wk->ncreated++], wk->jpath, strlen(wk->jpath) + 1);
    }
    parent = node;
    node = next;
  }
  cJSON_Delete(val);
  return rc ? rc : tz_fail(err, TZ_E_ARG, "%s: no value to set", key);
}

/* 1 when the parser's message is "PATH: unknown key..." for a member made here. */
static int unknown_created(const walk *wk, const char *msg)
{
  for (size_t i = 0; i < wk->ncreated; i++) {
    size_t n = strlen(wk->created[i]);
    if (!strncmp(msg, wk->created[i], n) && !strncmp(msg + n, ": unknown key", 13))
      return 1;
  }
  return 0;
}

int job_load_edited(job_spec **out, const char *path, const job_edit *edit, tz_err *err)
{
  if (!edit)
    return job_load(out, path, err);
  if (strlen(edit->key) > MAX_KEY)
    return tz_fail(err, TZ_E_ARG, "--vary: key longer than %d characters", MAX_KEY);
  char *text = NULL, *edited = NULL;
  size_t len = 0;
  cJSON *root = NULL;
  walk *wk = calloc(1, sizeof *wk);
  if (!wk)
    return tz_fail(err, TZ_E_NOMEM, "--vary");
  int rc = fileio_read_all(path, JOB_MAX_BYTES, &text, &len, err);
  if (rc) {
    tz_err_path(err, path);
    goto done;
  }
  if ((rc = json_doc_parse(&root, text, len, path, NULL, TZ_E_JOB, err)))
    goto done;
  cJSON *val = value_of(edit->value);
  if (!val) {
    rc = tz_fail(err, TZ_E_NOMEM, "--vary");
    goto done;
  }
  if ((rc = apply(root, edit->key, val, wk, err)))
    goto done;
  if (!(edited = cJSON_PrintUnformatted(root))) {
    rc = tz_fail(err, TZ_E_NOMEM, "--vary");
    goto done;
  }
  char dir[640];
  job_dir(path, dir, sizeof dir);
  rc = job_parse(out, edited, strlen(edited), path, dir, err);
  if (rc == TZ_E_JOB && unknown_created(wk, err->msg)) {
    char msg[sizeof err->msg];
    snprintf(msg, sizeof msg, "%s", err->msg);
    tz_err_init(err);
    rc = tz_fail(err, TZ_E_ARG, "--vary %s: %s", edit->key, msg);
  }
done:
  cJSON_Delete(root);
  free(text);
  free(edited);
  free(wk);
  return rc;
}
