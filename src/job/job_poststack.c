/* job_poststack.c -- the "poststack" array of a job file, and steps files for
 * `tzero condition --steps` (docs/poststack.md): JSON into a poststack_chain.
 *
 * Every step is an object with "step" ("bandpass", "fx_prediction", "balance",
 * "agc"; an unknown name is refused with the nearest known one), the keys of its
 * kind (an unknown key with the nearest known key) and an optional
 * "after_migration". Values are range-checked here; poststack.h checks how they
 * fit together (corners, window order) and the parser prefixes the step's JSON
 * path to its message, so every refusal names the value:
 * "$.poststack[1].windows[2].corners_hz: ...".
 */
#include "job/job_poststack.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/fileio.h"
#include "tzero/job.h"
#include "util/json_doc.h"

#define ITEM(obj, key) cJSON_GetObjectItemCaseSensitive((obj), (key))

/* poststack.h's refusal: its message starts with the key path relative to the step
 * ("windows[2].corners_hz: ..."), which joins the step's JSON path. */
static int step_fail(tz_err *err, const char *jp, const tz_err *why)
{
  const char *m = why->msg;
  size_t n = strspn(m, "abcdefghijklmnopqrstuvwxyz_0123456789[].");
  if (m[n] == ':' && n > 0)
    return tz_fail(err, TZ_E_JOB, "%s.%.*s:%s", jp, (int)n, m, m + n + 1);
  return tz_fail(err, TZ_E_JOB, "%s: %s", jp, m);
}

static int get_number(const cJSON *st, const char *key, const char *jp, int required,
                      double lo, double hi, double dflt, double *out, tz_err *err)
{
  char kp[128];
  snprintf(kp, sizeof kp, "%s.%s", jp, key);
  const cJSON *v = ITEM(st, key);
  if (!v) {
    if (required)
      return tz_fail(err, TZ_E_JOB, "%s: required key missing", kp);
    *out = dflt;
    return TZ_OK;
  }
  return json_doc_number(v, kp, lo, hi, out, TZ_E_JOB, err);
}

static int get_count(const cJSON *st, const char *key, const char *jp, int64_t lo, int64_t hi,
                     int64_t dflt, size_t *out, tz_err *err)
{
  char kp[128];
  snprintf(kp, sizeof kp, "%s.%s", jp, key);
  const cJSON *v = ITEM(st, key);
  int64_t x = dflt;
  if (v && json_doc_int(v, kp, lo, hi, &x, TZ_E_JOB, err))
    return err->status;
  *out = (size_t)x;
  return TZ_OK;
}

