/* stack_reuse.c -- reruns that restack only the CMPs whose inputs changed.
 *
 * Every run gives each CMP of its section a reuse key: the SHA-256 digest
 * (FIPS 180-4, through digest.h) of
 *   - a digest of everything in the job but the velocity table: the resolved
 *     job (job_to_json) without its velocity, output, thread and CMP-range keys; the
 *     bytes of every other file it names (geometry, header map, statics and
 *     edit tables, ...); the path, size and modification time of every shot
 *     file (as build tools judge files); the sample axis; and, when the job
 *     conditions the traces (a gain may take its velocities from the table),
 *     the bytes of the velocity table too;
 *   - the CMP number and the velocity function the NMO of that CMP uses (its
 *     velocities, and eta when used, sampled on the section's time axis, as
 *     stack_run samples them).
 * The report records the key of each CMP ("reuse_key_sha256"). A run given a
 * reused section compares the keys: a CMP whose key is the same in the reused
 * report is carried (its samples copied from the reused section, its fold,
 * live fraction, full-fold time and muted sample counts from the reused
 * report; its position and
 * offsets come from this run's header pass, as in any run); the others are
 * restacked, reading only their traces. Since any change other than the
 * velocity function changes every key, a velocity revision restacks only the
 * CMPs whose function moved; anything else restacks the line ("when in doubt,
 * recompute"). The carried rows are the bytes a full run writes: the same
 * sums in the same order produced them, and the section is written again by
 * the same writer.
 *
 * Not here: the data pass (stack_run.c, which skips the carried CMPs' traces).
 */
#include "stack_int.h"

#include <cJSON.h>
#include <math.h>
#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "tzero/digest.h"
#include "tzero/fileio.h"
#include "tzero/job.h"
#include "tzero/segy.h"
#include "tzero/velocity.h"
#include "util/json_doc.h"

#define KEY_LEN (DIGEST_HEX_LEN + 1)
#define MAX_REPORT_BYTES ((size_t)1 << 30)

struct stack_reuse {
  int32_t first;
  size_t ncmps;
  unsigned char *restack;      /* per CMP of the range: 1 restacked, 0 carried */
  size_t carried;
  stack_cmp_result *old;       /* per CMP: the reused report's values (carried CMPs) */
  char *section;               /* path of the reused section */
};

static int put(digest_ctx *d, const void *p, size_t n, tz_err *err)
{
  return digest_update(d, p, n, err);
}

static int put_str(digest_ctx *d, const char *s, tz_err *err)
{
  return digest_update(d, s, strlen(s) + 1, err);    /* with its NUL: no run-together */
}

/* The bytes of every file a string of the job names (depth-first, key order). */
static int put_named_files(digest_ctx *d, const cJSON *v, tz_err *err)
{
  int rc = TZ_OK;
  if (cJSON_IsString(v) && v->valuestring) {
    struct stat st;
    if (stat(v->valuestring, &st) == 0 && S_ISREG(st.st_mode)) {
      char hex[KEY_LEN];
      if ((rc = digest_file(v->valuestring, hex, err)))
        return rc;
      if ((rc = put_str(d, v->valuestring, err)) || (rc = put_str(d, hex, err)))
        return rc;
    }
  }
  for (const cJSON *c = v->child; c && !rc; c = c->next)
    rc = put_named_files(d, c, err);
  return rc;
}

