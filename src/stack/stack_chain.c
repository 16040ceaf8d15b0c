/* stack_chain.c -- the pre-NMO chain, one whole field record at a time.
 *
 * Every path that turns recorded traces into NMO input (the stack, `tzero nmo`,
 * semblance, constant-velocity stacks) hands each record it uses to
 * stack_chain_record(), in input order:
 *   1. edits       kill and reverse (by selector, and automatic kills judged
 *                  against the record's own median level);
 *   2. statics     the trace's total static as a sub-sample time shift;
 *   3. conditioning condition_apply_record() on the record's live traces.
 * The chain is read-only once made and shared by threads; each thread has its
 * own stack_chain_ws. A record is always processed whole by one thread, so a
 * record-wide step sees the same traces whatever the thread count, the CMP
 * range or the CMPs asked for: a part run and a full run give the same bits.
 *
 * Not here: reading (stack_run.c, stack_collect.c), NMO and summing.
 */
#include "stack_int.h"

#include "tzero/nmo.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

struct stack_chain {
  const stack_plan *p;
  const edits_spec *edits;   /* the job's; NULL when it edits nothing */
  int statics;               /* the job applies statics */
  condition_plan *cond;      /* NULL without conditioning */
  size_t ns;
  size_t win_lo, win_hi;     /* automatic-kill RMS window, samples [lo, hi) */
};

struct stack_chain_ws {
  const stack_chain *ch;
  condition_workspace *cws;
  condition_trace_info *ci; /* max_traces */
  size_t max_traces;
  nmo_workspace *nws;        /* sinc8 shifts */
  float *tmp;                /* ns */
  double *rms;               /* max_traces: automatic kills */
  stack_chain_counts counts;
};

int stack_chain_new(stack_chain **out, const stack_plan *p, const condition_chain *c,
                    const velocity_table *v, tz_err *err)
{
  return stack_chain_new_upto(out, p, c, v, 1, err);
}

int stack_chain_new_upto(stack_chain **out, const stack_plan *p, const condition_chain *c,
                         const velocity_table *v, int statics, tz_err *err)
{
  stack_chain *ch = calloc(1, sizeof *ch);
  if (!ch)
    return tz_fail(err, TZ_E_NOMEM, "processing chain");
  ch->p = p;
  ch->ns = p->axis.ns;
  ch->edits = edits_spec_active(&p->job->edits) ? &p->job->edits : NULL;
  ch->statics = statics && p->job->statics.present;
  ch->win_lo = 0;
  ch->win_hi = ch->ns;
  if (ch->edits && ch->edits->window_end_ms > 0) {
    double t0 = p->axis.t_first_s, dt = p->axis.dt_s;
    double a = ceil((ch->edits->window_start_ms * 1e-3 - t0) / dt);
    double b = floor((ch->edits->window_end_ms * 1e-3 - t0) / dt) + 1;
    ch->win_lo = a < 0 ? 0 : a > (double)ch->ns ? ch->ns : (size_t)a;
    ch->win_hi = b < 0 ? 0 : b > (double)ch->ns ? ch->ns : (size_t)b;
    if (ch->win_hi <= ch->win_lo) {
      int rc = tz_fail(err, TZ_E_JOB, "$.edits.auto.window_ms: %g-%g ms holds no sample of "
                       "the traces (%g to %g ms)", ch->edits->window_start_ms,
                       ch->edits->window_end_ms, t0 * 1e3,
                       (t0 + (double)(p->axis.ns - 1) * dt) * 1e3);
      stack_chain_free(ch);
      return rc;
    }
  }
  int rc = stack_condition_plan(&ch->cond, c, &p->axis, v, err);
  if (!rc && ch->cond && condition_plan_has_fk(ch->cond)) {
    /* one f-k grid for the whole line: the receiver interval, and the largest
     * |offset| of any trace that could be stacked (whatever the CMP range) */
    double dx = p->survey.receiver_interval_m, xm = p->line_offset_max_m + dx;
    tz_err why;
    tz_err_init(&why);
    if (!(dx > 0))
      rc = tz_fail(err, TZ_E_JOB, "$.conditioning (fk_filter): the line's receiver interval "
                   "is unknown (one trace per record?), so traces cannot be placed by offset");
    else if (condition_plan_set_offsets(ch->cond, dx, -xm, xm, &why))
      rc = why.status == TZ_E_ARG ? tz_fail(err, TZ_E_JOB, "$.%s", why.msg)
                                  : (*err = why, why.status);
  }
  if (rc) {
    stack_chain_free(ch);
    return rc;
  }
  *out = ch;
  return TZ_OK;
}