static int parse_windows(const cJSON *st, const char *jp, poststack_window *w, size_t *n,
                         tz_err *err)
{
  char kp[128];
  snprintf(kp, sizeof kp, "%s.windows", jp);
  const cJSON *a = ITEM(st, "windows");
  if (!a)
    return tz_fail(err, TZ_E_JOB, "%s: required key missing ([{\"from_ms\", \"to_ms\", "
                   "\"corners_hz\": [f1, f2, f3, f4]}, ...])", kp);
  int cnt = cJSON_IsArray(a) ? cJSON_GetArraySize(a) : -1;
  if (cnt < 1 || cnt > POSTSTACK_MAX_WINDOWS)
    return tz_fail(err, TZ_E_JOB, "%s: expected an array of 1 to %d windows, got %s", kp,
                   POSTSTACK_MAX_WINDOWS, cnt < 0 ? json_doc_kind_name(a) : "an empty array");
  static const char *const keys[] = { "from_ms", "to_ms", "corners_hz", NULL };
  size_t i = 0;
  for (const cJSON *x = a->child; x; x = x->next, i++) {
    char ip[160], cp[192];
    snprintf(ip, sizeof ip, "%s[%zu]", kp, i);
    if (!cJSON_IsObject(x))
      return tz_fail(err, TZ_E_JOB, "%s: expected an object {\"from_ms\", \"to_ms\", "
                     "\"corners_hz\"}, got %s", ip, json_doc_kind_name(x));
    if (json_doc_check_keys(x, ip, keys, TZ_E_JOB, err))
      return err->status;
    double from, to;
    if (get_number(x, "from_ms", ip, 1, -POSTSTACK_MAX_MS, POSTSTACK_MAX_MS, 0, &from, err) ||
        get_number(x, "to_ms", ip, 1, -POSTSTACK_MAX_MS, POSTSTACK_MAX_MS, 0, &to, err))
      return err->status;
    w[i].from_s = from * 1e-3;
    w[i].to_s = to * 1e-3;
    snprintf(cp, sizeof cp, "%s.corners_hz", ip);
    const cJSON *c = ITEM(x, "corners_hz");
    if (!c)
      return tz_fail(err, TZ_E_JOB, "%s: required key missing ([f1, f2, f3, f4] in Hz)", cp);
    if (!cJSON_IsArray(c) || cJSON_GetArraySize(c) != 4)
      return tz_fail(err, TZ_E_JOB, "%s: expected an array of four frequencies [f1, f2, f3, "
                     "f4] in Hz, got %s", cp, json_doc_kind_name(c));
    int k = 0;
    for (const cJSON *f = c->child; f; f = f->next, k++) {
      char fp[208];
      snprintf(fp, sizeof fp, "%s[%d]", cp, k);
      if (json_doc_number(f, fp, 0, 1e6, &w[i].corners_hz[k], TZ_E_JOB, err))
        return err->status;
    }
  }
  *n = i;
  return TZ_OK;
}

