/* job_mute.c -- the "mute" object of a job file: top, inner and bottom mutes.
 *
 * Each kind takes a single polyline (the whole line), {"controls": [{"cmp": N,
 * "polyline": [...]}, ...]} (varying along the line) or a CSV file
 * ("top_file", "inner_file", "bottom_file"); the top may also follow the
 * first breaks ({"after_first_break_ms": PAD, "picks": FILE}). Points are
 * [offset_m, time_ms] pairs, and [offset_m, time_ms, time_end_ms] triples for
 * the inner cone. docs/job-file.md ("Mutes") describes the keys; mute.h the
 * interpolation. Errors name the JSON path ("$.mute.inner.controls[1].polyline:
 * point 2: ...") and are TZ_E_JOB; a file's errors name its line.
 *
 * Not here: evaluating and applying the mutes (mute.c, nmo.c).
 */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "job/job_int.h"
#include "tzero/job.h"
#include "util/json_doc.h"

#define ITEM(o, k) cJSON_GetObjectItemCaseSensitive(o, k)

/* Re-files the mute module's TZ_E_ARG message under the JSON path. */
static int relabel(tz_err *err, const char *path)
{
  char msg[sizeof err->msg];
  snprintf(msg, sizeof msg, "%s", err->msg);
  err->status = TZ_OK;
  return tz_fail(err, TZ_E_JOB, "%s: %s", path, msg);
}

/* A polyline at `path` into pts (room for MUTE_MAX_POINTS). */
static int parse_points(const cJSON *v, const char *path, int kind, mute_point *pts, size_t *n,
                        tz_err *err)
{
  size_t want = kind == MUTE_INNER ? 3 : 2;
  const char *shape = kind == MUTE_INNER ? "[offset_m, time_ms, time_end_ms] triples"
                                         : "[offset_m, time_ms] pairs";
  if (!cJSON_IsArray(v) || cJSON_GetArraySize(v) == 0)
    return tz_fail(err, TZ_E_JOB, "%s: expected a non-empty array of %s, got %s", path, shape,
                   json_doc_kind_name(v));
  size_t np = (size_t)cJSON_GetArraySize(v);
  if (np > MUTE_MAX_POINTS)
    return tz_fail(err, TZ_E_JOB, "%s: more than %d points", path, MUTE_MAX_POINTS);
  size_t i = 0;
  for (const cJSON *p = v->child; p; p = p->next, i++) {
    char jp[200];
    snprintf(jp, sizeof jp, "%s[%zu]", path, i);
    if (!cJSON_IsArray(p) || (size_t)cJSON_GetArraySize(p) != want)
      return tz_fail(err, TZ_E_JOB, "%s: expected %s, got %s", jp,
                     kind == MUTE_INNER ? "a triple [offset_m, time_ms, time_end_ms]"
                                        : "a pair [offset_m, time_ms]",
                     json_doc_kind_name(p));
    double val[3] = { 0, 0, 0 };
    size_t c = 0;
    for (const cJSON *q = p->child; q; q = q->next, c++) {
      char jq[240];
      snprintf(jq, sizeof jq, "%s[%zu]", jp, c);
      int rc = json_doc_number(q, jq, c == 0 ? 0 : -1e5, 1e6, &val[c], TZ_E_JOB, err);
      if (rc)
        return rc;
    }
    pts[i] = (mute_point){ val[0], val[1], kind == MUTE_INNER ? val[2] : val[1] };
  }
  *n = np;
  return TZ_OK;
}

static int add_control(job_spec *j, int kind, int32_t cmp, const mute_point *pts, size_t n,
                       const char *cpath, const char *ppath, tz_err *err)
{
  int which;
  int rc = mute_set_add(j->mutes, kind, cmp, pts, n, &which, err);
  if (rc == TZ_E_ARG)
    return relabel(err, which == 0 ? cpath : ppath);
  return rc;
}

static int parse_controls(job_spec *j, int kind, const cJSON *v, const char *path,
                          mute_point *pts, tz_err *err)
{
  if (!cJSON_IsArray(v) || cJSON_GetArraySize(v) == 0)
    return tz_fail(err, TZ_E_JOB, "%s: expected a non-empty array of {\"cmp\", \"polyline\"} "
                   "objects, got %s", path, json_doc_kind_name(v));
  static const char *const keys[] = { "cmp", "polyline", NULL };
  size_t i = 0;
  for (const cJSON *c = v->child; c; c = c->next, i++) {
    char cp[160], pp[180], mp[180];
    snprintf(cp, sizeof cp, "%s[%zu]", path, i);
    snprintf(pp, sizeof pp, "%s.polyline", cp);
    snprintf(mp, sizeof mp, "%s.cmp", cp);
    if (!cJSON_IsObject(c))
      return tz_fail(err, TZ_E_JOB, "%s: expected an object {\"cmp\", \"polyline\"}, got %s", cp,
                     json_doc_kind_name(c));
    int rc = json_doc_check_keys(c, cp, keys, TZ_E_JOB, err);
    if (rc)
      return rc;
    int64_t cmp;
    size_t n;
    if (!ITEM(c, "cmp"))
      return tz_fail(err, TZ_E_JOB, "%s: required key missing", mp);
    if (!ITEM(c, "polyline"))
      return tz_fail(err, TZ_E_JOB, "%s: required key missing", pp);
    if ((rc = json_doc_int(ITEM(c, "cmp"), mp, INT32_MIN, INT32_MAX, &cmp, TZ_E_JOB, err)) ||
        (rc = parse_points(ITEM(c, "polyline"), pp, kind, pts, &n, err)) ||
        (rc = add_control(j, kind, (int32_t)cmp, pts, n, cp, pp, err)))
      return rc;
  }
  return TZ_OK;
}

