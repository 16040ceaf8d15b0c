/* residual_line.c -- surface-consistent residual statics of a whole line: one
 * streaming pass of the plan's records through the job's chain and NMO keeps
 * the correlation window of every trace, then residual_solve() iterates on it
 * in memory (residual.h states the method).
 *
 * Memory: traces x (window + 2 margins) floats, far less than the line when the
 * window is a part of the trace. Not here: the table (the front end).
 */
#include "tzero/residual.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "stack/stack_int.h"

void residual_line_opts_init(residual_line_opts *o)
{
  memset(o, 0, sizeof *o);
  residual_params_init(&o->params);
}

void residual_line_free(residual_line *l)
{
  if (!l)
    return;
  firstbreak_stations_free(l->stations);
  residual_result_free(&l->result);
  free(l);
}

static double now_s(void)
{
  struct timespec ts;
  clock_gettime(CLOCK_MONOTONIC, &ts);
  return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

int residual_run(const stack_plan *p, const residual_line_opts *o, residual_line **out,
                 tz_err *err)
{
  *out = NULL;
  const nmo_axis *ax = &p->axis;
  double dt_ms = ax->dt_s * 1000.0;
  if (!o->velocity)
    return tz_fail(err, TZ_E_JOB, "residual statics need the job's velocity table");
  if (!(o->window_end_ms > o->window_start_ms))
    return tz_fail(err, TZ_E_ARG, "residual statics: window %g to %g ms is empty",
                   o->window_start_ms, o->window_end_ms);
  long w0 = lround((o->window_start_ms - ax->t_first_s * 1000.0) / dt_ms);
  long w1 = lround((o->window_end_ms - ax->t_first_s * 1000.0) / dt_ms);
  if (w0 < 0 || w1 > (long)ax->ns || w1 - w0 < 8)
    return tz_fail(err, TZ_E_ARG, "residual statics: window %g to %g ms is not inside the "
                   "traces (%g to %g ms) or shorter than 8 samples", o->window_start_ms,
                   o->window_end_ms, ax->t_first_s * 1000.0,
                   (ax->t_first_s + (double)(ax->ns - 1) * ax->dt_s) * 1000.0);
  size_t margin = residual_margin(&o->params, dt_ms), nwin = (size_t)(w1 - w0);
  size_t nsamp = nwin + 2 * margin;
  residual_line *L = calloc(1, sizeof *L);
  if (!L)
    return tz_fail(err, TZ_E_NOMEM, "residual statics");
  double t_start = now_s();
  int rc = firstbreak_stations_scan(p, o->station_interval_m, &L->stations, err);
  if (rc) {
    residual_line_free(L);
    return rc;
  }
  const firstbreak_stations *S = L->stations;
  while (L->nsources < S->n && S->s[L->nsources].kind == 0)
    L->nsources++;
  L->nreceivers = S->n - L->nsources;
  double interval = S->interval_m;

  stack_chain *ch = NULL;
  stack_chain_ws *cws = NULL;
  nmo_workspace *nws = NULL;
  nmo_params np;
  nmo_top_mute mute;
  size_t rmax = p->max_record > 0 ? (size_t)p->max_record : 1, ns = ax->ns;
  float *rs = malloc(rmax * ns * sizeof *rs), *cor = malloc(ns * sizeof *cor);
  float *vcache = malloc(p->ncmps * ns * sizeof *vcache);
  float *ecache = velocity_table_has_eta(o->velocity) ? malloc(p->ncmps * ns * sizeof *ecache)
                                                      : NULL;
  unsigned char *vdone = calloc(p->ncmps ? p->ncmps : 1, 1);
  segy_trace_header *rh = malloc(rmax * sizeof *rh);
  stack_tinfo *ti = calloc(rmax, sizeof *ti);
  size_t cap = 0, nt = 0;
  float *keep = NULL;
  uint32_t *src = NULL, *rec = NULL, *cmpi = NULL;
  double *sa = NULL, *ra = NULL, *offs = NULL;
  if (!rs || !cor || !vcache || (velocity_table_has_eta(o->velocity) && !ecache) || !vdone ||
      !rh || !ti) {
    rc = tz_fail(err, TZ_E_NOMEM, "residual statics: record of %zu x %zu samples", rmax, ns);
    goto done;
  }
  const condition_chain *cc = p->job->conditioning.n ? &p->job->conditioning : NULL;
  if ((rc = stack_plan_nmo(p, &np, &mute, err)) || (rc = nmo_workspace_new(&nws, ns, err)) ||
      (rc = stack_chain_new(&ch, p, cc, o->velocity, err)) ||
      (rc = stack_chain_ws_new(&cws, ch, rmax, err)))
    goto done;
  int whole = stack_chain_whole_records(ch);
  int use_eta = velocity_table_has_eta(o->velocity) && np.use_eta;
  int64_t done_traces = 0;
  for (size_t fi = 0; fi < p->ninputs && !rc; fi++) {
    if (p->inputs[fi].bad || !p->records[fi].n)
      continue;
    segy_file *f = NULL;
    if ((rc = stack_open_input(p, fi, &f, err)))
      break;
    if (!stack_file_axis_ok(p, segy_get_info(f))) {
      segy_close(f);
      continue;
    }
    for (size_t k = 0; k < p->records[fi].n && !rc; k++) {
      int64_t a, m;
      stack_record_span(p, fi, k, &a, &m);
      for (int64_t t = a; t < a + m && !rc; t++) {
        size_t j = (size_t)(t - a);
        int reason;
        ti[j].read = 0;
        if ((rc = segy_header_read(f, t, &rh[j], err))) {
          tz_err_path(err, p->inputs[fi].path);
          break;
        }
        ti[j].stackable = stack_locate(p, &rh[j], t, &ti[j].cmp, &ti[j].off_abs,
                                       &ti[j].off_signed, &ti[j].g, &reason);
        int want = ti[j].stackable && stack_plan_in_range(p, ti[j].cmp);
        if (!ti[j].stackable || (!want && !whole)) {
          memset(rs + j * ns, 0, ns * sizeof *rs);
          continue;
        }
        if ((rc = segy_trace_read(f, t, &rh[j], rs + j * ns, ns, err)))
          tz_err_path(err, p->inputs[fi].path);
        ti[j].read = 1;
      }
      if (rc || (rc = stack_chain_record(ch, cws, fi, a, (size_t)m, rs, ti, err)))
        break;
      for (size_t j = 0; j < (size_t)m && !rc; j++) {
        if (!ti[j].read || !ti[j].stackable || ti[j].killed ||
            !stack_plan_in_range(p, ti[j].cmp))
          continue;
        const geometry_trace *g = &ti[j].g;
        const firstbreak_station *s0 =
            firstbreak_stations_find(S, 0, stack_station_at(p, interval, g->source_x, g->source_y));
        const firstbreak_station *r0 = firstbreak_stations_find(
            S, 1, stack_station_at(p, interval, g->receiver_x, g->receiver_y));
        if (!s0 || !r0) {
          rc = tz_fail(err, TZ_E_INTERNAL, "trace without its station");
          break;
        }
        /* the CMP's velocity function, sampled once per CMP */
        size_t ci = (size_t)(ti[j].cmp - p->first_cmp);
        if (!vdone[ci]) {
          velocity_sample(o->velocity, ti[j].cmp, ax->t_first_s, ax->dt_s, ns,
                          vcache + ci * ns, use_eta ? ecache + ci * ns : NULL);
          vdone[ci] = 1;
        }
        if ((rc = nmo_apply(nws, &np, &mute, ax, ti[j].off_abs, rs + j * ns, vcache + ci * ns,
                            use_eta ? ecache + ci * ns : NULL, cor, NULL, NULL, err)))
          break;
        if (nt == cap) {
          size_t nc = cap ? 2 * cap : 1024;
          if (nc > RESIDUAL_MAX_TRACES)
            nc = RESIDUAL_MAX_TRACES;
          if (nt >= nc) {
            rc = tz_fail(err, TZ_E_ARG, "residual statics: more than %u traces",
                         RESIDUAL_MAX_TRACES);
            break;
          }
          float *kk = realloc(keep, nc * nsamp * sizeof *kk);
          if (kk) keep = kk;
          uint32_t *s1 = kk ? realloc(src, nc * sizeof *s1) : NULL;
          if (s1) src = s1;
          uint32_t *r1 = s1 ? realloc(rec, nc * sizeof *r1) : NULL;
          if (r1) rec = r1;
          uint32_t *c1 = r1 ? realloc(cmpi, nc * sizeof *c1) : NULL;
          if (c1) cmpi = c1;
          double *o1 = c1 ? realloc(offs, nc * sizeof *o1) : NULL;
          if (o1) offs = o1;
          if (!o1) {
            rc = tz_fail(err, TZ_E_NOMEM, "residual statics: %zu traces of %zu samples", nc,
                         nsamp);
            break;
          }
          cap = nc;
        }
        float *dst = keep + nt * nsamp;
        for (size_t q = 0; q < nsamp; q++) {
          long sidx = w0 - (long)margin + (long)q;
          dst[q] = sidx >= 0 && sidx < (long)ns ? cor[sidx] : 0.0f;
        }
        src[nt] = (uint32_t)(s0 - S->s);
        rec[nt] = (uint32_t)(r0 - S->s - (ptrdiff_t)L->nsources);
        cmpi[nt] = (uint32_t)(ti[j].cmp - p->first_cmp);
        offs[nt] = ti[j].off_abs;
        nt++;
      }
      done_traces += m;
      if (o->progress)
        o->progress(o->progress_ctx, done_traces, p->traces);
    }
    segy_close(f);
  }
  if (rc)
    goto done;
  if (nt == 0) {
    rc = tz_fail(err, TZ_E_FORMAT, "residual statics: no traces in the plan's CMP range");
    goto done;
  }
  sa = malloc(L->nsources * sizeof *sa);
  ra = malloc(L->nreceivers * sizeof *ra);
  if (!sa || !ra) {
    rc = tz_fail(err, TZ_E_NOMEM, "residual statics: %zu stations", S->n);
    goto done;
  }
  for (size_t q = 0; q < L->nsources; q++)
    sa[q] = S->s[q].along_m;
  for (size_t q = 0; q < L->nreceivers; q++)
    ra[q] = S->s[L->nsources + q].along_m;
  L->read_s = now_s() - t_start;
  L->traces = nt;
  residual_input in = { nt, L->nsources, L->nreceivers, p->ncmps, src, rec, cmpi, keep, nsamp,
                        margin, nwin, dt_ms, sa, ra, offs };
  double t1 = now_s();
  rc = residual_solve(&o->params, &in, &L->result, o->iteration, o->iteration_ctx, err);
  L->solve_s = now_s() - t1;
done:
  free(rs), free(cor), free(vcache), free(ecache), free(vdone), free(rh), free(ti);
  free(keep), free(src), free(rec), free(cmpi), free(sa), free(ra), free(offs);
  nmo_workspace_free(nws);
  stack_chain_ws_free(cws);
  stack_chain_free(ch);
  if (rc) {
    residual_line_free(L);
    return rc;
  }
  *out = L;
  return TZ_OK;
}
