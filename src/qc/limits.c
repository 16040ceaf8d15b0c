/* limits.c -- QC limits: the limits file, and the gate that measures a QC report against it.
 *
 * Parsing follows the job file's rules: unknown keys are refused with the
 * nearest known key suggested, every value is checked with a message naming
 * its JSON path. Checking reads only the tzero-qc/1 report (qc_int.h gives the
 * parsed tree), so `tzero report --check` and `tzero stack --check` judge the
 * same figures. Per-CMP limits look at the full-fold part of the line, which
 * the report gives from the acquisition layout (fold.full_fold_cmp_first..last)
 * together with the nominal fold: a dead cable section then shows as low fold
 * instead of lowering the nominal.
 *
 * Not here: printing and exit statuses (the front end), building the report (qc.c).
 */
#include "tzero/limits.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "qc/qc_int.h"
#include "tzero/fileio.h"
#include "util/json_doc.h"
#include "util/strbuf.h"

#define BY_OFFSET "max_muted_pct_by_offset"

/* What kind of value each key takes. */
enum kind { K_NUMBER, K_PCT, K_COUNT };

static const struct {
  const char *name;
  int kind;
} keys[LIMITS__COUNT] = {
  [LIMITS_MIN_NOMINAL_FOLD] = { "min_nominal_fold", K_NUMBER },
  [LIMITS_MIN_FOLD] = { "min_fold", K_NUMBER },
  [LIMITS_MIN_FOLD_PCT] = { "min_fold_pct", K_PCT },
  [LIMITS_MAX_ZERO_FOLD_CMPS] = { "max_zero_fold_cmps", K_COUNT },
  [LIMITS_MAX_LOW_FOLD_RUN_CMPS] = { "max_low_fold_run_cmps", K_COUNT },
  [LIMITS_MAX_MUTED_PCT] = { "max_muted_pct", K_PCT },
  [LIMITS_MAX_SKIPPED_TRACES_PCT] = { "max_skipped_traces_pct", K_PCT },
  [LIMITS_MAX_BAD_SAMPLES] = { "max_bad_samples", K_COUNT },
  [LIMITS_MAX_VELOCITY_WARNINGS] = { "max_velocity_warnings", K_COUNT },
  [LIMITS_MAX_OFF_LINE_M] = { "max_off_line_m", K_NUMBER },
  [LIMITS_MAX_KILLED_TRACES_PCT] = { "max_killed_traces_pct", K_PCT },
  [LIMITS_MAX_STATIC_MS] = { "max_static_ms", K_NUMBER },
  [LIMITS_MAX_RESIDUAL_STATIC_MS] = { "max_residual_static_ms", K_NUMBER },
};

const char *limits_key_name(int key)
{
  return key >= 0 && key < LIMITS__COUNT ? keys[key].name : "?";
}

void limits_init(limits_set *l)
{
  memset(l, 0, sizeof *l);
  for (int k = 0; k < LIMITS__COUNT; k++)
    l->value[k] = NAN;
}

void limits_clear(limits_set *l)
{
  free(l->bands);
  limits_init(l);
}

int limits_copy(limits_set *dst, const limits_set *src, tz_err *err)
{
  limits_init(dst);
  memcpy(dst->value, src->value, sizeof dst->value);
  dst->given = src->given;
  if (src->nbands) {
    if (!(dst->bands = malloc(src->nbands * sizeof *dst->bands)))
      return tz_fail(err, TZ_E_NOMEM, "limits");
    memcpy(dst->bands, src->bands, src->nbands * sizeof *dst->bands);
    dst->nbands = src->nbands;
  }
  return TZ_OK;
}

/* ---------------------------------------------------------------- parsing */

/* The known key nearest to `k` (json_doc_nearest over the limit names). */
static const char *nearest(const char *k)
{
  const char *names[LIMITS__COUNT + 1];
  for (int i = 0; i < LIMITS__COUNT; i++)
    names[i] = keys[i].name;
  names[LIMITS__COUNT] = BY_OFFSET;
  return json_doc_nearest(k, names, LIMITS__COUNT + 1);
}

