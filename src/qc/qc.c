/* qc.c -- the tzero-qc/1 report: built with cJSON from a finished run, read back for text.
 *
 * Building: every number comes from the plan (header pass), the section (data
 * pass) or the velocity table; nothing is recomputed here except the fold
 * statistics over the section's CMPs (zero-fold CMPs included, so gaps show).
 * Reading: the summary, CMP detail and fold table use only the JSON, so a saved
 * report prints exactly what the run printed. Missing keys in a report read
 * back are TZ_E_FORMAT naming the key.
 *
 * Not here: printing (the front end), the stacking itself (stack_*.c).
 */
#include "tzero/digest.h"
#include "tzero/qc.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "tzero/fileio.h"
#include "tzero/statics.h"
#include "qc/qc_int.h"
#include "util/json_doc.h"
#include "util/strbuf.h"

struct qc_report {
  cJSON *root;
  char *name;
};

/* ---------------------------------------------------------------- build */


static cJSON *num_or_null(double v)
{
  return isfinite(v) ? cJSON_CreateNumber(v) : cJSON_CreateNull();
}

static double round_to(double v, double q)
{
  return isfinite(v) ? round(v / q) * q : v;
}

static double frac(int64_t a, int64_t b)
{
  return b > 0 ? (double)a / (double)b : 0;
}

static void add_inputs(cJSON *r, const stack_plan *p)
{
  cJSON *in = cJSON_AddArrayToObject(r, "inputs");
  cJSON *bad = cJSON_AddArrayToObject(r, "bad_files");
  for (size_t i = 0; i < stack_plan_ninputs(p); i++) {
    const stack_input *s = stack_plan_input(p, i);
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "path", s->path);
    cJSON_AddNumberToObject(o, "bytes", (double)s->bytes);
    cJSON_AddNumberToObject(o, "traces", (double)s->traces);
    cJSON_AddBoolToObject(o, "bad", s->bad);
    if (s->bad) {
      cJSON_AddStringToObject(o, "error", s->error ? s->error : "");
      cJSON *b = cJSON_CreateObject();
      cJSON_AddStringToObject(b, "path", s->path);
      cJSON_AddStringToObject(b, "error", s->error ? s->error : "");
      cJSON_AddItemToArray(bad, b);
    }
    cJSON_AddItemToArray(in, o);
  }
}

/* Fractions for people, and the sample counts they come from, so that reports
 * of parts of a line can be joined exactly (tzero merge). */
static void add_mute_counts(cJSON *o, int64_t samples, int64_t stretch, int64_t top, int64_t end,
                            int64_t inner, int64_t bottom)
{
  cJSON_AddNumberToObject(o, "samples", (double)samples);
  cJSON_AddNumberToObject(o, "stretch_muted_samples", (double)stretch);
  cJSON_AddNumberToObject(o, "top_muted_samples", (double)top);
  cJSON_AddNumberToObject(o, "inner_muted_samples", (double)inner);
  cJSON_AddNumberToObject(o, "bottom_muted_samples", (double)bottom);
  cJSON_AddNumberToObject(o, "beyond_trace_end_samples", (double)end);
  cJSON_AddNumberToObject(o, "muted_fraction",
                          round_to(frac(stretch + top + inner + bottom, samples), 1e-6));
  cJSON_AddNumberToObject(o, "stretch_muted_fraction", round_to(frac(stretch, samples), 1e-6));
  cJSON_AddNumberToObject(o, "top_muted_fraction", round_to(frac(top, samples), 1e-6));
  cJSON_AddNumberToObject(o, "inner_muted_fraction", round_to(frac(inner, samples), 1e-6));
  cJSON_AddNumberToObject(o, "bottom_muted_fraction", round_to(frac(bottom, samples), 1e-6));
  cJSON_AddNumberToObject(o, "beyond_trace_end_fraction", round_to(frac(end, samples), 1e-6));
}

#define QC_MUTE_CMP_RANGES 16

/* How each kind of mute was given, and the mutes by CMP range: the section's
 * CMPs in QC_MUTE_CMP_RANGES runs of equal width from its first CMP. */
static void add_mute_kinds(cJSON *mu, const job_spec *j, const stack_section *s)
{
  static const char *const forms[] = { "none", "polyline", "controls", "file" };
  cJSON *k = cJSON_AddObjectToObject(mu, "kinds");
  for (int i = 0; k && i < MUTE__KINDS; i++) {
    cJSON *o = cJSON_AddObjectToObject(k, mute_kind_name(i));
    int f = j ? j->mute_form[i] : 0;
    const mute_set *m = j ? j->mutes : NULL;
    cJSON_AddStringToObject(o, "given_as", forms[f >= 0 && f <= 3 ? f : 0]);
    cJSON_AddNumberToObject(o, "controls", m ? (double)m->kind[i].n : 0);
    if (i == MUTE_TOP) {
      int fb = m && !isnan(m->after_first_break_ms);
      cJSON_AddItemToObject(o, "after_first_break_ms",
                            fb ? cJSON_CreateNumber(m->after_first_break_ms) : cJSON_CreateNull());
      cJSON_AddNumberToObject(o, "first_break_picks", fb ? (double)m->npicks : 0);
    }
  }
  cJSON *br = cJSON_AddArrayToObject(mu, "by_cmp_range");
  size_t width = (s->ncmps + QC_MUTE_CMP_RANGES - 1) / QC_MUTE_CMP_RANGES;
  if (width == 0)
    return;
  for (size_t a = 0; br && a < s->ncmps; a += width) {
    size_t e = a + width < s->ncmps ? a + width : s->ncmps;
    int64_t traces = 0, top = 0, inner = 0, bottom = 0;
    for (size_t c = a; c < e; c++) {
      traces += s->cmps[c].fold;
      top += s->cmps[c].muted_top;
      inner += s->cmps[c].muted_inner;
      bottom += s->cmps[c].muted_bottom;
    }
    int64_t samples = traces * (int64_t)s->axis.ns;
    cJSON *o = cJSON_CreateObject();
    cJSON_AddNumberToObject(o, "cmp_first", s->cmps[a].cmp);
    cJSON_AddNumberToObject(o, "cmp_last", s->cmps[e - 1].cmp);
    cJSON_AddNumberToObject(o, "traces", (double)traces);
    cJSON_AddNumberToObject(o, "samples", (double)samples);
    cJSON_AddNumberToObject(o, "top_muted_fraction", round_to(frac(top, samples), 1e-6));
    cJSON_AddNumberToObject(o, "inner_muted_fraction", round_to(frac(inner, samples), 1e-6));
    cJSON_AddNumberToObject(o, "bottom_muted_fraction", round_to(frac(bottom, samples), 1e-6));
    cJSON_AddItemToArray(br, o);
  }
}

/* The functions of the first QC_MAX_FUNCTIONS control CMPs: knots with their
 * RMS velocity and the Dix interval velocity of the interval above each knot
 * (null where imaginary), for the QC page's velocity chart. */
