/* job.c -- the job file: JSON in, a checked and resolved job_spec out.
 *
 * The document is read with the library's JSON helper (util/json_doc.h: line
 * and byte of a syntax fault, duplicate keys and deep nesting refused); this
 * file walks the tree object by object, checks each object's keys against a
 * fixed list (an unknown key is reported with the nearest known key),
 * converts every value with a message naming its JSON path, fills the
 * defaults and frees the tree. Shot patterns are expanded by fileio_glob
 * (bounded in matches, folder entries read and wildcard levels; each pattern's
 * matches sorted, patterns kept in the order written) relative to the job
 * file's folder; a file reached twice (two patterns, two spellings, a linked
 * folder) is kept once, judged by device and inode.
 *
 * Not here: what the values mean to geometry, NMO or stacking (src/stack/),
 * and reading the files they name (velocity.c, geometry.c, src/io/segy_*.c).
 */
#include "tzero/job.h"

#include <cjson/cJSON.h>
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "tzero/fileio.h"
#include "job/job_int.h"
#include "util/json_doc.h"
#include "job/job_poststack.h"

#define PATHBUF 640

/* ---------------------------------------------------------------- helpers */

const char *job_interp_name(int interp)
{
  return interp == JOB_INTERP_SINC8 ? "sinc8" : "linear";
}

static char *dupstr(const char *s)
{
  return s ? strdup(s) : NULL;
}

static int need_file(const char *path, const char *jpath, tz_err *err);

/* dir + "/" + rel, unless rel is absolute or dir is empty; tidied for messages
 * and the report ("demo/tarrowvane/../out/x" is "demo/out/x"). */
static char *resolve(const char *dir, const char *rel)
{
  return fileio_path_join(dir, rel);
}

char *job_path_resolve(const char *dir, const char *rel)
{
  return resolve(dir, rel);
}

int job_need_file(const char *path, const char *jpath, tz_err *err)
{
  return need_file(path, jpath, err);
}

static int need_file(const char *path, const char *jpath, tz_err *err)
{
  struct stat st;
  if (stat(path, &st) != 0) {
    int e = errno;
    tz_fail_os(err, TZ_E_NOINPUT, e, "%s: cannot open '%s'", jpath, path);
    return TZ_E_NOINPUT;
  }
  if (S_ISDIR(st.st_mode))
    return tz_fail(err, TZ_E_NOINPUT, "%s: '%s' is a folder, expected a file", jpath, path);
  if (!S_ISREG(st.st_mode))   /* a named pipe would block the run when opened */
    return tz_fail(err, TZ_E_NOINPUT, "%s: '%s' is not a regular file", jpath, path);
  return TZ_OK;
}

/* A string member resolved against dir, checked to exist when `must_exist`. */
static int get_path(const cJSON *v, const char *jpath, const char *dir, int must_exist,
                    char **out, tz_err *err)
{
  const char *s;
  int rc = json_doc_string(v, jpath, &s, TZ_E_JOB, err);
  if (rc)
    return rc;
  char *p = resolve(dir, s);
  if (!p)
    return tz_fail(err, TZ_E_NOMEM, "job path");
  if (must_exist && (rc = need_file(p, jpath, err))) {
    free(p);
    return rc;
  }
  free(*out);
  *out = p;
  return TZ_OK;
}

/* ---------------------------------------------------------------- sections */

static int add_shot(job_spec *j, const char *path, size_t *cap, tz_err *err)
{
  if (j->nshots >= JOB_MAX_SHOTS)
    return tz_fail(err, TZ_E_JOB, "$.shots: more than %u files", JOB_MAX_SHOTS);
  if (j->nshots == *cap) {
    size_t nc = *cap ? *cap * 2 : 64;
    char **ns = realloc(j->shots, nc * sizeof *ns);
    if (!ns)
      return tz_fail(err, TZ_E_NOMEM, "shot list");
    j->shots = ns;
    *cap = nc;
  }
  if (!(j->shots[j->nshots] = strdup(path)))
    return tz_fail(err, TZ_E_NOMEM, "shot list");
  j->nshots++;
  return TZ_OK;
}

typedef struct shot_key {
  const char *path;
  dev_t dev;
  ino_t ino;
  int known;   /* dev and ino are valid (stat succeeded) */
  size_t idx;
} shot_key;

static int cmp_shot_key(const void *a, const void *b)
{
  const shot_key *x = a, *y = b;
  if (x->known != y->known)
    return x->known - y->known;
  int c = x->known ? (x->dev > y->dev) - (x->dev < y->dev) : strcmp(x->path, y->path);
  if (!c && x->known)
    c = (x->ino > y->ino) - (x->ino < y->ino);
  return c ? c : (x->idx > y->idx) - (x->idx < y->idx);
}

static int same_shot(const shot_key *x, const shot_key *y)
{
  if (x->known != y->known)
    return 0;
  return x->known ? x->dev == y->dev && x->ino == y->ino : !strcmp(x->path, y->path);
}

/* A file reached by several patterns or spellings (a pattern and "./sv/a.sgy",
 * or through a linked folder) is kept once, at its first place: sort keys of
 * (device, inode, index), drop all but the first of each file, compact. */
static int dedupe_shots(job_spec *j, tz_err *err)
{
  size_t n = j->nshots;
  if (n < 2)
    return TZ_OK;
  shot_key *k = malloc(n * sizeof *k);
  unsigned char *drop = calloc(n, 1);
  if (!k || !drop) {
    free(k);
    free(drop);
    return tz_fail(err, TZ_E_NOMEM, "shot list");
  }
  for (size_t i = 0; i < n; i++) {
    struct stat st;
    k[i].path = j->shots[i];
    k[i].idx = i;
    k[i].known = stat(j->shots[i], &st) == 0;
    k[i].dev = k[i].known ? st.st_dev : 0;
    k[i].ino = k[i].known ? st.st_ino : 0;
  }
  qsort(k, n, sizeof *k, cmp_shot_key);
  for (size_t i = 1; i < n; i++)
    if (same_shot(&k[i], &k[i - 1]))
      drop[k[i].idx] = 1;
  size_t m = 0;
  for (size_t i = 0; i < n; i++) {
    if (drop[i])
      free(j->shots[i]);
    else
      j->shots[m++] = j->shots[i];
  }
  j->nshots = m;
  free(k);
  free(drop);
  return TZ_OK;
}

static int parse_shots(job_spec *j, const cJSON *v, const char *dir, tz_err *err)
{
  if (cJSON_IsString(v)) {
    /* a single pattern is accepted as a one-element list */
  } else if (!cJSON_IsArray(v)) {
    return tz_fail(err, TZ_E_JOB, "$.shots: expected an array of file patterns, got %s",
                 json_doc_kind_name(v));
  }
  size_t n = cJSON_IsArray(v) ? (size_t)cJSON_GetArraySize(v) : 1;
  if (n == 0)
    return tz_fail(err, TZ_E_JOB, "$.shots: expected at least one file pattern");
  j->patterns = calloc(n, sizeof *j->patterns);
  if (!j->patterns)
    return tz_fail(err, TZ_E_NOMEM, "shot patterns");
  size_t cap = 0;
  for (size_t i = 0; i < n; i++) {
    const cJSON *e = cJSON_IsArray(v) ? cJSON_GetArrayItem(v, (int)i) : v;
    char jp[64];
    snprintf(jp, sizeof jp, "$.shots[%zu]", i);
    const char *pat;
    int rc = json_doc_string(e, jp, &pat, TZ_E_JOB, err);
    if (rc)
      return rc;
    if (!(j->patterns[i] = strdup(pat)))
      return tz_fail(err, TZ_E_NOMEM, "shot patterns");
    j->npatterns = i + 1;
    char *full = resolve(dir, pat);
    if (!full)
      return tz_fail(err, TZ_E_NOMEM, "shot pattern");
    char **paths = NULL;
    size_t np = 0;
    tz_err ge;
    tz_err_init(&ge);
    if ((rc = fileio_glob(full, NULL, &paths, &np, &ge))) {
      rc = tz_fail(err, rc, "%s: %s", jp, ge.msg);
      free(full);
      return rc;
    }
    if (np == 0) {
      fileio_glob_free(paths, np);
      rc = tz_fail(err, TZ_E_NOINPUT, "%s: pattern '%s' matches no file", jp, full);
      free(full);
      return rc;
    }
    free(full);
    size_t added = 0;
    for (size_t k = 0; k < np && !rc; k++) {
      struct stat st;
      if (stat(paths[k], &st) == 0 && S_ISDIR(st.st_mode))
        continue;
      /* a named pipe matched would block the header pass: refused now */
      tz_err fe;
      tz_err_init(&fe);
      if (fileio_check_input(paths[k], &fe)) {
        rc = tz_fail_os(err, fe.status, fe.oserr, "%s: '%s' %s", jp, paths[k], fe.msg);
        break;
      }
      rc = add_shot(j, paths[k], &cap, err);
      added++;
    }
    fileio_glob_free(paths, np);
    if (rc)
      return rc;
    if (!added)
      return tz_fail(err, TZ_E_NOINPUT, "%s: pattern '%s' matches only folders", jp, pat);
  }
  return dedupe_shots(j, err);
}