/* One kind given in the JSON itself. */
static int parse_kind(job_spec *j, int kind, const cJSON *v, const char *dir, mute_point *pts,
                      tz_err *err)
{
  char path[64];
  const char *kind_name = mute_kind_name(kind);
  snprintf(path, sizeof path, "$.mute.%s", kind_name);
  int rc;
  if (cJSON_IsArray(v) && cJSON_GetArraySize(v) == 0)
    return TZ_OK;   /* an empty polyline: no mute of the kind (as the resolved job says it) */
  if (cJSON_IsArray(v)) {
    size_t n;
    j->mute_form[kind] = JOB_MUTE_POLYLINE;
    if ((rc = parse_points(v, path, kind, pts, &n, err)) ||
        (rc = add_control(j, kind, 0, pts, n, path, path, err)))
      return rc;
    return TZ_OK;
  }
  if (!cJSON_IsObject(v))
    return tz_fail(err, TZ_E_JOB, "%s: expected a polyline (array of %s) or an object with "
                   "\"controls\", got %s", path, kind == MUTE_INNER ? "triples" : "pairs",
                   json_doc_kind_name(v));
  static const char *const top_keys[] = { "controls", "after_first_break_ms", "picks", NULL };
  static const char *const keys[] = { "controls", NULL };
  if ((rc = json_doc_check_keys(v, path, kind == MUTE_TOP ? top_keys : keys, TZ_E_JOB, err)))
    return rc;
  const cJSON *e;
  char sub[96];
  if ((e = ITEM(v, "controls"))) {
    j->mute_form[kind] = JOB_MUTE_CONTROLS;
    snprintf(sub, sizeof sub, "%s.controls", path);
    if ((rc = parse_controls(j, kind, e, sub, pts, err)))
      return rc;
  }
  if (kind == MUTE_TOP && (e = ITEM(v, "after_first_break_ms"))) {
    double pad;
    const cJSON *pk = ITEM(v, "picks");
    if ((rc = json_doc_number(e, "$.mute.top.after_first_break_ms", -1000, 10000, &pad, TZ_E_JOB,
                              err)))
      return rc;
    if (!pk)
      return tz_fail(err, TZ_E_JOB, "$.mute.top.picks: required with after_first_break_ms (the "
                     "picks file `tzero firstbreaks` writes)");
    const char *s;
    if ((rc = json_doc_string(pk, "$.mute.top.picks", &s, TZ_E_JOB, err)))
      return rc;
    char *p = job_path_resolve(dir, s);
    if (!p)
      return tz_fail(err, TZ_E_NOMEM, "job path");
    rc = job_need_file(p, "$.mute.top.picks", err);
    if (!rc)
      rc = mute_picks_load(j->mutes, p, pad, err);
    free(p);
    if (rc)
      return rc;
    if (!j->mute_form[kind])
      j->mute_form[kind] = JOB_MUTE_CONTROLS;
  } else if (ITEM(v, "picks")) {
    return tz_fail(err, TZ_E_JOB, "$.mute.top.picks: only with after_first_break_ms");
  }
  if (!j->mute_form[kind])
    return tz_fail(err, TZ_E_JOB, "%s: expected \"controls\"%s", path,
                   kind == MUTE_TOP ? " or \"after_first_break_ms\"" : "");
  return TZ_OK;
}