static int parse_value(limits_set *l, int k, const cJSON *v, const char *jp, tz_err *err)
{
  const char *name = keys[k].name;
  if (!cJSON_IsNumber(v) || !isfinite(v->valuedouble))
    return tz_fail(err, TZ_E_JOB, "%s.%s: expected a number, got %s", jp, name, json_doc_kind_name(v));
  double x = v->valuedouble;
  if (x < 0)
    return tz_fail(err, TZ_E_JOB, "%s.%s: expected a value of 0 or more, got %g", jp, name, x);
  if (keys[k].kind == K_PCT && x > 100)
    return tz_fail(err, TZ_E_JOB, "%s.%s: expected a percentage from 0 to 100, got %g", jp,
                   name, x);
  if (keys[k].kind == K_COUNT && x != floor(x))
    return tz_fail(err, TZ_E_JOB, "%s.%s: expected a whole number, got %g", jp, name, x);
  l->value[k] = x;
  return TZ_OK;
}

static int parse_bands(limits_set *l, const cJSON *v, const char *jp, tz_err *err)
{
  if (!cJSON_IsArray(v))
    return tz_fail(err, TZ_E_JOB, "%s.%s: expected an array of [offset_from_m, offset_to_m, "
                   "pct], got %s", jp, BY_OFFSET, json_doc_kind_name(v));
  int n = cJSON_GetArraySize(v);
  if (n > (int)LIMITS_MAX_BANDS)
    return tz_fail(err, TZ_E_JOB, "%s.%s: %d entries, at most %u", jp, BY_OFFSET, n,
                   LIMITS_MAX_BANDS);
  if (n == 0)
    return TZ_OK;
  if (!(l->bands = calloc((size_t)n, sizeof *l->bands)))
    return tz_fail(err, TZ_E_NOMEM, "limits");
  int i = 0;
  for (const cJSON *e = v->child; e; e = e->next, i++) {
    if (!cJSON_IsArray(e) || cJSON_GetArraySize(e) != 3)
      return tz_fail(err, TZ_E_JOB, "%s.%s[%d]: expected [offset_from_m, offset_to_m, pct], "
                     "got %s", jp, BY_OFFSET, i, json_doc_kind_name(e));
    const cJSON *a = cJSON_GetArrayItem(e, 0), *b = cJSON_GetArrayItem(e, 1),
                *c = cJSON_GetArrayItem(e, 2);
    const char *what[3] = { "offset_from_m", "offset_to_m", "pct" };
    const cJSON *x[3] = { a, b, c };
    for (int q = 0; q < 3; q++) {
      if (q == 1 && cJSON_IsNull(x[q]))
        continue;   /* an open band: offsets from offset_from_m up */
      if (!cJSON_IsNumber(x[q]) || !isfinite(x[q]->valuedouble))
        return tz_fail(err, TZ_E_JOB, "%s.%s[%d][%d] (%s): expected a number, got %s", jp,
                       BY_OFFSET, i, q, what[q], json_doc_kind_name(x[q]));
      if (x[q]->valuedouble < 0)
        return tz_fail(err, TZ_E_JOB, "%s.%s[%d][%d] (%s): expected a value of 0 or more, "
                       "got %g", jp, BY_OFFSET, i, q, what[q], x[q]->valuedouble);
    }
    limits_band *bd = &l->bands[i];
    bd->offset_from_m = a->valuedouble;
    bd->offset_to_m = cJSON_IsNull(b) ? INFINITY : b->valuedouble;
    bd->pct = c->valuedouble;
    if (!(bd->offset_to_m > bd->offset_from_m))
      return tz_fail(err, TZ_E_JOB, "%s.%s[%d]: offset_to_m %g must be larger than "
                     "offset_from_m %g", jp, BY_OFFSET, i, bd->offset_to_m, bd->offset_from_m);
    if (bd->pct > 100)
      return tz_fail(err, TZ_E_JOB, "%s.%s[%d][2] (pct): expected a percentage from 0 to 100, "
                     "got %g", jp, BY_OFFSET, i, bd->pct);
    l->nbands++;
  }
  return TZ_OK;
}