static int parse_geometry(job_spec *j, const cJSON *v, const char *dir, tz_err *err)
{
  if (cJSON_IsString(v)) {
    if (strcmp(v->valuestring, "headers"))
      return tz_fail(err, TZ_E_JOB,
                   "$.geometry: expected \"headers\", {\"layout\": FILE}, {\"table\": FILE} or "
                   "{\"sps\": {...}}, got \"%s\"", v->valuestring);
    j->geometry = JOB_GEOMETRY_HEADERS;
    return TZ_OK;
  }
  if (!cJSON_IsObject(v))
    return tz_fail(err, TZ_E_JOB,
                 "$.geometry: expected \"headers\", {\"layout\": FILE}, {\"table\": FILE} or "
                 "{\"sps\": {...}}, got %s", json_doc_kind_name(v));
  static const char *const keys[] = { "layout", "table", "sps", NULL };
  int rc = json_doc_check_keys(v, "$.geometry", keys, TZ_E_JOB, err);
  if (rc)
    return rc;
  const cJSON *sps = cJSON_GetObjectItemCaseSensitive(v, "sps");
  if (sps && cJSON_GetArraySize(v) > 1)
    return tz_fail(err, TZ_E_JOB, "$.geometry: \"sps\" goes alone (not with \"layout\" or "
                   "\"table\")");
  if (sps)
    return job_sps_parse(j, sps, dir, err);
  const cJSON *lay = cJSON_GetObjectItemCaseSensitive(v, "layout");
  const cJSON *tab = cJSON_GetObjectItemCaseSensitive(v, "table");
  if ((lay && tab) || (!lay && !tab))
    return tz_fail(err, TZ_E_JOB, "$.geometry: expected exactly one of \"layout\", \"table\" "
                   "or \"sps\"");
  j->geometry = lay ? JOB_GEOMETRY_LAYOUT : JOB_GEOMETRY_TABLE;
  return get_path(lay ? lay : tab, lay ? "$.geometry.layout" : "$.geometry.table", dir, 1,
                  &j->geometry_file, err);
}

static int want_object(const cJSON *v, const char *path, tz_err *err)
{
  if (!cJSON_IsObject(v))
    return tz_fail(err, TZ_E_JOB, "%s: expected an object, got %s", path, json_doc_kind_name(v));
  return TZ_OK;
}

#define ITEM(obj, key) cJSON_GetObjectItemCaseSensitive((obj), (key))

static int parse_bins(job_spec *j, const cJSON *v, const char *dir, tz_err *err)
{
  static const char *const keys[] = { "size_m", "origin_x_m", "origin_y_m", "azimuth_deg",
                                      "first_cmp", "max_distance_m", "crooked", NULL };
  int rc = want_object(v, "$.bins", err);
  if (!rc)
    rc = json_doc_check_keys(v, "$.bins", keys, TZ_E_JOB, err);
  if (rc)
    return rc;
  job_bins *b = &j->bins;
  const cJSON *e;
  if ((e = ITEM(v, "size_m"))) {
    if ((rc = json_doc_number(e, "$.bins.size_m", 1e-3, 1e5, &b->size_m, TZ_E_JOB, err)))
      return rc;
    b->has_size = 1;
  }
  const cJSON *ox = ITEM(v, "origin_x_m"), *oy = ITEM(v, "origin_y_m");
  if (ox || oy) {
    if (!ox || !oy)
      return tz_fail(err, TZ_E_JOB, "$.bins: origin_x_m and origin_y_m go together");
    if ((rc = json_doc_number(ox, "$.bins.origin_x_m", -1e12, 1e12, &b->origin_x_m, TZ_E_JOB, err)) ||
        (rc = json_doc_number(oy, "$.bins.origin_y_m", -1e12, 1e12, &b->origin_y_m, TZ_E_JOB, err)))
      return rc;
    b->has_origin = 1;
  }
  if ((e = ITEM(v, "azimuth_deg"))) {
    if ((rc = json_doc_number(e, "$.bins.azimuth_deg", -360, 360, &b->azimuth_deg, TZ_E_JOB, err)))
      return rc;
    b->has_azimuth = 1;
  }
  if (b->has_origin != b->has_azimuth)
    return tz_fail(err, TZ_E_JOB,
                 "$.bins: origin_x_m, origin_y_m and azimuth_deg define the line together; "
                 "give all three or none");
  if ((e = ITEM(v, "first_cmp")) &&
      (rc = json_doc_int(e, "$.bins.first_cmp", -1000000000, 1000000000, &b->first_cmp, TZ_E_JOB, err)))
    return rc;
  if ((e = ITEM(v, "max_distance_m")) &&
      (rc = json_doc_number(e, "$.bins.max_distance_m", 0, 1e9, &b->max_distance_m, TZ_E_JOB, err)))
    return rc;
  if ((e = ITEM(v, "crooked")))
    return job_crooked_parse(j, e, dir, err);
  return TZ_OK;
}

static int parse_moveout(job_spec *j, const cJSON *v, tz_err *err)
{
  static const char *const keys[] = { "stretch_limit_pct", "interpolation", "fourth_order",
                                      "stretch_taper_ms", NULL };
  static const char *const inames[] = { "linear", "sinc8", NULL };
  static const int ivals[] = { JOB_INTERP_LINEAR, JOB_INTERP_SINC8 };
  int rc = want_object(v, "$.moveout", err);
  if (!rc)
    rc = json_doc_check_keys(v, "$.moveout", keys, TZ_E_JOB, err);
  if (rc)
    return rc;
  const cJSON *e;
  if ((e = ITEM(v, "stretch_limit_pct")) &&
      (rc = json_doc_number(e, "$.moveout.stretch_limit_pct", 0, 1000, &j->stretch_limit_pct, TZ_E_JOB, err)))
    return rc;
  if ((e = ITEM(v, "interpolation")) &&
      (rc = json_doc_choice(e, "$.moveout.interpolation", inames, ivals, &j->interpolation, TZ_E_JOB, err)))
    return rc;
  if ((e = ITEM(v, "fourth_order")) &&
      (rc = json_doc_bool(e, "$.moveout.fourth_order", &j->fourth_order, TZ_E_JOB, err)))
    return rc;
  if ((e = ITEM(v, "stretch_taper_ms")) &&
      (rc = json_doc_number(e, "$.moveout.stretch_taper_ms", 0, 1000, &j->stretch_taper_ms, TZ_E_JOB, err)))
    return rc;
  return TZ_OK;
}

static int parse_selection(job_spec *j, const cJSON *v, tz_err *err)
{
  static const char *const keys[] = { "cmp_first", "cmp_last", "offset_min_m", "offset_max_m",
                                      NULL };
  int rc = want_object(v, "$.selection", err);
  if (!rc)
    rc = json_doc_check_keys(v, "$.selection", keys, TZ_E_JOB, err);
  if (rc)
    return rc;
  const cJSON *a = ITEM(v, "cmp_first"), *b = ITEM(v, "cmp_last"), *e;
  if (a || b) {
    if (!a || !b)
      return tz_fail(err, TZ_E_JOB, "$.selection: cmp_first and cmp_last go together");
    if ((rc = json_doc_int(a, "$.selection.cmp_first", -1000000000, 1000000000, &j->cmp_first, TZ_E_JOB, err)) ||
        (rc = json_doc_int(b, "$.selection.cmp_last", -1000000000, 1000000000, &j->cmp_last, TZ_E_JOB, err)))
      return rc;
    if (j->cmp_last < j->cmp_first)
      return tz_fail(err, TZ_E_JOB, "$.selection.cmp_last: %lld is before cmp_first %lld",
                   (long long)j->cmp_last, (long long)j->cmp_first);
    j->has_cmp_range = 1;
  }
  if ((e = ITEM(v, "offset_min_m")) &&
      (rc = json_doc_number(e, "$.selection.offset_min_m", 0, 1e7, &j->offset_min_m, TZ_E_JOB, err)))
    return rc;
  if ((e = ITEM(v, "offset_max_m")) &&
      (rc = json_doc_number(e, "$.selection.offset_max_m", 0, 1e7, &j->offset_max_m, TZ_E_JOB, err)))
    return rc;
  if (j->offset_max_m < j->offset_min_m)
    return tz_fail(err, TZ_E_JOB, "$.selection.offset_max_m: %g is below offset_min_m %g",
                 j->offset_max_m, j->offset_min_m);
  return TZ_OK;
}

static int parse_output(job_spec *j, const cJSON *v, const char *dir, tz_err *err)
{
  static const char *const keys[] = { "section", "report", "html", "sample_format", "migrated",
                                      "navigation", "history", NULL };
  static const char *const fnames[] = { "ieee", "ibm", NULL };
  static const int fvals[] = { JOB_FORMAT_IEEE, JOB_FORMAT_IBM };
  int rc = want_object(v, "$.output", err);
  if (!rc)
    rc = json_doc_check_keys(v, "$.output", keys, TZ_E_JOB, err);
  if (rc)
    return rc;
  const cJSON *e;
  if ((e = ITEM(v, "section")) && (rc = get_path(e, "$.output.section", dir, 0, &j->section, err)))
    return rc;
  if ((e = ITEM(v, "report")) && (rc = get_path(e, "$.output.report", dir, 0, &j->report, err)))
    return rc;
  if ((e = ITEM(v, "migrated")) &&
      (rc = get_path(e, "$.output.migrated", dir, 0, &j->migrated, err)))
    return rc;
  if ((e = ITEM(v, "navigation")) &&
      (rc = get_path(e, "$.output.navigation", dir, 0, &j->navigation, err)))
    return rc;
  if ((e = ITEM(v, "history")) && (rc = get_path(e, "$.output.history", dir, 0, &j->history, err)))
    return rc;
  if ((e = ITEM(v, "html")) && cJSON_IsFalse(e))
    j->no_html = 1;
  else if (e && (rc = get_path(e, "$.output.html", dir, 0, &j->html, err)))
    return rc;
  if ((e = ITEM(v, "sample_format")) &&
      (rc = json_doc_choice(e, "$.output.sample_format", fnames, fvals, &j->sample_format, TZ_E_JOB, err)))
    return rc;
  return TZ_OK;
}

/* "conditioning": an array of steps, each an object naming its "step" (condition.h
 * checks the values; its message is given the JSON path of the value). */
static int cond_fail(tz_err *err, const char *jpath, const tz_err *why)
{
  return tz_fail(err, TZ_E_JOB, "%s: %s", jpath, why->msg);
}

