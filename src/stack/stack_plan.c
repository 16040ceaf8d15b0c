/* stack_plan.c -- the header pass: which trace goes to which CMP, and why not.
 *
 * Reads only trace headers (segy_header_read seeks past the samples), so it
 * costs a few hundred bytes per trace and is repeated cheaply on every rerun.
 * Steps: open the geometry source the job names; unless a layout defines
 * everything, a first header scan feeds the survey inference (survey.h: the
 * intervals, channels per record, nominal fold, shooting direction and, when
 * the job gives no line, a line fitted through the live midpoints), the same
 * inference `tzero geometry` makes; a second scan classifies every trace
 * (trace kind, geometry, off the line, offset limits, CMP range) and
 * accumulates fold and offsets per CMP (bins_fold).
 *
 * The per-trace classification is stack_plan_classify(), which the data pass
 * and stack_collect() call again on the headers they read, so all three agree
 * by construction. Nothing per trace is kept: memory ~ the number of CMPs.
 *
 * Not here: samples (stack_run.c), gathers (stack_collect.c).
 */
#include "stack_int.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <pthread.h>
#include <sched.h>
#include <unistd.h>
#include "tzero/sps.h"

static const char *const skip_names[STACK_SKIP__COUNT] = {
  [STACK_SKIP_DEAD] = "dead",
  [STACK_SKIP_AUXILIARY] = "auxiliary",
  [STACK_SKIP_OFF_LINE] = "off_line",
  [STACK_SKIP_CMP_RANGE] = "outside_cmp_range",
  [STACK_SKIP_OFFSET] = "outside_offset_limits",
  [STACK_SKIP_SAMPLE_AXIS] = "sample_axis_mismatch",
  [STACK_SKIP_UNREADABLE] = "unreadable",
  [STACK_SKIP_BAD_FILE] = "bad_file",
};

const char *stack_skip_name(int reason)
{
  if (reason < 0 || reason >= STACK_SKIP__COUNT)
    return "unknown";
  return skip_names[reason];
}

/* The skip reason of a trace kind (geometry_trace_class), or -1 for data. */
int stack_kind_reason(int kind)
{
  switch (geometry_trace_class(kind)) {
  case GEOMETRY_TRACE_DATA: return -1;
  case GEOMETRY_TRACE_DEAD: return STACK_SKIP_DEAD;
  default: return STACK_SKIP_AUXILIARY;
  }
}

long stack_usable_cpus(void)
{
  long n = sysconf(_SC_NPROCESSORS_ONLN);
  cpu_set_t set;
  CPU_ZERO(&set);
  if (sched_getaffinity(0, sizeof set, &set) == 0) {
    long a = CPU_COUNT(&set);
    if (a > 0 && (n <= 0 || a < n))
      n = a;
  }
  return n > 0 ? n : 1;
}

/* Every pass reads through pread() rather than a mapping: on 2 cores the
 * mapping's page faults and the unmapping's TLB shoot-downs between the
 * threads cost more than copying the bytes. The data pass reads whole traces
 * into a 1 MiB window; a header-only pass makes one 240-byte read per trace
 * and never allocates the window (docs/performance.md). */
int stack_open_input(const stack_plan *p, size_t i, segy_file **f, tz_err *err)
{
  segy_open_opts o;
  memset(&o, 0, sizeof o);
  o.no_map = 1;
  o.map = p->has_map ? &p->map : NULL;
  o.interval_us = p->job ? p->job->interval_us : 0;
  int rc = segy_open(f, p->inputs[i].path, &o, err);
  if (rc)
    tz_err_path(err, p->inputs[i].path);
  return rc;
}

int stack_file_axis_ok(const stack_plan *p, const segy_info *info)
{
  return info->samples == p->axis.ns && info->interval_us == p->interval_us;
}

/* ---------------------------------------------------------------- accessors */

const job_spec *stack_plan_job(const stack_plan *p) { return p->job; }
nmo_axis stack_plan_axis(const stack_plan *p) { return p->axis; }
uint32_t stack_plan_interval_us(const stack_plan *p) { return p->interval_us; }
int32_t stack_plan_first_cmp(const stack_plan *p) { return p->first_cmp; }
int32_t stack_plan_last_cmp(const stack_plan *p) { return p->last_cmp; }
size_t stack_plan_ncmps(const stack_plan *p) { return p->ncmps; }
double stack_plan_nominal_fold(const stack_plan *p) { return p->nominal_fold; }
survey_figures stack_plan_survey(const stack_plan *p) { return p->survey; }
const survey_gap *stack_plan_gaps(const stack_plan *p, size_t *n)
{
  *n = p->ngaps;
  return p->gaps;
}

