/* stack_visit.c -- traces as they leave the processing chain, up to a chosen step.
 *
 * One header-guided pass over the shot files, record by record in input order:
 * the trace headers of a record are read and located with the plan's own rule
 * (stack_locate); the caller's `want` says which traces it needs; a record
 * holding one is read (whole when the chain has record-wide steps, so a
 * record-wide step sees what the stack's data pass gives it) and goes through
 * stack_chain_record(), the chain the stack runs, built to stop after the
 * requested step. After the chain the wanted traces that survived the edits are
 * NMO-corrected with stack_nmo_trace(), the stack's own per-trace correction,
 * when the step is nmo (stretch mute only) or later (the job's mutes as well),
 * and handed to `emit` one by one with their live weights. stack_collect()
 * (`tzero nmo`, semblance) and the gathers of `tzero gathers` both come through
 * here, so what they show is what the stack sums.
 *
 * Memory: one record of samples, its headers and chain state; nothing grows
 * with the number of traces visited. Single-threaded (FFTW planner).
 */
#include "stack_int.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* The station numbers of a trace: the plan's stations when it numbers them
 * (statics or station edits), else positions along the line at the receiver
 * interval (0 when that is unknown). */
static void stations_of(const stack_plan *p, const geometry_trace *g, int32_t *src,
                        int32_t *rcv)
{
  double iv = p->has_stations ? p->st_interval : p->survey.receiver_interval_m;
  if (!(iv > 0)) {
    *src = *rcv = 0;
    return;
  }
  *src = stack_station_at(p, iv, g->source_x, g->source_y);
  *rcv = stack_station_at(p, iv, g->receiver_x, g->receiver_y);
}

static void describe(const stack_plan *p, size_t fi, int64_t t, const segy_trace_header *h,
                     const stack_tinfo *ti, stack_visit_trace *vt)
{
  memset(vt, 0, sizeof *vt);
  vt->input = fi;
  vt->trace = t;
  vt->header = h;
  vt->cmp = ti->cmp;
  stack_cmp_plan cp;
  stack_plan_cmp(p, ti->cmp, &cp);
  vt->x_m = cp.x_m;
  vt->y_m = cp.y_m;
  vt->offset_m = ti->off_abs;
  vt->offset_signed_m = ti->off_signed;
  vt->field_record = ti->g.field_record;
  vt->channel = ti->g.channel;
  stations_of(p, &ti->g, &vt->source_station, &vt->receiver_station);
}