static int get_ms(const cJSON *step, const char *key, const char *jp, int required,
                  double dflt_ms, double *out_s, tz_err *err)
{
  char kp[96];
  snprintf(kp, sizeof kp, "%s.%s", jp, key);
  const cJSON *v = ITEM(step, key);
  if (!v) {
    if (required)
      return tz_fail(err, TZ_E_JOB, "%s: required key missing", kp);
    *out_s = dflt_ms * 1e-3;
    return TZ_OK;
  }
  double ms;
  int rc = json_doc_number(v, kp, 1e-3, CONDITION_MAX_WINDOW_MS, &ms, TZ_E_JOB, err);
  if (!rc)
    *out_s = ms * 1e-3;
  return rc;
}

/* A record-wide step's refusal: the message starts with the key it is about
 * ("gap_ms ...", "window[1]: ..."), which joins the step's JSON path. */
static int record_step_fail(tz_err *err, const char *jp, const tz_err *why)
{
  const char *m = why->msg;
  size_t n = strspn(m, "abcdefghijklmnopqrstuvwxyz_0123456789[]");
  const char *rest = m[n] == ':' ? m + n + 1 + (m[n + 1] == ' ') : m;
  return tz_fail(err, TZ_E_JOB, "%s.%.*s: %s", jp, (int)n, m, rest);
}

/* "deconvolution" and "fk_filter" steps (condition.h checks the values). */
static int parse_record_step(job_spec *j, const cJSON *st, const char *jp, int kind,
                             tz_err *err)
{
  static const char *const enames[] = { "trace", "record", NULL };
  static const int evals[] = { CONDITION_ENSEMBLE_TRACE, CONDITION_ENSEMBLE_RECORD };
  char kp[112];
  tz_err why;
  tz_err_init(&why);
  const cJSON *e;
  int rc;
  if (kind == CONDITION_DECON) {
    double op_s, gap_ms = 0, pct = 1, w[CONDITION_MAX_WINDOW_POINTS][3];
    int ens = CONDITION_ENSEMBLE_TRACE;
    if ((rc = get_ms(st, "operator_ms", jp, 1, 0, &op_s, err)))
      return rc;
    snprintf(kp, sizeof kp, "%s.gap_ms", jp);
    if ((e = ITEM(st, "gap_ms")) &&
        (rc = json_doc_number(e, kp, 0, CONDITION_MAX_OPERATOR_MS, &gap_ms, TZ_E_JOB, err)))
      return rc;
    double gap_s = gap_ms * 1e-3;
    snprintf(kp, sizeof kp, "%s.prewhitening_pct", jp);
    if ((e = ITEM(st, "prewhitening_pct")) && (rc = json_doc_number(e, kp, 0, 100, &pct, TZ_E_JOB, err)))
      return rc;
    snprintf(kp, sizeof kp, "%s.ensemble", jp);
    if ((e = ITEM(st, "ensemble")) && (rc = json_doc_choice(e, kp, enames, evals, &ens, TZ_E_JOB, err)))
      return rc;
    snprintf(kp, sizeof kp, "%s.window", jp);
    const cJSON *a = ITEM(st, "window");
    if (!a)
      return tz_fail(err, TZ_E_JOB, "%s: required key missing ([[offset_m, start_ms, end_ms], "
                     "...])", kp);
    int n = cJSON_IsArray(a) ? cJSON_GetArraySize(a) : -1;
    if (n < 1 || n > CONDITION_MAX_WINDOW_POINTS)
      return tz_fail(err, TZ_E_JOB, "%s: expected an array of 1 to %d [offset_m, start_ms, "
                     "end_ms] triples, got %s", kp, CONDITION_MAX_WINDOW_POINTS, json_doc_kind_name(a));
    int i = 0;
    for (const cJSON *x = a->child; x; x = x->next, i++) {
      char ip[128];
      snprintf(ip, sizeof ip, "%s[%d]", kp, i);
      if (!cJSON_IsArray(x) || cJSON_GetArraySize(x) != 3)
        return tz_fail(err, TZ_E_JOB, "%s: expected [offset_m, start_ms, end_ms], got %s", ip,
                       json_doc_kind_name(x));
      int q = 0;
      for (const cJSON *y = x->child; y; y = y->next, q++) {
        char yp[144];
        snprintf(yp, sizeof yp, "%s[%d]", ip, q);
        if ((rc = json_doc_number(y, yp, q ? 0 : -1e7, q ? CONDITION_MAX_WINDOW_MS : 1e7,
                                  &w[i][q], TZ_E_JOB, err)))
          return rc;
      }
      w[i][1] *= 1e-3;
      w[i][2] *= 1e-3;
    }
    if (condition_chain_add_decon(&j->conditioning, op_s, gap_s, pct, (const double(*)[3])w,
                                  (size_t)n, ens, &why))
      return record_step_fail(err, jp, &why);
    return TZ_OK;
  }
  const cJSON *rj = ITEM(st, "reject_mps"), *pj = ITEM(st, "pass_mps");
  if (!rj == !pj)
    return tz_fail(err, TZ_E_JOB, "%s: give one of reject_mps or pass_mps ([slower, faster] "
                   "apparent velocities in m/s), not %s", jp, rj ? "both" : "neither");
  const char *key = rj ? "reject_mps" : "pass_mps";
  snprintf(kp, sizeof kp, "%s.%s", jp, key);
  const cJSON *a = rj ? rj : pj;
  if (!cJSON_IsArray(a) || cJSON_GetArraySize(a) != 2)
    return tz_fail(err, TZ_E_JOB, "%s: expected [slower, faster] in m/s, got %s", kp,
                   json_doc_kind_name(a));
  double v[2], taper = 10, min_hz = 0;
  int i = 0;
  for (const cJSON *x = a->child; x; x = x->next, i++) {
    char ip[128];
    snprintf(ip, sizeof ip, "%s[%d]", kp, i);
    if ((rc = json_doc_number(x, ip, 0, CONDITION_MAX_FK_MPS, &v[i], TZ_E_JOB, err)))
      return rc;
  }
  snprintf(kp, sizeof kp, "%s.taper_pct", jp);
  if ((e = ITEM(st, "taper_pct")) && (rc = json_doc_number(e, kp, 0, 100, &taper, TZ_E_JOB, err)))
    return rc;
  snprintf(kp, sizeof kp, "%s.min_hz", jp);
  if ((e = ITEM(st, "min_hz")) && (rc = json_doc_number(e, kp, 0, 1e6, &min_hz, TZ_E_JOB, err)))
    return rc;
  if (condition_chain_add_fk(&j->conditioning, v, !rj, taper, min_hz, &why))
    return record_step_fail(err, jp, &why);
  return TZ_OK;
}

static int parse_condition_step(job_spec *j, const cJSON *st, const char *jp, tz_err *err)
{
  static const char *const snames[] = { "bandpass", "spherical_divergence", "power_gain", "agc",
                                        "deconvolution", "fk_filter", NULL };
  static const int svals[] = { CONDITION_BANDPASS, CONDITION_SPHERICAL, CONDITION_POWER,
                               CONDITION_AGC, CONDITION_DECON, CONDITION_FK };
  static const char *const k_bp[] = { "step", "corners_hz", NULL };
  static const char *const k_sph[] = { "step", "reference_time_ms", "velocity_mps", NULL };
  static const char *const k_pow[] = { "step", "exponent", "reference_time_ms", NULL };
  static const char *const k_agc[] = { "step", "window_ms", "measure", NULL };
  static const char *const k_dec[] = { "step", "operator_ms", "gap_ms", "prewhitening_pct",
                                       "window", "ensemble", NULL };
  static const char *const k_fk[] = { "step", "reject_mps", "pass_mps", "taper_pct", "min_hz",
                                      NULL };
  static const char *const mnames[] = { "rms", "mean_abs", NULL };
  static const int mvals[] = { CONDITION_AGC_RMS, CONDITION_AGC_MEAN_ABS };
  char kp[96];
  int rc = want_object(st, jp, err), kind;
  if (rc)
    return rc;
  snprintf(kp, sizeof kp, "%s.step", jp);
  const cJSON *e = ITEM(st, "step");
  if (!e)
    return tz_fail(err, TZ_E_JOB, "%s: required key missing (\"bandpass\", "
                   "\"spherical_divergence\", \"power_gain\", \"agc\", \"deconvolution\" or "
                   "\"fk_filter\")", kp);
  if ((rc = json_doc_choice(e, kp, snames, svals, &kind, TZ_E_JOB, err)))
    return rc;
  const char *const *keys = kind == CONDITION_BANDPASS ? k_bp : kind == CONDITION_SPHERICAL
                                ? k_sph : kind == CONDITION_POWER ? k_pow
                                : kind == CONDITION_DECON ? k_dec : kind == CONDITION_FK ? k_fk
                                : k_agc;
  if ((rc = json_doc_check_keys(st, jp, keys, TZ_E_JOB, err)))
    return rc;
  if (kind == CONDITION_DECON || kind == CONDITION_FK)
    return parse_record_step(j, st, jp, kind, err);
  condition_chain *c = &j->conditioning;
  tz_err why;
  tz_err_init(&why);
  double t_s, v = 0;
  switch (kind) {
  case CONDITION_BANDPASS: {
    snprintf(kp, sizeof kp, "%s.corners_hz", jp);
    const cJSON *a = ITEM(st, "corners_hz");
    if (!a)
      return tz_fail(err, TZ_E_JOB, "%s: required key missing ([f1, f2, f3, f4] in Hz)", kp);
    if (!cJSON_IsArray(a) || cJSON_GetArraySize(a) != 4)
      return tz_fail(err, TZ_E_JOB, "%s: expected an array of four frequencies [f1, f2, f3, "
                     "f4] in Hz, got %s", kp, json_doc_kind_name(a));
    double f[4];
    int i = 0;
    for (const cJSON *x = a->child; x; x = x->next, i++) {
      char ip[112];
      snprintf(ip, sizeof ip, "%s[%d]", kp, i);
      if ((rc = json_doc_number(x, ip, 0, 1e6, &f[i], TZ_E_JOB, err)))
        return rc;
    }
    if (condition_chain_add_bandpass(c, f, &why))
      return cond_fail(err, kp, &why);
    return TZ_OK;
  }
  case CONDITION_SPHERICAL:
    if ((rc = get_ms(st, "reference_time_ms", jp, 0, 1000, &t_s, err)))
      return rc;
    snprintf(kp, sizeof kp, "%s.velocity_mps", jp);
    if ((e = ITEM(st, "velocity_mps")) &&
        (rc = json_doc_number(e, kp, VELOCITY_MIN_MPS, VELOCITY_MAX_MPS, &v, TZ_E_JOB, err)))
      return rc;
    if (condition_chain_add_spherical(c, t_s, v, &why))
      return cond_fail(err, jp, &why);
    return TZ_OK;
  case CONDITION_POWER:
    if ((rc = get_ms(st, "reference_time_ms", jp, 0, 1000, &t_s, err)))
      return rc;
    snprintf(kp, sizeof kp, "%s.exponent", jp);
    if (!(e = ITEM(st, "exponent")))
      return tz_fail(err, TZ_E_JOB, "%s: required key missing (power of time, e.g. 2)", kp);
    if ((rc = json_doc_number(e, kp, -CONDITION_MAX_POWER, CONDITION_MAX_POWER, &v, TZ_E_JOB, err)))
      return rc;
    if (condition_chain_add_power(c, v, t_s, &why))
      return cond_fail(err, jp, &why);
    return TZ_OK;
  default: {
    int measure = CONDITION_AGC_RMS;
    if ((rc = get_ms(st, "window_ms", jp, 1, 0, &t_s, err)))
      return rc;
    snprintf(kp, sizeof kp, "%s.measure", jp);
    if ((e = ITEM(st, "measure")) && (rc = json_doc_choice(e, kp, mnames, mvals, &measure, TZ_E_JOB, err)))
      return rc;
    if (condition_chain_add_agc(c, t_s, measure, &why))
      return cond_fail(err, jp, &why);
    return TZ_OK;
  }
  }
}