int stack_plan_units(const stack_plan *p) { return geometry_units_resolved(&p->units); }
const char *stack_plan_units_source(const stack_plan *p) { return geometry_units_source(&p->units); }
int stack_plan_full_fold(const stack_plan *p, int32_t *first, int32_t *last)
{
  *first = p->full_fold_first;
  *last = p->full_fold_last;
  return p->has_full_fold;
}
stack_line_info stack_plan_line(const stack_plan *p) { return p->line_info; }
size_t stack_plan_ninputs(const stack_plan *p) { return p->ninputs; }
const stack_input *stack_plan_input(const stack_plan *p, size_t i)
{
  return i < p->ninputs ? &p->inputs[i] : NULL;
}
int64_t stack_plan_traces(const stack_plan *p) { return p->traces; }
int64_t stack_plan_stackable(const stack_plan *p) { return p->stackable; }
int64_t stack_plan_skipped(const stack_plan *p, int reason)
{
  return reason >= 0 && reason < STACK_SKIP__COUNT ? p->skipped[reason] : 0;
}

void stack_plan_cmp(const stack_plan *p, int32_t cmp, stack_cmp_plan *out)
{
  if (cmp >= p->first_cmp && cmp <= p->last_cmp && p->cmps) {
    *out = p->cmps[cmp - p->first_cmp];
    return;
  }
  memset(out, 0, sizeof *out);
  out->cmp = cmp;
  bins_cmp_centre(p->line, cmp, &out->x_m, &out->y_m);
}

int stack_plan_nmo(const stack_plan *p, nmo_params *np, nmo_top_mute *mute, tz_err *err)
{
  const job_spec *j = p->job;
  nmo_params_init(np);
  np->stretch_limit_pct = j->stretch_limit_pct;
  np->stretch_taper_ms = j->stretch_taper_ms;
  np->interp = j->interpolation == JOB_INTERP_SINC8 ? NMO_INTERP_SINC8 : NMO_INTERP_LINEAR;
  np->use_eta = j->fourth_order;
  double off[NMO_MUTE_MAX_POINTS], tms[NMO_MUTE_MAX_POINTS];
  size_t n = j->nmute < NMO_MUTE_MAX_POINTS ? j->nmute : NMO_MUTE_MAX_POINTS;
  for (size_t i = 0; i < n; i++) {
    off[i] = j->mute_top[i].offset_m;
    tms[i] = j->mute_top[i].time_ms;
  }
  memset(mute, 0, sizeof *mute);
  if (n == 0)
    return TZ_OK;
  int rc = nmo_top_mute_set(mute, off, tms, n, j->mute_taper_ms, err);
  if (rc)
    tz_err_path(err, j->path);
  return rc;
}

/* ---------------------------------------------------------------- classify */

/* As stack_plan_classify; when `gerr` is not NULL a geometry failure returns -1
 * with the geometry module's message in *gerr instead of being a skip. */
/* Where the acquisition put a trace, whatever its processing fate: filled by
 * classify() for every seismic or dead trace with a geometry. */
typedef struct acq_loc {
  int located;            /* 1 when the fields below are set */
  int in;                 /* 1 inside the line's bins (not off the line) */
  int32_t cmp;
  double off_line_m;      /* |distance| of the midpoint from the line */
} acq_loc;

static int classify(const stack_plan *p, const segy_trace_header *h, int64_t trace,
                    int32_t *cmp, double *offset_abs_m, double *offset_signed_m, int *reason,
                    tz_err *gerr, int use_range, geometry_trace *gout, acq_loc *acq)
{
  int r = stack_kind_reason(h->kind);
  if (acq)
    acq->located = 0;
  /* a dead trace is still a channel of the acquisition: locate it for the
   * acquisition fold (acq), then skip it */
  if (r >= 0 && !(acq && r == STACK_SKIP_DEAD)) {
    *reason = r;
    return 0;
  }
  if ((h->samples && h->samples != p->axis.ns) || (h->interval_us && h->interval_us != p->interval_us) ||
      h->delay_ms != p->delay_ms) {
    *reason = r >= 0 ? r : STACK_SKIP_SAMPLE_AXIS;
    return 0;
  }
  geometry_trace g;
  tz_err e;
  tz_err_init(&e);
  if (geometry_source_trace(p->geo, h, trace, &g, r < 0 && gerr ? gerr : &e)) {
    *reason = r >= 0 ? r : STACK_SKIP_UNREADABLE;
    return r < 0 && gerr ? -1 : 0;
  }
  bins_loc loc;
  int st = bins_locate(p->line, g.midpoint_x, g.midpoint_y, &loc);
  if (acq && st != BINS_OUT_OF_RANGE) {
    acq->located = 1;
    acq->in = st == BINS_IN;
    acq->cmp = loc.cmp;
    acq->off_line_m = fabs(loc.off_line_m);
  }
  if (r >= 0) {
    *reason = r;
    return 0;
  }
  if (st != BINS_IN) {
    *reason = STACK_SKIP_OFF_LINE;
    return 0;
  }
  if (g.offset_abs < p->job->offset_min_m || g.offset_abs > p->job->offset_max_m) {
    *reason = STACK_SKIP_OFFSET;
    return 0;
  }
  /* filled for a trace outside the CMP range too: the header pass measures the
   * whole line's offsets, so that every part of a line uses the same mute
   * statistics classes */
  if (gout)
    *gout = g;
  *cmp = loc.cmp;
  *offset_abs_m = g.offset_abs;
  if (offset_signed_m)
    *offset_signed_m = g.offset;
  if (use_range && p->has_range && (loc.cmp < p->first_cmp || loc.cmp > p->last_cmp)) {
    *reason = STACK_SKIP_CMP_RANGE;
    return 0;
  }
  return 1;
}

