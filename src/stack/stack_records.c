/* stack_records.c -- the traces of chosen field records after the pre-NMO chain
 * (edits, statics, conditioning), before NMO: what `tzero spectrum --conditioned`
 * measures and draws. The records' CMPs are found by the plan's own trace
 * location, collected with stack_collect() (each record whole through the chain,
 * as the stack's data pass does it), and the records' traces picked out of the
 * gathers in (field record, channel) order. */
#include "stack_int.h"

#include <stdlib.h>
#include <string.h>

void stack_record_traces_free(stack_record_traces *r)
{
  if (!r)
    return;
  free(r->headers);
  free(r->samples);
  memset(r, 0, sizeof *r);
}

static int wanted(const int64_t (*rg)[2], size_t n, int64_t rec)
{
  for (size_t i = 0; i < n; i++)
    if (rec >= rg[i][0] && rec <= rg[i][1])
      return 1;
  return 0;
}

static int cmp_i32(const void *a, const void *b)
{
  int32_t x = *(const int32_t *)a, y = *(const int32_t *)b;
  return x < y ? -1 : x > y;
}

typedef struct key {
  int32_t record, channel;
  size_t index;
} key;

static int cmp_key(const void *a, const void *b)
{
  const key *x = a, *y = b;
  if (x->record != y->record)
    return x->record < y->record ? -1 : 1;
  if (x->channel != y->channel)
    return x->channel < y->channel ? -1 : 1;
  return x->index < y->index ? -1 : x->index > y->index;
}

int stack_collect_records(const stack_plan *p, const int64_t (*rg)[2], size_t nrg,
                          const condition_chain *c, const velocity_table *v,
                          stack_record_traces *out, tz_err *err)
{
  memset(out, 0, sizeof *out);
  int32_t *cmps = NULL;
  size_t ncmp = 0, cap = 0;
  int rc = TZ_OK;
  for (size_t i = 0; i < p->ninputs && !rc; i++) {
    if (p->inputs[i].bad)
      continue;
    segy_file *f = NULL;
    if ((rc = stack_open_input(p, i, &f, err)))
      break;
    int64_t nt = segy_trace_count(f);
    for (int64_t t = 0; t < nt && !rc; t++) {
      segy_trace_header h;
      int32_t cmp;
      double oa, os;
      int reason;
      if ((rc = segy_header_read(f, t, &h, err)))
        break;
      if (!wanted(rg, nrg, h.field_record) ||
          stack_locate(p, &h, t, &cmp, &oa, &os, NULL, &reason) != 1)
        continue;
      if (ncmp == cap) {
        cap = cap ? 2 * cap : 1024;
        int32_t *q = cap <= STACK_MAX_CMPS ? realloc(cmps, cap * sizeof *q) : NULL;
        if (!q) {
          rc = tz_fail(err, TZ_E_ARG, "the records chosen cover more than %d CMPs",
                       STACK_MAX_CMPS);
          break;
        }
        cmps = q;
      }
      cmps[ncmp++] = cmp;
    }
    segy_close(f);
  }
  if (!rc && !ncmp)
    rc = tz_fail(err, TZ_E_ARG, "no stackable trace of the records chosen");
  size_t m = 0;
  if (!rc) {   /* distinct CMPs */
    qsort(cmps, ncmp, sizeof *cmps, cmp_i32);
    for (size_t i = 0; i < ncmp; i++)
      if (!m || cmps[i] != cmps[m - 1])
        cmps[m++] = cmps[i];
  }
  stack_gathers *G = NULL;
  if (!rc)
    rc = stack_collect(p, cmps, m, c, v, &G, err);
  size_t n = 0, ns = 0;
  key *order = NULL;
  segy_trace_header *hd = NULL;
  float *sm = NULL;
  if (!rc) {
    ns = G->axis.ns;
    for (size_t g = 0; g < G->n; g++)
      for (size_t k = 0; k < G->g[g].ntraces; k++)
        n += wanted(rg, nrg, G->g[g].headers[k].field_record);
    hd = malloc((n ? n : 1) * sizeof *hd);
    sm = malloc((n ? n : 1) * ns * sizeof *sm);
    order = malloc((n ? n : 1) * sizeof *order);
    out->headers = malloc((n ? n : 1) * sizeof *out->headers);
    out->samples = malloc((n ? n : 1) * ns * sizeof *out->samples);
    if (!hd || !sm || !order || !out->headers || !out->samples)
      rc = tz_fail(err, TZ_E_NOMEM, "%zu traces of %zu samples", n, ns);
  }
  if (!rc) {
    size_t j = 0;
    for (size_t g = 0; g < G->n; g++)
      for (size_t k = 0; k < G->g[g].ntraces; k++)
        if (wanted(rg, nrg, G->g[g].headers[k].field_record)) {
          hd[j] = G->g[g].headers[k];
          memcpy(sm + j * ns, G->g[g].samples + k * ns, ns * sizeof *sm);
          order[j] = (key){ hd[j].field_record, hd[j].channel, j };
          j++;
        }
    qsort(order, n, sizeof *order, cmp_key);
    for (size_t q = 0; q < n; q++) {
      out->headers[q] = hd[order[q].index];
      memcpy(out->samples + q * ns, sm + order[q].index * ns, ns * sizeof *sm);
    }
    out->n = n;
    out->ns = ns;
    out->axis = G->axis;
    out->interval_us = G->interval_us;
  }
  free(order);
  free(hd);
  free(sm);
  free(cmps);
  stack_gathers_free(G);
  if (rc)
    stack_record_traces_free(out);
  return rc;
}