static void add_velocity_functions(cJSON *v, const velocity_table *t)
{
  size_t nc = velocity_table_ncmps(t);
  cJSON *fs = cJSON_AddArrayToObject(v, "functions");
  for (size_t i = 0; i < nc && i < QC_MAX_FUNCTIONS; i++) {
    size_t nk = velocity_table_nknots(t, i);
    double *ts = malloc(nk * sizeof *ts), *vs = malloc(nk * sizeof *vs);
    velocity_interval *iv = malloc(nk * sizeof *iv);
    tz_err e;
    tz_err_init(&e);
    if (!ts || !vs || !iv || nk == 0) {
      free(ts), free(vs), free(iv);
      continue;
    }
    for (size_t k = 0; k < nk; k++)
      velocity_table_knot(t, i, k, &ts[k], &vs[k], NULL);
    int dix = velocity_dix(ts, vs, nk, iv, &e) == TZ_OK;
    cJSON *f = cJSON_CreateObject();
    cJSON_AddNumberToObject(f, "cmp", (double)velocity_table_cmp(t, i));
    cJSON *ks = cJSON_AddArrayToObject(f, "knots");
    for (size_t k = 0; k < nk; k++) {
      cJSON *o = cJSON_CreateObject();
      cJSON_AddNumberToObject(o, "time_ms", round_to(ts[k] * 1000.0, 1e-3));
      cJSON_AddNumberToObject(o, "rms_mps", round_to(vs[k], 1e-2));
      cJSON_AddItemToObject(o, "interval_mps",
                            dix && !iv[k].imaginary ? cJSON_CreateNumber(round_to(iv[k].v_int_mps, 1e-1))
                                                    : cJSON_CreateNull());
      cJSON_AddItemToArray(ks, o);
    }
    cJSON_AddItemToArray(fs, f);
    free(ts), free(vs), free(iv);
  }
}

static int add_velocity(cJSON *r, const qc_build_args *a, tz_err *err)
{
  cJSON *v = cJSON_AddObjectToObject(r, "velocity");
  cJSON_AddItemToObject(v, "file", a->job && a->job->velocity ? cJSON_CreateString(a->job->velocity)
                                                               : cJSON_CreateNull());
  if (a->velocity && velocity_table_sha256(a->velocity)[0])
    cJSON_AddStringToObject(v, "sha256", velocity_table_sha256(a->velocity));
  else
    cJSON_AddNullToObject(v, "sha256");
  cJSON *w = cJSON_AddArrayToObject(v, "warnings");
  if (!a->velocity) {
    cJSON_AddNumberToObject(v, "control_cmps", 0);
    return TZ_OK;
  }
  size_t nc = velocity_table_ncmps(a->velocity);
  cJSON_AddNumberToObject(v, "control_cmps", (double)nc);
  cJSON *list = cJSON_AddArrayToObject(v, "control_cmp_numbers");
  for (size_t i = 0; i < nc; i++)
    cJSON_AddItemToArray(list, cJSON_CreateNumber((double)velocity_table_cmp(a->velocity, i)));
  add_velocity_functions(v, a->velocity);
  /* analysis CMPs semblance could not pick for lack of fold (the table's
   * comment): velocity there is interpolated from the neighbours */
  const int64_t *low = NULL;
  size_t nlow = velocity_table_low_fold(a->velocity, &low);
  cJSON *lf = cJSON_AddArrayToObject(v, "low_fold_cmps");
  for (size_t i = 0; i < nlow; i++) {
    cJSON_AddItemToArray(lf, cJSON_CreateNumber((double)low[i]));
    cJSON *o = cJSON_CreateObject();
    char msg[160];
    snprintf(msg, sizeof msg, "CMP %lld: analysed without a pick for lack of fold; its velocity "
             "comes from the neighbouring control CMPs", (long long)low[i]);
    cJSON_AddStringToObject(o, "kind", "low_fold");
    cJSON_AddNumberToObject(o, "cmp", (double)low[i]);
    cJSON_AddNullToObject(o, "line");
    cJSON_AddStringToObject(o, "message", msg);
    cJSON_AddItemToArray(w, o);
  }
  velocity_warning *vw = NULL;
  size_t nw = 0;
  /* the plausible range in the line's unit (velocity.h gives it in m/s) */
  double vk = a->plan && stack_plan_units(a->plan) == GEOMETRY_UNIT_FEET ? 1.0 / GEOMETRY_FOOT_M : 1.0;
  int rc = velocity_check(a->velocity, VELOCITY_PLAUSIBLE_MIN_MPS * vk,
                          VELOCITY_PLAUSIBLE_MAX_MPS * vk, &vw, &nw, err);
  /* control CMPs off the line (a whole line: a part's range is not the line's) */
  if (!rc && a->plan && !(a->job && a->job->has_cmp_range))
    rc = velocity_check_cmp_range(a->velocity, stack_plan_first_cmp(a->plan),
                                  stack_plan_last_cmp(a->plan), &vw, &nw, err);
  if (rc) {
    free(vw);
    return rc;
  }
  for (size_t i = 0; i < nw; i++) {
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "kind", velocity_warning_name(vw[i].kind));
    cJSON_AddNumberToObject(o, "cmp", (double)vw[i].cmp);
    cJSON_AddNumberToObject(o, "line", (double)vw[i].line);
    cJSON_AddNumberToObject(o, "t_top_ms", round_to(vw[i].t_top_s * 1e3, 1e-3));
    cJSON_AddNumberToObject(o, "t_base_ms", round_to(vw[i].t_base_s * 1e3, 1e-3));
    cJSON_AddItemToObject(o, "value", num_or_null(vw[i].value));
    cJSON_AddStringToObject(o, "message", vw[i].msg);
    cJSON_AddItemToArray(w, o);
  }
  free(vw);
  return TZ_OK;
}

/* "edits": entries that selected no trace are warnings naming the entry. */
static void add_edits(cJSON *r, const job_spec *j, const stack_section *s)
{
  if (!edits_spec_active(&j->edits))
    return;
  cJSON *e = cJSON_AddObjectToObject(r, "edits");
  cJSON *w = cJSON_AddArrayToObject(e, "warnings");
  cJSON *hk = cJSON_AddArrayToObject(e, "kill_selected");
  cJSON *hr = cJSON_AddArrayToObject(e, "reverse_selected");
  char msg[160];
  for (size_t i = 0; i < s->nkill_entries && i < j->edits.nkill; i++) {
    cJSON_AddItemToArray(hk, cJSON_CreateNumber((double)s->kill_hits[i]));
    if (!s->kill_hits[i]) {
      snprintf(msg, sizeof msg, "%s selects no trace", j->edits.kill[i].where);
      cJSON_AddItemToArray(w, cJSON_CreateString(msg));
    }
  }
  cJSON *ak = cJSON_AddArrayToObject(e, "auto_killed");
  for (size_t i = 0; i < s->nauto_killed; i++) {
    const stack_killed_trace *k = &s->auto_killed[i];
    cJSON *o = cJSON_CreateObject();
    cJSON_AddNumberToObject(o, "input", k->input);
    if (k->input >= 0 && (size_t)k->input < j->nshots)
      cJSON_AddStringToObject(o, "file", j->shots[k->input]);
    else
      cJSON_AddNullToObject(o, "file");
    cJSON_AddNumberToObject(o, "trace", (double)(k->trace + 1));
    cJSON_AddNumberToObject(o, "field_record", k->field_record);
    cJSON_AddNumberToObject(o, "channel", k->channel);
    cJSON_AddStringToObject(o, "reason", edits_reason_name(k->reason));
    cJSON_AddItemToArray(ak, o);
  }
  cJSON_AddNumberToObject(e, "auto_killed_unlisted", (double)s->auto_killed_unlisted);
  for (size_t i = 0; i < s->nreverse_entries && i < j->edits.nreverse; i++) {
    cJSON_AddItemToArray(hr, cJSON_CreateNumber((double)s->reverse_hits[i]));
    if (!s->reverse_hits[i]) {
      snprintf(msg, sizeof msg, "%s selects no trace", j->edits.reverse[i].where);
      cJSON_AddItemToArray(w, cJSON_CreateString(msg));
    }
  }
}