int stack_plan_classify(const stack_plan *p, const segy_trace_header *h, int64_t trace,
                        int32_t *cmp, double *offset_abs_m, double *offset_signed_m,
                        int *reason)
{
  return classify(p, h, trace, cmp, offset_abs_m, offset_signed_m, reason, NULL, 1, NULL, NULL);
}

int stack_locate(const stack_plan *p, const segy_trace_header *h, int64_t trace, int32_t *cmp,
                 double *offset_abs_m, double *offset_signed_m, geometry_trace *g, int *reason)
{
  return classify(p, h, trace, cmp, offset_abs_m, offset_signed_m, reason, NULL, 0, g, NULL);
}

int stack_plan_in_range(const stack_plan *p, int32_t cmp)
{
  return !p->has_range || (cmp >= p->first_cmp && cmp <= p->last_cmp);
}

void stack_record_span(const stack_plan *p, size_t i, size_t k, int64_t *a, int64_t *n)
{
  const stack_records *r = &p->records[i];
  *a = r->start[k];
  *n = (k + 1 < r->n ? r->start[k + 1] : p->inputs[i].traces) - *a;
}

/* ---------------------------------------------------------------- build */

/* Marks an input bad with the formatted error; returns 1, or -1 out of memory. */
static int mark_bad(stack_input *in, const tz_err *e, tz_err *err)
{
  char buf[1200];
  tz_err_format(e, buf, sizeof buf);
  in->bad = 1;
  free((char *)in->error);
  if (!(in->error = strdup(buf))) {
    tz_fail(err, TZ_E_NOMEM, "bad-file list");
    return -1;
  }
  return 1;
}

/* Opens input i; on failure either fails the build or marks the file bad. */
static int open_or_skip(stack_plan *p, size_t i, segy_file **f, tz_err *err)
{
  stack_input *in = &p->inputs[i];
  if (in->bad)
    return 1;
  tz_err e;
  tz_err_init(&e);
  int rc = stack_open_input(p, i, f, &e);
  if (!rc) {
    in->traces = segy_trace_count(*f);
    return 0;
  }
  if (!p->job->skip_bad_files) {
    *err = e;
    return -1;
  }
  return mark_bad(in, &e, err);
}

/* Records a read failure inside a file: fatal, or the file becomes bad. */
static int bad_inside(stack_plan *p, size_t i, tz_err *e, tz_err *err)
{
  tz_err_path(e, p->inputs[i].path);
  if (!p->job->skip_bad_files) {
    *err = *e;
    return -1;
  }
  return mark_bad(&p->inputs[i], e, err);
}

static int set_axis(stack_plan *p, segy_file *f, tz_err *err)
{
  if (p->have_axis)
    return TZ_OK;
  const segy_info *info = segy_get_info(f);
  segy_trace_header h;
  if (info->trace_count > 0) {
    int rc = segy_header_read(f, 0, &h, err);
    if (rc)
      return rc;
    p->delay_ms = h.delay_ms;
  }
  if (info->samples == 0 || info->interval_us == 0)
    return tz_fail(err, TZ_E_FORMAT, "no sample count or interval in the file headers");
  p->interval_us = info->interval_us;
  p->axis.ns = info->samples;
  p->axis.dt_s = info->interval_us * 1e-6;
  p->axis.t_first_s = p->delay_ms * 1e-3;
  p->have_axis = 1;
  return TZ_OK;
}

/* First scan (headers and tables only): every trace's header and geometry go
 * to the survey inference, which finds the intervals, the channels per record
 * and, when the job gives no line, fits one. A trace without geometry is left
 * out here; the second scan stops on it. */
static int scan_survey(stack_plan *p, survey *sv, tz_err *err)
{
  int rc = TZ_OK;
  for (size_t i = 0; i < p->ninputs && !rc; i++) {
    segy_file *f = NULL;
    int o = open_or_skip(p, i, &f, err);
    if (o < 0)
      return err->status;
    if (o > 0)
      continue;
    if ((rc = set_axis(p, f, err))) {
      tz_err_path(err, p->inputs[i].path);
      segy_close(f);
      break;
    }
    int64_t n = segy_trace_count(f);
    for (int64_t t = 0; t < n && !rc; t++) {
      segy_trace_header h;
      geometry_trace g;
      tz_err e;
      tz_err_init(&e);
      if (segy_header_read(f, t, &h, &e)) {
        if (bad_inside(p, i, &e, err) < 0)
          rc = err->status;
        break;
      }
      if (!geometry_source_trace(p->geo, &h, t, &g, &e)) {
        rc = survey_add(sv, i, &h, &g, err);
      } else if (stack_kind_reason(h.kind) < 0 &&
                 !((h.samples && h.samples != p->axis.ns) ||
                   (h.interval_us && h.interval_us != p->interval_us) || h.delay_ms != p->delay_ms)) {
        /* a live trace refused (coordinates in degrees, beyond the bound, not in
         * the table): named here, as classify() would, rather than left out of
         * the line's fit */
        *err = e;
        if (err->trace < 0)
          err->trace = t;
        rc = tz_err_path(err, p->inputs[i].path);
      }
    }
    segy_close(f);
  }
  return rc;
}