static int parse_conditioning(job_spec *j, const cJSON *v, tz_err *err)
{
  if (!cJSON_IsArray(v))
    return tz_fail(err, TZ_E_JOB, "$.conditioning: expected an array of steps, got %s",
                   json_doc_kind_name(v));
  size_t n = (size_t)cJSON_GetArraySize(v), i = 0;
  if (n > CONDITION_MAX_STEPS)
    return tz_fail(err, TZ_E_JOB, "$.conditioning: %zu steps, at most %d", n, CONDITION_MAX_STEPS);
  condition_chain_init(&j->conditioning);
  for (const cJSON *st = v->child; st; st = st->next, i++) {
    char jp[64];
    snprintf(jp, sizeof jp, "$.conditioning[%zu]", i);
    int rc = parse_condition_step(j, st, jp, err);
    if (rc)
      return rc;
  }
  return TZ_OK;
}

/* ---------------------------------------------------------------- edits */



/* A selector value: a number, a string of numbers and ranges, or an array of those. */
static int parse_selector(edits_set *set, const cJSON *v, const char *jp, tz_err *err)
{
  if (cJSON_IsArray(v)) {
    if (!v->child)
      return tz_fail(err, TZ_E_JOB, "%s: empty array", jp);
    size_t i = 0;
    for (const cJSON *c = v->child; c; c = c->next, i++) {
      char ip[96];
      snprintf(ip, sizeof ip, "%s[%zu]", jp, i);
      if (cJSON_IsArray(c))
        return tz_fail(err, TZ_E_JOB, "%s: expected a number or a string like \"30-32\", got %s",
                       ip, json_doc_kind_name(c));
      int rc = parse_selector(set, c, ip, err);
      if (rc)
        return rc;
    }
    return TZ_OK;
  }
  if (cJSON_IsNumber(v)) {
    int64_t x;
    int rc = json_doc_int(v, jp, INT32_MIN, INT32_MAX, &x, TZ_E_JOB, err);
    return rc ? rc : edits_set_add(set, x, x, jp, err);
  }
  if (cJSON_IsString(v) && v->valuestring)
    return edits_set_parse_text(set, v->valuestring, jp, err);
  return tz_fail(err, TZ_E_JOB, "%s: expected a number, a string like \"30-32\" or \"1,3,7-9\", "
                 "or an array of those, got %s", jp, json_doc_kind_name(v));
}

static int parse_edit_entry(edits_entry *e, const cJSON *v, const char *jp, tz_err *err)
{
  static const char *const keys[] = { "record", "channels", "source_station",
                                      "receiver_station", "file", NULL };
  memset(e, 0, sizeof *e);
  snprintf(e->where, sizeof e->where, "%s", jp);
  int rc = want_object(v, jp, err);
  if (!rc)
    rc = json_doc_check_keys(v, jp, keys, TZ_E_JOB, err);
  if (rc)
    return rc;
  edits_set *sets[4] = { &e->record, &e->channel, &e->source_station, &e->receiver_station };
  int any = 0;
  for (int k = 0; k < 4; k++) {
    const cJSON *x = ITEM(v, keys[k]);
    if (!x)
      continue;
    char kp[96];
    snprintf(kp, sizeof kp, "%s.%s", jp, keys[k]);
    if ((rc = parse_selector(sets[k], x, kp, err)))
      return rc;
    any = 1;
  }
  const cJSON *f = ITEM(v, "file");
  if (f) {
    char kp[96];
    const char *name;
    snprintf(kp, sizeof kp, "%s.file", jp);
    if ((rc = json_doc_string(f, kp, &name, TZ_E_JOB, err)))
      return rc;
    if (strlen(name) >= sizeof e->file)
      return tz_fail(err, TZ_E_JOB, "%s: file name longer than %zu characters", kp,
                     sizeof e->file - 1);
    snprintf(e->file, sizeof e->file, "%s", name);
    any = 1;
  }
  if (!any)
    return tz_fail(err, TZ_E_JOB, "%s: an edit needs at least one of record, channels, "
                   "source_station, receiver_station or file", jp);
  return TZ_OK;
}

static int parse_edit_list(edits_entry **out, size_t *n, const cJSON *v, const char *jp,
                           tz_err *err)
{
  if (!cJSON_IsArray(v))
    return tz_fail(err, TZ_E_JOB, "%s: expected an array of edits, got %s", jp, json_doc_kind_name(v));
  size_t m = (size_t)cJSON_GetArraySize(v), i = 0;
  if (m > EDITS_MAX_ENTRIES)
    return tz_fail(err, TZ_E_JOB, "%s: %zu edits, at most %d", jp, m, EDITS_MAX_ENTRIES);
  free(*out);
  *out = NULL;
  *n = 0;
  if (!m)
    return TZ_OK;
  if (!(*out = calloc(m, sizeof **out)))
    return tz_fail(err, TZ_E_NOMEM, "edit list");
  for (const cJSON *c = v->child; c; c = c->next, i++) {
    char ep[64];
    snprintf(ep, sizeof ep, "%s[%zu]", jp, i);
    int rc = parse_edit_entry(&(*out)[i], c, ep, err);
    if (rc)
      return rc;
    *n = i + 1;
  }
  return TZ_OK;
}

/* The "edits" object; `base` is its JSON path ("$.edits", or "$" in an edits file). */
static int parse_edits_obj(edits_spec *ed, const cJSON *v, const char *base, tz_err *err)
{
  static const char *const keys[] = { "kill", "reverse", "auto", NULL };
  static const char *const akeys[] = { "dead", "rms_ratio_max", "window_ms", NULL };
  char jp[64];
  int rc = want_object(v, base, err);
  if (!rc)
    rc = json_doc_check_keys(v, base, keys, TZ_E_JOB, err);
  if (rc)
    return rc;
  const cJSON *e;
  snprintf(jp, sizeof jp, "%s.kill", strcmp(base, "$") ? base : "$");
  if ((e = ITEM(v, "kill")) && (rc = parse_edit_list(&ed->kill, &ed->nkill, e, jp, err)))
    return rc;
  snprintf(jp, sizeof jp, "%s.reverse", base);
  if ((e = ITEM(v, "reverse")) &&
      (rc = parse_edit_list(&ed->reverse, &ed->nreverse, e, jp, err)))
    return rc;
  if ((e = ITEM(v, "auto"))) {
    snprintf(jp, sizeof jp, "%s.auto", base);
    if ((rc = want_object(e, jp, err)) || (rc = json_doc_check_keys(e, jp, akeys, TZ_E_JOB, err)))
      return rc;
    const cJSON *x;
    char kp[96];
    snprintf(kp, sizeof kp, "%s.dead", jp);
    if ((x = ITEM(e, "dead")) && (rc = json_doc_bool(x, kp, &ed->auto_dead, TZ_E_JOB, err)))
      return rc;
    snprintf(kp, sizeof kp, "%s.rms_ratio_max", jp);
    if ((x = ITEM(e, "rms_ratio_max")) && (rc = json_doc_number(x, kp, 1, 1e6, &ed->rms_ratio_max, TZ_E_JOB, err)))
      return rc;
    snprintf(kp, sizeof kp, "%s.window_ms", jp);
    if ((x = ITEM(e, "window_ms"))) {
      if (!cJSON_IsArray(x) || cJSON_GetArraySize(x) != 2)
        return tz_fail(err, TZ_E_JOB, "%s: expected [start, end] in ms", kp);
      char k0[112], k1[112];
      snprintf(k0, sizeof k0, "%s[0]", kp);
      snprintf(k1, sizeof k1, "%s[1]", kp);
      if ((rc = json_doc_number(x->child, k0, 0, 1e7, &ed->window_start_ms, TZ_E_JOB, err)) ||
          (rc = json_doc_number(x->child->next, k1, 0, 1e7, &ed->window_end_ms, TZ_E_JOB, err)))
        return rc;
      if (ed->window_end_ms <= ed->window_start_ms)
        return tz_fail(err, TZ_E_JOB, "%s: end %g ms is not after start %g ms", kp,
                       ed->window_end_ms, ed->window_start_ms);
    }
  }
  return TZ_OK;
}

