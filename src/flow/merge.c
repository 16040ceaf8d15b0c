/* merge.c -- the parts of one line, stacked by separate runs, joined into one section.
 *
 * A part is a `tzero stack --cmp-range A-B` run; its QC report records the
 * resolved job (parameters), the inputs, the per-CMP figures and the sample
 * counts behind every mute fraction. The merge
 *   1. reads every part's report and checks that the parts belong together:
 *      the same parameters except the CMP range, the outputs and the thread
 *      count; the same sample axis; no two parts overlap and no CMP between
 *      them is missing;
 *   2. rebuilds the line from the job file with the parts' own overrides (the
 *      header pass only) and checks it against the parts: the job resolves to
 *      the same parameters, the velocity table has the same SHA-256, every shot
 *      file has the same size and trace count; the parts cover the line's CMP
 *      range (CMPs of a part beyond the line's ends must be empty);
 *   3. assembles a stack_section: samples from the parts' sections (each trace
 *      checked against its report's CMP), bin centres from the plan, fold and
 *      offsets from the parts' reports, trace and sample counts added up;
 *   4. writes it with stack_section_write() and qc_report_build(), the code
 *      `tzero stack` uses, so the result is the whole-line run's.
 * Parts must be merged from the folder they were stacked in when their
 * reports hold relative paths (reports record paths as given).
 *
 * Not here: stacking (stack_run.c), the header pass (stack_plan.c).
 */
#include "tzero/merge.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/deliver.h"
#include "tzero/fileio.h"
#include "tzero/flow.h"
#include "tzero/qc.h"
#include "tzero/segy.h"
#include "util/json_doc.h"

typedef struct part {
  const char *report;          /* borrowed from the options */
  cJSON *root;                 /* owned */
  cJSON *params;               /* parameters without selection range, outputs, threads; owned */
  int64_t first, last;         /* CMP range of the part */
  const char *section;         /* borrowed from root */
} part;

/* ---------------------------------------------------------------- JSON access */

static const cJSON *at(const cJSON *o, const char *path)
{
  char key[64];
  while (o && *path) {
    size_t n = strcspn(path, ".");
    if (n >= sizeof key)
      return NULL;
    memcpy(key, path, n);
    key[n] = '\0';
    o = cJSON_GetObjectItemCaseSensitive(o, key);
    path += n + (path[n] == '.');
  }
  return o;
}

static int num(const part *pt, const cJSON *o, const char *path, double *v, tz_err *err)
{
  const cJSON *x = at(o, path);
  if (!cJSON_IsNumber(x)) {
    tz_fail(err, TZ_E_FORMAT, "not a report of a part of a line: no number at $.%s", path);
    return tz_err_path(err, pt->report);
  }
  *v = x->valuedouble;
  return TZ_OK;
}

static int64_t inum(const cJSON *o, const char *path)
{
  const cJSON *x = at(o, path);
  return cJSON_IsNumber(x) ? (int64_t)llround(x->valuedouble) : 0;
}

static const char *str(const cJSON *o, const char *path)
{
  const cJSON *x = at(o, path);
  return cJSON_IsString(x) ? x->valuestring : NULL;
}

static int fail_part(tz_err *err, const part *pt, const char *fmt, const char *detail)
{
  tz_fail(err, TZ_E_FORMAT, fmt, detail ? detail : "");
  return tz_err_path(err, pt->report);
}

/* The first top-level key where two parameter objects differ ("" when none). */
static const char *first_difference(const cJSON *a, const cJSON *b)
{
  const cJSON *x;
  cJSON_ArrayForEach(x, a) {
    const cJSON *y = cJSON_GetObjectItemCaseSensitive(b, x->string);
    if (!y || !cJSON_Compare(x, y, 1))
      return x->string;
  }
  cJSON_ArrayForEach(x, b)
    if (!cJSON_GetObjectItemCaseSensitive(a, x->string))
      return x->string;
  return "";
}