int stack_visit(const stack_plan *p, const stack_visit_opts *o, tz_err *err)
{
  size_t rmax = p->max_record > 0 ? (size_t)p->max_record : 1, ns = p->axis.ns;
  float *rs = malloc(rmax * ns * sizeof *rs);          /* one record's samples */
  stack_tinfo *ti = malloc(rmax * sizeof *ti);
  segy_trace_header *rh = malloc(rmax * sizeof *rh);
  unsigned char *want = malloc(rmax);
  float *out = malloc(ns * sizeof *out), *w = malloc(ns * sizeof *w);
  float *vel = malloc(ns * sizeof *vel), *eta = NULL;
  int nmo = o->through >= STACK_STEP_NMO;
  int use_eta = nmo && o->nmo && o->nmo->use_eta && velocity_table_has_eta(o->velocity);
  const nmo_top_mute *mute = o->through >= STACK_STEP_MUTE && o->mute && o->mute->n ? o->mute
                                                                                   : NULL;
  const mute_set *mutes = o->through >= STACK_STEP_MUTE ? o->mutes : NULL;
  if (use_eta)
    eta = malloc(ns * sizeof *eta);
  stack_chain *ch = NULL;
  stack_chain_ws *cws = NULL;
  nmo_workspace *nws = NULL;
  nmo_top_mute tm;
  int32_t vel_cmp = 0;
  int have_vel = 0, rc = TZ_OK;
  if (!rs || !ti || !rh || !want || !out || !w || !vel || (use_eta && !eta)) {
    rc = tz_fail(err, TZ_E_NOMEM, "buffers for records of %zu traces", rmax);
    goto done;
  }
  if (nmo && (!o->velocity || !o->nmo)) {
    rc = tz_fail(err, TZ_E_ARG, "stack_visit: NMO needs a velocity table and NMO parameters");
    goto done;
  }
  /* the conditioning chain up to the step: all of it from nmo on, its first
   * conditioning_steps steps at the conditioning step, none before */
  condition_chain cc;
  condition_chain_init(&cc);
  const condition_chain *c = NULL;
  if (o->conditioning && o->through >= STACK_STEP_CONDITIONING) {
    cc = *o->conditioning;
    if (o->through == STACK_STEP_CONDITIONING && o->conditioning_steps < cc.n)
      cc.n = o->conditioning_steps;
    c = &cc;
  }
  if ((rc = stack_chain_new_upto(&ch, p, c, o->velocity, o->through >= STACK_STEP_STATICS, err)) ||
      (rc = stack_chain_ws_new(&cws, ch, rmax, err)) ||
      (nmo && (rc = nmo_workspace_new(&nws, ns, err))))
    goto done;
  int whole = stack_chain_whole_records(ch);
  int statics = o->through >= STACK_STEP_STATICS && p->job->statics.present;
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
      size_t hits = 0;
      for (int64_t t = a; t < a + m; t++) {
        size_t j = (size_t)(t - a);
        int reason;
        want[j] = 0;
        ti[j].read = ti[j].counted = 0;
        if ((rc = segy_header_read(f, t, &rh[j], err))) {
          tz_err_path(err, p->inputs[fi].path);
          break;
        }
        ti[j].stackable = stack_locate(p, &rh[j], t, &ti[j].cmp, &ti[j].off_abs,
                                       &ti[j].off_signed, &ti[j].g, &reason);
        if (!ti[j].stackable || !stack_plan_in_range(p, ti[j].cmp))
          continue;
        stack_visit_trace vt;
        describe(p, fi, t, &rh[j], &ti[j], &vt);
        if (o->want(o->ctx, &vt)) {
          want[j] = 1;
          ti[j].counted = 1;
          hits++;
        }
      }
      if (rc || !hits)
        continue;
      for (size_t j = 0; j < (size_t)m && !rc; j++) {
        if (!ti[j].stackable || (!want[j] && !whole))
          continue;
        if ((rc = segy_trace_read(f, a + (int64_t)j, &rh[j], rs + j * ns, ns, err)))
          tz_err_path(err, p->inputs[fi].path);
        ti[j].read = 1;
      }
      if (rc || (rc = stack_chain_record(ch, cws, fi, a, (size_t)m, rs, ti, err)))
        break;
      for (size_t j = 0; j < (size_t)m && !rc; j++) {
        if (!want[j] || ti[j].killed)
          continue;
        if (statics) {
          rh[j].source_static_ms = ti[j].static_src_ms;
          rh[j].receiver_static_ms = ti[j].static_rcv_ms;
          rh[j].total_static_ms = ti[j].static_ms;
        }
        stack_visit_trace vt;
        describe(p, fi, a + (int64_t)j, &rh[j], &ti[j], &vt);
        vt.static_ms = ti[j].static_ms;
        vt.live_lo = ti[j].live_lo;
        vt.live_hi = ti[j].live_hi;
        const float *x = rs + j * ns;
        if (nmo) {
          if (!have_vel || vel_cmp != ti[j].cmp) {
            velocity_sample(o->velocity, ti[j].cmp, p->axis.t_first_s, p->axis.dt_s, ns, vel,
                            use_eta ? eta : NULL);
            vel_cmp = ti[j].cmp;
            have_vel = 1;
          }
          mute_trace mt = { ti[j].cmp, ti[j].g.field_record, ti[j].g.channel, ti[j].off_signed,
                            ti[j].static_ms };
          rc = stack_nmo_trace(nws, o->nmo, mute, mutes, &mt, &p->axis, ti[j].off_abs, x, vel,
                               use_eta ? eta : NULL, ti[j].live_lo, ti[j].live_hi, out, w, NULL,
                               &tm, err);
          if (rc) {
            tz_err_path(err, p->inputs[fi].path);
            err->trace = a + (int64_t)j;
            break;
          }
          x = out;
        } else {
          for (size_t i = 0; i < ns; i++)
            w[i] = i >= ti[j].live_lo && i < ti[j].live_hi ? 1.0f : 0.0f;
        }
        vt.samples = x;
        vt.weight = w;
        rc = o->emit(o->ctx, &vt, err);
      }
    }
    segy_close(f);
  }
done:
  free(rs);
  free(ti);
  free(rh);
  free(want);
  free(out);
  free(w);
  free(vel);
  free(eta);
  nmo_workspace_free(nws);
  stack_chain_ws_free(cws);
  stack_chain_free(ch);
  return rc;
}