void stack_chain_free(stack_chain *ch)
{
  if (!ch)
    return;
  condition_plan_free(ch->cond);
  free(ch);
}

int stack_chain_whole_records(const stack_chain *ch)
{
  return (ch->edits && (ch->edits->auto_dead || ch->edits->rms_ratio_max > 0)) ||
         (ch->cond && condition_plan_record_wide(ch->cond));
}

int stack_chain_ws_new(stack_chain_ws **out, const stack_chain *ch, size_t max_traces,
                       tz_err *err)
{
  stack_chain_ws *ws = calloc(1, sizeof *ws);
  if (!ws)
    return tz_fail(err, TZ_E_NOMEM, "processing chain workspace");
  ws->ch = ch;
  ws->max_traces = max_traces ? max_traces : 1;
  int rc = TZ_OK;
  size_t nk = ch->edits ? ch->edits->nkill : 0, nr = ch->edits ? ch->edits->nreverse : 0;
  ws->counts.nkill = nk;
  ws->counts.nreverse = nr;
  if (!(ws->ci = calloc(ws->max_traces, sizeof *ws->ci)) ||
      !(ws->rms = malloc(ws->max_traces * sizeof *ws->rms)) ||
      !(ws->tmp = malloc(ch->ns * sizeof *ws->tmp)) ||
      (nk && !(ws->counts.kill_hits = calloc(nk, sizeof *ws->counts.kill_hits))) ||
      (nr && !(ws->counts.reverse_hits = calloc(nr, sizeof *ws->counts.reverse_hits))))
    rc = tz_fail(err, TZ_E_NOMEM, "processing chain workspace of %zu traces", ws->max_traces);
  else if (ch->cond)
    rc = condition_workspace_new(&ws->cws, ch->cond, err);
  if (!rc && ch->statics)
    rc = nmo_workspace_new(&ws->nws, ch->ns, err);
  if (rc) {
    stack_chain_ws_free(ws);
    return rc;
  }
  *out = ws;
  return TZ_OK;
}

void stack_chain_ws_free(stack_chain_ws *ws)
{
  if (!ws)
    return;
  condition_workspace_free(ws->cws);
  nmo_workspace_free(ws->nws);
  free(ws->ci);
  free(ws->rms);
  free(ws->tmp);
  free(ws->counts.kill_hits);
  free(ws->counts.reverse_hits);
  free(ws->counts.auto_killed);
  free(ws);
}

static int cmp_killed(const void *a, const void *b)
{
  const stack_killed_trace *x = a, *y = b;
  if (x->input != y->input)
    return x->input < y->input ? -1 : 1;
  return (x->trace > y->trace) - (x->trace < y->trace);
}

void stack_killed_sort(stack_killed_trace *v, size_t n)
{
  if (n > 1)
    qsort(v, n, sizeof *v, cmp_killed);
}

/* Notes an automatic kill of a trace the run counts (no allocation failure
 * stops the run: past the cap, or out of memory, the kill is counted only). */
static void note_auto(stack_chain_ws *ws, size_t file, int64_t trace, const stack_tinfo *t,
                      int reason)
{
  stack_chain_counts *c = &ws->counts;
  if (!t->counted)
    return;
  if (c->nauto == c->cap_auto) {
    size_t nc = c->cap_auto ? c->cap_auto * 2 : 64;
    stack_killed_trace *v = nc <= STACK_MAX_KILL_LIST ? realloc(c->auto_killed, nc * sizeof *v)
                                                      : NULL;
    if (!v) {
      c->auto_unlisted++;
      return;
    }
    c->auto_killed = v;
    c->cap_auto = nc;
  }
  stack_killed_trace *k = &c->auto_killed[c->nauto++];
  k->input = (int32_t)file;
  k->trace = trace;
  k->field_record = t->g.field_record;
  k->channel = t->g.channel;
  k->reason = reason;
}

const stack_chain_counts *stack_chain_ws_counts(const stack_chain_ws *ws)
{
  return &ws->counts;
}

/* Edits on the record: listed kills and reversals, then automatic kills judged
 * against the median RMS of the record's remaining live traces. */