static int make_line(stack_plan *p, tz_err *err)
{
  const job_spec *j = p->job;
  survey_line_spec ls = {
    .bin_size_m = j->bins.has_size ? j->bins.size_m : 0,
    .has_line = j->bins.has_origin,
    .origin_x_m = j->bins.origin_x_m, .origin_y_m = j->bins.origin_y_m,
    .azimuth_deg = j->bins.azimuth_deg,
    .first_cmp = (int32_t)j->bins.first_cmp,
    .max_off_line_m = j->bins.max_distance_m,
    .crooked_smoothing_m = j->bins.crooked_smoothing_m,
  };
  double *nx = NULL, *ny = NULL;
  survey *sv = NULL;
  int rc = j->bins.crooked_file ? bins_nodes_load(j->bins.crooked_file, &nx, &ny, &ls.nnodes, err)
                                : TZ_OK;
  ls.node_x = nx;
  ls.node_y = ny;
  if (!rc)
    rc = survey_new(&sv, p->geo, &ls, err);
  free(nx);
  free(ny);
  if (!rc && survey_wants_traces(sv))
    rc = scan_survey(p, sv, err);
  if (!rc && (rc = survey_finish(sv, p->geo, &p->line, &p->survey, err)))
    tz_err_path(err, j->path);
  if (!rc) {
    double iv = j->statics.station_interval_m > 0 ? j->statics.station_interval_m
                                                   : p->survey.receiver_interval_m;
    p->st_anchor_m = survey_station_anchor(sv, p->line, iv);
  }
  if (!rc) {
    size_t ng;
    const survey_gap *g = survey_gaps(sv, &ng);
    if (ng && !(p->gaps = malloc(ng * sizeof *p->gaps)))
      rc = tz_fail(err, TZ_E_NOMEM, "gaps in the shooting");
    else if (ng) {
      memcpy(p->gaps, g, ng * sizeof *g);
      p->ngaps = ng;
    }
  }
  survey_free(sv);
  if (rc)
    return rc;
  bins_params bp = bins_line_get_params(p->line);
  p->nominal_fold = p->survey.nominal_fold;
  p->line_info.fitted = p->survey.fitted;
  p->line_info.from_layout = p->survey.from_layout && !ls.has_line;
  p->line_info.fit_rms_off_line_m = p->survey.fit.rms_off_line_m;
  p->line_info.origin_x_m = bp.origin_x;
  p->line_info.origin_y_m = bp.origin_y;
  p->line_info.azimuth_deg = bp.azimuth_deg;
  p->line_info.size_m = bp.size_m;
  p->line_info.first_cmp = bp.first_cmp;
  p->line_info.max_off_line_m = bp.max_off_line_m;
  p->line_info.nodes = bins_line_node_count(p->line);
  return TZ_OK;
}

static int open_geometry(stack_plan *p, tz_err *err)
{
  const job_spec *j = p->job;
  int rc;
  if (j->geometry == JOB_GEOMETRY_LAYOUT) {
    geometry_layout l;
    geometry_layout_init(&l);
    if ((rc = geometry_layout_load(&l, j->geometry_file, err)))
      return tz_err_path(err, j->geometry_file);
    rc = geometry_layout_check(&l, err);
    if (!rc)
      rc = geometry_source_layout(&p->geo, &l, err);
    geometry_layout_free(&l);
    if (rc)
      tz_err_path(err, j->geometry_file);
    return rc;
  }
  if (j->geometry == JOB_GEOMETRY_SPS)
    return sps_load_source(&p->geo, (const char *const *)j->sps, err);
  if (j->geometry == JOB_GEOMETRY_TABLE) {
    geometry_table *t = NULL;
    if ((rc = geometry_table_load(&t, j->geometry_file, err)))
      return tz_err_path(err, j->geometry_file);
    return geometry_source_table(&p->geo, t, err);
  }
  return geometry_source_headers(&p->geo, err);
}

/* Second scan: classify every trace, accumulate fold. */
/* One shot file's share of the header pass, filled by any thread (it touches
 * only its own file's stack_input) and folded in by the calling thread in
 * file order, so the result does not depend on the thread count. */
typedef struct file_scan {
  stack_plan *p;
  size_t file;
  int32_t *cmp;               /* stackable traces: CMP and |offset| */
  double *off;
  size_t n, cap;
  int32_t *acmp;              /* CMPs of the acquisition (seismic and dead traces on the line) */
  size_t na;
  int32_t *span;              /* per record: CMPs from its first to its last acquired one */
  size_t nspan;
  double off_line_max_m;      /* largest midpoint distance from the line */
  int64_t counts[STACK_SKIP__COUNT];
  double off_max;             /* largest |offset| of any trace that would be stacked
                               * but for the CMP range */
  int64_t traces;
  int state;                  /* 0 scanned, 1 bad (skipped), -1 failed (err) */
  int measurement_system;     /* binary header bytes 3255-3256 */
  stack_points_file pts;      /* shot points and elevations of its stackable traces */
  tz_err err;
} file_scan;