static int parse_step(const cJSON *st, const char *jp, poststack_chain *c, tz_err *err)
{
  static const char *const names[] = { "bandpass", "fx_prediction", "balance", "agc" };
  static const char *const k_bp[] = { "step", "windows", "after_migration", NULL };
  static const char *const k_fx[] = { "step", "window_traces", "window_ms", "operator_traces",
                                      "prewhitening_pct", "min_hz", "max_hz",
                                      "after_migration", NULL };
  static const char *const k_bal[] = { "step", "from_ms", "to_ms", "target_rms",
                                       "after_migration", NULL };
  static const char *const k_agc[] = { "step", "window_ms", "measure", "after_migration", NULL };
  static const char *const mnames[] = { "rms", "mean_abs", NULL };
  static const int mvals[] = { CONDITION_AGC_RMS, CONDITION_AGC_MEAN_ABS };
  char kp[128];
  if (!cJSON_IsObject(st))
    return tz_fail(err, TZ_E_JOB, "%s: expected a step object ({\"step\": \"bandpass\", ...}), "
                   "got %s", jp, json_doc_kind_name(st));
  snprintf(kp, sizeof kp, "%s.step", jp);
  const cJSON *e = ITEM(st, "step");
  if (!e)
    return tz_fail(err, TZ_E_JOB, "%s: required key missing (\"bandpass\", \"fx_prediction\", "
                   "\"balance\" or \"agc\")", kp);
  const char *name;
  if (json_doc_string(e, kp, &name, TZ_E_JOB, err))
    return err->status;
  int kind = poststack_kind_parse(name);
  if (kind < 0) {
    const char *near = tz_nearest(name, names, 4, strlen(name) / 3 > 2 ? strlen(name) / 3 : 2);
    char safe[96];
    tz_escape(name, safe, sizeof safe);
    if (near)
      return tz_fail(err, TZ_E_JOB, "%s: unknown step \"%s\"; did you mean \"%s\"? (steps: "
                     "bandpass, fx_prediction, balance, agc)", kp, safe, near);
    return tz_fail(err, TZ_E_JOB, "%s: unknown step \"%s\" (steps: bandpass, fx_prediction, "
                   "balance, agc)", kp, safe);
  }
  const char *const *keys = kind == POSTSTACK_BANDPASS ? k_bp : kind == POSTSTACK_FX ? k_fx
                            : kind == POSTSTACK_BALANCE ? k_bal : k_agc;
  if (json_doc_check_keys(st, jp, keys, TZ_E_JOB, err))
    return err->status;
  int after = 0;
  snprintf(kp, sizeof kp, "%s.after_migration", jp);
  if ((e = ITEM(st, "after_migration")) && json_doc_bool(e, kp, &after, TZ_E_JOB, err))
    return err->status;
  tz_err why;
  tz_err_init(&why);
  int rc = TZ_OK;
  switch (kind) {
  case POSTSTACK_BANDPASS: {
    poststack_window w[POSTSTACK_MAX_WINDOWS];
    size_t n = 0;
    if (parse_windows(st, jp, w, &n, err))
      return err->status;
    rc = poststack_chain_add_bandpass(c, w, n, after, &why);
    break;
  }
  case POSTSTACK_FX: {
    size_t nx, op;
    double ms, pct, lo, hi;
    if (get_count(st, "window_traces", jp, 2, POSTSTACK_MAX_WINDOW_TRACES, 20, &nx, err) ||
        get_number(st, "window_ms", jp, 0, 1e-3, POSTSTACK_MAX_MS, 200, &ms, err) ||
        get_count(st, "operator_traces", jp, 1, POSTSTACK_MAX_OPERATOR, 4, &op, err) ||
        get_number(st, "prewhitening_pct", jp, 0, 0, 100, 1, &pct, err) ||
        get_number(st, "min_hz", jp, 0, 0, 1e6, 0, &lo, err) ||
        get_number(st, "max_hz", jp, 0, 0, 1e6, 0, &hi, err))
      return err->status;
    rc = poststack_chain_add_fx(c, nx, ms * 1e-3, op, pct, lo, hi, after, &why);
    break;
  }
  case POSTSTACK_BALANCE: {
    double from, to, target;
    if (get_number(st, "from_ms", jp, 1, -POSTSTACK_MAX_MS, POSTSTACK_MAX_MS, 0, &from, err) ||
        get_number(st, "to_ms", jp, 1, -POSTSTACK_MAX_MS, POSTSTACK_MAX_MS, 0, &to, err) ||
        get_number(st, "target_rms", jp, 0, 1e-30, 1e30, 1, &target, err))
      return err->status;
    rc = poststack_chain_add_balance(c, from * 1e-3, to * 1e-3, target, after, &why);
    break;
  }
  default: {
    double ms;
    int measure = CONDITION_AGC_RMS;
    if (get_number(st, "window_ms", jp, 1, 1e-3, POSTSTACK_MAX_MS, 0, &ms, err))
      return err->status;
    snprintf(kp, sizeof kp, "%s.measure", jp);
    if ((e = ITEM(st, "measure")) && json_doc_choice(e, kp, mnames, mvals, &measure, TZ_E_JOB, err))
      return err->status;
    rc = poststack_chain_add_agc(c, ms * 1e-3, measure, after, &why);
    break;
  }
  }
  return rc ? step_fail(err, jp, &why) : TZ_OK;
}

int job_parse_poststack(const cJSON *v, const char *root, poststack_chain *c, tz_err *err)
{
  poststack_chain_init(c, root);
  if (!cJSON_IsArray(v))
    return tz_fail(err, TZ_E_JOB, "%s: expected an array of post-stack steps, got %s", root,
                   json_doc_kind_name(v));
  size_t n = (size_t)cJSON_GetArraySize(v), i = 0;
  if (n > POSTSTACK_MAX_STEPS)
    return tz_fail(err, TZ_E_JOB, "%s: %zu steps, at most %d", root, n, POSTSTACK_MAX_STEPS);
  for (const cJSON *st = v->child; st; st = st->next, i++) {
    char jp[48];
    snprintf(jp, sizeof jp, "%s[%zu]", root, i);
    if (parse_step(st, jp, c, err))
      return err->status;
  }
  return TZ_OK;
}