int job_mute_parse(job_spec *j, const cJSON *v, const char *dir, tz_err *err)
{
  static const char *const keys[] = { "top", "inner", "bottom", "top_file", "inner_file",
                                      "bottom_file", "taper_ms", NULL };
  if (!cJSON_IsObject(v))
    return tz_fail(err, TZ_E_JOB, "$.mute: expected an object, got %s", json_doc_kind_name(v));
  int rc = json_doc_check_keys(v, "$.mute", keys, TZ_E_JOB, err);
  if (rc)
    return rc;
  const cJSON *e;
  if ((e = ITEM(v, "taper_ms")) &&
      (rc = json_doc_number(e, "$.mute.taper_ms", 0, 1000, &j->mute_taper_ms, TZ_E_JOB, err)))
    return rc;
  if (!j->mutes && (rc = mute_set_new(&j->mutes, err)))
    return rc;
  j->mutes->taper_ms = j->mute_taper_ms;
  mute_point *pts = malloc(MUTE_MAX_POINTS * sizeof *pts);
  if (!pts)
    return tz_fail(err, TZ_E_NOMEM, "mute points");
  for (int k = 0; k < MUTE__KINDS && !rc; k++) {
    char key[32], fpath[48];
    snprintf(key, sizeof key, "%s_file", mute_kind_name(k));
    snprintf(fpath, sizeof fpath, "$.mute.%s", key);
    const cJSON *f = ITEM(v, key);
    e = ITEM(v, mute_kind_name(k));
    if (e && f) {
      rc = tz_fail(err, TZ_E_JOB, "%s: give either %s or %s, not both", fpath, mute_kind_name(k),
                   key);
    } else if (e) {
      rc = parse_kind(j, k, e, dir, pts, err);
    } else if (f) {
      const char *s;
      if ((rc = json_doc_string(f, fpath, &s, TZ_E_JOB, err)))
        break;
      if (!(j->mute_files[k] = job_path_resolve(dir, s))) {
        rc = tz_fail(err, TZ_E_NOMEM, "job path");
        break;
      }
      j->mute_form[k] = JOB_MUTE_FILE;
      if (!(rc = job_need_file(j->mute_files[k], fpath, err)))
        rc = mute_file_load(j->mutes, k, j->mute_files[k], err);
    }
  }
  free(pts);
  if (rc)
    return rc;
  /* The single-polyline top in the old form too (stack_plan_nmo, residual statics). */
  const mute_surface *top = &j->mutes->kind[MUTE_TOP];
  if (j->mute_form[MUTE_TOP] == JOB_MUTE_POLYLINE && isnan(j->mutes->after_first_break_ms)) {
    j->mute_top = calloc(top->c[0].n, sizeof *j->mute_top);
    if (!j->mute_top)
      return tz_fail(err, TZ_E_NOMEM, "mute points");
    for (size_t i = 0; i < top->c[0].n; i++) {
      j->mute_top[i].offset_m = top->c[0].p[i].offset_m;
      j->mute_top[i].time_ms = top->c[0].p[i].time_ms;
    }
    j->nmute = top->c[0].n;
  }
  return TZ_OK;
}

static cJSON *points_json(const mute_control *c, int kind)
{
  cJSON *a = cJSON_CreateArray();
  for (size_t i = 0; a && i < c->n; i++) {
    double v[3] = { c->p[i].offset_m, c->p[i].time_ms, c->p[i].time_end_ms };
    cJSON_AddItemToArray(a, cJSON_CreateDoubleArray(v, kind == MUTE_INNER ? 3 : 2));
  }
  return a;
}

int job_mute_to_json(const job_spec *j, cJSON *o)
{
  const mute_set *m = j->mutes;
  if (!m) {
    cJSON_AddArrayToObject(o, "top");
    return cJSON_AddNumberToObject(o, "taper_ms", j->mute_taper_ms) ? 0 : -1;
  }
  for (int k = 0; k < MUTE__KINDS; k++) {
    const mute_surface *s = &m->kind[k];
    const char *name = mute_kind_name(k);
    if (j->mute_form[k] == JOB_MUTE_FILE) {
      char key[32];
      snprintf(key, sizeof key, "%s_file", name);
      cJSON_AddStringToObject(o, key, j->mute_files[k]);
    } else if (j->mute_form[k] == JOB_MUTE_POLYLINE && s->n == 1) {
      cJSON_AddItemToObject(o, name, points_json(&s->c[0], k));
    } else if (j->mute_form[k]) {
      cJSON *obj = cJSON_AddObjectToObject(o, name);
      if (!obj)
        return -1;
      if (s->n) {
        cJSON *arr = cJSON_AddArrayToObject(obj, "controls");
        for (size_t i = 0; arr && i < s->n; i++) {
          cJSON *c = cJSON_CreateObject();
          cJSON_AddNumberToObject(c, "cmp", s->c[i].cmp);
          cJSON_AddItemToObject(c, "polyline", points_json(&s->c[i], k));
          cJSON_AddItemToArray(arr, c);
        }
      }
      if (k == MUTE_TOP && !isnan(m->after_first_break_ms)) {
        cJSON_AddNumberToObject(obj, "after_first_break_ms", m->after_first_break_ms);
        cJSON_AddStringToObject(obj, "picks", m->picks_path);
      }
    } else if (k == MUTE_TOP) {
      cJSON_AddArrayToObject(o, "top");   /* no top mute: an empty polyline, as before */
    }
  }
  return cJSON_AddNumberToObject(o, "taper_ms", j->mute_taper_ms) ? 0 : -1;
}