static void scan_one(file_scan *s)
{
  stack_plan *p = s->p;
  size_t i = s->file;
  segy_file *f = NULL;
  s->n = 0;
  s->na = 0;
  s->nspan = 0;
  s->off_line_max_m = 0;
  s->traces = 0;
  s->off_max = 0;
  memset(s->counts, 0, sizeof s->counts);
  stack_points_file_reset(&s->pts);
  tz_err_init(&s->err);
  int o = open_or_skip(p, i, &f, &s->err);
  if (o) {
    s->state = o;
    return;
  }
  int64_t n = segy_trace_count(f);
  s->state = 0;
  s->traces = n;
  s->measurement_system = segy_get_info(f)->measurement_system;
  if (!stack_file_axis_ok(p, segy_get_info(f))) {
    s->counts[STACK_SKIP_SAMPLE_AXIS] = n;
    segy_close(f);
    return;
  }
  if ((size_t)n > s->cap) {
    size_t nc = (size_t)n;
    int32_t *c = realloc(s->cmp, nc * sizeof *c);
    if (c)
      s->cmp = c;
    double *d = realloc(s->off, nc * sizeof *d);
    if (d)
      s->off = d;
    int32_t *a = realloc(s->acmp, nc * sizeof *a);
    if (a)
      s->acmp = a;
    int32_t *sp = realloc(s->span, nc * sizeof *sp);
    if (sp)
      s->span = sp;
    if (!c || !d || !a || !sp) {
      segy_close(f);
      s->state = -1;
      tz_fail(&s->err, TZ_E_NOMEM, "header pass buffers");
      return;
    }
    s->cap = nc;
  }
  stack_records *rec = &p->records[i];
  free(rec->start);
  free(rec->cmp_lo);
  free(rec->cmp_hi);
  rec->n = 0;
  rec->cmp_lo = malloc((size_t)(n ? n : 1) * sizeof *rec->cmp_lo);
  rec->cmp_hi = malloc((size_t)(n ? n : 1) * sizeof *rec->cmp_hi);
  if (!(rec->start = malloc((size_t)(n ? n : 1) * sizeof *rec->start)) || !rec->cmp_lo ||
      !rec->cmp_hi) {
    segy_close(f);
    s->state = -1;
    tz_fail(&s->err, TZ_E_NOMEM, "record list of %lld traces", (long long)n);
    return;
  }
  int32_t rec_no = 0, rmin = INT32_MAX, rmax = INT32_MIN;
  for (int64_t t = 0; t < n; t++) {
    segy_trace_header h;
    tz_err e;
    tz_err_init(&e);
    if (segy_header_read(f, t, &h, &e)) {
      s->state = bad_inside(p, i, &e, &s->err);
      rec->n = 0;
      break;
    }
    int32_t cmp;
    double off;
    int reason;
    if (t == 0 || h.field_record != rec_no || t - rec->start[rec->n - 1] >= STACK_MAX_RECORD_TRACES) {
      rec->cmp_lo[rec->n] = INT32_MAX;
      rec->cmp_hi[rec->n] = INT32_MIN;
      rec->start[rec->n++] = t;
      rec_no = h.field_record;
      if (rmax >= rmin)
        s->span[s->nspan++] = rmax - rmin + 1;
      rmin = INT32_MAX;
      rmax = INT32_MIN;
    }
    acq_loc acq;
    geometry_trace g;
    int k = classify(p, &h, t, &cmp, &off, NULL, &reason, &s->err, 1, &g, &acq);
    if (k >= 0 && acq.located) {
      if (acq.in) {
        s->acmp[s->na++] = acq.cmp;
        rmin = acq.cmp < rmin ? acq.cmp : rmin;
        rmax = acq.cmp > rmax ? acq.cmp : rmax;
      }
      if (acq.off_line_m > s->off_line_max_m)
        s->off_line_max_m = acq.off_line_m;
    }
    if (k < 0) {
      /* no geometry for this trace (not in the layout or table, coordinates in
       * degrees...): an error naming the file and trace, as docs/geometry-table.md says */
      tz_err_path(&s->err, p->inputs[i].path);
      if (s->err.trace < 0)
        s->err.trace = t;
      s->state = -1;
      break;
    }
    /* a trace the stack would use, whatever the CMP range: its shot point and
     * elevations for the section's headers (stack_points.c) */
    if ((k == 1 || reason == STACK_SKIP_CMP_RANGE) &&
        stack_points_trace(p, &s->pts, &h, &g, &s->err)) {
      s->state = -1;
      break;
    }
    if (!k) {
      s->counts[reason]++;
      if (reason == STACK_SKIP_CMP_RANGE && off > s->off_max)
        s->off_max = off;
      continue;
    }
    if (off > s->off_max)
      s->off_max = off;
    if (!p->has_range && (cmp < -STACK_MAX_CMPS * 100 || cmp > STACK_MAX_CMPS * 100)) {
      tz_err_path(&s->err, p->inputs[i].path);
      tz_fail_at(&s->err, TZ_E_FORMAT, t, -1, "CMP %d is implausibly far along the line",
                 (int)cmp);
      s->state = -1;
      break;
    }
    s->cmp[s->n] = cmp;
    s->off[s->n++] = off;
    if (cmp < rec->cmp_lo[rec->n - 1])
      rec->cmp_lo[rec->n - 1] = cmp;
    if (cmp > rec->cmp_hi[rec->n - 1])
      rec->cmp_hi[rec->n - 1] = cmp;
  }
  if (rmax >= rmin && s->nspan < s->cap)
    s->span[s->nspan++] = rmax - rmin + 1;
  segy_close(f);
  int64_t *shrunk = rec->n ? realloc(rec->start, rec->n * sizeof *rec->start) : NULL;
  if (shrunk)
    rec->start = shrunk;
  int32_t *lo = rec->n ? realloc(rec->cmp_lo, rec->n * sizeof *lo) : NULL;
  if (lo)
    rec->cmp_lo = lo;
  int32_t *hi = rec->n ? realloc(rec->cmp_hi, rec->n * sizeof *hi) : NULL;
  if (hi)
    rec->cmp_hi = hi;
}