static int parse_tree(limits_set *l, const cJSON *root, const char *jp, tz_err *err)
{
  if (!cJSON_IsObject(root))
    return tz_fail(err, TZ_E_JOB, "%s: expected an object of limits, got %s", jp,
                   json_doc_kind_name(root));
  for (const cJSON *c = root->child; c; c = c->next) {
    const char *k = c->string ? c->string : "";
    for (const cJSON *d = c->next; d; d = d->next)
      if (d->string && !strcmp(d->string, k))
        return tz_fail(err, TZ_E_JOB, "%s.%s: key given twice", jp, k);
    int rc = TZ_OK, found = 0;
    if (!strcmp(k, "description")) {
      if (!cJSON_IsString(c))
        return tz_fail(err, TZ_E_JOB, "%s.description: expected a string, got %s", jp,
                       json_doc_kind_name(c));
      continue;
    }
    if (!strcmp(k, BY_OFFSET)) {
      if ((rc = parse_bands(l, c, jp, err)))
        return rc;
      l->given = 1;
      continue;
    }
    for (int i = 0; i < LIMITS__COUNT && !found; i++)
      if (!strcmp(k, keys[i].name)) {
        found = 1;
        if ((rc = parse_value(l, i, c, jp, err)))
          return rc;
      }
    if (!found) {
      const char *best = nearest(k);
      if (best)
        return tz_fail(err, TZ_E_JOB, "%s.%s: unknown limit; did you mean \"%s\"?", jp, k, best);
      return tz_fail(err, TZ_E_JOB, "%s.%s: unknown limit", jp, k);
    }
    l->given = 1;
  }
  if (!isnan(l->value[LIMITS_MAX_LOW_FOLD_RUN_CMPS]) && isnan(l->value[LIMITS_MIN_FOLD]) &&
      isnan(l->value[LIMITS_MIN_FOLD_PCT]))
    return tz_fail(err, TZ_E_JOB, "%s.max_low_fold_run_cmps: needs min_fold or min_fold_pct "
                   "(the fold a low-fold run is below)", jp);
  return TZ_OK;
}

int limits_parse(limits_set *l, const char *text, size_t len, const char *name, const char *jpath,
                 tz_err *err)
{
  limits_init(l);
  cJSON *root = NULL;
  if (json_doc_parse(&root, text, len, name, "limits", TZ_E_JOB, err))
    return err->status;
  int rc = parse_tree(l, root, jpath ? jpath : "$", err);
  cJSON_Delete(root);
  if (rc) {
    limits_clear(l);
    tz_err_path(err, name);
  }
  return rc;
}

int limits_load(limits_set *l, const char *path, tz_err *err)
{
  char *text = NULL;
  size_t len = 0;
  limits_init(l);
  int rc = fileio_read_all(path, LIMITS_MAX_BYTES, &text, &len, err);
  if (rc)
    return tz_err_path(err, path);
  rc = limits_parse(l, text, len, path, "$", err);
  free(text);
  return rc;
}

static cJSON *tree(const limits_set *l)
{
  cJSON *o = cJSON_CreateObject();
  if (!o)
    return NULL;
  for (int k = 0; k < LIMITS__COUNT; k++)
    if (!isnan(l->value[k]))
      cJSON_AddNumberToObject(o, keys[k].name, l->value[k]);
  if (l->nbands) {
    cJSON *a = cJSON_AddArrayToObject(o, BY_OFFSET);
    for (size_t i = 0; a && i < l->nbands; i++) {
      cJSON *e = cJSON_CreateArray();
      if (!e)
        break;
      cJSON_AddItemToArray(e, cJSON_CreateNumber(l->bands[i].offset_from_m));
      cJSON_AddItemToArray(e, isfinite(l->bands[i].offset_to_m)
                                  ? cJSON_CreateNumber(l->bands[i].offset_to_m)
                                  : cJSON_CreateNull());
      cJSON_AddItemToArray(e, cJSON_CreateNumber(l->bands[i].pct));
      cJSON_AddItemToArray(a, e);
    }
  }
  return o;
}

int limits_to_json(const limits_set *l, char **out, tz_err *err)
{
  cJSON *o = tree(l);
  char *s = o ? cJSON_PrintUnformatted(o) : NULL;
  cJSON_Delete(o);
  if (!s)
    return tz_fail(err, TZ_E_NOMEM, "limits JSON");
  *out = s;
  return TZ_OK;
}