static void edit_record(const stack_chain *ch, stack_chain_ws *ws, size_t file, int64_t a,
                        size_t n, float *samples, stack_tinfo *ti)
{
  const edits_spec *ed = ch->edits;
  const stack_plan *p = ch->p;
  size_t ns = ch->ns;
  for (size_t k = 0; k < n; k++) {
    if (!ti[k].read || !ti[k].stackable)
      continue;
    edits_trace et;
    et.record = ti[k].g.field_record;
    et.channel = ti[k].g.channel;
    et.source_station = p->has_stations ? stack_station_of(p, ti[k].g.source_x, ti[k].g.source_y) : 0;
    et.receiver_station =
        p->has_stations ? stack_station_of(p, ti[k].g.receiver_x, ti[k].g.receiver_y) : 0;
    et.file = p->inputs[file].path;
    for (size_t e = 0; e < ed->nkill; e++)
      if (edits_entry_matches(&ed->kill[e], &et)) {
        ws->counts.kill_hits[e] += ti[k].counted;
        ti[k].killed = 1 + EDITS_KILL_LISTED;
      }
    for (size_t e = 0; e < ed->nreverse; e++)
      if (edits_entry_matches(&ed->reverse[e], &et)) {
        ws->counts.reverse_hits[e] += ti[k].counted;
        ti[k].reversed = 1;
      }
    if (ti[k].reversed && !ti[k].killed) {
      float *x = samples + k * ns;
      for (size_t i = 0; i < ns; i++)
        x[i] = -x[i];
    }
  }
  if (ed->auto_dead)
    for (size_t k = 0; k < n; k++)
      if (ti[k].read && ti[k].stackable && !ti[k].killed &&
          edits_is_constant(samples + k * ns, ns)) {
        ti[k].killed = 1 + EDITS_KILL_DEAD;
        note_auto(ws, file, a + (int64_t)k, &ti[k], EDITS_KILL_DEAD);
      }
  if (ed->rms_ratio_max > 0) {
    size_t m = 0;
    for (size_t k = 0; k < n; k++)
      if (ti[k].read && ti[k].stackable && !ti[k].killed)
        ws->rms[m++] = edits_rms(samples + k * ns, ch->win_lo, ch->win_hi);
    double med = edits_median(ws->rms, m);
    for (size_t k = 0; m >= 3 && med > 0 && k < n; k++)
      if (ti[k].read && ti[k].stackable && !ti[k].killed &&
          edits_rms(samples + k * ns, ch->win_lo, ch->win_hi) > ed->rms_ratio_max * med) {
        ti[k].killed = 1 + EDITS_KILL_NOISY;
        note_auto(ws, file, a + (int64_t)k, &ti[k], EDITS_KILL_NOISY);
      }
  }
}

double stack_trace_static_ms(const stack_plan *p, const geometry_trace *g, int32_t cmp,
                             double *src_ms, double *rcv_ms)
{
  const stack_station *s = stack_station_find(
      p, STATICS_SOURCE, stack_station_of(p, g->source_x, g->source_y));
  const stack_station *r = stack_station_find(
      p, STATICS_RECEIVER, stack_station_of(p, g->receiver_x, g->receiver_y));
  *src_ms = s ? s->static_ms : 0;
  *rcv_ms = r ? r->static_ms : 0;
  return *src_ms + *rcv_ms + stack_floating_ms(p, cmp);
}

/* Statics: each live trace shifted by its source plus receiver static (sinc8). */
static int shift_record(const stack_chain *ch, stack_chain_ws *ws, size_t file, int64_t a,
                        size_t n, float *samples, stack_tinfo *ti, tz_err *err)
{
  const stack_plan *p = ch->p;
  size_t ns = ch->ns;
  for (size_t k = 0; k < n; k++) {
    if (!ti[k].read || !ti[k].stackable || ti[k].killed)
      continue;
    ti[k].static_ms = stack_trace_static_ms(p, &ti[k].g, ti[k].cmp, &ti[k].static_src_ms,
                                            &ti[k].static_rcv_ms);
    if (ti[k].static_ms == 0)
      continue;
    float *x = samples + k * ns;
    int rc = nmo_shift(ws->nws, &p->axis, ti[k].static_ms * 1e-3, x, ws->tmp, &ti[k].live_lo,
                       &ti[k].live_hi, err);
    if (rc) {
      tz_err_path(err, p->inputs[file].path);
      err->trace = a + (int64_t)k;
      return rc;
    }
    memcpy(x, ws->tmp, ns * sizeof *x);
  }
  return TZ_OK;
}