/* The parameters that must agree between parts and with the rebuilt job. */
static cJSON *comparable(const cJSON *params)
{
  cJSON *c = cJSON_Duplicate(params, 1);
  if (!c)
    return NULL;
  cJSON *sel = cJSON_GetObjectItemCaseSensitive(c, "selection");
  cJSON_DeleteItemFromObjectCaseSensitive(sel, "cmp_first");
  cJSON_DeleteItemFromObjectCaseSensitive(sel, "cmp_last");
  cJSON_DeleteItemFromObjectCaseSensitive(c, "output");
  cJSON_DeleteItemFromObjectCaseSensitive(c, "threads");
  return c;
}

/* ---------------------------------------------------------------- reading the parts */

static int load_part(part *pt, tz_err *err)
{
  char *text = NULL;
  size_t len = 0;
  int rc = fileio_read_all(pt->report, QC_MAX_BYTES, &text, &len, err);
  if (rc)
    return rc;
  rc = json_doc_parse(&pt->root, text, len, pt->report, "QC report", TZ_E_FORMAT, err);
  free(text);
  if (rc)
    return rc;
  const char *fmt = str(pt->root, "format");
  if (!fmt || strcmp(fmt, QC_FORMAT) != 0)
    return fail_part(err, pt, "not a QC report of format " QC_FORMAT "%s", NULL);
  const cJSON *params = at(pt->root, "parameters");
  if (!cJSON_IsObject(params))
    return fail_part(err, pt, "$.parameters missing%s", NULL);
  const cJSON *f = at(params, "selection.cmp_first"), *l = at(params, "selection.cmp_last");
  if (!cJSON_IsNumber(f) || !cJSON_IsNumber(l))
    return fail_part(err, pt, "not a part of a line: stacked without a CMP range "
                     "(tzero stack --cmp-range)%s", NULL);
  pt->first = (int64_t)llround(f->valuedouble);
  pt->last = (int64_t)llround(l->valuedouble);
  if (!(pt->section = str(pt->root, "section.path")))
    return fail_part(err, pt, "$.section.path: the part's section is not named%s", NULL);
  if (!str(params, "job_file") || !str(params, "job_file")[0])
    return fail_part(err, pt, "$.parameters.job_file: the part names no job file%s", NULL);
  const cJSON *cm = at(pt->root, "cmps");
  if (!cJSON_IsArray(cm) || cJSON_GetArraySize(cm) != (int)(pt->last - pt->first + 1))
    return fail_part(err, pt, "$.cmps: not one entry per CMP of the part's range%s", NULL);
  if (!(pt->params = comparable(params)))
    return tz_fail(err, TZ_E_NOMEM, "report parameters");
  return TZ_OK;
}

static int cmp_parts(const void *a, const void *b)
{
  const part *x = a, *y = b;
  return (x->first > y->first) - (x->first < y->first);
}

/* Same parameters, sample axis, mute classes and skip counts in every part; ranges
 * in order without overlap or gap. */
static int check_parts(part *pt, size_t n, tz_err *err)
{
  qsort(pt, n, sizeof *pt, cmp_parts);
  static const char *const same[] = { "section.samples", "section.interval_us",
    "section.start_time_ms", "traces.read", "mute.offset_class_m", "geometry.nominal_fold",
    "traces.skipped.dead", "traces.skipped.auxiliary", "traces.skipped.off_line",
    "traces.skipped.outside_offset_limits", "traces.skipped.sample_axis_mismatch",
    "traces.skipped.unreadable", "traces.skipped.bad_file" };
  for (size_t k = 1; k < n; k++) {
    const char *d = first_difference(pt[0].params, pt[k].params);
    if (d[0]) {
      tz_fail(err, TZ_E_FORMAT, "does not belong with %s: its job differs at $.parameters.%s",
              pt[0].report, d);
      return tz_err_path(err, pt[k].report);
    }
    for (size_t i = 0; i < sizeof same / sizeof *same; i++) {
      const cJSON *a = at(pt[0].root, same[i]), *b = at(pt[k].root, same[i]);
      if (!a || !b || !cJSON_Compare(a, b, 1)) {
        tz_fail(err, TZ_E_FORMAT, "does not belong with %s: $.%s differs", pt[0].report,
                same[i]);
        return tz_err_path(err, pt[k].report);
      }
    }
    if (pt[k].first <= pt[k - 1].last) {
      tz_fail(err, TZ_E_FORMAT, "CMPs %lld-%lld overlap part %s (CMPs %lld-%lld)",
              (long long)pt[k].first, (long long)pt[k].last, pt[k - 1].report,
              (long long)pt[k - 1].first, (long long)pt[k - 1].last);
      return tz_err_path(err, pt[k].report);
    }
    if (pt[k].first > pt[k - 1].last + 1) {
      tz_fail(err, TZ_E_FORMAT, "CMPs %lld-%lld are in no part (between %s and %s)",
              (long long)pt[k - 1].last + 1, (long long)pt[k].first - 1, pt[k - 1].report,
              pt[k].report);
      return tz_err_path(err, pt[k].report);
    }
  }
  return TZ_OK;
}