static cJSON *stations_json(const stack_station *st, size_t n)
{
  cJSON *a = cJSON_CreateArray();
  for (size_t i = 0; a && i < n; i++) {
    cJSON *o = cJSON_CreateObject();
    cJSON_AddNumberToObject(o, "station", st[i].station);
    cJSON_AddNumberToObject(o, "x_m", round_to(st[i].x_m, 1e-3));
    cJSON_AddNumberToObject(o, "y_m", round_to(st[i].y_m, 1e-3));
    cJSON_AddNumberToObject(o, "elevation_m", round_to(st[i].elevation_m, 1e-3));
    if (st[i].kind == STATICS_SOURCE) {
      cJSON_AddNumberToObject(o, "depth_m", round_to(st[i].depth_m, 1e-3));
      cJSON_AddItemToObject(o, "uphole_ms", num_or_null(round_to(st[i].uphole_ms, 1e-4)));
    }
    cJSON_AddItemToObject(o, "weathering_m", num_or_null(round_to(st[i].weathering_m, 1e-3)));
    cJSON_AddNumberToObject(o, "elevation_ms", round_to(st[i].elevation_ms, 1e-4));
    cJSON_AddNumberToObject(o, "table_ms", round_to(st[i].table_ms, 1e-4));
    cJSON_AddNumberToObject(o, "static_ms", round_to(st[i].static_ms, 1e-4));
    cJSON_AddItemToArray(a, o);
  }
  return a;
}

/* "statics": datum, velocities, per-station statics, the applied totals. */
static void add_statics(cJSON *r, const job_spec *j, const stack_plan *p, const stack_section *s)
{
  const job_statics *js = &j->statics;
  if (!js->present)
    return;
  cJSON *o = cJSON_AddObjectToObject(r, "statics");
  cJSON_AddNumberToObject(o, "datum_m", js->datum_m);
  cJSON_AddNumberToObject(o, "replacement_velocity_mps", js->replacement_velocity_mps);
  cJSON_AddItemToObject(o, "weathering_velocity_mps",
                        num_or_null(js->weathering_velocity_mps > 0 ? js->weathering_velocity_mps
                                                                    : NAN));
  cJSON_AddBoolToObject(o, "elevation", js->elevation);
  cJSON_AddBoolToObject(o, "uphole", js->uphole);
  cJSON_AddStringToObject(o, "time_reference",
                          js->floating_datum_smooth_m > 0
                              ? "floating datum for NMO and velocity analysis; section at the "
                                "flat datum"
                              : "flat datum");
  cJSON_AddNumberToObject(o, "floating_datum_smooth_m", js->floating_datum_smooth_m);
  if (js->floating_datum_smooth_m > 0) {
    cJSON *fa = cJSON_AddArrayToObject(o, "floating_datum");
    for (int32_t c = stack_plan_first_cmp(p); c <= stack_plan_last_cmp(p); c++) {
      double el, ms;
      if (!stack_plan_floating(p, c, &el, &ms))
        continue;
      cJSON *x = cJSON_CreateObject();
      cJSON_AddNumberToObject(x, "cmp", c);
      cJSON_AddNumberToObject(x, "elevation_m", round_to(el, 1e-3));
      cJSON_AddNumberToObject(x, "shift_ms", round_to(ms, 1e-4));
      cJSON_AddItemToArray(fa, x);
    }
  }
  cJSON_AddNumberToObject(o, "station_interval_m", stack_plan_station_interval(p));
  cJSON *t = cJSON_AddArrayToObject(o, "tables");
  for (size_t i = 0; i < js->ntables; i++)
    cJSON_AddItemToArray(t, cJSON_CreateString(js->tables[i]));
  size_t n;
  const stack_station *st = stack_plan_stations(p, STATICS_SOURCE, &n);
  cJSON_AddItemToObject(o, "sources", stations_json(st, n));
  st = stack_plan_stations(p, STATICS_RECEIVER, &n);
  cJSON_AddItemToObject(o, "receivers", stations_json(st, n));
  cJSON *ap = cJSON_AddObjectToObject(o, "applied");
  cJSON_AddNumberToObject(ap, "traces", (double)s->static_traces);
  cJSON_AddNumberToObject(ap, "min_ms", round_to(s->static_min_ms, 1e-4));
  cJSON_AddNumberToObject(ap, "max_ms", round_to(s->static_max_ms, 1e-4));
  cJSON_AddNumberToObject(ap, "rms_ms", round_to(s->static_rms_ms, 1e-4));
}

struct cJSON *qc_gaps_json(const survey_gap *g, size_t n, const char *const *files)
{
  cJSON *a = cJSON_CreateArray();
  for (size_t i = 0; a && i < n; i++) {
    cJSON *e = cJSON_CreateObject();
    if (!e)
      break;
    cJSON_AddNumberToObject(e, "record_before", g[i].record_before);
    cJSON_AddNumberToObject(e, "record_after", g[i].record_after);
    cJSON_AddNumberToObject(e, "source_point_before", g[i].point_before);
    cJSON_AddNumberToObject(e, "source_point_after", g[i].point_after);
    cJSON_AddNumberToObject(e, "source_x_before_m", g[i].x_before_m);
    cJSON_AddNumberToObject(e, "source_y_before_m", g[i].y_before_m);
    cJSON_AddNumberToObject(e, "source_x_after_m", g[i].x_after_m);
    cJSON_AddNumberToObject(e, "source_y_after_m", g[i].y_after_m);
    cJSON_AddNumberToObject(e, "distance_m", g[i].distance_m);
    cJSON_AddNumberToObject(e, "missing", (double)g[i].missing);
    cJSON_AddBoolToObject(e, "in_record_numbers", (g[i].flags & SURVEY_GAP_RECORD) != 0);
    cJSON_AddBoolToObject(e, "in_source_points", (g[i].flags & SURVEY_GAP_POINT) != 0);
    cJSON_AddBoolToObject(e, "in_source_positions", (g[i].flags & SURVEY_GAP_POSITION) != 0);
    if (files) {
      cJSON_AddStringToObject(e, "file_before", files[g[i].file_before]);
      cJSON_AddStringToObject(e, "file_after", files[g[i].file_after]);
    }
    cJSON_AddItemToArray(a, e);
  }
  return a;
}

