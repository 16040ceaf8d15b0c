/* stack_collect.c -- traces of chosen CMPs, CMP lists, and writing the section.
 *
 * stack_collect() asks stack_visit() for the traces whose CMP is wanted: one
 * header scan per shot file, then only the records holding them are read and
 * go through the stack's chain. The classification is the plan's own
 * (stack_plan_classify), so a gather holds exactly the traces the stack would use. Gathers are sorted by |offset|
 * (stable: equal offsets keep input order).
 *
 * stack_section_write() puts a stacked section on disk as SEG-Y rev 1 with the
 * stacked-trace header fields of SEG-Y rev 1 (2002) (common practice).
 */
#include "stack_int.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>


/* ---------------------------------------------------------------- collect */

static int cmp_i32(const void *a, const void *b)
{
  int32_t x = *(const int32_t *)a, y = *(const int32_t *)b;
  return (x > y) - (x < y);
}

void stack_gathers_free(stack_gathers *g)
{
  if (!g)
    return;
  for (size_t i = 0; i < g->n; i++) {
    free(g->g[i].offset_m);
    free(g->g[i].offset_signed_m);
    free(g->g[i].static_ms);
    free(g->g[i].live_lo);
    free(g->g[i].live_hi);
    free(g->g[i].headers);
    free(g->g[i].samples);
  }
  free(g->g);
  free(g);
}

static int grow(stack_gather *g, size_t *cap, size_t ns, tz_err *err)
{
  if (g->ntraces < *cap)
    return TZ_OK;
  size_t nc = *cap ? *cap * 2 : 16;
  double *o = realloc(g->offset_m, nc * sizeof *o);
  if (o)
    g->offset_m = o;
  double *os = realloc(g->offset_signed_m, nc * sizeof *os);
  if (os)
    g->offset_signed_m = os;
  double *st = realloc(g->static_ms, nc * sizeof *st);
  if (st)
    g->static_ms = st;
  size_t *l0 = realloc(g->live_lo, nc * sizeof *l0);
  if (l0)
    g->live_lo = l0;
  size_t *l1 = realloc(g->live_hi, nc * sizeof *l1);
  if (l1)
    g->live_hi = l1;
  segy_trace_header *h = realloc(g->headers, nc * sizeof *h);
  if (h)
    g->headers = h;
  float *s = realloc(g->samples, nc * ns * sizeof *s);
  if (s)
    g->samples = s;
  if (!o || !os || !st || !l0 || !l1 || !h || !s)
    return tz_fail(err, TZ_E_NOMEM, "gather of CMP %d", (int)g->cmp);
  *cap = nc;
  return TZ_OK;
}

typedef struct okey {
  double off;
  size_t idx;
} okey;

static int cmp_okey(const void *a, const void *b)
{
  const okey *x = a, *y = b;
  if (x->off != y->off)
    return x->off < y->off ? -1 : 1;
  return (x->idx > y->idx) - (x->idx < y->idx);
}

static int sort_gather(stack_gather *g, size_t ns, tz_err *err)
{
  size_t n = g->ntraces;
  if (n < 2)
    return TZ_OK;
  okey *k = malloc(n * sizeof *k);
  double *o = malloc(n * sizeof *o), *os = malloc(n * sizeof *os), *st = malloc(n * sizeof *st);
  size_t *l0 = malloc(n * sizeof *l0), *l1 = malloc(n * sizeof *l1);
  segy_trace_header *h = malloc(n * sizeof *h);
  float *s = malloc(n * ns * sizeof *s);
  if (!k || !o || !os || !st || !l0 || !l1 || !h || !s) {
    free(k); free(o); free(os); free(st); free(l0); free(l1); free(h); free(s);
    return tz_fail(err, TZ_E_NOMEM, "sorting gather of CMP %d", (int)g->cmp);
  }
  for (size_t i = 0; i < n; i++) {
    k[i].off = g->offset_m[i];
    k[i].idx = i;
  }
  qsort(k, n, sizeof *k, cmp_okey);
  for (size_t i = 0; i < n; i++) {
    size_t j = k[i].idx;
    o[i] = g->offset_m[j];
    os[i] = g->offset_signed_m[j];
    st[i] = g->static_ms[j];
    l0[i] = g->live_lo[j];
    l1[i] = g->live_hi[j];
    h[i] = g->headers[j];
    memcpy(s + i * ns, g->samples + j * ns, ns * sizeof *s);
  }
  free(k);
  free(g->offset_m);
  free(g->offset_signed_m);
  free(g->static_ms);
  free(g->live_lo);
  free(g->live_hi);
  free(g->headers);
  free(g->samples);
  g->live_lo = l0;
  g->live_hi = l1;
  g->offset_m = o;
  g->offset_signed_m = os;
  g->static_ms = st;
  g->headers = h;
  g->samples = s;
  return TZ_OK;
}