/* ---------------------------------------------------------------- the rebuilt line */

static int rebuild(flow_setup *su, const part *p0, const merge_opts *o, tz_err *err)
{
  const cJSON *params = at(p0->root, "parameters");
  job_overrides ov;
  job_overrides_init(&ov);
  ov.velocity = str(params, "velocity");
  ov.section = o->section;
  ov.report = o->report;
  const cJSON *x = at(params, "moveout.stretch_limit_pct");
  if (cJSON_IsNumber(x))
    ov.stretch_limit_pct = x->valuedouble;
  const char *interp = str(params, "moveout.interpolation");
  if (interp)
    ov.interpolation = strcmp(interp, job_interp_name(JOB_INTERP_SINC8)) == 0 ? JOB_INTERP_SINC8
                                                                              : JOB_INTERP_LINEAR;
  if (cJSON_IsNumber(x = at(params, "threads")))
    ov.threads = (int)x->valuedouble;
  if (cJSON_IsBool(x = at(params, "skip_bad_files")))
    ov.skip_bad_files = cJSON_IsTrue(x);
  int rc = flow_setup_load(su, str(params, "job_file"), &ov, 1, NULL, NULL, err);
  if (rc)
    return rc;
  /* the job file must still say what it said when the parts were stacked */
  char *json = NULL;
  if ((rc = job_to_json(su->job, &json, err)))
    return rc;
  cJSON *now = cJSON_Parse(json);
  free(json);
  cJSON *cmp = now ? comparable(now) : NULL;
  cJSON_Delete(now);
  if (!cmp)
    return tz_fail(err, TZ_E_NOMEM, "resolved job");
  const char *d = first_difference(p0->params, cmp);
  if (d[0]) {
    tz_fail(err, TZ_E_FORMAT, "the job %s has changed since this part was stacked "
            "($.parameters.%s differs)", str(params, "job_file"), d);
    rc = tz_err_path(err, p0->report);
  }
  cJSON_Delete(cmp);
  return rc;
}