int qc_report_build(const qc_build_args *a, char **json, tz_err *err)
{
  const stack_plan *p = a->plan;
  const stack_section *s = a->section;
  const job_spec *j = a->job;
  cJSON *r = cJSON_CreateObject();
  if (!r)
    return tz_fail(err, TZ_E_NOMEM, "QC report");
  int rc = TZ_OK;
  cJSON_AddStringToObject(r, "format", QC_FORMAT);
  cJSON *tool = cJSON_AddObjectToObject(r, "tool");
  cJSON_AddStringToObject(tool, "name", "tzero");
  cJSON_AddStringToObject(tool, "version", a->tool_version ? a->tool_version : "");
  char when[32];
  time_t now = time(NULL);
  struct tm tmv;
  gmtime_r(&now, &tmv);
  strftime(when, sizeof when, "%Y-%m-%dT%H:%M:%SZ", &tmv);
  cJSON_AddStringToObject(r, "created_utc", when);
  cJSON_AddStringToObject(r, "line", j && j->name ? j->name : "");
  add_inputs(r, p);

  char *pj = NULL;
  if (j) {
    if ((rc = job_to_json(j, &pj, err)))
      goto fail;
    cJSON *pt = cJSON_Parse(pj);
    free(pj);
    if (!pt) {
      rc = tz_fail(err, TZ_E_INTERNAL, "resolved job is not JSON");
      goto fail;
    }
    cJSON_AddItemToObject(r, "parameters", pt);
  }

  stack_line_info li = stack_plan_line(p);
  {
    int u = stack_plan_units(p);
    cJSON *un = cJSON_AddObjectToObject(r, "units");
    cJSON_AddStringToObject(un, "length", geometry_unit_name(u));
    cJSON_AddStringToObject(un, "velocity", u == GEOMETRY_UNIT_FEET ? "ft/s" : "m/s");
    cJSON_AddStringToObject(un, "from", stack_plan_units_source(p));
    cJSON_AddStringToObject(un, "note", u == GEOMETRY_UNIT_FEET
                            ? "every length in this report is in feet and every velocity in "
                              "ft/s, whatever its key's _m or _mps suffix says"
                            : "lengths in metres, velocities in m/s");
  }
  cJSON *g = cJSON_AddObjectToObject(r, "geometry");
  cJSON_AddStringToObject(g, "source", !j || j->geometry == JOB_GEOMETRY_HEADERS ? "headers"
                                       : j->geometry == JOB_GEOMETRY_LAYOUT ? "layout"
                                       : j->geometry == JOB_GEOMETRY_SPS ? "sps" : "table");
  cJSON *ln = cJSON_AddObjectToObject(g, "line");
  cJSON_AddNumberToObject(ln, "origin_x_m", round_to(li.origin_x_m, 1e-4));
  cJSON_AddNumberToObject(ln, "origin_y_m", round_to(li.origin_y_m, 1e-4));
  cJSON_AddNumberToObject(ln, "azimuth_deg", round_to(li.azimuth_deg, 1e-6));
  cJSON_AddNumberToObject(ln, "bin_size_m", li.size_m);
  cJSON_AddNumberToObject(ln, "first_cmp", li.first_cmp);
  cJSON_AddStringToObject(ln, "origin", li.fitted ? "fitted" : li.from_layout ? "layout" : "job");
  cJSON_AddStringToObject(ln, "kind", li.nodes ? "crooked" : "straight");
  if (li.nodes)
    cJSON_AddNumberToObject(ln, "nodes", (double)li.nodes);
  if (li.fitted)
    cJSON_AddNumberToObject(ln, "fit_rms_off_line_m", round_to(li.fit_rms_off_line_m, 1e-4));
  cJSON_AddNumberToObject(ln, "max_off_line_m", li.max_off_line_m);
  cJSON_AddNumberToObject(ln, "largest_off_line_m", round_to(li.largest_off_line_m, 1e-4));
  cJSON_AddNumberToObject(g, "nominal_fold", round_to(stack_plan_nominal_fold(p), 1e-3));
  survey_figures fig = stack_plan_survey(p);
  cJSON_AddNumberToObject(g, "receiver_interval_m", fig.receiver_interval_m);
  cJSON_AddNumberToObject(g, "source_interval_m", fig.source_interval_m);
  if (fig.receiver_step_median_m > 0) {
    cJSON_AddNumberToObject(g, "receiver_step_median_m", fig.receiver_step_median_m);
    cJSON_AddNumberToObject(g, "source_step_median_m", fig.source_step_median_m);
  }
  {
    size_t ng;
    const survey_gap *gp = stack_plan_gaps(p, &ng);
    cJSON *ms = cJSON_AddObjectToObject(g, "missing_shots");
    cJSON_AddNumberToObject(ms, "count", (double)fig.shots_missing);
    cJSON_AddItemToObject(ms, "gaps", qc_gaps_json(gp, ng, NULL));
  }
  cJSON_AddNumberToObject(g, "channels_per_record", fig.channels_per_record);
  cJSON_AddNumberToObject(g, "records", (double)fig.records);
  cJSON_AddNumberToObject(g, "shooting_azimuth_deg", round_to(fig.shooting_azimuth_deg, 1e-6));

  cJSON *sec = cJSON_AddObjectToObject(r, "section");
  cJSON_AddItemToObject(sec, "path", a->section_path ? cJSON_CreateString(a->section_path)
                                                     : cJSON_CreateNull());
  cJSON_AddNumberToObject(sec, "cmp_first", s->first_cmp);
  cJSON_AddNumberToObject(sec, "cmp_last", (double)s->first_cmp + (double)s->ncmps - 1);
  cJSON_AddNumberToObject(sec, "cmps", (double)s->ncmps);
  cJSON_AddNumberToObject(sec, "samples", (double)s->axis.ns);
  cJSON_AddNumberToObject(sec, "interval_us", s->interval_us);
  cJSON_AddNumberToObject(sec, "start_time_ms", round_to(s->axis.t_first_s * 1e3, 1e-6));
  cJSON_AddNumberToObject(sec, "bytes_estimate",
                          3600.0 + (double)s->ncmps * (240.0 + 4.0 * (double)s->axis.ns));

  cJSON *tr = cJSON_AddObjectToObject(r, "traces");
  cJSON_AddNumberToObject(tr, "read", (double)s->traces_read);
  cJSON_AddNumberToObject(tr, "stacked", (double)s->traces_stacked);
  cJSON *sk = cJSON_AddObjectToObject(tr, "skipped");
  int64_t skipped = 0;
  for (int k = 0; k < STACK_SKIP__COUNT; k++) {
    cJSON_AddNumberToObject(sk, stack_skip_name(k), (double)s->skipped[k]);
    skipped += s->skipped[k];
  }
  cJSON_AddNumberToObject(tr, "skipped_total", (double)skipped);
  cJSON_AddNumberToObject(tr, "bad_samples", (double)s->bad_samples);
  cJSON *kl = cJSON_AddObjectToObject(tr, "killed");
  int64_t killed = 0;
  for (int k = 0; k < EDITS_KILL__COUNT; k++) {
    cJSON_AddNumberToObject(kl, edits_reason_name(k), (double)s->killed[k]);
    killed += s->killed[k];
  }
  cJSON_AddNumberToObject(tr, "killed_total", (double)killed);
  cJSON_AddNumberToObject(tr, "reversed", (double)s->reversed);
  add_edits(r, a->job, s);
  add_statics(r, a->job, p, s);

  if (a->reused_section) {
    /* a rerun: which CMPs were copied; the trace, edit, statics and mute
     * counts of this report cover the restacked CMPs' traces only */
    cJSON *ru = cJSON_AddObjectToObject(r, "reuse");
    cJSON_AddStringToObject(ru, "section", a->reused_section);
    cJSON_AddNumberToObject(ru, "cmps_carried", (double)a->cmps_carried);
    cJSON_AddNumberToObject(ru, "cmps_restacked", (double)(s->ncmps - a->cmps_carried));
    cJSON_AddStringToObject(ru, "counts_cover", a->cmps_carried ? "restacked CMPs" : "every CMP");
    if (a->reuse_note)
      cJSON_AddStringToObject(ru, "note", a->reuse_note);
  }
  cJSON *cm = cJSON_AddArrayToObject(r, "cmps");
  int64_t fmin = INT64_MAX, fmax = 0, fsum = 0, zero = 0;
  for (size_t c = 0; c < s->ncmps; c++) {
    const stack_cmp_result *x = &s->cmps[c];
    cJSON *o = cJSON_CreateObject();
    cJSON_AddNumberToObject(o, "cmp", x->cmp);
    cJSON_AddNumberToObject(o, "x_m", round_to(x->x_m, 1e-3));
    cJSON_AddNumberToObject(o, "y_m", round_to(x->y_m, 1e-3));
    cJSON_AddNumberToObject(o, "fold", x->fold);
    stack_cmp_plan cp;
    stack_plan_cmp(p, x->cmp, &cp);
    cJSON_AddNumberToObject(o, "acquired_fold", (double)cp.acquired_fold);
    cJSON_AddNumberToObject(o, "offset_min_m", round_to(x->offset_min_m, 1e-3));
    cJSON_AddNumberToObject(o, "offset_max_m", round_to(x->offset_max_m, 1e-3));
    cJSON_AddNumberToObject(o, "live_fraction", round_to(x->live_fraction, 1e-6));
    cJSON_AddItemToObject(o, "full_fold_ms", num_or_null(round_to(x->full_fold_ms, 1e-3)));
    cJSON_AddNumberToObject(o, "top_muted_samples", (double)x->muted_top);
    cJSON_AddNumberToObject(o, "inner_muted_samples", (double)x->muted_inner);
    cJSON_AddNumberToObject(o, "bottom_muted_samples", (double)x->muted_bottom);
    if (a->cmp_keys)
      cJSON_AddStringToObject(o, "reuse_key_sha256", a->cmp_keys + c * (DIGEST_HEX_LEN + 1));
    cJSON_AddItemToArray(cm, o);
    if (x->fold < fmin)
      fmin = x->fold;
    if (x->fold > fmax)
      fmax = x->fold;
    fsum += x->fold;
    zero += x->fold == 0;
  }
  cJSON *fo = cJSON_AddObjectToObject(r, "fold");
  cJSON_AddNumberToObject(fo, "nominal", round_to(stack_plan_nominal_fold(p), 1e-3));
  cJSON_AddNumberToObject(fo, "min", s->ncmps ? (double)fmin : 0);
  cJSON_AddNumberToObject(fo, "max", (double)fmax);
  cJSON_AddNumberToObject(fo, "mean", round_to(s->ncmps ? (double)fsum / (double)s->ncmps : 0, 1e-4));
  cJSON_AddNumberToObject(fo, "zero_fold_cmps", (double)zero);
  {
    /* the full-fold part of the section, from the acquisition */
    int32_t f0, f1;
    int has = stack_plan_full_fold(p, &f0, &f1);
    int32_t s0 = s->first_cmp, s1 = s->first_cmp + (int32_t)s->ncmps - 1;
    if (has && f0 < s0)
      f0 = s0;
    if (has && f1 > s1)
      f1 = s1;
    has = has && s->ncmps && f0 <= f1;
    cJSON_AddItemToObject(fo, "full_fold_cmp_first", has ? cJSON_CreateNumber(f0) : cJSON_CreateNull());
    cJSON_AddItemToObject(fo, "full_fold_cmp_last", has ? cJSON_CreateNumber(f1) : cJSON_CreateNull());
    cJSON_AddStringToObject(fo, "nominal_from", stack_plan_survey(p).from_layout ? "layout" : "records");
  }

  cJSON *mu = cJSON_AddObjectToObject(r, "mute");
  cJSON_AddNumberToObject(mu, "stretch_limit_pct", j ? j->stretch_limit_pct : 0);
  cJSON_AddNumberToObject(mu, "top_mute_points", j ? (double)j->nmute : 0);
  add_mute_counts(mu, s->samples_total, s->muted_stretch, s->muted_top, s->muted_end,
                  s->muted_inner, s->muted_bottom);
  add_mute_kinds(mu, j, s);
  cJSON_AddNumberToObject(mu, "offset_class_m", s->offset_class_m);
  cJSON *bo = cJSON_AddArrayToObject(mu, "by_offset");
  for (size_t k = 0; k < s->nclasses; k++) {
    const stack_mute_class *c = &s->classes[k];
    cJSON *o = cJSON_CreateObject();
    cJSON_AddNumberToObject(o, "offset_from_m", c->offset_from_m);
    cJSON_AddItemToObject(o, "offset_to_m", num_or_null(c->offset_to_m));
    cJSON_AddNumberToObject(o, "traces", (double)c->traces);
    add_mute_counts(o, c->samples, c->muted_stretch, c->muted_top, c->muted_end, c->muted_inner,
                    c->muted_bottom);
    cJSON_AddItemToArray(bo, o);
  }

  if ((rc = add_velocity(r, a, err)))
    goto fail;
  qc_add_provenance(r, a);
  if (a->migration) {
    const qc_migration *m = a->migration;
    cJSON *mo = cJSON_AddObjectToObject(r, "migration");
    cJSON_AddStringToObject(mo, "method", m->method);
    cJSON_AddStringToObject(mo, "velocity", m->velocity ? m->velocity : "");
    cJSON_AddNumberToObject(mo, "velocity_pct", m->velocity_pct);
    cJSON_AddItemToObject(mo, "aperture_m", m->aperture_m > 0 ? cJSON_CreateNumber(m->aperture_m)
                                                               : cJSON_CreateNull());
    cJSON_AddNumberToObject(mo, "max_dip_deg", m->max_dip_deg);
    cJSON_AddItemToObject(mo, "max_hz", m->max_hz > 0 ? cJSON_CreateNumber(m->max_hz)
                                                       : cJSON_CreateNull());
    cJSON_AddNumberToObject(mo, "lateral_variation_pct", round_to(m->lateral_variation_pct, 1e-2));
    cJSON_AddBoolToObject(mo, "one_function", m->one_function);
    cJSON_AddStringToObject(mo, "section", m->path ? m->path : "");
    cJSON_AddNumberToObject(mo, "seconds", round_to(m->seconds, 1e-4));
  }
  if (j && j->limits.given) {
    char *lt = NULL;
    if ((rc = limits_to_json(&j->limits, &lt, err)))
      goto fail;
    cJSON *lo = cJSON_Parse(lt);
    free(lt);
    if (!lo) {
      rc = tz_fail(err, TZ_E_NOMEM, "QC report limits");
      goto fail;
    }
    cJSON_AddItemToObject(r, "limits", lo);
    cJSON_AddItemToObject(r, "limits_file", j->limits_file ? cJSON_CreateString(j->limits_file)
                                                           : cJSON_CreateNull());
  }

  cJSON *ti = cJSON_AddObjectToObject(r, "timing_s");
  cJSON_AddNumberToObject(ti, "header_pass", round_to(a->header_pass_s, 1e-4));
  cJSON_AddNumberToObject(ti, "data_pass", round_to(a->data_pass_s, 1e-4));
  cJSON_AddNumberToObject(ti, "write", round_to(a->write_s, 1e-4));
  cJSON_AddNumberToObject(ti, "total", round_to(a->total_s, 1e-4));
  cJSON *th = cJSON_AddObjectToObject(r, "throughput");
  double dp = a->data_pass_s > 0 ? a->data_pass_s : s->elapsed_s;
  cJSON_AddNumberToObject(th, "threads", s->threads);
  cJSON_AddNumberToObject(th, "traces_per_s", dp > 0 ? round((double)s->traces_read / dp) : 0);
  cJSON_AddNumberToObject(th, "input_mb_per_s",
                          dp > 0 ? round_to((double)s->bytes_read / 1e6 / dp, 0.01) : 0);
  cJSON_AddNumberToObject(th, "input_bytes", (double)s->bytes_read);

  char *out = cJSON_Print(r);
  cJSON_Delete(r);
  if (!out)
    return tz_fail(err, TZ_E_NOMEM, "QC report text");
  *json = out;
  return TZ_OK;
fail:
  cJSON_Delete(r);
  return rc;
}