/* stack_collect() on stack_visit(): the wanted CMPs, and each trace appended
 * to its CMP's gather as it leaves the chain. */
typedef struct collect_ctx {
  stack_gathers *G;
  const int32_t *want;
  size_t n;
  size_t *cap;
  size_t total, ns;
} collect_ctx;

static int collect_want(void *ctx, const stack_visit_trace *t)
{
  const collect_ctx *cc = ctx;
  return bsearch(&t->cmp, cc->want, cc->n, sizeof *cc->want, cmp_i32) != NULL;
}

static int collect_emit(void *ctx, const stack_visit_trace *t, tz_err *err)
{
  collect_ctx *cc = ctx;
  const int32_t *at = bsearch(&t->cmp, cc->want, cc->n, sizeof *cc->want, cmp_i32);
  size_t gi = (size_t)(at - cc->want), ns = cc->ns;
  stack_gather *g = &cc->G->g[gi];
  if (++cc->total > STACK_MAX_GATHER_TRACES)
    return tz_fail(err, TZ_E_ARG, "more than %d traces in the requested gathers",
                   STACK_MAX_GATHER_TRACES);
  int rc = grow(g, &cc->cap[gi], ns, err);
  if (rc)
    return rc;
  size_t q = g->ntraces++;
  g->headers[q] = *t->header;
  memcpy(g->samples + q * ns, t->samples, ns * sizeof *g->samples);
  g->offset_m[q] = t->offset_m;
  g->offset_signed_m[q] = t->offset_signed_m;
  g->static_ms[q] = t->static_ms;
  g->live_lo[q] = t->live_lo;
  g->live_hi[q] = t->live_hi;
  return TZ_OK;
}

int stack_collect(const stack_plan *p, const int32_t *cmps, size_t ncmps,
                  const condition_chain *c, const velocity_table *v, stack_gathers **out,
                  tz_err *err)
{
  stack_gathers *G = calloc(1, sizeof *G);
  int32_t *want = ncmps ? malloc(ncmps * sizeof *want) : NULL;
  size_t *cap = ncmps ? calloc(ncmps, sizeof *cap) : NULL;
  int rc = TZ_OK;
  if (!G || (ncmps && (!want || !cap))) {
    rc = tz_fail(err, TZ_E_NOMEM, "gathers");
    goto done;
  }
  memcpy(want, cmps, ncmps * sizeof *want);
  qsort(want, ncmps, sizeof *want, cmp_i32);
  size_t n = 0;
  for (size_t i = 0; i < ncmps; i++)
    if (!n || want[i] != want[n - 1])
      want[n++] = want[i];
  G->axis = p->axis;
  G->interval_us = p->interval_us;
  G->n = n;
  if (n && !(G->g = calloc(n, sizeof *G->g))) {
    rc = tz_fail(err, TZ_E_NOMEM, "gathers");
    goto done;
  }
  for (size_t i = 0; i < n; i++) {
    stack_cmp_plan cp;
    stack_plan_cmp(p, want[i], &cp);
    G->g[i].cmp = want[i];
    G->g[i].x_m = cp.x_m;
    G->g[i].y_m = cp.y_m;
  }
  collect_ctx cc = { .G = G, .want = want, .n = n, .cap = cap, .ns = p->axis.ns };
  stack_visit_opts vo = { .through = STACK_STEP_CONDITIONING,
                          .conditioning_steps = c ? c->n : 0,
                          .conditioning = c, .velocity = v,
                          .want = collect_want, .emit = collect_emit, .ctx = &cc };
  if (n)
    rc = stack_visit(p, &vo, err);
  for (size_t i = 0; i < n && !rc; i++)
    rc = sort_gather(&G->g[i], p->axis.ns, err);
done:
  free(want);
  free(cap);
  if (rc) {
    stack_gathers_free(G);
    return rc;
  }
  *out = G;
  return TZ_OK;
}

/* ---------------------------------------------------------------- conditioning */