int limits_from_report(limits_set *l, const qc_report *r, tz_err *err)
{
  limits_init(l);
  const cJSON *lim = cJSON_GetObjectItemCaseSensitive(qc_report_root(r), "limits");
  if (!lim || cJSON_IsNull(lim)) {
    tz_err_path(err, qc_report_name(r));
    return tz_fail(err, TZ_E_FORMAT, "$.limits: the report records no limits (its job had "
                   "none): give a limits file");
  }
  int rc = parse_tree(l, lim, "$.limits", err);
  if (rc) {
    limits_clear(l);
    tz_err_path(err, qc_report_name(r));
    err->status = TZ_E_FORMAT;
    return TZ_E_FORMAT;
  }
  return TZ_OK;
}

/* ---------------------------------------------------------------- checking */

void limits_result_free(limits_result *res)
{
  if (!res)
    return;
  for (size_t i = 0; i < res->n; i++)
    free(res->o[i].ranges);
  free(res->o);
  free(res);
}

/* Path lookup "a.b.c"; NULL when absent. */
static const cJSON *at(const cJSON *o, const char *path)
{
  char key[64];
  while (o && *path) {
    const char *dot = strchr(path, '.');
    size_t n = dot ? (size_t)(dot - path) : strlen(path);
    if (n >= sizeof key)
      return NULL;
    memcpy(key, path, n);
    key[n] = '\0';
    o = cJSON_GetObjectItemCaseSensitive(o, key);
    path += n + (dot ? 1 : 0);
  }
  return o;
}

typedef struct ctx {
  const qc_report *r;
  const cJSON *R;
  tz_err *err;
} ctx;

/* A number the report must hold for a given limit. */
static int need(const ctx *c, const char *path, const char *limit, double *out)
{
  const cJSON *v = at(c->R, path);
  if (!cJSON_IsNumber(v)) {
    tz_err_path(c->err, qc_report_name(c->r));
    return tz_fail(c->err, TZ_E_FORMAT, "$.%s: %s for %s (a report from an older tzero? "
                   "stack the line again)", path, v ? "expected a number" : "missing", limit);
  }
  *out = v->valuedouble;
  return TZ_OK;
}

/* Adds CMP `cmp` to the ranges of o (ascending CMPs). */
static int add_cmp(limits_outcome *o, size_t *cap, int32_t cmp)
{
  if (o->nranges && o->ranges[o->nranges - 1].last + 1 == cmp) {
    o->ranges[o->nranges - 1].last = cmp;
    return TZ_OK;
  }
  if (o->nranges == *cap) {
    size_t nc = *cap ? *cap * 2 : 8;
    limits_range *r = realloc(o->ranges, nc * sizeof *r);
    if (!r)
      return TZ_E_NOMEM;
    o->ranges = r;
    *cap = nc;
  }
  o->ranges[o->nranges].first = o->ranges[o->nranges].last = cmp;
  o->nranges++;
  return TZ_OK;
}

/* The CMP array and the full-fold part [*ff0, *ff1] (*has = 0 when the
 * acquisition never reaches the nominal fold). */
static int full_fold_part(const ctx *c, const char *limit, double *ff0, double *ff1, int *has)
{
  const cJSON *a = at(c->R, "fold.full_fold_cmp_first"), *b = at(c->R, "fold.full_fold_cmp_last");
  if (cJSON_IsNull(a) && cJSON_IsNull(b)) {
    *has = 0;
    return TZ_OK;
  }
  int rc = need(c, "fold.full_fold_cmp_first", limit, ff0);
  if (!rc)
    rc = need(c, "fold.full_fold_cmp_last", limit, ff1);
  *has = !rc;
  return rc;
}

/* Per-CMP limits over the full-fold part: fold below `thr` breaks. Fills
 * the minimum fold in *minfold, the ranges below thr in o, and the longest
 * run below thr in *longest. */