int qc_write_text(const char *path, const char *text, tz_err *err)
{
  fileio_out *o = NULL;
  int rc = fileio_create(&o, path, err);
  if (rc)
    return rc;
  size_t n = strlen(text);
  int nl = n == 0 || text[n - 1] != '\n';
  if (fwrite(text, 1, n, fileio_stream(o)) != n || (nl && fputc('\n', fileio_stream(o)) == EOF)) {
    rc = fileio_fail(o, -1, err);   /* with the OS reason */
    fileio_abort(o);
    return rc;
  }
  return fileio_commit(o, err);
}

/* ---------------------------------------------------------------- read back */

const cJSON *qc_report_root(const qc_report *r) { return r->root; }
const char *qc_report_name(const qc_report *r) { return r->name; }
const char *qc_report_line(const qc_report *r)
{
  const cJSON *l = cJSON_GetObjectItemCaseSensitive(r->root, "line");
  return cJSON_IsString(l) ? l->valuestring : "";
}

int qc_text_is_report(const char *text, size_t len)
{
  char *copy = malloc(len + 1);
  if (!copy)
    return 0;
  memcpy(copy, text, len);
  copy[len] = '\0';
  cJSON *root = cJSON_ParseWithOpts(copy, NULL, 1);
  free(copy);
  int yes = cJSON_IsObject(root) && cJSON_GetObjectItemCaseSensitive(root, "format") != NULL;
  cJSON_Delete(root);
  return yes;
}