/* The digest of everything but the velocity function (see the top). */
static int job_part(const stack_plan *p, char hex[KEY_LEN], tz_err *err)
{
  const job_spec *j = p->job;
  char *text = NULL;
  int rc = job_to_json(j, &text, err);
  if (rc)
    return rc;
  cJSON *root = cJSON_Parse(text);
  free(text);
  if (!root)
    return tz_fail(err, TZ_E_NOMEM, "reuse key of the job");
  /* not part of any CMP's trace: the velocity table (its function per CMP is
   * digested below), the outputs, the threads, the CMP range (a part of the line
   * gives the same bits as the whole line), the shots (identified below by size
   * and time, not digested: that would be a second read of every byte), the job
   * file's name (its content is the resolved job) */
  static const char *const drop[] = { "velocity", "output", "threads", "shots", "shot_files",
                                      "job_file" };
  for (size_t k = 0; k < sizeof drop / sizeof drop[0]; k++)
    cJSON_DeleteItemFromObjectCaseSensitive(root, drop[k]);
  cJSON *sel = cJSON_GetObjectItemCaseSensitive(root, "selection");
  if (sel) {                      /* the offset limits stay */
    cJSON_DeleteItemFromObjectCaseSensitive(sel, "cmp_first");
    cJSON_DeleteItemFromObjectCaseSensitive(sel, "cmp_last");
  }
  char *flat = cJSON_PrintUnformatted(root);
  digest_ctx *d = NULL;
  if (!flat)
    rc = tz_fail(err, TZ_E_NOMEM, "reuse key of the job");
  if (!rc && !(rc = digest_new(&d, err)))
    rc = put_str(d, "tzero reuse key 1", err);
  if (!rc)
    rc = put_str(d, flat, err);
  if (!rc)
    rc = put_named_files(d, root, err);
  free(flat);
  cJSON_Delete(root);
  for (size_t i = 0; !rc && i < p->ninputs; i++) {
    struct stat st;
    int64_t id[3] = { -1, -1, -1 };
    if (stat(p->inputs[i].path, &st) == 0) {
      id[0] = (int64_t)st.st_size;
      id[1] = (int64_t)st.st_mtim.tv_sec;
      id[2] = (int64_t)st.st_mtim.tv_nsec;
    }
    if (!(rc = put_str(d, p->inputs[i].path, err)))
      rc = put(d, id, sizeof id, err);
  }
  if (!rc) {
    double ax[3] = { (double)p->axis.ns, p->axis.dt_s, p->axis.t_first_s };
    rc = put(d, ax, sizeof ax, err);
  }
  if (!rc && j->conditioning.n && j->velocity) {
    char vh[KEY_LEN];
    if (!(rc = digest_file(j->velocity, vh, err)))
      rc = put_str(d, vh, err);
  }
  if (!rc)
    rc = digest_final(d, hex, err);
  digest_free(d);
  return rc;
}

/* Keys of CMP indexes [lo, hi) of the run's range, into k (KEY_LEN each). */
typedef struct {
  const stack_plan *p;
  const stack_run_opts *o;
  const char *jh;
  int use_eta;
  size_t lo, hi;
  char *k;
  int rc;
  tz_err err;
} key_share;

static void *key_part(void *arg)
{
  key_share *ks = arg;
  const stack_plan *p = ks->p;
  size_t ns = p->axis.ns;
  tz_err *err = &ks->err;
  float *vel = malloc(2 * ns * sizeof *vel);
  digest_ctx *d = NULL;
  int rc = vel ? digest_new(&d, err)
               : tz_fail(err, TZ_E_NOMEM, "reuse keys of %zu CMPs", ks->hi - ks->lo);
  for (size_t c = ks->lo; c < ks->hi && !rc; c++) {
    int32_t cmp = ks->o->first_cmp + (int32_t)c;
    velocity_sample(ks->o->velocity, cmp, p->axis.t_first_s, p->axis.dt_s, ns, vel,
                    ks->use_eta ? vel + ns : NULL);
    if (!(rc = digest_reset(d, err)) && !(rc = put_str(d, ks->jh, err)) &&
        !(rc = put(d, &cmp, sizeof cmp, err)) &&
        !(rc = put(d, vel, (ks->use_eta ? 2 : 1) * ns * sizeof *vel, err)))
      rc = digest_final(d, ks->k + c * KEY_LEN, err);
  }
  digest_free(d);
  free(vel);
  ks->rc = rc;
  return NULL;
}

/* The per-CMP keys are independent, so they are made by as many threads as
 * the data pass uses (each key is the same whichever thread makes it). */
int stack_reuse_keys(const stack_plan *p, const stack_run_opts *o, char **keys, tz_err *err)
{
  *keys = NULL;
  size_t n = (size_t)((int64_t)o->last_cmp - o->first_cmp + 1);
  char jh[KEY_LEN];
  int rc = job_part(p, jh, err);
  if (rc)
    return rc;
  char *k = malloc(n * KEY_LEN);
  long cores = stack_usable_cpus();   /* the data pass's rule (stack_run) */
  size_t T = o->threads > 0 ? (size_t)o->threads : cores > 0 ? (size_t)cores : 1;
  T = T > JOB_MAX_THREADS ? JOB_MAX_THREADS : T > n ? (n ? n : 1) : T;
  key_share ks[JOB_MAX_THREADS];
  pthread_t th[JOB_MAX_THREADS];
  int started[JOB_MAX_THREADS] = { 0 };
  if (!k)
    return tz_fail(err, TZ_E_NOMEM, "reuse keys of %zu CMPs", n);
  for (size_t t = 0; t < T; t++) {
    ks[t] = (key_share){ .p = p, .o = o, .jh = jh, .k = k, .lo = n * t / T,
                         .hi = n * (t + 1) / T,
                         .use_eta = o->nmo.use_eta && velocity_table_has_eta(o->velocity) };
    tz_err_init(&ks[t].err);
  }
  for (size_t t = 1; t < T; t++)
    started[t] = pthread_create(&th[t], NULL, key_part, &ks[t]) == 0;
  for (size_t t = 0; t < T; t++)
    if (!t || !started[t])       /* this thread's share, and any that could not start */
      key_part(&ks[t]);
  for (size_t t = 1; t < T; t++)
    if (started[t])
      pthread_join(th[t], NULL);
  for (size_t t = 0; t < T && !rc; t++)
    if (ks[t].rc) {
      *err = ks[t].err;
      rc = ks[t].rc;
    }
  if (rc) {
    free(k);
    return rc;
  }
  *keys = k;
  return TZ_OK;
}