static int scan_fold(const ctx *c, const char *limit, double thr, limits_outcome *o,
                     double *minfold, double *longest)
{
  double ff0 = 0, ff1 = -1;
  int has = 0, rc = full_fold_part(c, limit, &ff0, &ff1, &has);
  if (rc)
    return rc;
  *minfold = NAN;
  *longest = 0;
  size_t cap = 0, run = 0;
  const cJSON *cm = at(c->R, "cmps");
  for (const cJSON *x = has && cm ? cm->child : NULL; x; x = x->next) {
    double cmp = cJSON_GetObjectItemCaseSensitive(x, "cmp")->valuedouble;
    double fold = cJSON_GetObjectItemCaseSensitive(x, "fold")->valuedouble;
    if (cmp < ff0 || cmp > ff1)
      continue;
    if (isnan(*minfold) || fold < *minfold)
      *minfold = fold;
    if (fold < thr) {
      run++;
      if ((double)run > *longest)
        *longest = (double)run;
      if (o && add_cmp(o, &cap, (int32_t)cmp))
        return tz_fail(c->err, TZ_E_NOMEM, "limit ranges");
    } else {
      run = 0;
    }
  }
  return TZ_OK;
}

/* Keeps only the ranges longer than `n` CMPs. */
static void keep_runs_over(limits_outcome *o, double n)
{
  size_t k = 0;
  for (size_t i = 0; i < o->nranges; i++)
    if ((double)o->ranges[i].last - o->ranges[i].first + 1 > n)
      o->ranges[k++] = o->ranges[i];
  o->nranges = k;
}

/* The low-fold threshold: min_fold, else min_fold_pct of the nominal fold. */
static double low_fold_threshold(const limits_set *l, double nominal)
{
  double a = l->value[LIMITS_MIN_FOLD], b = l->value[LIMITS_MIN_FOLD_PCT];
  if (!isnan(a))
    return a;
  return b / 100.0 * nominal;
}

/* Muted percentage of the offset classes whose centre lies in the band. */
static double band_muted_pct(const cJSON *R, const limits_band *bd, double *traces)
{
  double width = 0, sum = 0, n = 0;
  const cJSON *w = at(R, "mute.offset_class_m");
  if (cJSON_IsNumber(w))
    width = w->valuedouble;
  const cJSON *bo = at(R, "mute.by_offset");
  for (const cJSON *x = bo ? bo->child : NULL; x; x = x->next) {
    const cJSON *f = cJSON_GetObjectItemCaseSensitive(x, "offset_from_m");
    const cJSON *t = cJSON_GetObjectItemCaseSensitive(x, "offset_to_m");
    const cJSON *tr = cJSON_GetObjectItemCaseSensitive(x, "traces");
    const cJSON *mf = cJSON_GetObjectItemCaseSensitive(x, "muted_fraction");
    if (!cJSON_IsNumber(f) || !cJSON_IsNumber(tr) || !cJSON_IsNumber(mf))
      continue;
    double to = cJSON_IsNumber(t) ? t->valuedouble : f->valuedouble + width;
    double mid = 0.5 * (f->valuedouble + to);
    if (mid < bd->offset_from_m || mid >= bd->offset_to_m)
      continue;
    sum += mf->valuedouble * tr->valuedouble;
    n += tr->valuedouble;
  }
  *traces = n;
  return n > 0 ? 100.0 * sum / n : NAN;
}

/* Sum of a number or of an object's numbers ("traces.killed" by reason). */
static int sum_of(const cJSON *v, double *out)
{
  if (cJSON_IsNumber(v)) {
    *out = v->valuedouble;
    return 1;
  }
  if (!cJSON_IsObject(v))
    return 0;
  double s = 0;
  for (const cJSON *x = v->child; x; x = x->next)
    if (cJSON_IsNumber(x))
      s += x->valuedouble;
  *out = s;
  return 1;
}

/* Largest |value| among the numbers found at `paths` (NULL-terminated) inside
 * object o; 0 when none is there. */
static int largest_abs(const cJSON *o, const char *const *paths, double *out)
{
  int any = 0;
  double m = 0;
  for (size_t i = 0; paths[i]; i++) {
    const cJSON *v = at(o, paths[i]);
    if (cJSON_IsNumber(v) && isfinite(v->valuedouble)) {
      m = fmax(m, fabs(v->valuedouble));
      any = 1;
    }
  }
  *out = m;
  return any;
}

/* Largest |key| over the statics' source and receiver stations; 0 when no
 * station has it. */