void qc_report_free(qc_report *r)
{
  if (!r)
    return;
  cJSON_Delete(r->root);
  free(r->name);
  free(r);
}

static const char *const required[] = { "inputs", "parameters", "traces", "cmps", "fold", "mute",
                                        "velocity", "timing_s", "section", NULL };

/* Figures the readers print (docs/qc-report.md): a damaged report is refused
 * naming the key, instead of printing "nan" where a count should be. */
static const char *const required_numbers[] = {
  "traces.read", "traces.stacked", "fold.min", "fold.max", "fold.mean",
  "mute.stretch_limit_pct", "mute.muted_fraction", "section.cmp_first", "section.cmp_last",
  NULL };
static const char *const cmp_numbers[] = { "cmp", "x_m", "y_m", "fold", "offset_min_m",
                                           "offset_max_m", "live_fraction", NULL };

static const cJSON *at(const cJSON *o, const char *path);

static int check_numbers(const cJSON *root, tz_err *err)
{
  for (size_t i = 0; required_numbers[i]; i++) {
    const cJSON *v = at(root, required_numbers[i]);
    if (!cJSON_IsNumber(v))
      return tz_fail(err, TZ_E_FORMAT, "$.%s: expected a number", required_numbers[i]);
  }
  size_t k = 0;
  for (const cJSON *c = cJSON_GetObjectItemCaseSensitive(root, "cmps")->child; c; c = c->next, k++)
    for (size_t i = 0; cmp_numbers[i]; i++)
      if (!cJSON_IsNumber(cJSON_GetObjectItemCaseSensitive(c, cmp_numbers[i])))
        return tz_fail(err, TZ_E_FORMAT, "$.cmps[%zu].%s: expected a number", k, cmp_numbers[i]);
  return TZ_OK;
}

int qc_report_parse(qc_report **out, const char *text, size_t len, const char *name, tz_err *err)
{
  cJSON *root = NULL;
  if (json_doc_parse(&root, text, len, name, NULL, TZ_E_FORMAT, err))
    return err->status;
  const cJSON *f = cJSON_GetObjectItemCaseSensitive(root, "format");
  int rc = TZ_OK;
  if (!cJSON_IsString(f) || strcmp(f->valuestring, QC_FORMAT))
    rc = tz_fail(err, TZ_E_FORMAT, "$.format: expected \"%s\"", QC_FORMAT);
  for (size_t i = 0; !rc && required[i]; i++)
    if (!cJSON_GetObjectItemCaseSensitive(root, required[i]))
      rc = tz_fail(err, TZ_E_FORMAT, "$.%s: required key missing", required[i]);
  if (!rc && !cJSON_IsArray(cJSON_GetObjectItemCaseSensitive(root, "cmps")))
    rc = tz_fail(err, TZ_E_FORMAT, "$.cmps: expected an array");
  if (!rc)
    rc = check_numbers(root, err);
  qc_report *r = rc ? NULL : calloc(1, sizeof *r);
  if (!rc && (!r || !(r->name = strdup(name ? name : ""))))
    rc = tz_fail(err, TZ_E_NOMEM, "QC report");
  if (rc) {
    free(r);
    cJSON_Delete(root);
    tz_err_path(err, name);
    return rc;
  }
  r->root = root;
  *out = r;
  return TZ_OK;
}

int qc_report_load(qc_report **out, const char *path, tz_err *err)
{
  char *text = NULL;
  size_t len = 0;
  int rc = fileio_read_all(path, QC_MAX_BYTES, &text, &len, err);
  if (rc)
    return rc;
  rc = qc_report_parse(out, text, len, path, err);
  free(text);
  return rc;
}

/* Path lookup "a.b.c"; NULL when absent. */
const cJSON *qc_json_at(const cJSON *o, const char *path)
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

double qc_json_num(const cJSON *o, const char *path)
{
  const cJSON *v = qc_json_at(o, path);
  return cJSON_IsNumber(v) ? v->valuedouble : NAN;
}

const char *qc_json_str(const cJSON *o, const char *path, const char *dflt)
{
  const cJSON *v = qc_json_at(o, path);
  return cJSON_IsString(v) ? v->valuestring : dflt;
}

static const cJSON *at(const cJSON *o, const char *path) { return qc_json_at(o, path); }

static double numv(const cJSON *o, const char *path) { return qc_json_num(o, path); }

static const char *strv(const cJSON *o, const char *path, const char *dflt)
{
  return qc_json_str(o, path, dflt);
}

/* A string of the report made safe to print (control characters escaped) in buf. */
static const char *sv(const cJSON *o, const char *path, const char *dflt, char *buf, size_t cap)
{
  tz_escape(strv(o, path, dflt), buf, cap);
  return buf;
}

/* Text is built in a tz_buf (util/strbuf.h): one check of b.bad at the end. */
static int finish(tz_buf *b, char **text, tz_err *err)
{
  return tz_buf_finish(b, text, "report text", err);
}

static void fmt_bytes(double b, char *buf, size_t cap)
{
  if (b >= 1e9)
    snprintf(buf, cap, "%.2f GB", b / 1e9);
  else if (b >= 1e6)
    snprintf(buf, cap, "%.1f MB", b / 1e6);
  else
    snprintf(buf, cap, "%.1f kB", b / 1e3);
}