int job_load_edits(edits_spec *out, const char *path, tz_err *err)
{
  char *text = NULL;
  size_t len = 0;
  edits_spec_init(out);
  int rc = fileio_read_all(path, JOB_MAX_BYTES, &text, &len, err);
  if (rc) {
    if (rc == TZ_E_IO || rc == TZ_E_CREATE)
      rc = err->status = TZ_E_NOINPUT;
    return tz_err_path(err, path);
  }
  cJSON *root = NULL;
  rc = json_doc_parse(&root, text, len, path, "edits file", TZ_E_FORMAT, err);
  if (rc) {
    free(text);
    return tz_err_path(err, path);
  }
  rc = parse_edits_obj(out, root, "$", err);
  cJSON_Delete(root);
  free(text);
  if (rc) {
    edits_spec_free(out);
    if (rc == TZ_E_JOB)
      err->status = TZ_E_FORMAT;      /* a bad input file, exit 65 as a bad job is */
    return tz_err_path(err, path);
  }
  return TZ_OK;
}

/* ---------------------------------------------------------------- statics */

static int parse_statics(job_spec *j, const cJSON *v, const char *dir, tz_err *err)
{
  static const char *const keys[] = { "datum_m", "replacement_velocity_mps", "elevation",
                                      "weathering_velocity_mps", "uphole", "tables",
                                      "floating_datum_smooth_m", "station_interval_m", NULL };
  job_statics *st = &j->statics;
  int rc = want_object(v, "$.statics", err);
  if (!rc)
    rc = json_doc_check_keys(v, "$.statics", keys, TZ_E_JOB, err);
  if (rc)
    return rc;
  const cJSON *e;
  st->present = 1;
  st->elevation = 1;
  if (!(e = ITEM(v, "datum_m")))
    return tz_fail(err, TZ_E_JOB, "$.statics.datum_m: required key missing (flat datum "
                   "elevation, m)");
  if ((rc = json_doc_number(e, "$.statics.datum_m", -1e4, 1e4, &st->datum_m, TZ_E_JOB, err)))
    return rc;
  if (!(e = ITEM(v, "replacement_velocity_mps")))
    return tz_fail(err, TZ_E_JOB, "$.statics.replacement_velocity_mps: required key missing "
                   "(m/s)");
  if ((rc = json_doc_number(e, "$.statics.replacement_velocity_mps", 100, 20000,
                       &st->replacement_velocity_mps, TZ_E_JOB, err)))
    return rc;
  if ((e = ITEM(v, "elevation")) && (rc = json_doc_bool(e, "$.statics.elevation", &st->elevation, TZ_E_JOB, err)))
    return rc;
  if ((e = ITEM(v, "weathering_velocity_mps")) &&
      (rc = json_doc_number(e, "$.statics.weathering_velocity_mps", 50, 20000,
                       &st->weathering_velocity_mps, TZ_E_JOB, err)))
    return rc;
  if ((e = ITEM(v, "uphole")) && (rc = json_doc_bool(e, "$.statics.uphole", &st->uphole, TZ_E_JOB, err)))
    return rc;
  if (st->uphole && !st->weathering_velocity_mps)
    return tz_fail(err, TZ_E_JOB, "$.statics.uphole: needs weathering_velocity_mps (the "
                   "weathering thickness under a shot hole comes from its uphole time)");
  if (st->weathering_velocity_mps && st->weathering_velocity_mps >= st->replacement_velocity_mps)
    return tz_fail(err, TZ_E_JOB, "$.statics.weathering_velocity_mps: %g m/s is not below the "
                   "replacement velocity %g m/s", st->weathering_velocity_mps,
                   st->replacement_velocity_mps);
  if ((e = ITEM(v, "tables"))) {
    if (!cJSON_IsArray(e))
      return tz_fail(err, TZ_E_JOB, "$.statics.tables: expected an array of file names, got %s",
                     json_doc_kind_name(e));
    size_t i = 0;
    for (const cJSON *c = e->child; c; c = c->next, i++) {
      char jp[48];
      snprintf(jp, sizeof jp, "$.statics.tables[%zu]", i);
      if (i >= JOB_MAX_STATICS_TABLES)
        return tz_fail(err, TZ_E_JOB, "%s: at most %d tables", jp, JOB_MAX_STATICS_TABLES);
      if ((rc = get_path(c, jp, dir, 1, &st->tables[i], err)))
        return rc;
      st->ntables = i + 1;
    }
  }
  if ((e = ITEM(v, "floating_datum_smooth_m")) &&
      (rc = json_doc_number(e, "$.statics.floating_datum_smooth_m", 0, 1e6,
                       &st->floating_datum_smooth_m, TZ_E_JOB, err)))
    return rc;
  if ((e = ITEM(v, "station_interval_m")) &&
      (rc = json_doc_number(e, "$.statics.station_interval_m", 0.01, 1e5, &st->station_interval_m,
                       TZ_E_JOB, err)))
    return rc;
  return TZ_OK;
}

/* "migration": method and parameters of the post-stack time migration. */
static int parse_migration(job_spec *j, const cJSON *v, const char *dir, tz_err *err)
{
  static const char *const keys[] = { "method", "velocity", "velocity_pct", "aperture_m",
                                      "max_dip_deg", "max_hz", NULL };
  static const char *const mnames[] = { "phase-shift", "kirchhoff", NULL };
  static const int mvals[] = { 0, 1 };
  int rc = want_object(v, "$.migration", err);
  if (!rc)
    rc = json_doc_check_keys(v, "$.migration", keys, TZ_E_JOB, err);
  if (rc)
    return rc;
  j->migration.given = 1;
  const cJSON *e;
  if ((e = ITEM(v, "method")) &&
      (rc = json_doc_choice(e, "$.migration.method", mnames, mvals, &j->migration.method,
                            TZ_E_JOB, err)))
    return rc;
  if ((e = ITEM(v, "velocity")) &&
      (rc = get_path(e, "$.migration.velocity", dir, 1, &j->migration.velocity, err)))
    return rc;
  if ((e = ITEM(v, "velocity_pct")) &&
      (rc = json_doc_number(e, "$.migration.velocity_pct", 10, 300, &j->migration.velocity_pct,
                            TZ_E_JOB, err)))
    return rc;
  if ((e = ITEM(v, "aperture_m")) &&
      (rc = json_doc_number(e, "$.migration.aperture_m", 0, 1e6, &j->migration.aperture_m,
                            TZ_E_JOB, err)))
    return rc;
  if ((e = ITEM(v, "max_dip_deg")) &&
      (rc = json_doc_number(e, "$.migration.max_dip_deg", 1, 89, &j->migration.max_dip_deg,
                            TZ_E_JOB, err)))
    return rc;
  if ((e = ITEM(v, "max_hz")) &&
      (rc = json_doc_number(e, "$.migration.max_hz", 0, 1e6, &j->migration.max_hz, TZ_E_JOB,
                            err)))
    return rc;
  return TZ_OK;
}

/* "limits": a limits file (relative to the job's folder) or the object inline. */
static int parse_limits(job_spec *j, const cJSON *v, const char *dir, tz_err *err)
{
  int rc;
  if (cJSON_IsString(v)) {
    if ((rc = get_path(v, "$.limits", dir, 1, &j->limits_file, err)))
      return rc;
    return limits_load(&j->limits, j->limits_file, err);
  }
  if (!cJSON_IsObject(v))
    return tz_fail(err, TZ_E_JOB, "$.limits: expected a limits file name or an object of "
                   "limits, got %s", json_doc_kind_name(v));
  char *text = cJSON_PrintUnformatted(v);
  if (!text)
    return tz_fail(err, TZ_E_NOMEM, "job limits");
  rc = limits_parse(&j->limits, text, strlen(text), NULL, "$.limits", err);
  free(text);
  return rc;
}

static void set_defaults(job_spec *j)
{
  limits_init(&j->limits);
  j->geometry = JOB_GEOMETRY_HEADERS;
  j->bins.first_cmp = 1;
  j->stretch_limit_pct = 50;           /* within the 50-100 % of Sheriff's dictionary */
  j->interpolation = JOB_INTERP_LINEAR;
  j->fourth_order = 1;
  j->stretch_taper_ms = 10;
  j->mute_taper_ms = 10;
  j->offset_min_m = 0;
  j->offset_max_m = INFINITY;
  j->sample_format = JOB_FORMAT_IEEE;
  j->migration.velocity_pct = 100;
  j->migration.max_dip_deg = 80;
  j->migration.after_stack = 1;
}