static int stations_largest(const cJSON *statics, const char *key, double *out)
{
  static const char *const lists[] = { "sources", "receivers" };
  int any = 0;
  double m = 0;
  for (int i = 0; i < 2; i++) {
    const cJSON *a = cJSON_GetObjectItemCaseSensitive(statics, lists[i]);
    for (const cJSON *x = cJSON_IsArray(a) ? a->child : NULL; x; x = x->next) {
      const cJSON *v = cJSON_GetObjectItemCaseSensitive(x, key);
      if (cJSON_IsNumber(v) && isfinite(v->valuedouble)) {
        m = fmax(m, fabs(v->valuedouble));
        any = 1;
      }
    }
  }
  *out = m;
  return any;
}

static int measure(const ctx *c, const limits_set *l, int k, limits_outcome *o)
{
  const cJSON *R = c->R;
  const char *name = keys[k].name;
  double limit = l->value[k], v = NAN, nominal = 0;
  int rc = TZ_OK;
  size_t cap = 0;
  o->applies = 1;
  switch (k) {
  case LIMITS_MIN_NOMINAL_FOLD:
    rc = need(c, "fold.nominal", name, &v);
    o->held = !rc && v >= limit;
    break;
  case LIMITS_MIN_FOLD: {
    double longest;
    rc = scan_fold(c, name, limit, o, &v, &longest);
    o->held = !rc && !isnan(v) && v >= limit;
    if (!rc && isnan(v))
      o->note = "no CMP of the line reaches the nominal fold of the acquisition";
    break;
  }
  case LIMITS_MIN_FOLD_PCT: {
    double longest, minf;
    if ((rc = need(c, "fold.nominal", name, &nominal)))
      break;
    if (!(nominal > 0)) {
      o->held = 0;
      o->note = "the nominal fold is unknown (0)";
      break;
    }
    rc = scan_fold(c, name, limit / 100.0 * nominal, o, &minf, &longest);
    v = 100.0 * minf / nominal;
    o->held = !rc && !isnan(v) && minf >= limit / 100.0 * nominal;
    if (!rc && isnan(v))
      o->note = "no CMP of the line reaches the nominal fold of the acquisition";
    break;
  }
  case LIMITS_MAX_ZERO_FOLD_CMPS: {
    const cJSON *cm = at(R, "cmps");
    v = 0;
    for (const cJSON *x = cm ? cm->child : NULL; x && !rc; x = x->next)
      if (cJSON_GetObjectItemCaseSensitive(x, "fold")->valuedouble == 0) {
        v++;
        if (add_cmp(o, &cap, (int32_t)cJSON_GetObjectItemCaseSensitive(x, "cmp")->valuedouble))
          rc = tz_fail(c->err, TZ_E_NOMEM, "limit ranges");
      }
    o->held = v <= limit;
    if (o->held)
      o->nranges = 0;
    break;
  }
  case LIMITS_MAX_LOW_FOLD_RUN_CMPS: {
    double minf;
    if ((rc = need(c, "fold.nominal", name, &nominal)))
      break;
    rc = scan_fold(c, name, low_fold_threshold(l, nominal), o, &minf, &v);
    keep_runs_over(o, limit);
    o->held = !rc && v <= limit;
    break;
  }
  case LIMITS_MAX_MUTED_PCT:
    rc = need(c, "mute.muted_fraction", name, &v);
    v *= 100.0;
    o->held = !rc && v <= limit;
    break;
  case LIMITS_MAX_SKIPPED_TRACES_PCT: {
    double read = 0, sk = 0;
    if ((rc = need(c, "traces.read", name, &read)) ||
        (rc = need(c, "traces.skipped_total", name, &sk)))
      break;
    v = read > 0 ? 100.0 * sk / read : 0;
    o->held = v <= limit;
    break;
  }
  case LIMITS_MAX_BAD_SAMPLES:
    rc = need(c, "traces.bad_samples", name, &v);
    o->held = !rc && v <= limit;
    break;
  case LIMITS_MAX_VELOCITY_WARNINGS: {
    const cJSON *w = at(R, "velocity.warnings");
    if (!cJSON_IsArray(w)) {
      tz_err_path(c->err, qc_report_name(c->r));
      rc = tz_fail(c->err, TZ_E_FORMAT, "$.velocity.warnings: expected an array for %s", name);
      break;
    }
    v = cJSON_GetArraySize(w);
    o->held = v <= limit;
    break;
  }
  case LIMITS_MAX_OFF_LINE_M:
    rc = need(c, "geometry.line.largest_off_line_m", name, &v);
    o->held = !rc && v <= limit;
    break;
  case LIMITS_MAX_KILLED_TRACES_PCT: {
    double read = 0, killed = 0;
    if (!sum_of(at(R, "traces.killed"), &killed)) {
      o->applies = 0;
      o->held = 1;
      o->note = "no edits in this report";
      break;
    }
    if ((rc = need(c, "traces.read", name, &read)))
      break;
    v = read > 0 ? 100.0 * killed / read : 0;
    o->held = v <= limit;
    break;
  }
  case LIMITS_MAX_STATIC_MS: {
    /* the applied totals (source + receiver static of every trace shifted) */
    static const char *const paths[] = { "applied.min_ms", "applied.max_ms", NULL };
    const cJSON *s = at(R, "statics");
    if (!cJSON_IsObject(s) || !largest_abs(s, paths, &v)) {
      o->applies = 0;
      o->held = 1;
      o->note = "no statics in this report";
      v = NAN;
      break;
    }
    o->held = v <= limit;
    break;
  }
  case LIMITS_MAX_RESIDUAL_STATIC_MS: {
    /* residual statics: a "residual" summary, else each station's residual_ms */
    static const char *const paths[] = { "residual.min_ms", "residual.max_ms", NULL };
    const cJSON *s = at(R, "statics");
    int any = cJSON_IsObject(s) && largest_abs(s, paths, &v);
    if (cJSON_IsObject(s) && !any)
      any = stations_largest(s, "residual_ms", &v);
    if (!any) {
      o->applies = 0;
      o->held = 1;
      o->note = "no residual statics in this report";
      v = NAN;
      break;
    }
    o->held = v <= limit;
    break;
  }
  default:
    break;
  }
  o->value = v;
  if (o->held && k != LIMITS_MAX_LOW_FOLD_RUN_CMPS) {
    free(o->ranges);
    o->ranges = NULL;
    o->nranges = 0;
  }
  return rc;
}