int job_load_poststack(poststack_chain *c, const char *path, tz_err *err)
{
  char *text = NULL;
  size_t len = 0;
  poststack_chain_init(c, "$");
  int rc = fileio_read_all(path, JOB_MAX_BYTES, &text, &len, err);
  if (rc) {
    if (rc == TZ_E_IO || rc == TZ_E_CREATE)
      rc = err->status = TZ_E_NOINPUT;
    return tz_err_path(err, path);
  }
  cJSON *root = NULL;
  rc = json_doc_parse(&root, text, len, path, "steps file", TZ_E_FORMAT, err);
  free(text);
  if (rc)
    return tz_err_path(err, path);
  if (cJSON_IsObject(root)) {   /* {"poststack": [...]}: a job's array pasted as it is */
    static const char *const keys[] = { "poststack", NULL };
    const cJSON *a = ITEM(root, "poststack");
    if (json_doc_check_keys(root, "$", keys, TZ_E_JOB, err))
      rc = err->status;
    else if (!a)
      rc = tz_fail(err, TZ_E_JOB, "$.poststack: required key missing (the array of steps)");
    else
      rc = job_parse_poststack(a, "$.poststack", c, err);
  } else {
    rc = job_parse_poststack(root, "$", c, err);
  }
  cJSON_Delete(root);
  if (rc == TZ_E_JOB)
    err->status = TZ_E_FORMAT;   /* a bad input file: exit 65 as a bad job is */
  return rc ? tz_err_path(err, path) : TZ_OK;
}

cJSON *job_poststack_json(const poststack_chain *c)
{
  cJSON *a = cJSON_CreateArray();
  for (size_t i = 0; a && i < c->n; i++) {
    const poststack_step *s = &c->step[i];
    cJSON *o = cJSON_CreateObject();
    if (!o || !cJSON_AddItemToArray(a, o)) {
      cJSON_Delete(o);
      cJSON_Delete(a);
      return NULL;
    }
    cJSON_AddStringToObject(o, "step", poststack_kind_name(s->kind));
    switch (s->kind) {
    case POSTSTACK_BANDPASS: {
      cJSON *w = cJSON_AddArrayToObject(o, "windows");
      for (size_t k = 0; w && k < s->nwindows; k++) {
        cJSON *x = cJSON_CreateObject();
        if (!x || !cJSON_AddItemToArray(w, x)) {
          cJSON_Delete(x);
          break;
        }
        cJSON_AddNumberToObject(x, "from_ms", s->window[k].from_s * 1e3);
        cJSON_AddNumberToObject(x, "to_ms", s->window[k].to_s * 1e3);
        cJSON_AddItemToObject(x, "corners_hz", cJSON_CreateDoubleArray(s->window[k].corners_hz, 4));
      }
      break;
    }
    case POSTSTACK_FX:
      cJSON_AddNumberToObject(o, "window_traces", (double)s->window_traces);
      cJSON_AddNumberToObject(o, "window_ms", s->window_s * 1e3);
      cJSON_AddNumberToObject(o, "operator_traces", (double)s->operator_traces);
      cJSON_AddNumberToObject(o, "prewhitening_pct", s->prewhitening_pct);
      cJSON_AddNumberToObject(o, "min_hz", s->min_hz);
      if (s->max_hz > 0)   /* absent: Nyquist, as in the job file */
        cJSON_AddNumberToObject(o, "max_hz", s->max_hz);
      break;
    case POSTSTACK_BALANCE:
      cJSON_AddNumberToObject(o, "from_ms", s->from_s * 1e3);
      cJSON_AddNumberToObject(o, "to_ms", s->to_s * 1e3);
      cJSON_AddNumberToObject(o, "target_rms", s->target_rms);
      break;
    case POSTSTACK_AGC:
      cJSON_AddNumberToObject(o, "window_ms", s->window_s * 1e3);
      cJSON_AddStringToObject(o, "measure", condition_agc_measure_name(s->measure));
      break;
    }
    cJSON_AddBoolToObject(o, "after_migration", s->after_migration);
  }
  return a;
}