static void *scan_thread(void *arg)
{
  scan_one(arg);
  return NULL;
}

/* Keeps the records' CMP spans (for the full-fold part). */
static int add_spans(stack_plan *p, const int32_t *v, size_t n, tz_err *err)
{
  if (p->nspans + n > p->cap_spans) {
    size_t nc = (p->cap_spans ? p->cap_spans * 2 : 256) + n;
    int32_t *x = realloc(p->spans, nc * sizeof *x);
    if (!x)
      return tz_fail(err, TZ_E_NOMEM, "record spans");
    p->spans = x;
    p->cap_spans = nc;
  }
  memcpy(p->spans + p->nspans, v, n * sizeof *v);
  p->nspans += n;
  return TZ_OK;
}

static int cmp_i32(const void *a, const void *b)
{
  int32_t x = *(const int32_t *)a, y = *(const int32_t *)b;
  return (x > y) - (x < y);
}

/* The header pass proper: files in rounds of T, one file per thread. */
static int scan_bins(stack_plan *p, bins_fold *fold, bins_fold *acq, int threads, stack_progress_fn progress,
                     void *ctx, tz_err *err)
{
  size_t T = threads > 0 ? (size_t)threads : 1;
  file_scan *fs = calloc(T, sizeof *fs);
  pthread_t *th = calloc(T, sizeof *th);
  int rc = TZ_OK;
  if (!fs || !th) {
    free(fs);
    free(th);
    return tz_fail(err, TZ_E_NOMEM, "header pass");
  }
  int64_t done = 0;
  for (size_t base = 0; base < p->ninputs && !rc; base += T) {
    size_t m = p->ninputs - base < T ? p->ninputs - base : T;
    size_t started = 1;
    for (size_t k = 0; k < m; k++) {
      fs[k].p = p;
      fs[k].file = base + k;
    }
    for (size_t k = 1; k < m; k++) {
      if (pthread_create(&th[k], NULL, scan_thread, &fs[k]))
        break;        /* fewer threads: the rest are scanned here below */
      started++;
    }
    scan_one(&fs[0]);
    for (size_t k = started; k < m; k++)
      scan_one(&fs[k]);
    for (size_t k = 1; k < started; k++)
      pthread_join(th[k], NULL);
    for (size_t k = 0; k < m && !rc; k++) {
      file_scan *s = &fs[k];
      if (s->state < 0) {
        *err = s->err;
        rc = err->status ? err->status : TZ_E_INTERNAL;
        break;
      }
      if (s->state > 0)
        continue;     /* bad file (skip_bad_files): counted by the caller */
      if ((rc = geometry_units_file(&p->units, s->measurement_system, p->inputs[s->file].path,
                                    err)))
        break;
      for (size_t t = 0; t < s->n && !rc; t++)
        if ((rc = bins_fold_add(fold, s->cmp[t], s->off[t], err)))
          tz_err_path(err, p->inputs[s->file].path);
      for (size_t t = 0; acq && t < s->na && !rc; t++)
        if ((rc = bins_fold_add(acq, s->acmp[t], 0, err)))
          tz_err_path(err, p->inputs[s->file].path);
      if (s->off_line_max_m > p->line_info.largest_off_line_m)
        p->line_info.largest_off_line_m = s->off_line_max_m;
      if (!rc && s->nspan && (rc = add_spans(p, s->span, s->nspan, err)))
        break;
      if (p->records[s->file].n && (rc = stack_points_take(p, &s->pts, err)))
        break;
      p->traces += s->traces;
      for (int r = 0; r < STACK_SKIP__COUNT; r++)
        p->skipped[r] += s->counts[r];
      if (s->off_max > p->line_offset_max_m)
        p->line_offset_max_m = s->off_max;
      p->stackable += (int64_t)s->n;
      done += s->traces;
    }
    if (!rc && progress)
      progress(ctx, done, -1);
  }
  for (size_t k = 0; k < T; k++) {
    free(fs[k].cmp);
    free(fs[k].off);
    free(fs[k].acmp);
    free(fs[k].span);
    stack_points_file_free(&fs[k].pts);
  }
  free(fs);
  free(th);
  return rc;
}