static void measure_band(const cJSON *R, const limits_band *bd, limits_outcome *o)
{
  double traces = 0;
  o->name = BY_OFFSET;
  o->limit = bd->pct;
  o->offset_from_m = bd->offset_from_m;
  o->offset_to_m = bd->offset_to_m;
  o->value = band_muted_pct(R, bd, &traces);
  o->applies = traces > 0;
  o->held = !o->applies || o->value <= bd->pct;
  if (!o->applies)
    o->note = "no stacked trace at these offsets";
}

int limits_check(const limits_set *l, const qc_report *r, limits_result **out, tz_err *err)
{
  limits_result *res = calloc(1, sizeof *res);
  size_t want = l->nbands;
  for (int k = 0; k < LIMITS__COUNT; k++)
    want += !isnan(l->value[k]);
  if (!res || !(res->o = calloc(want ? want : 1, sizeof *res->o))) {
    free(res);
    return tz_fail(err, TZ_E_NOMEM, "limit outcomes");
  }
  ctx c = { .r = r, .R = qc_report_root(r), .err = err };
  int rc = TZ_OK;
  for (int k = 0; k < LIMITS__COUNT && !rc; k++) {
    if (!isnan(l->value[k])) {
      limits_outcome *o = &res->o[res->n++];
      o->name = keys[k].name;
      o->limit = l->value[k];
      o->offset_from_m = o->offset_to_m = NAN;
      rc = measure(&c, l, k, o);
    }
    if (k == LIMITS_MAX_MUTED_PCT)   /* the by-offset entries follow the overall one */
      for (size_t i = 0; i < l->nbands; i++)
        measure_band(c.R, &l->bands[i], &res->o[res->n++]);
  }
  if (rc) {
    limits_result_free(res);
    return rc;
  }
  for (size_t i = 0; i < res->n; i++)
    res->broken += !res->o[i].held;
  *out = res;
  return TZ_OK;
}

/* ---------------------------------------------------------------- text */