static int check_against_line(const flow_setup *su, const part *pt, size_t n, tz_err *err)
{
  const stack_plan *p = su->plan;
  const char *vsha = su->velocity ? velocity_table_sha256(su->velocity) : "";
  nmo_axis ax = stack_plan_axis(p);
  for (size_t k = 0; k < n; k++) {
    const char *s = str(pt[k].root, "velocity.sha256");
    if (!s || strcmp(s, vsha) != 0) {
      tz_fail(err, TZ_E_FORMAT, "the velocity table %s is not the one this part was stacked "
              "with (SHA-256 %s, now %.64s)", su->job->velocity ? su->job->velocity : "",
              s ? s : "not recorded", vsha[0] ? vsha : "none");
      return tz_err_path(err, pt[k].report);
    }
    const cJSON *in = at(pt[k].root, "inputs");
    if (cJSON_GetArraySize(in) != (int)stack_plan_ninputs(p))
      return fail_part(err, &pt[k], "the job's shot files are not the ones this part read%s",
                       NULL);
    for (size_t i = 0; i < stack_plan_ninputs(p); i++) {
      const stack_input *si = stack_plan_input(p, i);
      const cJSON *e = cJSON_GetArrayItem(in, (int)i);
      const char *path = str(e, "path");
      if (!path || strcmp(path, si->path) != 0 || inum(e, "bytes") != si->bytes ||
          inum(e, "traces") != si->traces) {
        tz_fail(err, TZ_E_FORMAT, "shot file %s has changed since this part was stacked "
                "(%lld bytes and %lld traces now, %lld and %lld then)", si->path,
                (long long)si->bytes, (long long)si->traces, (long long)inum(e, "bytes"),
                (long long)inum(e, "traces"));
        return tz_err_path(err, pt[k].report);
      }
    }
    double ns = 0, dt = 0, t0 = 0;
    int rc;
    if ((rc = num(&pt[k], pt[k].root, "section.samples", &ns, err)) ||
        (rc = num(&pt[k], pt[k].root, "section.interval_us", &dt, err)) ||
        (rc = num(&pt[k], pt[k].root, "section.start_time_ms", &t0, err)))
      return rc;
    if ((size_t)ns != ax.ns || (uint32_t)dt != stack_plan_interval_us(p) ||
        fabs(t0 - ax.t_first_s * 1e3) > 1e-3) {
      tz_fail(err, TZ_E_FORMAT, "sample axis %.0f samples of %.0f us from %g ms differs from "
              "the line's (%zu of %u us from %g ms)", ns, dt, t0, ax.ns,
              stack_plan_interval_us(p), ax.t_first_s * 1e3);
      return tz_err_path(err, pt[k].report);
    }
  }
  int64_t first = stack_plan_first_cmp(p), last = stack_plan_last_cmp(p);
  if (pt[0].first > first || pt[n - 1].last < last) {
    int64_t a = pt[0].first > first ? first : pt[n - 1].last + 1;
    int64_t b = pt[0].first > first ? pt[0].first - 1 : last;
    tz_fail(err, TZ_E_FORMAT, "CMPs %lld-%lld of the line (CMPs %lld-%lld) are in no part",
            (long long)a, (long long)b, (long long)first, (long long)last);
    return tz_err_path(err, pt[pt[0].first > first ? 0 : n - 1].report);
  }
  /* CMPs of a part beyond the line's ends are allowed only when empty */
  for (size_t k = 0; k < n; k++) {
    const cJSON *c;
    cJSON_ArrayForEach(c, at(pt[k].root, "cmps")) {
      int64_t cmp = inum(c, "cmp");
      if ((cmp < first || cmp > last) && inum(c, "fold") != 0) {
        tz_fail(err, TZ_E_FORMAT, "CMP %lld has traces but lies outside the line's CMPs "
                "%lld-%lld", (long long)cmp, (long long)first, (long long)last);
        return tz_err_path(err, pt[k].report);
      }
    }
  }
  return TZ_OK;
}

/* ---------------------------------------------------------------- assembling */

static int read_samples(const part *pt, stack_section *s, tz_err *err)
{
  segy_file *f = NULL;
  int rc = segy_open(&f, pt->section, NULL, err);
  if (rc)
    return rc;
  const cJSON *cm = at(pt->root, "cmps");
  int64_t n = segy_trace_count(f);
  if (n != (int64_t)cJSON_GetArraySize(cm)) {
    tz_fail(err, TZ_E_FORMAT, "%lld traces, but its report %s lists %d CMPs", (long long)n,
            pt->report, cJSON_GetArraySize(cm));
    tz_err_path(err, pt->section);
    segy_close(f);
    return TZ_E_FORMAT;
  }
  const cJSON *c = cm->child;
  for (int64_t t = 0; t < n && !rc; t++, c = c->next) {
    segy_trace_header h;
    int64_t cmp = inum(c, "cmp");
    float *dst = NULL;
    if (cmp >= s->first_cmp && cmp < s->first_cmp + (int64_t)s->ncmps)
      dst = s->samples + (size_t)(cmp - s->first_cmp) * s->axis.ns;
    if (!dst) {
      rc = segy_header_read(f, t, &h, err);
    } else {
      rc = segy_trace_read(f, t, &h, dst, s->axis.ns, err);
    }
    if (!rc && (h.cmp != cmp || (h.samples && h.samples != s->axis.ns))) {
      rc = tz_fail_at(err, TZ_E_FORMAT, t, -1, "CMP %d with %u samples where its report "
                      "%s has CMP %lld with %zu", (int)h.cmp, (unsigned)h.samples, pt->report,
                      (long long)cmp, s->axis.ns);
    }
    if (rc)
      tz_err_path(err, pt->section);
  }
  segy_close(f);
  return rc;
}

