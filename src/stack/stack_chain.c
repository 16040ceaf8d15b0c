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

#include <stdlib.h>
#include <string.h>

struct stack_chain {
  const stack_plan *p;
  condition_plan *cond;      /* NULL without conditioning */
  size_t ns;
};

struct stack_chain_ws {
  const stack_chain *ch;
  condition_workspace *cws;
  condition_trace_info *ci; /* max_traces */
  size_t max_traces;
};

int stack_chain_new(stack_chain **out, const stack_plan *p, const condition_chain *c,
                    const velocity_table *v, tz_err *err)
{
  stack_chain *ch = calloc(1, sizeof *ch);
  if (!ch)
    return tz_fail(err, TZ_E_NOMEM, "processing chain");
  ch->p = p;
  ch->ns = p->axis.ns;
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
  return ch->cond && condition_plan_record_wide(ch->cond);
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
  if (!(ws->ci = calloc(ws->max_traces, sizeof *ws->ci)))
    rc = tz_fail(err, TZ_E_NOMEM, "processing chain workspace of %zu traces", ws->max_traces);
  else if (ch->cond)
    rc = condition_workspace_new(&ws->cws, ch->cond, err);
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
  free(ws->ci);
  free(ws);
}

int stack_chain_record(const stack_chain *ch, stack_chain_ws *ws, size_t file, int64_t a,
                       size_t n, float *samples, stack_tinfo *ti, tz_err *err)
{
  if (n > ws->max_traces)
    return tz_fail(err, TZ_E_INTERNAL, "record of %zu traces in a workspace for %zu", n,
                   ws->max_traces);
  for (size_t k = 0; k < n; k++) {
    ti[k].killed = 0;
    ti[k].static_ms = 0;
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