static int parse_tree(job_spec *j, const cJSON *root, const char *dir, tz_err *err)
{
  static const char *const keys[] = { "name", "shots", "units", "geometry", "header_map", "bins",
                                      "velocity", "moveout", "mute", "selection", "output",
                                      "conditioning", "edits", "statics", "limits", "threads",
                                      "skip_bad_files", "interval_us", "migration", "client",
                                      "contractor", "crs", "polarity", "poststack", NULL };
  static const char *const pnames[] = { "negative", "positive", NULL };
  static const int pvals[] = { 1, 2 };
  int rc;
  if (!cJSON_IsObject(root))
    return tz_fail(err, TZ_E_JOB, "$: expected an object, got %s", json_doc_kind_name(root));
  if ((rc = json_doc_check_keys(root, "$", keys, TZ_E_JOB, err)))
    return rc;
  const cJSON *e;
  if ((e = ITEM(root, "name"))) {
    const char *s;
    if ((rc = json_doc_string(e, "$.name", &s, TZ_E_JOB, err)))
      return rc;
    free(j->name);
    if (!(j->name = strdup(s)))
      return tz_fail(err, TZ_E_NOMEM, "job name");
  }
  struct { const char *key, *jpath; char **dst; } texts[] = {
    { "client", "$.client", &j->client }, { "contractor", "$.contractor", &j->contractor },
    { "crs", "$.crs", &j->crs } };
  for (size_t k = 0; k < sizeof texts / sizeof texts[0]; k++) {
    const char *s;
    if (!(e = ITEM(root, texts[k].key)))
      continue;
    if ((rc = json_doc_string(e, texts[k].jpath, &s, TZ_E_JOB, err)))
      return rc;
    free(*texts[k].dst);
    if (!(*texts[k].dst = strdup(s)))
      return tz_fail(err, TZ_E_NOMEM, "job %s", texts[k].key);
  }
  if ((e = ITEM(root, "polarity")) &&
      (rc = json_doc_choice(e, "$.polarity", pnames, pvals, &j->polarity, TZ_E_JOB, err)))
    return rc;
  if (!(e = ITEM(root, "shots")))
    return tz_fail(err, TZ_E_JOB, "$.shots: required key missing (file patterns of the shot "
                 "records)");
  if ((rc = parse_shots(j, e, dir, err)))
    return rc;
  if ((e = ITEM(root, "units")) && (rc = job_units_parse(j, e, err)))
    return rc;
  if ((e = ITEM(root, "geometry")) && (rc = parse_geometry(j, e, dir, err)))
    return rc;
  if ((e = ITEM(root, "header_map")) && (rc = get_path(e, "$.header_map", dir, 1,
                                                       &j->header_map, err)))
    return rc;
  if ((e = ITEM(root, "bins")) && (rc = parse_bins(j, e, dir, err)))
    return rc;
  /* Not checked to exist: semblance writes the table a job names. Commands that
   * read it check at load time (flow_setup_load). */
  if ((e = ITEM(root, "velocity")) && (rc = get_path(e, "$.velocity", dir, 0, &j->velocity, err)))
    return rc;
  if ((e = ITEM(root, "moveout")) && (rc = parse_moveout(j, e, err)))
    return rc;
  if ((e = ITEM(root, "mute")) && (rc = job_mute_parse(j, e, dir, err)))
    return rc;
  if ((e = ITEM(root, "selection")) && (rc = parse_selection(j, e, err)))
    return rc;
  if ((e = ITEM(root, "output")) && (rc = parse_output(j, e, dir, err)))
    return rc;
  if ((e = ITEM(root, "conditioning")) && (rc = parse_conditioning(j, e, err)))
    return rc;
  if ((e = ITEM(root, "edits")) && (rc = parse_edits_obj(&j->edits, e, "$.edits", err)))
    return rc;
  if ((e = ITEM(root, "statics")) && (rc = parse_statics(j, e, dir, err)))
    return rc;
  if ((e = ITEM(root, "limits")) && (rc = parse_limits(j, e, dir, err)))
    return rc;
  if ((e = ITEM(root, "migration")) && (rc = parse_migration(j, e, dir, err)))
    return rc;
  if ((e = ITEM(root, "poststack")) && (rc = job_parse_poststack(e, "$.poststack", &j->poststack,
                                                                 err)))
    return rc;
  for (size_t i = 0; i < j->poststack.n; i++)
    if (j->poststack.step[i].after_migration && !j->migrated)
      return tz_fail(err, TZ_E_JOB, "$.poststack[%zu].after_migration: the job writes no "
                     "migrated section (output.migrated)", i);
  if (j->migrated && !j->migration.given)
    return tz_fail(err, TZ_E_JOB, "$.output.migrated: a migrated section needs a \"migration\" "
                   "object (at least {\"method\": \"phase-shift\"})");
  if ((e = ITEM(root, "threads"))) {
    int64_t t;
    if ((rc = json_doc_int(e, "$.threads", 0, JOB_MAX_THREADS, &t, TZ_E_JOB, err)))
      return rc;
    j->threads = (int)t;
  }
  if ((e = ITEM(root, "interval_us"))) {
    int64_t t;
    if ((rc = json_doc_int(e, "$.interval_us", 1, 1000000, &t, TZ_E_JOB, err)))
      return rc;
    j->interval_us = (uint32_t)t;
  }
  if ((e = ITEM(root, "skip_bad_files")) &&
      (rc = json_doc_bool(e, "$.skip_bad_files", &j->skip_bad_files, TZ_E_JOB, err)))
    return rc;
  return TZ_OK;
}

int job_parse(job_spec **out, const char *text, size_t len, const char *name, const char *dir,
              tz_err *err)
{
  job_spec *j = calloc(1, sizeof *j);
  if (!j)
    return tz_fail(err, TZ_E_NOMEM, "job");
  set_defaults(j);
  if (!(j->path = strdup(name ? name : "")) || !(j->name = strdup(""))) {
    job_free(j);
    return tz_fail(err, TZ_E_NOMEM, "job");
  }
  cJSON *root = NULL;
  if (json_doc_parse(&root, text, len, name, NULL, TZ_E_JOB, err)) {
    job_free(j);
    return err->status;
  }
  int rc = parse_tree(j, root, dir, err);
  cJSON_Delete(root);
  if (rc) {
    tz_err_path(err, name);
    job_free(j);
    return rc;
  }
  *out = j;
  return TZ_OK;
}

int job_load(job_spec **out, const char *path, tz_err *err)
{
  char *text = NULL;
  size_t len = 0;
  int rc = fileio_read_all(path, JOB_MAX_BYTES, &text, &len, err);
  if (rc) {
    tz_err_path(err, path);
    return rc;
  }
  char dir[PATHBUF];
  const char *slash = strrchr(path, '/');
  if (slash) {
    size_t n = (size_t)(slash - path);
    if (n >= sizeof dir)
      n = sizeof dir - 1;
    memcpy(dir, path, n ? n : 1);   /* "/job.json" keeps the root "/" */
    dir[n ? n : 1] = '\0';
  } else {
    dir[0] = '\0';
  }
  rc = job_parse(out, text, len, path, dir, err);
  free(text);
  return rc;
}

void job_free(job_spec *j)
{
  if (!j)
    return;
  for (size_t i = 0; i < j->nshots; i++)
    free(j->shots[i]);
  for (size_t i = 0; i < j->npatterns; i++)
    free(j->patterns[i]);
  free(j->shots);
  free(j->patterns);
  free(j->path);
  free(j->name);
  free(j->client);
  free(j->contractor);
  free(j->crs);
  free(j->navigation);
  free(j->history);
  free(j->geometry_file);
  for (int k = 0; k < 3; k++)
    free(j->sps[k]);
  free(j->bins.crooked_file);
  free(j->header_map);
  free(j->velocity);
  free(j->mute_top);
  mute_set_free(j->mutes);
  for (int k = 0; k < MUTE__KINDS; k++)
    free(j->mute_files[k]);
  free(j->section);
  free(j->report);
  free(j->html);
  free(j->limits_file);
  free(j->migration.velocity);
  free(j->migrated);
  limits_clear(&j->limits);
  edits_spec_free(&j->edits);
  for (size_t i = 0; i < j->statics.ntables; i++)
    free(j->statics.tables[i]);
  free(j);
}

/* ---------------------------------------------------------------- overrides */

void job_overrides_init(job_overrides *o)
{
  memset(o, 0, sizeof *o);
  o->stretch_limit_pct = NAN;
  o->interpolation = -1;
  o->threads = -1;
  o->skip_bad_files = -1;
}

static int replace(char **slot, const char *s, tz_err *err)
{
  char *p = dupstr(s);
  if (!p)
    return tz_fail(err, TZ_E_NOMEM, "job override");
  free(*slot);
  *slot = p;
  return TZ_OK;
}

int job_apply_overrides(job_spec *j, const job_overrides *o, tz_err *err)
{
  int rc;
  if (o->velocity) {
    if ((rc = need_file(o->velocity, "--velocity", err)) || (rc = replace(&j->velocity, o->velocity, err)))
      return rc;
  }
  if (o->section && (rc = replace(&j->section, o->section, err)))
    return rc;
  if (o->report && (rc = replace(&j->report, o->report, err)))
    return rc;
  if (!isnan(o->stretch_limit_pct)) {
    if (!(o->stretch_limit_pct >= 0 && o->stretch_limit_pct <= 1000))
      return tz_fail(err, TZ_E_ARG, "--stretch-limit: expected a number between 0 and 1000 "
                     "(percent), got %g", o->stretch_limit_pct);
    j->stretch_limit_pct = o->stretch_limit_pct;
  }
  if (o->interpolation >= 0)
    j->interpolation = o->interpolation == JOB_INTERP_SINC8 ? JOB_INTERP_SINC8 : JOB_INTERP_LINEAR;
  if (o->threads >= 0) {
    if (o->threads > JOB_MAX_THREADS)
      return tz_fail(err, TZ_E_ARG, "--threads: expected 0 to %d, got %d", JOB_MAX_THREADS,
                     o->threads);
    j->threads = o->threads;
  }
  if (o->skip_bad_files >= 0)
    j->skip_bad_files = o->skip_bad_files ? 1 : 0;
  if (o->edits) {
    edits_spec ed;
    if ((rc = job_load_edits(&ed, o->edits, err)))
      return rc;
    edits_spec_free(&j->edits);
    j->edits = ed;
  }
  if (o->has_cmp_range) {
    if (o->cmp_last < o->cmp_first)
      return tz_fail(err, TZ_E_ARG, "CMP range: last %lld is before first %lld",
                     (long long)o->cmp_last, (long long)o->cmp_first);
    j->has_cmp_range = 1;
    j->cmp_first = o->cmp_first;
    j->cmp_last = o->cmp_last;
  }
  return TZ_OK;
}