/* The CMPs one record spans (first to last acquired CMP, inclusive): the
 * median over the records of the header pass, or the layout's first shot. */
static double record_span(stack_plan *p, const geometry_layout *lay)
{
  if (lay) {
    int32_t lo = INT32_MAX, hi = INT32_MIN;
    tz_err e;
    tz_err_init(&e);
    for (size_t c = 0; geometry_layout_shots(lay) && c < geometry_layout_channels(lay); c++) {
      geometry_trace g;
      bins_loc loc;
      if (geometry_layout_trace(lay, 0, c, &g, &e) ||
          bins_locate(p->line, g.midpoint_x, g.midpoint_y, &loc) != BINS_IN)
        continue;
      lo = loc.cmp < lo ? loc.cmp : lo;
      hi = loc.cmp > hi ? loc.cmp : hi;
    }
    return hi >= lo ? (double)hi - lo + 1 : 0;
  }
  if (!p->nspans)
    return 0;
  qsort(p->spans, p->nspans, sizeof *p->spans, cmp_i32);
  return p->spans[p->nspans / 2];
}

/* The full-fold part of a roll-along line: the acquired CMPs (acquisition
 * fold above 0: every channel live, from the layout or the recorded seismic and
 * dead traces) less the end tapers, where fold builds up over one record's CMP
 * span W less one shot step: W - ds / bin CMPs at each end (stacking-chart
 * geometry of roll-along shooting; Sheriff & Geldart 1995, common practice).
 * It depends only on the end records and the spread, so dead channels, kills
 * and missing shots inside the line show as low fold in it instead of moving
 * it. Without a shot interval (one shot position) there is no such part. */
static void full_fold_part(stack_plan *p, const bins_fold *acq, const geometry_layout *lay)
{
  const survey_figures *sf = &p->survey;
  double bin = p->line_info.size_m;
  p->has_full_fold = 0;
  double w = record_span(p, lay);
  if (!(p->nominal_fold >= 1) || !(sf->source_interval_m > 0) || !(bin > 0) || !(w > 0))
    return;
  bins_fold_summary s;
  bins_fold_summarise(acq, &s);
  if (s.last_cmp < s.first_cmp)
    return;
  double taper = floor(w - sf->source_interval_m / bin + 0.5);
  if (taper < 0)
    taper = 0;
  double fa = (double)s.first_cmp + taper, fb = (double)s.last_cmp - taper;
  if (fa > fb)
    return;
  p->full_fold_first = (int32_t)fa;
  p->full_fold_last = (int32_t)fb;
  p->has_full_fold = 1;
}

/* The section's sample axis from the first readable file (before the
 * parallel scan, so that every thread compares with the same axis). */
static int first_axis(stack_plan *p, tz_err *err)
{
  for (size_t i = 0; i < p->ninputs && !p->have_axis; i++) {
    segy_file *f = NULL;
    int o = open_or_skip(p, i, &f, err);
    if (o < 0)
      return err->status;
    if (o > 0)
      continue;
    int rc = set_axis(p, f, err);
    segy_close(f);
    if (rc)
      return tz_err_path(err, p->inputs[i].path);
  }
  return TZ_OK;
}

void stack_plan_free(stack_plan *p)
{
  if (!p)
    return;
  geometry_source_free(p->geo);
  bins_line_free(p->line);
  free(p->cmps);
  free(p->spans);
  free(p->gaps);
  for (size_t i = 0; p->inputs && i < p->ninputs; i++)
    free((char *)p->inputs[i].error);
  for (size_t i = 0; p->records && i < p->ninputs; i++) {
    free(p->records[i].start);
    free(p->records[i].cmp_lo);
    free(p->records[i].cmp_hi);
  }
  free(p->records);
  stack_stations_free(p);
  stack_points_free(p);
  free(p->inputs);
  free(p);
}