static void put_ranges(tz_buf *b, const limits_outcome *o)
{
  for (size_t i = 0; i < o->nranges; i++) {
    const limits_range *r = &o->ranges[i];
    if (r->first == r->last)
      tz_buf_put(b, "%s%d", i ? ", " : "CMP ", r->first);
    else
      tz_buf_put(b, "%s%d-%d", i ? ", " : "CMP ", r->first, r->last);
  }
}

static void put_name(tz_buf *b, const limits_outcome *o, int width)
{
  char nm[96];
  if (!isnan(o->offset_from_m)) {
    if (isfinite(o->offset_to_m))
      snprintf(nm, sizeof nm, "%s %g-%g m", o->name, o->offset_from_m, o->offset_to_m);
    else
      snprintf(nm, sizeof nm, "%s %g m and up", o->name, o->offset_from_m);
  } else {
    snprintf(nm, sizeof nm, "%s", o->name);
  }
  tz_buf_put(b, "%-*s", width, nm);
}

int limits_result_text(const limits_result *res, char **text, tz_err *err)
{
  tz_buf b = { 0 };
  for (size_t i = 0; i < res->n; i++) {
    const limits_outcome *o = &res->o[i];
    put_name(&b, o, 38);
    tz_buf_put(&b, " limit %-8g value ", o->limit);
    if (isnan(o->value))
      tz_buf_put(&b, "%-9s", "-");
    else
      tz_buf_put(&b, "%-9.4g", o->value);
    tz_buf_put(&b, " %s", !o->applies ? "n/a" : o->held ? "held" : "broken");
    if (o->nranges) {
      tz_buf_put(&b, "  ");
      put_ranges(&b, o);
    }
    if (o->note)
      tz_buf_put(&b, "  (%s)", o->note);
    tz_buf_put(&b, "\n");
  }
  return tz_buf_finish(&b, text, "limit text", err);
}

int limits_result_brief(const limits_result *res, char **text, tz_err *err)
{
  tz_buf b = { 0 };
  int first = 1;
  for (size_t i = 0; i < res->n; i++) {
    const limits_outcome *o = &res->o[i];
    if (o->held)
      continue;
    tz_buf_put(&b, "%s", first ? "" : ", ");
    put_name(&b, o, 0);
    if (o->nranges) {
      tz_buf_put(&b, " (");
      put_ranges(&b, o);
      tz_buf_put(&b, ")");
    }
    first = 0;
  }
  return tz_buf_finish(&b, text, "limit text", err);
}

static cJSON *num_or_null(double v)
{
  return isfinite(v) ? cJSON_CreateNumber(v) : cJSON_CreateNull();
}

int limits_result_json(const limits_result *res, char **text, tz_err *err)
{
  cJSON *a = cJSON_CreateArray();
  for (size_t i = 0; a && i < res->n; i++) {
    const limits_outcome *o = &res->o[i];
    cJSON *x = cJSON_CreateObject();
    if (!x)
      break;
    cJSON_AddStringToObject(x, "name", o->name);
    cJSON_AddNumberToObject(x, "limit", o->limit);
    cJSON_AddItemToObject(x, "value", num_or_null(o->value));
    cJSON_AddBoolToObject(x, "held", o->held);
    cJSON_AddBoolToObject(x, "applies", o->applies);
    cJSON *rs = cJSON_AddArrayToObject(x, "cmp_ranges");
    for (size_t k = 0; rs && k < o->nranges; k++) {
      cJSON *p = cJSON_CreateArray();
      cJSON_AddItemToArray(p, cJSON_CreateNumber(o->ranges[k].first));
      cJSON_AddItemToArray(p, cJSON_CreateNumber(o->ranges[k].last));
      cJSON_AddItemToArray(rs, p);
    }
    if (!isnan(o->offset_from_m)) {
      cJSON_AddNumberToObject(x, "offset_from_m", o->offset_from_m);
      cJSON_AddItemToObject(x, "offset_to_m", num_or_null(o->offset_to_m));
    }
    if (o->note)
      cJSON_AddStringToObject(x, "note", o->note);
    cJSON_AddItemToArray(a, x);
  }
  char *s = a ? cJSON_Print(a) : NULL;
  cJSON_Delete(a);
  if (!s)
    return tz_fail(err, TZ_E_NOMEM, "limit JSON");
  *text = s;
  return TZ_OK;
}