void stack_reuse_free(stack_reuse *r)
{
  if (!r)
    return;
  free(r->restack);
  free(r->old);
  free(r->section);
  free(r);
}

const unsigned char *stack_reuse_restack(const stack_reuse *r) { return r ? r->restack : NULL; }
size_t stack_reuse_carried(const stack_reuse *r) { return r ? r->carried : 0; }

static double num_or_nan(const cJSON *o, const char *k)
{
  const cJSON *v = cJSON_GetObjectItemCaseSensitive(o, k);
  return cJSON_IsNumber(v) ? v->valuedouble : NAN;
}

static double num_or_zero(const cJSON *o, const char *k)
{
  const cJSON *v = cJSON_GetObjectItemCaseSensitive(o, k);
  return cJSON_IsNumber(v) ? v->valuedouble : 0;
}

/* The reused report's CMP objects: which keys match, and their values. */
static int match_report(stack_reuse *r, const char *keys, const char *path, char *why,
                        size_t whycap, tz_err *err)
{
  char *text = NULL;
  size_t len = 0;
  int rc = fileio_read_all(path, MAX_REPORT_BYTES, &text, &len, err);
  if (rc)
    return rc;
  cJSON *root = NULL;
  rc = json_doc_parse(&root, text, len, path, "reused report", TZ_E_FORMAT, err);
  free(text);
  if (rc)
    return rc;
  const cJSON *cm = cJSON_GetObjectItemCaseSensitive(root, "cmps");
  if (!cJSON_IsArray(cm)) {
    cJSON_Delete(root);
    tz_err_path(err, path);
    return tz_fail(err, TZ_E_FORMAT, "$.cmps: not an array of CMPs (not a tzero QC report?)");
  }
  size_t k = 0, keyed = 0;
  for (const cJSON *c = cm->child; c; c = c->next, k++) {
    const cJSON *cmp = cJSON_GetObjectItemCaseSensitive(c, "cmp");
    const cJSON *key = cJSON_GetObjectItemCaseSensitive(c, "reuse_key_sha256");
    if (!cJSON_IsNumber(cmp)) {
      cJSON_Delete(root);
      tz_err_path(err, path);
      return tz_fail(err, TZ_E_FORMAT, "$.cmps[%zu].cmp: not a number", k);
    }
    if (!cJSON_IsString(key))
      continue;
    keyed++;
    double v = cmp->valuedouble;
    if (v < r->first || v >= (double)r->first + (double)r->ncmps || v != floor(v))
      continue;
    size_t i = (size_t)(v - r->first);
    if (strcmp(key->valuestring, keys + i * KEY_LEN) || !r->restack[i])
      continue;
    stack_cmp_result *o = &r->old[i];
    double fold = num_or_nan(c, "fold");
    if (!(fold >= 0 && fold <= INT32_MAX)) {
      cJSON_Delete(root);
      tz_err_path(err, path);
      return tz_fail(err, TZ_E_FORMAT, "$.cmps[%zu].fold: missing or not a count", k);
    }
    o->fold = (int32_t)fold;
    o->live_fraction = num_or_nan(c, "live_fraction");
    o->full_fold_ms = num_or_nan(c, "full_fold_ms");   /* null: never full */
    o->muted_top = (int64_t)num_or_zero(c, "top_muted_samples");
    o->muted_inner = (int64_t)num_or_zero(c, "inner_muted_samples");
    o->muted_bottom = (int64_t)num_or_zero(c, "bottom_muted_samples");
    r->restack[i] = 0;
    r->carried++;
  }
  cJSON_Delete(root);
  if (!keyed)
    snprintf(why, whycap, "the report %s records no reuse keys (written by an earlier "
             "version): every CMP is restacked", path);
  return TZ_OK;
}

/* The header of trace t of the reused section; *i = its CMP's index in the
 * run's range, or -1 outside it. */
static int trace_cmp(const stack_reuse *r, segy_file *f, int64_t t, segy_trace_header *h,
                     int64_t *i, tz_err *err)
{
  int rc = segy_header_read(f, t, h, err);
  *i = rc ? -1 : (int64_t)h->cmp - r->first;
  if (*i >= (int64_t)r->ncmps)
    *i = -1;
  return rc;
}