int stack_plan_build(stack_plan **out, const job_spec *job, stack_progress_fn progress, void *ctx,
                     tz_err *err)
{
  stack_plan *p = calloc(1, sizeof *p);
  if (!p)
    return tz_fail(err, TZ_E_NOMEM, "stack plan");
  p->job = job;
  geometry_units_init(&p->units, job->units);
  int rc = TZ_OK;
  bins_fold *fold = NULL, *acq = NULL;
  if (!job->nshots) {
    rc = tz_fail(err, TZ_E_JOB, "$.shots: no shot files");
    goto fail;
  }
  p->ninputs = job->nshots;
  if (!(p->inputs = calloc(p->ninputs, sizeof *p->inputs)) ||
      !(p->records = calloc(p->ninputs, sizeof *p->records))) {
    rc = tz_fail(err, TZ_E_NOMEM, "stack inputs");
    goto fail;
  }
  for (size_t i = 0; i < p->ninputs; i++) {
    struct stat st;
    p->inputs[i].path = job->shots[i];
    p->inputs[i].bytes = stat(job->shots[i], &st) == 0 ? (int64_t)st.st_size : -1;
  }
  if (job->header_map) {
    if ((rc = segy_header_map_load(&p->map, job->header_map, err))) {
      tz_err_path(err, job->header_map);
      goto fail;
    }
    p->has_map = 1;
  }
  if ((rc = open_geometry(p, err)) || (rc = make_line(p, err)))
    goto fail;
  if (job->has_cmp_range) {
    p->has_range = 1;
    p->first_cmp = (int32_t)job->cmp_first;
    p->last_cmp = (int32_t)job->cmp_last;
  }
  if ((rc = first_axis(p, err)) || (rc = bins_fold_new(&fold, p->line, 1.0, err)) ||
      (rc = bins_fold_new(&acq, p->line, 1.0, err)))
    goto fail;
  /* The acquisition fold (every channel live) behind the full-fold part: from
   * the layout when there is one (it knows the channels a file lacks), else
   * from the recorded seismic and dead traces of the headers. */
  const geometry_layout *lay = geometry_source_get_layout(p->geo);
  if (lay && (rc = bins_fold_predict(acq, p->line, lay, NULL, err)))
    goto fail;
  {
    long cores = stack_usable_cpus();
    int T = job->threads > 0 && job->threads < cores ? job->threads : (int)cores;
    if ((rc = stack_points_begin(p, err)) ||
        (rc = scan_bins(p, fold, lay ? NULL : acq, T, progress, ctx, err)))
      goto fail;
  }
  for (size_t i = 0; i < p->ninputs; i++)
    if (p->inputs[i].bad) {
      p->traces += p->inputs[i].traces;
      p->skipped[STACK_SKIP_BAD_FILE] += p->inputs[i].traces;
      p->records[i].n = 0;
    } else {
      for (size_t k = 0; k < p->records[i].n; k++) {
        int64_t a, n;
        stack_record_span(p, i, k, &a, &n);
        if (n > p->max_record)
          p->max_record = n;
      }
    }
  if (!p->have_axis) {
    rc = tz_fail(err, TZ_E_NOINPUT, "none of the %zu shot files could be read", p->ninputs);
    goto fail;
  }
  if (p->stackable == 0) {
    char why[400] = "";
    size_t n = 0;
    for (int r = 0; r < STACK_SKIP__COUNT; r++)
      if (p->skipped[r] && n < sizeof why)
        n += (size_t)snprintf(why + n, sizeof why - n, "%s%s %lld", n ? ", " : "",
                              stack_skip_name(r), (long long)p->skipped[r]);
    rc = tz_fail(err, TZ_E_FORMAT, "no trace to stack among %lld traces read (skipped: %s)",
                 (long long)p->traces, n ? why : "none");
    goto fail;
  }
  if (!p->has_range) {
    bins_fold_summary s;
    bins_fold_summarise(fold, &s);
    p->first_cmp = s.first_cmp;
    p->last_cmp = s.last_cmp;
  }
  if ((int64_t)p->last_cmp - p->first_cmp + 1 > STACK_MAX_CMPS) {
    rc = tz_fail(err, TZ_E_FORMAT, "CMPs %d to %d: more than %d CMPs in one section",
                 (int)p->first_cmp, (int)p->last_cmp, STACK_MAX_CMPS);
    goto fail;
  }
  p->ncmps = (size_t)((int64_t)p->last_cmp - p->first_cmp + 1);
  if ((double)p->ncmps * p->axis.ns > STACK_MAX_SECTION_SAMPLES) {
    rc = tz_fail(err, TZ_E_FORMAT, "CMPs %d to %d x %zu samples: a section of more than %u "
                 "samples (select a CMP range, or check the coordinates and bin size)",
                 (int)p->first_cmp, (int)p->last_cmp, (size_t)p->axis.ns,
                 STACK_MAX_SECTION_SAMPLES);
    goto fail;
  }
  if (!(p->cmps = calloc(p->ncmps, sizeof *p->cmps))) {
    rc = tz_fail(err, TZ_E_NOMEM, "%zu CMPs", p->ncmps);
    goto fail;
  }
  for (size_t c = 0; c < p->ncmps; c++) {
    bins_cmp_stats st;
    int32_t cmp = p->first_cmp + (int32_t)c;
    bins_fold_get(fold, cmp, &st);
    stack_cmp_plan *cp = &p->cmps[c];
    cp->cmp = cmp;
    bins_cmp_centre(p->line, cmp, &cp->x_m, &cp->y_m);
    cp->fold = st.fold;
    cp->offset_min_m = st.fold ? st.offset_min_m : 0;
    cp->offset_max_m = st.fold ? st.offset_max_m : 0;
    bins_fold_get(acq, cmp, &st);
    cp->acquired_fold = st.fold;
  }
  full_fold_part(p, acq, lay);
  if ((rc = stack_points_finish(p, err)))
    goto fail;
  if (job->statics.present || edits_use_stations(&job->edits)) {
    if ((rc = stack_stations_build(p, err))) {
      tz_err_path(err, job->path);
      goto fail;
    }
  }
  bins_fold_free(fold);
  bins_fold_free(acq);
  *out = p;
  return TZ_OK;
fail:
  bins_fold_free(fold);
  bins_fold_free(acq);
  stack_plan_free(p);
  return rc;
}