int qc_report_brief(const qc_report *r, int exit_status, int json, char **text, tz_err *err)
{
  const cJSON *R = r->root;
  const char *line = strv(R, "line", "");
  double skipped = numv(R, "traces.skipped_total"), read = numv(R, "traces.read");
  const cJSON *w = at(R, "velocity.warnings");
  int warnings = cJSON_GetArraySize(w);
  if (json) {
    cJSON *o = cJSON_CreateObject();
    if (o) {
      cJSON_AddStringToObject(o, "line", line);
      cJSON_AddNumberToObject(o, "exit_status", exit_status);
      cJSON_AddNumberToObject(o, "cmp_first", numv(R, "section.cmp_first"));
      cJSON_AddNumberToObject(o, "cmp_last", numv(R, "section.cmp_last"));
      cJSON_AddNumberToObject(o, "cmps", numv(R, "section.cmps"));
      cJSON_AddNumberToObject(o, "fold_nominal", numv(R, "fold.nominal"));
      cJSON_AddNumberToObject(o, "fold_min", numv(R, "fold.min"));
      cJSON_AddNumberToObject(o, "fold_mean", numv(R, "fold.mean"));
      cJSON_AddNumberToObject(o, "fold_max", numv(R, "fold.max"));
      cJSON_AddNumberToObject(o, "muted_pct", round_to(100 * numv(R, "mute.muted_fraction"), 1e-4));
      cJSON_AddNumberToObject(o, "skipped_traces", skipped);
      cJSON_AddNumberToObject(o, "velocity_warnings", warnings);
      cJSON_AddStringToObject(o, "section", strv(R, "section.path", ""));
    }
    char *s = o ? cJSON_PrintUnformatted(o) : NULL;
    cJSON_Delete(o);
    if (!s)
      return tz_fail(err, TZ_E_NOMEM, "brief result");
    *text = s;
    return TZ_OK;
  }
  tz_buf b = { 0 };
  char e1[4200];   /* the line name, control characters escaped */
  line = sv(R, "line", "", e1, sizeof e1);
  tz_buf_put(&b, "%s  exit %d  CMPs %.0f-%.0f  fold %.0f/%.2f/%.0f (nominal %.1f)  muted %.2f %%  "
      "skipped %.0f of %.0f  warnings %d\n", line[0] ? line : "(unnamed)", exit_status,
      numv(R, "section.cmp_first"), numv(R, "section.cmp_last"), numv(R, "fold.min"),
      numv(R, "fold.mean"), numv(R, "fold.max"), numv(R, "fold.nominal"),
      100 * numv(R, "mute.muted_fraction"), skipped, read, warnings);
  return finish(&b, text, err);
}

int qc_report_summary(const qc_report *r, char **text, tz_err *err)
{
  const cJSON *R = r->root;
  tz_buf b = { 0 };
  char e1[4200];   /* escaped strings of the report: a name, path or message each */
  const char *line = sv(R, "line", "", e1, sizeof e1);
  tz_buf_put(&b, "line        %s\n", line[0] ? line : "(unnamed)");
  const cJSON *in = at(R, "inputs");
  double bytes = 0, traces = 0;
  int nin = cJSON_GetArraySize(in), nbad = 0;
  for (const cJSON *c = in ? in->child : NULL; c; c = c->next) {
    bytes += fmax(0, numv(c, "bytes"));
    traces += fmax(0, numv(c, "traces"));
    nbad += cJSON_IsTrue(at(c, "bad"));
  }
  char bs[32];
  fmt_bytes(bytes, bs, sizeof bs);
  tz_buf_put(&b, "inputs      %d shot files, %s, %.0f traces%s\n", nin, bs, traces,
      nbad ? "" : " (no bad files)");
  if (nbad) {
    tz_buf_put(&b, "bad files   %d skipped:\n", nbad);
    for (const cJSON *c = in ? in->child : NULL; c; c = c->next)
      if (cJSON_IsTrue(at(c, "bad")))
        tz_buf_put(&b, "              %s\n", sv(c, "error", strv(c, "path", "?"), e1, sizeof e1));
  }
  tz_buf_put(&b, "traces      %.0f read, %.0f stacked", numv(R, "traces.read"), numv(R, "traces.stacked"));
  const cJSON *sk = at(R, "traces.skipped");
  int any = 0;
  for (const cJSON *c = sk ? sk->child : NULL; c; c = c->next)
    if (cJSON_IsNumber(c) && c->valuedouble > 0) {
      tz_escape(c->string, e1, sizeof e1);
      tz_buf_put(&b, "%s %s %.0f", any ? "," : "; skipped:", e1, c->valuedouble);
      any = 1;
    }
  tz_buf_put(&b, "%s\n", any ? "" : "; none skipped");
  if (numv(R, "traces.bad_samples") > 0)
    tz_buf_put(&b, "samples     %.0f NaN, infinite or out-of-range input samples were stacked as 0\n",
        numv(R, "traces.bad_samples"));
  if (at(R, "edits")) {
    tz_buf_put(&b, "edits       %.0f killed (listed %.0f, dead %.0f, noisy %.0f), %.0f reversed\n",
        numv(R, "traces.killed_total"), numv(R, "traces.killed.listed"),
        numv(R, "traces.killed.dead"), numv(R, "traces.killed.noisy"),
        numv(R, "traces.reversed"));
    const cJSON *ak = at(R, "edits.auto_killed");
    int shown = 0, total = cJSON_IsArray(ak) ? cJSON_GetArraySize(ak) : 0;
    for (const cJSON *c = total ? ak->child : NULL; c && shown < 20; c = c->next, shown++)
      tz_buf_put(&b, "killed      %s trace %.0f (record %.0f, channel %.0f): %s\n",
                 strv(c, "file", "?"), numv(c, "trace"), numv(c, "field_record"),
                 numv(c, "channel"), strv(c, "reason", "?"));
    if (total > shown || numv(R, "edits.auto_killed_unlisted") > 0)
      tz_buf_put(&b, "killed      ... %.0f more automatic kills listed in the report\n",
                 (double)(total - shown) + numv(R, "edits.auto_killed_unlisted"));
    const cJSON *w = at(R, "edits.warnings");
    for (const cJSON *c = w ? w->child : NULL; c; c = c->next)
      if (cJSON_IsString(c))
        tz_buf_put(&b, "warning     %s\n", c->valuestring);
  }
  if (at(R, "statics"))
    tz_buf_put(&b, "statics     datum %g m, replacement velocity %g m/s: %.0f traces shifted by "
        "%.2f to %.2f ms (RMS %.2f ms); times: %s\n",
        numv(R, "statics.datum_m"), numv(R, "statics.replacement_velocity_mps"),
        numv(R, "statics.applied.traces"), numv(R, "statics.applied.min_ms"),
        numv(R, "statics.applied.max_ms"), numv(R, "statics.applied.rms_ms"),
        strv(R, "statics.time_reference", "flat datum"));
  tz_buf_put(&b, "section     %s: CMPs %.0f-%.0f (%.0f CMPs), %.0f samples at %.0f us from %.1f ms\n",
      sv(R, "section.path", "(not written)", e1, sizeof e1), numv(R, "section.cmp_first"),
      numv(R, "section.cmp_last"), numv(R, "section.cmps"), numv(R, "section.samples"),
      numv(R, "section.interval_us"), numv(R, "section.start_time_ms"));
  tz_buf_put(&b, "line geom   origin (%.2f, %.2f) m, azimuth %.3f deg, bin %.3f m, first CMP %.0f (%s",
      numv(R, "geometry.line.origin_x_m"), numv(R, "geometry.line.origin_y_m"),
      numv(R, "geometry.line.azimuth_deg"), numv(R, "geometry.line.bin_size_m"),
      numv(R, "geometry.line.first_cmp"), sv(R, "geometry.line.origin", "?", e1, sizeof e1));
  if (isfinite(numv(R, "geometry.line.fit_rms_off_line_m")))
    tz_buf_put(&b, ", RMS off line %.2f m", numv(R, "geometry.line.fit_rms_off_line_m"));
  tz_buf_put(&b, ")\n");
  tz_buf_put(&b, "fold        nominal %.1f; min %.0f, max %.0f, mean %.2f; %.0f zero-fold CMPs\n",
      numv(R, "fold.nominal"), numv(R, "fold.min"), numv(R, "fold.max"), numv(R, "fold.mean"),
      numv(R, "fold.zero_fold_cmps"));
  tz_buf_put(&b, "mute        stretch limit %.1f %%: %.2f %% of stacked samples muted (stretch %.2f %%, "
      "top %.2f %%)\n", numv(R, "mute.stretch_limit_pct"), 100 * numv(R, "mute.muted_fraction"),
      100 * numv(R, "mute.stretch_muted_fraction"), 100 * numv(R, "mute.top_muted_fraction"));
  /* a sample both mutes remove counts as stretch-muted (nmo_apply's zones), so a
   * top mute lying under the stretch edge shows as (nearly) 0 %: say why */
  double top_f = numv(R, "mute.top_muted_fraction"), str_f = numv(R, "mute.stretch_muted_fraction");
  if (numv(R, "mute.top_mute_points") > 0 && str_f > 0 && !(top_f * 10 >= str_f))
    tz_buf_put(&b, "              top mute only %.2f %%: on most traces the stretch mute (with the samples\n"
        "              whose moveout reaches before the trace start) already removes what the\n"
        "              top mute would; a sample both remove is counted as stretch-muted\n",
        100 * top_f);
  if (numv(R, "mute.inner_muted_fraction") > 0 || numv(R, "mute.bottom_muted_fraction") > 0)
    tz_buf_put(&b, "              inner cone %.2f %%, bottom %.2f %%\n",
        100 * numv(R, "mute.inner_muted_fraction"), 100 * numv(R, "mute.bottom_muted_fraction"));
  const cJSON *bo = at(R, "mute.by_offset");
  for (const cJSON *c = bo ? bo->child : NULL; c; c = c->next) {
    double to = numv(c, "offset_to_m");
    if (isfinite(to))
      tz_buf_put(&b, "              offsets %6.0f-%-6.0f m: %6.0f traces, %6.2f %% muted\n",
          numv(c, "offset_from_m"), to, numv(c, "traces"), 100 * numv(c, "muted_fraction"));
    else
      tz_buf_put(&b, "              offsets %6.0f m and up: %6.0f traces, %6.2f %% muted\n",
          numv(c, "offset_from_m"), numv(c, "traces"), 100 * numv(c, "muted_fraction"));
  }
  const cJSON *w = at(R, "velocity.warnings");
  int nw = cJSON_GetArraySize(w);
  tz_buf_put(&b, "velocity    %s: %.0f control CMPs, %d warning%s\n",
      sv(R, "velocity.file", "(none)", e1, sizeof e1),
      numv(R, "velocity.control_cmps"), nw, nw == 1 ? "" : "s");
  int shown = 0;
  for (const cJSON *c = w ? w->child : NULL; c && shown < 10; c = c->next, shown++)
    tz_buf_put(&b, "              %s\n", sv(c, "message", "?", e1, sizeof e1));
  if (nw > shown)
    tz_buf_put(&b, "              ... %d more in the report\n", nw - shown);
  tz_buf_put(&b, "timing      header pass %.2f s, data pass %.2f s, write %.2f s, total %.2f s\n",
      numv(R, "timing_s.header_pass"), numv(R, "timing_s.data_pass"), numv(R, "timing_s.write"),
      numv(R, "timing_s.total"));
  tz_buf_put(&b, "throughput  %.0f traces/s, %.1f MB/s of input, %.0f thread%s\n",
      numv(R, "throughput.traces_per_s"), numv(R, "throughput.input_mb_per_s"),
      numv(R, "throughput.threads"), numv(R, "throughput.threads") == 1 ? "" : "s");
  return finish(&b, text, err);
}