/* ---------------------------------------------------------------- resolved JSON */

static int add_str(cJSON *o, const char *k, const char *v)
{
  return cJSON_AddItemToObject(o, k, v ? cJSON_CreateString(v) : cJSON_CreateNull()) ? 0 : -1;
}

/* ---------------------------------------------------------------- outputs */

int job_foreach_input(const job_spec *j, job_input_fn fn, void *ctx)
{
  const struct { const char *path; int kind; } one[] = {
    { j->path, JOB_INPUT_JOB }, { j->velocity, JOB_INPUT_VELOCITY },
    { j->geometry_file, JOB_INPUT_GEOMETRY }, { j->header_map, JOB_INPUT_HEADER_MAP },
    { j->limits_file, JOB_INPUT_LIMITS }, { j->migration.velocity, JOB_INPUT_TABLE },
    { j->sps[0], JOB_INPUT_GEOMETRY }, { j->sps[1], JOB_INPUT_GEOMETRY },
    { j->sps[2], JOB_INPUT_GEOMETRY }, { j->bins.crooked_file, JOB_INPUT_GEOMETRY },
  };
  int rc = 0;
  for (size_t i = 0; !rc && i < sizeof one / sizeof one[0]; i++)
    if (one[i].path && one[i].path[0])
      rc = fn(ctx, one[i].path, one[i].kind);
  for (int k = 0; !rc && k < MUTE__KINDS; k++)
    if (j->mute_files[k])
      rc = fn(ctx, j->mute_files[k], JOB_INPUT_TABLE);
  if (!rc && j->mutes && j->mutes->picks_path)
    rc = fn(ctx, j->mutes->picks_path, JOB_INPUT_TABLE);
  for (size_t i = 0; !rc && i < j->nshots; i++)
    rc = fn(ctx, j->shots[i], JOB_INPUT_SHOT);
  return rc;
}

struct output_check {
  const char *out, *what;
  int reads_velocity;
  tz_err *err;
};

static int check_one_input(void *ctx, const char *path, int kind)
{
  struct output_check *c = ctx;
  if (kind == JOB_INPUT_VELOCITY && !c->reads_velocity)
    return 0;
  return fileio_check_not_input(c->out, path, c->what, c->err);
}

int job_check_output(const job_spec *j, const char *out, const char *what, int reads_velocity,
                     tz_err *err)
{
  struct stat st;
  if (!out || stat(out, &st) != 0)
    return TZ_OK;                        /* not there yet: nothing to overwrite */
  struct output_check c = { out, what, reads_velocity, err };
  return job_foreach_input(j, check_one_input, &c);
}

int job_check_outputs(const job_spec *j, tz_err *err)
{
  int rc;
  if ((rc = job_check_output(j, j->section, "the section ($.output.section or --out)", 1, err)) ||
      (rc = job_check_output(j, j->report, "the report ($.output.report or --report)", 1, err)))
    return rc;
  if (j->section && j->report && fileio_same_output(j->section, j->report)) {
    tz_err_path(err, j->report);
    return tz_fail(err, TZ_E_CREATE, "the report and the section are the same file");
  }
  if (j->migrated) {
    if ((rc = job_check_output(j, j->migrated, "the migrated section ($.output.migrated)", 1,
                               err)))
      return rc;
    const char *other[2] = { j->section, j->report };
    for (int i = 0; i < 2; i++)
      if (other[i] && (!strcmp(j->migrated, other[i]) || fileio_same_file(j->migrated, other[i]))) {
        tz_err_path(err, j->migrated);
        return tz_fail(err, TZ_E_CREATE, "the migrated section and the %s are the same file",
                       i ? "report" : "section");
      }
  }
  /* the navigation file and the history: not an input, not another output */
  const char *outs[5] = { j->section, j->report, j->migrated, j->navigation, j->history };
  static const char *const onames[5] = { "section", "report", "migrated section",
                                          "navigation file ($.output.navigation)",
                                          "history ($.output.history)" };
  for (int a = 3; a < 5; a++) {
    if (!outs[a])
      continue;
    if ((rc = job_check_output(j, outs[a], onames[a], 1, err)))
      return rc;
    for (int b = 0; b < a; b++)
      if (outs[b] && (!strcmp(outs[a], outs[b]) || fileio_same_file(outs[a], outs[b]))) {
        tz_err_path(err, outs[a]);
        return tz_fail(err, TZ_E_CREATE, "the %s and the %s are the same file", onames[a],
                       onames[b]);
      }
  }
  return TZ_OK;
}

/* One conditioning step as written in a job file, every default filled. */
static cJSON *condition_step_json(const condition_step *s)
{
  cJSON *o = cJSON_CreateObject();
  if (!o)
    return NULL;
  cJSON_AddStringToObject(o, "step", condition_kind_name(s->kind));
  switch (s->kind) {
  case CONDITION_BANDPASS:
    cJSON_AddItemToObject(o, "corners_hz", cJSON_CreateDoubleArray(s->corners_hz, 4));
    break;
  case CONDITION_SPHERICAL:
    cJSON_AddNumberToObject(o, "reference_time_ms", s->reference_time_s * 1e3);
    if (s->velocity_mps > 0)   /* absent: the velocity table, as in the job file */
      cJSON_AddNumberToObject(o, "velocity_mps", s->velocity_mps);
    break;
  case CONDITION_POWER:
    cJSON_AddNumberToObject(o, "exponent", s->exponent);
    cJSON_AddNumberToObject(o, "reference_time_ms", s->reference_time_s * 1e3);
    break;
  case CONDITION_AGC:
    cJSON_AddNumberToObject(o, "window_ms", s->window_s * 1e3);
    cJSON_AddStringToObject(o, "measure", condition_agc_measure_name(s->measure));
    break;
  case CONDITION_DECON: {
    cJSON_AddNumberToObject(o, "operator_ms", s->operator_s * 1e3);
    cJSON_AddNumberToObject(o, "gap_ms", s->gap_s * 1e3);
    cJSON_AddNumberToObject(o, "prewhitening_pct", s->prewhitening_pct);
    cJSON *w = cJSON_AddArrayToObject(o, "window");
    for (size_t i = 0; w && i < s->nwindow; i++) {
      double k[3] = { s->window[i][0], s->window[i][1] * 1e3, s->window[i][2] * 1e3 };
      cJSON_AddItemToArray(w, cJSON_CreateDoubleArray(k, 3));
    }
    cJSON_AddStringToObject(o, "ensemble", condition_ensemble_name(s->ensemble));
    break;
  }
  case CONDITION_FK:
    cJSON_AddItemToObject(o, s->fan_pass ? "pass_mps" : "reject_mps",
                          cJSON_CreateDoubleArray(s->fan_mps, 2));
    cJSON_AddNumberToObject(o, "taper_pct", s->taper_pct);
    cJSON_AddNumberToObject(o, "min_hz", s->min_hz);
    break;
  }
  return o;
}

static cJSON *edits_set_json(const edits_set *set)
{
  char buf[EDITS_MAX_RANGES * 28] = "";
  size_t n = 0;
  for (size_t i = 0; i < set->n && n < sizeof buf; i++) {
    if (set->r[i].lo == set->r[i].hi)
      n += (size_t)snprintf(buf + n, sizeof buf - n, "%s%lld", i ? "," : "",
                            (long long)set->r[i].lo);
    else
      n += (size_t)snprintf(buf + n, sizeof buf - n, "%s%lld-%lld", i ? "," : "",
                            (long long)set->r[i].lo, (long long)set->r[i].hi);
  }
  return cJSON_CreateString(buf);
}

static cJSON *edit_list_json(const edits_entry *e, size_t n)
{
  cJSON *a = cJSON_CreateArray();
  for (size_t i = 0; a && i < n; i++) {
    cJSON *o = cJSON_CreateObject();
    if (!o)
      break;
    if (e[i].record.n)
      cJSON_AddItemToObject(o, "record", edits_set_json(&e[i].record));
    if (e[i].channel.n)
      cJSON_AddItemToObject(o, "channels", edits_set_json(&e[i].channel));
    if (e[i].source_station.n)
      cJSON_AddItemToObject(o, "source_station", edits_set_json(&e[i].source_station));
    if (e[i].receiver_station.n)
      cJSON_AddItemToObject(o, "receiver_station", edits_set_json(&e[i].receiver_station));
    if (e[i].file[0])
      cJSON_AddStringToObject(o, "file", e[i].file);
    cJSON_AddItemToArray(a, o);
  }
  return a;
}

static cJSON *edits_json(const edits_spec *ed)
{
  cJSON *o = cJSON_CreateObject();
  if (!o)
    return NULL;
  cJSON_AddItemToObject(o, "kill", edit_list_json(ed->kill, ed->nkill));
  cJSON_AddItemToObject(o, "reverse", edit_list_json(ed->reverse, ed->nreverse));
  cJSON *a = cJSON_AddObjectToObject(o, "auto");
  if (a) {
    cJSON_AddBoolToObject(a, "dead", ed->auto_dead);
    if (ed->rms_ratio_max > 0)
      cJSON_AddNumberToObject(a, "rms_ratio_max", ed->rms_ratio_max);
    else
      cJSON_AddNullToObject(a, "rms_ratio_max");
    double w[2] = { ed->window_start_ms, ed->window_end_ms };
    if (ed->window_end_ms > 0)
      cJSON_AddItemToObject(a, "window_ms", cJSON_CreateDoubleArray(w, 2));
    else
      cJSON_AddNullToObject(a, "window_ms");
  }
  return o;
}