static double num_or_nan(const cJSON *o, const char *key)
{
  const cJSON *x = cJSON_GetObjectItemCaseSensitive(o, key);
  return cJSON_IsNumber(x) ? x->valuedouble : NAN;
}

/* Per-CMP figures and counts added up over the parts. */
static int assemble(const flow_setup *su, const part *pt, size_t n, stack_section **out,
                    tz_err *err)
{
  const stack_plan *p = su->plan;
  stack_section *s = calloc(1, sizeof *s);
  if (!s)
    return tz_fail(err, TZ_E_NOMEM, "joined section");
  s->axis = stack_plan_axis(p);
  s->interval_us = stack_plan_interval_us(p);
  s->first_cmp = stack_plan_first_cmp(p);
  s->ncmps = stack_plan_ncmps(p);
  s->samples = calloc(s->ncmps * s->axis.ns, sizeof *s->samples);
  s->cmps = calloc(s->ncmps, sizeof *s->cmps);
  if (!s->samples || !s->cmps) {
    stack_section_free(s);
    return tz_fail(err, TZ_E_NOMEM, "joined section of %zu CMPs", s->ncmps);
  }
  const cJSON *r0 = pt[0].root;
  s->traces_read = inum(r0, "traces.read");
  s->bytes_read = inum(r0, "throughput.input_bytes");
  s->threads = (int)inum(r0, "throughput.threads");
  s->offset_class_m = num_or_nan(at(r0, "mute"), "offset_class_m");
  const cJSON *classes0 = at(r0, "mute.by_offset");
  s->nclasses = (size_t)cJSON_GetArraySize(classes0);
  if (s->nclasses > STACK_MUTE_CLASSES)
    s->nclasses = STACK_MUTE_CLASSES;
  for (size_t k = 0; k < s->nclasses; k++) {
    const cJSON *c = cJSON_GetArrayItem(classes0, (int)k);
    s->classes[k].offset_from_m = num_or_nan(c, "offset_from_m");
    s->classes[k].offset_to_m = cJSON_IsNumber(at(c, "offset_to_m")) ? num_or_nan(c, "offset_to_m")
                                                                      : INFINITY;
  }
  for (int r = 0; r < STACK_SKIP__COUNT; r++) {
    char key[80];
    snprintf(key, sizeof key, "traces.skipped.%s", stack_skip_name(r));
    s->skipped[r] = r == STACK_SKIP_CMP_RANGE ? 0 : inum(r0, key);
  }
  int rc = TZ_OK;
  /* edits and statics: counts add up over the parts; the applied statics' range and
   * RMS combine (the RMS through the sums of squares) */
  const cJSON *hk0 = at(r0, "edits.kill_selected"), *hr0 = at(r0, "edits.reverse_selected");
  s->nkill_entries = cJSON_IsArray(hk0) ? (size_t)cJSON_GetArraySize(hk0) : 0;
  s->nreverse_entries = cJSON_IsArray(hr0) ? (size_t)cJSON_GetArraySize(hr0) : 0;
  s->kill_hits = calloc(s->nkill_entries + 1, sizeof *s->kill_hits);
  s->reverse_hits = calloc(s->nreverse_entries + 1, sizeof *s->reverse_hits);
  if (!s->kill_hits || !s->reverse_hits)
    rc = tz_fail(err, TZ_E_NOMEM, "merged edit counts");
  double st_sq = 0;
  for (size_t k = 0; k < n && !rc; k++) {
    const cJSON *r = pt[k].root;
    for (int q = 0; q < EDITS_KILL__COUNT; q++) {
      char key[80];
      snprintf(key, sizeof key, "traces.killed.%s", edits_reason_name(q));
      s->killed[q] += inum(r, key);
    }
    s->reversed += inum(r, "traces.reversed");
    const cJSON *hk = at(r, "edits.kill_selected"), *hr = at(r, "edits.reverse_selected");
    for (size_t e = 0; e < s->nkill_entries; e++)
      s->kill_hits[e] += (int64_t)cJSON_GetNumberValue(cJSON_GetArrayItem(hk, (int)e));
    for (size_t e = 0; e < s->nreverse_entries; e++)
      s->reverse_hits[e] += (int64_t)cJSON_GetNumberValue(cJSON_GetArrayItem(hr, (int)e));
    int64_t nt = inum(r, "statics.applied.traces");
    if (nt > 0) {
      double lo = num_or_nan(at(r, "statics.applied"), "min_ms");
      double hi = num_or_nan(at(r, "statics.applied"), "max_ms");
      double rms = num_or_nan(at(r, "statics.applied"), "rms_ms");
      s->static_min_ms = s->static_traces && s->static_min_ms < lo ? s->static_min_ms : lo;
      s->static_max_ms = s->static_traces && s->static_max_ms > hi ? s->static_max_ms : hi;
      s->static_traces += nt;
      st_sq += rms * rms * (double)nt;
    }
  }
  s->static_rms_ms = s->static_traces ? sqrt(st_sq / (double)s->static_traces) : 0;
  /* the automatic kills each part listed (its own CMPs' traces), in input order */
  size_t nk = 0;
  for (size_t k = 0; k < n; k++) {
    const cJSON *ak = at(pt[k].root, "edits.auto_killed");
    nk += cJSON_IsArray(ak) ? (size_t)cJSON_GetArraySize(ak) : 0;
    s->auto_killed_unlisted += inum(pt[k].root, "edits.auto_killed_unlisted");
  }
  if (!rc && nk && !(s->auto_killed = malloc(nk * sizeof *s->auto_killed)))
    rc = tz_fail(err, TZ_E_NOMEM, "merged list of %zu killed traces", nk);
  for (size_t k = 0; k < n && !rc && nk; k++) {
    const cJSON *c;
    cJSON_ArrayForEach(c, at(pt[k].root, "edits.auto_killed")) {
      stack_killed_trace *t = &s->auto_killed[s->nauto_killed++];
      t->input = (int32_t)inum(c, "input");
      t->trace = inum(c, "trace") - 1;
      t->field_record = (int32_t)inum(c, "field_record");
      t->channel = (int32_t)inum(c, "channel");
      const cJSON *why = at(c, "reason");
      t->reason = EDITS_KILL_LISTED;
      for (int q = 0; q < EDITS_KILL__COUNT; q++)
        if (cJSON_IsString(why) && !strcmp(why->valuestring, edits_reason_name(q)))
          t->reason = q;
    }
  }
  stack_killed_sort(s->auto_killed, s->nauto_killed);
  for (size_t k = 0; k < n && !rc; k++) {
    const cJSON *r = pt[k].root;
    s->traces_stacked += inum(r, "traces.stacked");
    s->bad_samples += inum(r, "traces.bad_samples");
    s->samples_total += inum(r, "mute.samples");
    s->muted_stretch += inum(r, "mute.stretch_muted_samples");
    s->muted_top += inum(r, "mute.top_muted_samples");
    s->muted_end += inum(r, "mute.beyond_trace_end_samples");
    s->muted_inner += inum(r, "mute.inner_muted_samples");
    s->muted_bottom += inum(r, "mute.bottom_muted_samples");
    const cJSON *cl = at(r, "mute.by_offset");
    if (!cJSON_IsArray(cl) || (size_t)cJSON_GetArraySize(cl) != s->nclasses ||
        !cJSON_IsNumber(at(r, "mute.samples"))) {
      rc = fail_part(err, &pt[k], "$.mute: no sample counts or other offset classes than the "
                     "first part's (stacked by an older tzero?)%s", NULL);
      break;
    }
    for (size_t c = 0; c < s->nclasses; c++) {
      const cJSON *e = cJSON_GetArrayItem(cl, (int)c);
      s->classes[c].traces += inum(e, "traces");
      s->classes[c].samples += inum(e, "samples");
      s->classes[c].muted_stretch += inum(e, "stretch_muted_samples");
      s->classes[c].muted_top += inum(e, "top_muted_samples");
      s->classes[c].muted_end += inum(e, "beyond_trace_end_samples");
      s->classes[c].muted_inner += inum(e, "inner_muted_samples");
      s->classes[c].muted_bottom += inum(e, "bottom_muted_samples");
    }
    const cJSON *c;
    cJSON_ArrayForEach(c, at(r, "cmps")) {
      int64_t cmp = inum(c, "cmp");
      if (cmp < s->first_cmp || cmp >= s->first_cmp + (int64_t)s->ncmps)
        continue;
      stack_cmp_result *x = &s->cmps[cmp - s->first_cmp];
      stack_cmp_plan cp;
      stack_plan_cmp(p, (int32_t)cmp, &cp);
      x->cmp = (int32_t)cmp;
      x->x_m = cp.x_m;
      x->y_m = cp.y_m;
      x->fold = (int32_t)inum(c, "fold");
      x->offset_min_m = num_or_nan(c, "offset_min_m");
      x->offset_max_m = num_or_nan(c, "offset_max_m");
      x->live_fraction = num_or_nan(c, "live_fraction");
      x->full_fold_ms = num_or_nan(c, "full_fold_ms");
      x->muted_top = inum(c, "top_muted_samples");
      x->muted_inner = inum(c, "inner_muted_samples");
      x->muted_bottom = inum(c, "bottom_muted_samples");
    }
    rc = read_samples(&pt[k], s, err);
  }
  int64_t other = 0;
  for (int r = 0; r < STACK_SKIP__COUNT; r++)
    other += s->skipped[r];
  for (int q = 0; q < EDITS_KILL__COUNT; q++)
    other += s->killed[q];
  s->skipped[STACK_SKIP_CMP_RANGE] = s->traces_read - s->traces_stacked - other;
  if (rc) {
    stack_section_free(s);
    return rc;
  }
  *out = s;
  return TZ_OK;
}