/* The reused section holds a trace for each carried CMP, on the same axis. */
static int check_section(stack_reuse *r, const stack_plan *p, tz_err *err)
{
  segy_file *f = NULL;
  int rc = segy_open(&f, r->section, NULL, err);
  if (rc)
    return rc;
  const segy_info *in = segy_get_info(f);
  if (in->samples != p->axis.ns || in->interval_us != p->interval_us) {
    unsigned ns = in->samples, us = in->interval_us;   /* *in goes with the handle */
    segy_close(f);
    tz_err_path(err, r->section);
    return tz_fail(err, TZ_E_FORMAT, "reused section has %u samples at %u us, this run %zu at "
                   "%u us: not a section of this line", ns, us,
                   (size_t)p->axis.ns, p->interval_us);
  }
  unsigned char *seen = calloc(r->ncmps ? r->ncmps : 1, 1);
  if (!seen) {
    segy_close(f);
    return tz_fail(err, TZ_E_NOMEM, "reused section");
  }
  int64_t n = segy_trace_count(f);
  for (int64_t t = 0; t < n && !rc; t++) {
    segy_trace_header h;
    int64_t i;
    if (!(rc = trace_cmp(r, f, t, &h, &i, err)) && i >= 0)
      seen[i] = 1;
  }
  for (size_t i = 0; i < r->ncmps && !rc; i++)
    if (!r->restack[i] && !seen[i]) {
      tz_err_path(err, r->section);
      rc = tz_fail(err, TZ_E_FORMAT, "reused section has no trace of CMP %d, which its report "
                   "lists: the section and the report do not belong together",
                   (int)(r->first + (int32_t)i));
    }
  free(seen);
  segy_close(f);
  return rc;
}

int stack_reuse_open(stack_reuse **out, const stack_plan *p, const stack_run_opts *o,
                     const char *keys, const char *section, const char *report, char *why,
                     size_t whycap, tz_err *err)
{
  *out = NULL;
  why[0] = 0;
  struct stat st;
  if (stat(section, &st) != 0 || !S_ISREG(st.st_mode)) {
    snprintf(why, whycap, "reused section %s not found: every CMP is restacked", section);
    return TZ_OK;
  }
  if (!report || stat(report, &st) != 0 || !S_ISREG(st.st_mode)) {
    snprintf(why, whycap, "no QC report %s beside the reused section: every CMP is restacked",
             report ? report : "");
    return TZ_OK;
  }
  stack_reuse *r = calloc(1, sizeof *r);
  if (!r)
    return tz_fail(err, TZ_E_NOMEM, "reuse");
  r->first = o->first_cmp;
  r->ncmps = (size_t)((int64_t)o->last_cmp - o->first_cmp + 1);
  r->restack = malloc(r->ncmps);
  r->old = calloc(r->ncmps, sizeof *r->old);
  r->section = strdup(section);
  if (!r->restack || !r->old || !r->section) {
    size_t n = r->ncmps;
    stack_reuse_free(r);
    return tz_fail(err, TZ_E_NOMEM, "reuse of %zu CMPs", n);
  }
  memset(r->restack, 1, r->ncmps);
  int rc = match_report(r, keys, report, why, whycap, err);
  if (!rc && r->carried)
    rc = check_section(r, p, err);
  if (rc) {
    stack_reuse_free(r);
    return rc;
  }
  *out = r;
  return TZ_OK;
}

int stack_reuse_apply(const stack_reuse *r, stack_section *s, tz_err *err)
{
  if (!r || !r->carried)
    return TZ_OK;
  if (s->first_cmp != r->first || s->ncmps != r->ncmps)
    return tz_fail(err, TZ_E_INTERNAL, "reuse: section range differs from the run's");
  segy_file *f = NULL;
  int rc = segy_open(&f, r->section, NULL, err);
  if (rc)
    return rc;
  size_t ns = s->axis.ns;
  int64_t n = segy_trace_count(f);
  for (int64_t t = 0; t < n && !rc; t++) {
    segy_trace_header h;
    int64_t i;
    if ((rc = trace_cmp(r, f, t, &h, &i, err)))
      break;
    if (i < 0 || r->restack[i])
      continue;
    if ((rc = segy_trace_read(f, t, &h, s->samples + (size_t)i * ns, ns, err)))
      break;
    stack_cmp_result *c = &s->cmps[i];
    const stack_cmp_result *o = &r->old[i];
    c->fold = o->fold;
    c->live_fraction = o->live_fraction;
    c->full_fold_ms = o->full_fold_ms;
    c->muted_top = o->muted_top;
    c->muted_inner = o->muted_inner;
    c->muted_bottom = o->muted_bottom;
  }
  segy_close(f);
  return rc;
}