int stack_condition_plan(condition_plan **out, const condition_chain *c, const nmo_axis *ax,
                         const velocity_table *v, tz_err *err)
{
  *out = NULL;
  if (!c || !c->n)
    return TZ_OK;
  tz_err why;
  tz_err_init(&why);
  int rc = condition_plan_new(out, c, ax->t_first_s, ax->dt_s, ax->ns, v, &why);
  if (rc == TZ_E_ARG)
    return tz_fail(err, TZ_E_JOB, "$.%s", why.msg);
  if (rc)
    *err = why;
  return rc;
}

/* ---------------------------------------------------------------- writing */

void stack_section_header(const stack_section *s, const stack_plan *p, size_t c,
                          segy_trace_header *out)
{
  const job_spec *j = p->job;
  const stack_cmp_result *r = &s->cmps[c];
  segy_trace_header h;
  memset(&h, 0, sizeof h);
  h.line_seq = (int32_t)c + 1;
  h.file_seq = (int32_t)c + 1;
  h.cmp = r->cmp;
  h.cmp_trace = 1;
  h.kind = r->fold > 0 ? SEGY_KIND_SEISMIC : SEGY_KIND_DEAD;
  h.vertical_sum = 1;
  h.stacked_traces = (int16_t)(r->fold > 32767 ? 32767 : r->fold);
  h.data_use = 1;
  h.offset = 0;
  h.coord_scalar = -100;
  h.elev_scalar = -100;
  h.source_x = h.receiver_x = h.cmp_x = r->x_m;
  h.source_y = h.receiver_y = h.cmp_y = r->y_m;
  h.coord_units = 1;
  h.delay_ms = p->delay_ms;
  h.samples = (uint32_t)s->axis.ns;
  h.interval_us = s->interval_us;
  /* field shot point at the CMP, scalar -100 so fractions survive (bytes
   * 197-202, SEG-Y rev 1); surface elevation at the CMP in 41-48 and the
   * datum in 53-60 with the elevation scalar (69-70) */
  double sp = 0, elev = 0;
  int have = stack_plan_cmp_surface(p, r->cmp, &sp, &elev);
  if ((have & 1) && fabs(sp) * 100 < 2147483647.0) {
    h.shotpoint = (int32_t)llround(sp * 100);
    h.shotpoint_scalar = -100;
  } else {
    h.shotpoint = r->cmp;
    h.shotpoint_scalar = 1;
  }
  if (have & 2)
    h.receiver_elev = h.source_elev = elev;
  if (j->statics.present)
    h.receiver_datum = h.source_datum = j->statics.datum_m;
  *out = h;
}

int stack_section_write(const stack_section *s, const stack_plan *p, const char *path,
                        int format_code, const char *text, int16_t polarity, tz_err *err)
{
  segy_writer_opts o;
  memset(&o, 0, sizeof o);
  o.revision = 1;
  o.format_code = format_code == 1 ? 1 : 5;
  o.samples = (uint32_t)s->axis.ns;
  o.interval_us = s->interval_us;
  o.sorting_code = 4;                      /* horizontally stacked (SEG-Y rev 1) */
  double nom = round(p->nominal_fold);
  o.ensemble_fold = (int16_t)(nom > 32767 ? 32767 : nom < 0 ? 0 : nom);
  o.traces_per_ensemble = 1;
  o.measurement_system = (int16_t)stack_plan_units(p);
  o.polarity = polarity;
  o.text = text;
  segy_writer *w = NULL;
  int rc = segy_writer_open(&w, path, &o, err);
  if (rc)
    return rc;
  for (size_t c = 0; c < s->ncmps; c++) {
    segy_trace_header h;
    stack_section_header(s, p, c, &h);
    if ((rc = segy_trace_write(w, &h, s->samples + c * s->axis.ns, err))) {
      segy_writer_abort(w);
      return rc;
    }
  }
  return segy_writer_finish(w, err);
}

/* The finest time scalar (bytes 215-216: -100, -10 or 1) that keeps every time
 * of bytes 95-114 in its 16-bit slot, so sub-millisecond statics survive. */
int16_t stack_time_scalar(const segy_trace_header *h)
{
  double m = fmax(fmax(fabs(h->uphole_source_ms), fabs(h->uphole_receiver_ms)),
                  fmax(fabs(h->source_static_ms), fabs(h->receiver_static_ms)));
  m = fmax(m, fabs(h->total_static_ms));
  m = fmax(m, fmax(fabs((double)h->delay_ms), fmax(fabs((double)h->mute_start_ms),
                                                   fabs((double)h->mute_end_ms))));
  return m * 100 <= 32767 ? -100 : m * 10 <= 32767 ? -10 : 1;
}