/* ---------------------------------------------------------------- the merge */

void merge_result_free(merge_result *r)
{
  if (!r)
    return;
  free(r->line);
  memset(r, 0, sizeof *r);
}

int merge_parts(const merge_opts *o, merge_result *res, tz_err *err)
{
  memset(res, 0, sizeof *res);
  if (!o->nparts || o->nparts > MERGE_MAX_PARTS)
    return tz_fail(err, TZ_E_ARG, "%zu parts: give 1 to %u", o->nparts, MERGE_MAX_PARTS);
  if (!o->section)
    return tz_fail(err, TZ_E_ARG, "no output section");
  part *pt = calloc(o->nparts, sizeof *pt);
  if (!pt)
    return tz_fail(err, TZ_E_NOMEM, "%zu parts", o->nparts);
  flow_setup su;
  memset(&su, 0, sizeof su);
  stack_section *s = NULL;
  char *report = NULL;
  fileio_out *rep = NULL;
  int rc = TZ_OK;
  for (size_t k = 0; k < o->nparts && !rc; k++) {
    pt[k].report = o->reports[k];
    rc = load_part(&pt[k], err);
  }
  if (!rc)
    rc = check_parts(pt, o->nparts, err);
  for (size_t k = 0; k < o->nparts && !rc; k++) {
    const char *outs[2] = { o->section, o->report };
    for (int i = 0; i < 2 && !rc; i++)
      if (outs[i] && (fileio_same_file(outs[i], pt[k].report) ||
                      fileio_same_file(outs[i], pt[k].section)))
        rc = tz_fail(err, TZ_E_CREATE, "%s would replace the part %s", outs[i],
                     fileio_same_file(outs[i], pt[k].report) ? pt[k].report : pt[k].section);
  }
  if (!rc && o->report && fileio_same_file(o->section, o->report))
    rc = tz_fail(err, TZ_E_CREATE, "the joined section and report are the same file %s",
                 o->section);
  if (!rc)
    rc = rebuild(&su, &pt[0], o, err);
  if (!rc)
    rc = job_check_outputs(su.job, err);
  if (!rc)
    rc = check_against_line(&su, pt, o->nparts, err);
  if (!rc)
    rc = assemble(&su, pt, o->nparts, &s, err);
  if (!rc)
    rc = fileio_probe(o->section, err);
  /* as `tzero stack` does: the report's temporary first, renamed after the section */
  if (!rc && o->report)
    rc = fileio_create(&rep, o->report, err);
  deliver_steps *steps = NULL;
  if (!rc && !(steps = malloc(sizeof *steps)))
    rc = tz_fail(err, TZ_E_NOMEM, "processing steps");
  if (!rc) {
    deliver_steps_init(steps);
    rc = deliver_steps_job(steps, su.job, err);
  }
  if (!rc) {
    char text[DELIVER_TEXT_BYTES];
    deliver_section_text(su.job, su.plan, s->first_cmp, s->first_cmp + (int32_t)s->ncmps - 1,
                         "stacked section", steps, o->run, text, sizeof text);
    rc = stack_section_write(s, su.plan, o->section, su.job->sample_format, text,
                             deliver_polarity_code(su.job), err);
  }
  /* the line's deliverables (deliver.h), as a whole-line `tzero stack` writes them */
  if (!rc && su.job->navigation)
    rc = deliver_navigation_write(s, su.plan, su.job->navigation, err);
  if (!rc && (o->report || su.job->history)) {
    /* the joined line's reuse keys, as a whole-line run gives them */
    stack_run_opts ro;
    char *keys = NULL;
    rc = stack_run_opts_init(&ro, su.plan, su.velocity, err);
    if (!rc)
      rc = stack_reuse_keys(su.plan, &ro, &keys, err);
    qc_build_args qa = {
      .job = su.job, .plan = su.plan, .section = s, .velocity = su.velocity,
      .section_path = o->section, .tool_version = o->tool_version,
      .header_pass_s = su.header_pass_s, .cmp_keys = keys,
    };
    if (!rc)
      rc = qc_report_build(&qa, &report, err);
    free(keys);
  }
  if (!rc && su.job->history) {
    const char *outs[4] = { o->section, o->report ? o->report : su.job->navigation,
                            o->report ? su.job->navigation : NULL, NULL };
    rc = deliver_history_write(su.job, report, steps, o->run, outs, su.job->history, err);
  }
  free(steps);
  if (!rc && o->report) {
    FILE *fp = fileio_stream(rep);
    if (fp && (fputs(report, fp) == EOF || fputc('\n', fp) == EOF)) {
      tz_fail(err, TZ_E_IO, "write failed");
      rc = tz_err_path(err, o->report);
    }
    if (!rc) {
      rc = fileio_commit(rep, err);
      rep = NULL;
    }
  }
  fileio_abort(rep);
  if (!rc) {
    res->first_cmp = s->first_cmp;
    res->last_cmp = s->first_cmp + (int32_t)s->ncmps - 1;
    res->ncmps = s->ncmps;
    res->nparts = o->nparts;
    res->traces_stacked = s->traces_stacked;
    res->line = strdup(su.job->name ? su.job->name : "");
  }
  free(report);
  stack_section_free(s);
  flow_setup_free(&su);
  for (size_t k = 0; k < o->nparts; k++) {
    cJSON_Delete(pt[k].root);
    cJSON_Delete(pt[k].params);
  }
  free(pt);
  return rc;
}