int stack_chain_record(const stack_chain *ch, stack_chain_ws *ws, size_t file, int64_t a,
                       size_t n, float *samples, stack_tinfo *ti, tz_err *err)
{
  if (n > ws->max_traces)
    return tz_fail(err, TZ_E_INTERNAL, "record of %zu traces in a workspace for %zu", n,
                   ws->max_traces);
  for (size_t k = 0; k < n; k++) {
    ti[k].killed = ti[k].reversed = 0;
    ti[k].static_ms = ti[k].static_src_ms = ti[k].static_rcv_ms = 0;
    ti[k].live_lo = 0;
    ti[k].live_hi = ch->ns;
  }
  if (ch->edits)
    edit_record(ch, ws, file, a, n, samples, ti);
  if (ch->statics) {
    int rc = shift_record(ch, ws, file, a, n, samples, ti, err);
    if (rc)
      return rc;
  }
  if (!ch->cond)
    return TZ_OK;
  for (size_t k = 0; k < n; k++) {
    condition_trace_info *c = &ws->ci[k];
    c->cmp = ti[k].cmp;
    c->vel_mps = NULL;
    c->offset_m = ti[k].off_signed;
    c->live = ti[k].read && ti[k].stackable && !ti[k].killed;
  }
  int rc = condition_apply_record(ch->cond, ws->cws, samples, n, ws->ci, err);
  if (rc) {
    int64_t k = err->trace;
    tz_err_path(err, ch->p->inputs[file].path);
    err->trace = k >= 0 ? a + k : -1;
  }
  return rc;
}

int stack_nmo_trace(nmo_workspace *ws, const nmo_params *np, const nmo_top_mute *mute,
                    const mute_set *ms, const mute_trace *mt,
                    const nmo_axis *ax, double offset_m, const float *in, const float *vel,
                    const float *eta, size_t live_lo, size_t live_hi, float *out, float *w,
                    nmo_trace_info *info, nmo_top_mute *scratch, tz_err *err)
{
  mute_times mtm;
  int set = ms && mt && mute_set_active(ms);
  if (set)
    mute_eval(ms, mt, &mtm);
  if (!set && live_lo == 0 && live_hi >= ax->ns)
    return nmo_apply(ws, np, mute, ax, offset_m, in, vel, eta, out, w, info, err);
  nmo_trace_info local;
  if (!info)
    info = &local;
  memset(out, 0, ax->ns * sizeof *out);
  if (w)
    memset(w, 0, ax->ns * sizeof *w);
  if (live_hi <= live_lo) {
    memset(info, 0, sizeof *info);
    info->first_live = ax->ns;
    info->muted_end = ax->ns;
    return TZ_OK;
  }
  /* The top mute of this trace as a one-point polyline: the later of the mute
   * and the first recorded sample (live_lo). */
  double taper = set ? ms->taper_ms : mute && mute->n ? mute->taper_ms : 0;
  double tm = set ? mtm.top_ms : mute && mute->n ? nmo_top_mute_seconds(mute, offset_m) * 1e3
                                                 : -INFINITY;
  if (live_lo > 0) {
    double t_ms = (ax->t_first_s + (double)live_lo * ax->dt_s) * 1e3;
    tm = tm > t_ms ? tm : t_ms;
  }
  const nmo_top_mute *m = NULL;
  if (!set && live_lo == 0) {
    m = mute;   /* the polyline itself, as nmo_apply evaluates it */
  } else if (tm > -INFINITY) {
    double off0 = 0;
    int rc = nmo_top_mute_set(scratch, &off0, &tm, 1, taper, err);
    if (rc)
      return rc;
    m = scratch;
  }
  nmo_axis a = *ax;
  a.ns = live_hi;
  int rc = nmo_apply(ws, np, m, &a, offset_m, in, vel, eta, out, w, info, err);
  if (rc)
    return rc;
  if (set) {   /* bottom first, then the cone inside what is left (no double count) */
    if (isfinite(mtm.bottom_ms))
      nmo_band_mute(ws, &a, mtm.bottom_ms * 1e-3, INFINITY, taper * 1e-3, out, w, info);
    nmo_band_mute(ws, &a, mtm.inner_from_ms * 1e-3, mtm.inner_to_ms * 1e-3, taper * 1e-3, out,
                  w, info);
  }
  if (live_hi < ax->ns) {
    info->muted_end += ax->ns - live_hi;
    if (!info->live)
      info->first_live = info->end_live = ax->ns;
  }
  return TZ_OK;
}