int stack_write_nmo_gathers(const stack_plan *p, const stack_gathers *G, const stack_run_opts *o,
                            const char *path, int format_code, int64_t *ntraces, tz_err *err)
{
  size_t ns = G->axis.ns, maxfold = 0, total = 0;
  for (size_t i = 0; i < G->n; i++) {
    total += G->g[i].ntraces;
    if (G->g[i].ntraces > maxfold)
      maxfold = G->g[i].ntraces;
  }
  if (!total)
    return tz_fail(err, TZ_E_ARG, "none of the %zu requested CMPs has traces to write "
                   "(CMPs with traces: %d-%d)", G->n, (int)p->first_cmp, (int)p->last_cmp);
  const job_spec *j = p->job;
  char text[38 * 80];
  snprintf(text, sizeof text,
           "tzero NMO-corrected CMP gathers (traces by absolute offset)\n"
           "line: %s\n"
           "velocity: %.60s\n"
           "stretch limit %.1f %%, interpolation %s\n"
           "CMP number in bytes 21-24, trace within CMP 25-28, offset 37-40",
           j->name && j->name[0] ? j->name : "(unnamed)",
           j->velocity ? j->velocity : "(given in code)", o->nmo.stretch_limit_pct,
           nmo_interp_name(o->nmo.interp));
  segy_writer_opts wo;
  memset(&wo, 0, sizeof wo);
  wo.revision = 1;
  wo.format_code = format_code == 1 ? 1 : 5;
  wo.samples = (uint32_t)ns;
  wo.interval_us = G->interval_us;
  wo.sorting_code = 2;                     /* CDP (CMP) ensemble, SEG-Y rev 1 */
  double nom = round(p->nominal_fold);
  wo.ensemble_fold = (int16_t)(nom > 32767 ? 32767 : nom < 0 ? 0 : nom);
  wo.traces_per_ensemble = (int16_t)(maxfold > 32767 ? 32767 : maxfold);
  wo.measurement_system = (int16_t)stack_plan_units(p);
  wo.text = text;
  float *vel = malloc(ns * sizeof *vel), *eta = NULL, *out = malloc(ns * sizeof *out);
  int use_eta = o->nmo.use_eta && velocity_table_has_eta(o->velocity);
  if (use_eta)
    eta = malloc(ns * sizeof *eta);
  nmo_workspace *ws = NULL;
  segy_writer *w = NULL;
  nmo_top_mute tm;
  int rc = TZ_OK;
  if (!vel || !out || (use_eta && !eta)) {
    rc = tz_fail(err, TZ_E_NOMEM, "gather buffers");
    goto done;
  }
  if ((rc = nmo_workspace_new(&ws, ns, err)) || (rc = segy_writer_open(&w, path, &wo, err)))
    goto done;
  int64_t seq = 0;
  for (size_t i = 0; i < G->n && !rc; i++) {
    const stack_gather *g = &G->g[i];
    if (!g->ntraces)
      continue;
    velocity_sample(o->velocity, g->cmp, G->axis.t_first_s, G->axis.dt_s, ns, vel, eta);
    for (size_t k = 0; k < g->ntraces && !rc; k++) {
      mute_trace mt = { g->cmp, g->headers[k].field_record, g->headers[k].channel,
                        g->offset_signed_m[k], g->static_ms[k] };
      rc = stack_nmo_trace(ws, &o->nmo, o->mute.n ? &o->mute : NULL, o->mutes, &mt, &G->axis,
                           g->offset_m[k],
                           g->samples + k * ns, vel, use_eta ? eta : NULL, g->live_lo[k],
                           g->live_hi[k], out, NULL, NULL, &tm, err);
      if (rc)
        break;
      segy_trace_header h = g->headers[k];
      h.line_seq = (int32_t)++seq;
      h.file_seq = (int32_t)seq;
      h.cmp = g->cmp;
      h.cmp_trace = (int32_t)k + 1;
      h.offset = g->offset_signed_m[k];
      h.cmp_x = g->x_m;
      h.cmp_y = g->y_m;
      if (j->statics.present)
        h.time_scalar = stack_time_scalar(&h);
      rc = segy_trace_write(w, &h, out, err);
    }
  }
  if (!rc) {
    rc = segy_writer_finish(w, err);
    w = NULL;
  }
  if (!rc && ntraces)
    *ntraces = seq;
done:
  segy_writer_abort(w);
  nmo_workspace_free(ws);
  free(vel);
  free(eta);
  free(out);
  return rc;
}