static const cJSON *find_cmp(const qc_report *r, long cmp)
{
  const cJSON *cm = at(r->root, "cmps");
  for (const cJSON *c = cm ? cm->child : NULL; c; c = c->next)
    if (numv(c, "cmp") == (double)cmp)
      return c;
  return NULL;
}

int qc_report_cmp_detail(const qc_report *r, long cmp, char **text, tz_err *err)
{
  const cJSON *c = find_cmp(r, cmp);
  if (!c) {
    tz_err_path(err, r->name);
    return tz_fail(err, TZ_E_ARG, "CMP %ld is not in this report (CMPs %.0f-%.0f)", cmp,
                   numv(r->root, "section.cmp_first"), numv(r->root, "section.cmp_last"));
  }
  tz_buf b = { 0 };
  tz_buf_put(&b, "cmp             %ld\n", cmp);
  tz_buf_put(&b, "position        x %.3f m, y %.3f m (bin centre)\n", numv(c, "x_m"), numv(c, "y_m"));
  tz_buf_put(&b, "fold            %.0f (nominal %.1f)\n", numv(c, "fold"), numv(r->root, "fold.nominal"));
  if (numv(c, "fold") > 0) {
    tz_buf_put(&b, "offsets         %.1f to %.1f m\n", numv(c, "offset_min_m"), numv(c, "offset_max_m"));
    tz_buf_put(&b, "live fraction   %.4f of the samples of its traces\n", numv(c, "live_fraction"));
    double ff = numv(c, "full_fold_ms");
    if (isfinite(ff))
      tz_buf_put(&b, "full fold from  %.1f ms (mutes reduce the fold before this time)\n", ff);
    else
      tz_buf_put(&b, "full fold       never reached (mutes reduce the fold at every time)\n");
  }
  return finish(&b, text, err);
}

int qc_report_fold_csv(const qc_report *r, char **text, tz_err *err)
{
  tz_buf b = { 0 };
  tz_buf_put(&b, "cmp,x_m,y_m,fold,offset_min_m,offset_max_m,live_fraction,full_fold_ms\n");
  const cJSON *cm = at(r->root, "cmps");
  for (const cJSON *c = cm ? cm->child : NULL; c; c = c->next) {
    double ff = numv(c, "full_fold_ms");
    tz_buf_put(&b, "%.0f,%.3f,%.3f,%.0f,%.3f,%.3f,%.6f,", numv(c, "cmp"), numv(c, "x_m"), numv(c, "y_m"),
        numv(c, "fold"), numv(c, "offset_min_m"), numv(c, "offset_max_m"),
        numv(c, "live_fraction"));
    if (isfinite(ff))
      tz_buf_put(&b, "%.3f", ff);
    tz_buf_put(&b, "\n");
  }
  return finish(&b, text, err);
}