int job_to_json(const job_spec *j, char **out, tz_err *err)
{
  cJSON *r = cJSON_CreateObject(), *o;
  int bad = !r;
  if (!bad) {
    bad |= add_str(r, "name", j->name);
    bad |= add_str(r, "job_file", j->path);
    if (j->units)
      bad |= add_str(r, "units", j->units == 2 ? "feet" : "metres");
    if (j->client)
      bad |= add_str(r, "client", j->client);
    if (j->contractor)
      bad |= add_str(r, "contractor", j->contractor);
    if (j->crs)
      bad |= add_str(r, "crs", j->crs);
    if (j->polarity)
      bad |= add_str(r, "polarity", j->polarity == 1 ? "negative" : "positive");
    o = cJSON_AddArrayToObject(r, "shots");
    for (size_t i = 0; o && i < j->npatterns; i++)
      bad |= !cJSON_AddItemToArray(o, cJSON_CreateString(j->patterns[i]));
    o = cJSON_AddArrayToObject(r, "shot_files");
    for (size_t i = 0; o && i < j->nshots; i++)
      bad |= !cJSON_AddItemToArray(o, cJSON_CreateString(j->shots[i]));
    if (j->geometry == JOB_GEOMETRY_HEADERS) {
      bad |= add_str(r, "geometry", "headers");
    } else {
      o = cJSON_AddObjectToObject(r, "geometry");
      if (j->geometry == JOB_GEOMETRY_SPS)
        bad |= !o || job_sps_to_json(j, o);
      else
        bad |= !o || add_str(o, j->geometry == JOB_GEOMETRY_LAYOUT ? "layout" : "table",
                             j->geometry_file);
    }
    bad |= add_str(r, "header_map", j->header_map);
    if (j->interval_us)
      cJSON_AddNumberToObject(r, "interval_us", j->interval_us);
    o = cJSON_AddObjectToObject(r, "bins");
    if (o) {
      /* null = "fitted / derived at run time"; the report's geometry block has the values */
      if (j->bins.has_size) cJSON_AddNumberToObject(o, "size_m", j->bins.size_m);
      else cJSON_AddNullToObject(o, "size_m");
      if (j->bins.has_origin) {
        cJSON_AddNumberToObject(o, "origin_x_m", j->bins.origin_x_m);
        cJSON_AddNumberToObject(o, "origin_y_m", j->bins.origin_y_m);
        cJSON_AddNumberToObject(o, "azimuth_deg", j->bins.azimuth_deg);
      } else {
        cJSON_AddNullToObject(o, "origin_x_m");
        cJSON_AddNullToObject(o, "origin_y_m");
        cJSON_AddNullToObject(o, "azimuth_deg");
      }
      cJSON_AddNumberToObject(o, "first_cmp", (double)j->bins.first_cmp);
      cJSON_AddNumberToObject(o, "max_distance_m", j->bins.max_distance_m);
      bad |= job_crooked_to_json(j, o);
    }
    bad |= add_str(r, "velocity", j->velocity);
    o = cJSON_AddObjectToObject(r, "moveout");
    if (o) {
      cJSON_AddNumberToObject(o, "stretch_limit_pct", j->stretch_limit_pct);
      add_str(o, "interpolation", job_interp_name(j->interpolation));
      cJSON_AddBoolToObject(o, "fourth_order", j->fourth_order);
      cJSON_AddNumberToObject(o, "stretch_taper_ms", j->stretch_taper_ms);
    }
    o = cJSON_AddObjectToObject(r, "mute");
    if (o)
      bad |= job_mute_to_json(j, o);
    o = cJSON_AddObjectToObject(r, "selection");
    if (o) {
      if (j->has_cmp_range) {
        cJSON_AddNumberToObject(o, "cmp_first", (double)j->cmp_first);
        cJSON_AddNumberToObject(o, "cmp_last", (double)j->cmp_last);
      } else {
        cJSON_AddNullToObject(o, "cmp_first");
        cJSON_AddNullToObject(o, "cmp_last");
      }
      cJSON_AddNumberToObject(o, "offset_min_m", j->offset_min_m);
      if (isfinite(j->offset_max_m)) cJSON_AddNumberToObject(o, "offset_max_m", j->offset_max_m);
      else cJSON_AddNullToObject(o, "offset_max_m");
    }
    o = cJSON_AddObjectToObject(r, "output");
    if (o) {
      add_str(o, "section", j->section);
      add_str(o, "report", j->report);
      if (j->no_html)
        cJSON_AddFalseToObject(o, "html");
      else if (j->html)
        add_str(o, "html", j->html);
      add_str(o, "sample_format", j->sample_format == JOB_FORMAT_IBM ? "ibm" : "ieee");
      if (j->migrated)
        add_str(o, "migrated", j->migrated);
      if (j->navigation)
        add_str(o, "navigation", j->navigation);
      if (j->history)
        add_str(o, "history", j->history);
    }
    o = cJSON_AddArrayToObject(r, "conditioning");
    for (size_t i = 0; o && i < j->conditioning.n; i++)
      bad |= !cJSON_AddItemToArray(o, condition_step_json(&j->conditioning.step[i]));
    if (edits_spec_active(&j->edits))
      bad |= !cJSON_AddItemToObject(r, "edits", edits_json(&j->edits));
    if (j->statics.present) {
      const job_statics *st = &j->statics;
      o = cJSON_AddObjectToObject(r, "statics");
      if (o) {
        cJSON_AddNumberToObject(o, "datum_m", st->datum_m);
        cJSON_AddNumberToObject(o, "replacement_velocity_mps", st->replacement_velocity_mps);
        cJSON_AddBoolToObject(o, "elevation", st->elevation);
        if (st->weathering_velocity_mps > 0)
          cJSON_AddNumberToObject(o, "weathering_velocity_mps", st->weathering_velocity_mps);
        else
          cJSON_AddNullToObject(o, "weathering_velocity_mps");
        cJSON_AddBoolToObject(o, "uphole", st->uphole);
        cJSON *t = cJSON_AddArrayToObject(o, "tables");
        for (size_t i = 0; t && i < st->ntables; i++)
          cJSON_AddItemToArray(t, cJSON_CreateString(st->tables[i]));
        cJSON_AddNumberToObject(o, "floating_datum_smooth_m", st->floating_datum_smooth_m);
        if (st->station_interval_m > 0)
          cJSON_AddNumberToObject(o, "station_interval_m", st->station_interval_m);
        else
          cJSON_AddNullToObject(o, "station_interval_m");
      }
    }
    if (j->limits.given) {
      char *lt = NULL;
      tz_err le;
      tz_err_init(&le);
      cJSON *lo = limits_to_json(&j->limits, &lt, &le) ? NULL : cJSON_Parse(lt);
      free(lt);
      bad |= !lo || !cJSON_AddItemToObject(r, "limits", lo);
      bad |= add_str(r, "limits_file", j->limits_file);
    }
    if (j->migration.given && (o = cJSON_AddObjectToObject(r, "migration"))) {
      add_str(o, "method", j->migration.method ? "kirchhoff" : "phase-shift");
      add_str(o, "velocity", j->migration.velocity ? j->migration.velocity : j->velocity);
      cJSON_AddNumberToObject(o, "velocity_pct", j->migration.velocity_pct);
      cJSON_AddNumberToObject(o, "aperture_m", j->migration.aperture_m);
      cJSON_AddNumberToObject(o, "max_dip_deg", j->migration.max_dip_deg);
      cJSON_AddNumberToObject(o, "max_hz", j->migration.max_hz);
    }
    if (j->poststack.n)
      bad |= !cJSON_AddItemToObject(r, "poststack", job_poststack_json(&j->poststack));
    cJSON_AddNumberToObject(r, "threads", j->threads);
    cJSON_AddBoolToObject(r, "skip_bad_files", j->skip_bad_files);
  }
  char *s = bad ? NULL : cJSON_PrintUnformatted(r);
  cJSON_Delete(r);
  if (!s)
    return tz_fail(err, TZ_E_NOMEM, "resolved job JSON");
  *out = s;
  return TZ_OK;
}

/* ---------------------------------------------------------------- dependency files */

static int put_make_path(FILE *fp, const char *s)
{
  for (; *s; s++) {
    int ok = 1;
    if (*s == ' ' || *s == '#' || *s == '\\')
      ok = fputc('\\', fp) != EOF;
    if (*s == '$')
      ok = fputc('$', fp) != EOF;
    if (!ok || fputc(*s, fp) == EOF)
      return -1;
  }
  return 0;
}

struct dep_writer {
  FILE *fp;
  int pass;               /* 0: the dependency list, 1: the empty rules */
};

static int put_dep(void *ctx, const char *path, int kind)
{
  struct dep_writer *d = ctx;
  (void)kind;
  if (d->pass == 0)
    return fputs(" \\\n  ", d->fp) == EOF || put_make_path(d->fp, path);
  return put_make_path(d->fp, path) || fputs(":\n", d->fp) == EOF;
}

int job_write_depfile(const job_spec *j, const char *const *targets, size_t ntargets,
                      const char *path, tz_err *err)
{
  fileio_out *o = NULL;
  int rc = fileio_create(&o, path, err);
  if (rc)
    return rc;
  struct dep_writer d = { fileio_stream(o), 0 };
  int bad = 0;
  for (size_t i = 0; !bad && i < ntargets; i++)
    bad = (i && fputc(' ', d.fp) == EOF) || put_make_path(d.fp, targets[i]);
  bad = bad || fputc(':', d.fp) == EOF || job_foreach_input(j, put_dep, &d) ||
        fputs("\n\n", d.fp) == EOF;
  d.pass = 1;
  bad = bad || job_foreach_input(j, put_dep, &d);
  if (bad) {
    fileio_abort(o);
    tz_fail(err, TZ_E_IO, "write failed");
    return tz_err_path(err, path);
  }
  return fileio_commit(o, err);
}
