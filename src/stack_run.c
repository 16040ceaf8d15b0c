/* stack_run.c -- the data pass: NMO, mutes and live-weighted sums, one CMP per thread.
 *
 * The traces are read in input order, file by file, in batches of up to
 * BATCH_TRACES. Each batch goes through two phases separated by barriers:
 *   A. reading: thread t reads its contiguous slice of the batch (each thread
 *      keeps its own segy_file handle, so reading and sample conversion run in
 *      parallel) and classifies each trace with stack_plan_classify();
 *   B. stacking: thread t takes, in batch order, the traces of its CMPs (CMP
 *      index / OWNER_BLOCK modulo the thread count: blocks of 16 CMPs, so no
 *      two threads write the same cache line of the per-CMP counters): NMO
 *      (nmo_apply) with the CMP's velocity
 *      function, then sum[i] += out[i], weight[i] += w[i] over the live span.
 * Every CMP is therefore summed by exactly one thread, in input order, with the
 * same float operations whatever the thread count: the section is bitwise
 * identical for any N (tests/e2e/test_stack.sh proves it).
 *
 * Velocity functions are sampled once per CMP into a direct-mapped cache whose
 * size is a multiple of the thread count, so a slot is only ever touched by the
 * CMP's own thread (no locks). Memory: sum and weight (2 x section), the cache
 * (at most the section, capped at CACHE_BYTES), one batch of input traces.
 *
 * Stack trace (REFERENCE.md §3.10): s(t0) = sum_i w_i f_i(t0) / sum_i w_i, where
 * the NMO output f_i already carries its taper weight w_i and muted samples have
 * w_i = 0; a sample with no live trace is 0.
 */
#include "stack_int.h"

#include <math.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

#define BATCH_TRACES 512
#define CACHE_BYTES ((size_t)64 << 20)
#define OWNER_BLOCK 16            /* CMPs per ownership block (16 x 4 bytes = a cache line) */
#define LINE 64

typedef struct run_shared run_shared;

typedef struct worker {
  int id;
  run_shared *sh;
  pthread_t th;
  int started;
  nmo_workspace *ws;
  float *out, *w;
  segy_file *f;
  size_t fcur;
  tz_err err;
  int failed;
  int64_t skipped[STACK_SKIP__COUNT];
  int64_t read, stacked;
  int64_t muted_stretch, muted_top, muted_end, samples;
  stack_mute_class cls[STACK_MUTE_CLASSES];
} worker;

struct run_shared {
  const stack_plan *p;
  const stack_run_opts *o;
  int T;
  pthread_barrier_t bar;
  pthread_mutex_t gate_mu;   /* start gate: workers wait until every thread exists */
  pthread_cond_t gate_cv;
  int gate;                  /* 0 closed, 1 go, -1 abort */
  size_t ns;
  int32_t first;             /* run range */
  size_t ncmps;
  int subset;                /* run range narrower than the plan's: headers first */
  float *sum, *wsum;         /* ncmps * ns */
  int32_t *fold;
  int64_t *live;
  int32_t *maxfirst;
  /* velocity cache */
  size_t cache_n;
  int32_t *tag;
  float *cvel, *ceta;
  int use_eta;
  /* batch */
  float *in;                 /* BATCH_TRACES * ns */
  int32_t *bidx;             /* CMP index or -1 */
  double *boff;
  size_t bfile;
  int64_t ba, bn;
  size_t nclasses;
  double class_m;
  worker *wk;
};

int stack_run_opts_init(stack_run_opts *o, const stack_plan *p, const velocity_table *v,
                        tz_err *err)
{
  memset(o, 0, sizeof *o);
  o->velocity = v;
  o->threads = p->job->threads;
  o->first_cmp = p->first_cmp;
  o->last_cmp = p->last_cmp;
  double maxoff = 0;
  for (size_t c = 0; c < p->ncmps; c++)
    if (p->cmps[c].offset_max_m > maxoff)
      maxoff = p->cmps[c].offset_max_m;
  o->offset_class_m = maxoff / 8 >= 1 ? ceil(maxoff / 8) : 1;
  return stack_plan_nmo(p, &o->nmo, &o->mute, err);
}

static int read_slice(worker *w, int64_t lo, int64_t hi)
{
  run_shared *sh = w->sh;
  const stack_plan *p = sh->p;
  if (lo >= hi)
    return TZ_OK;
  if (!w->f || w->fcur != sh->bfile) {
    segy_close(w->f);
    w->f = NULL;
    int rc = stack_open_input(p, sh->bfile, &w->f, &w->err);
    if (rc)
      return rc;
    w->fcur = sh->bfile;
  }
  int axis_ok = stack_file_axis_ok(p, segy_get_info(w->f));
  for (int64_t t = lo; t < hi; t++) {
    size_t j = (size_t)(t - sh->ba);
    float *buf = sh->in + j * sh->ns;
    segy_trace_header h;
    int rc;
    sh->bidx[j] = -1;
    w->read++;
    if (!axis_ok) {
      w->skipped[STACK_SKIP_SAMPLE_AXIS]++;
      continue;
    }
    if (sh->subset) {
      if ((rc = segy_read_header(w->f, t, &h, &w->err)))
        return tz_err_path(&w->err, p->inputs[sh->bfile].path);
    } else if ((rc = segy_read_trace(w->f, t, &h, buf, sh->ns, &w->err))) {
      return tz_err_path(&w->err, p->inputs[sh->bfile].path);
    }
    int32_t cmp;
    double off;
    int reason;
    if (!stack_plan_classify(p, &h, t, &cmp, &off, NULL, &reason)) {
      w->skipped[reason]++;
      continue;
    }
    if (cmp < sh->first || (int64_t)cmp >= sh->first + (int64_t)sh->ncmps) {
      w->skipped[STACK_SKIP_CMP_RANGE]++;
      continue;
    }
    if (sh->subset && (rc = segy_read_trace(w->f, t, &h, buf, sh->ns, &w->err)))
      return tz_err_path(&w->err, p->inputs[sh->bfile].path);
    sh->bidx[j] = cmp - sh->first;
    sh->boff[j] = off;
  }
  return TZ_OK;
}

static void velocity_of(run_shared *sh, int32_t ci, const float **vel, const float **eta)
{
  size_t slot = (size_t)ci % sh->cache_n;
  float *v = sh->cvel + slot * sh->ns;
  float *e = sh->use_eta ? sh->ceta + slot * sh->ns : NULL;
  if (sh->tag[slot] != ci) {
    const nmo_axis *ax = &sh->p->axis;
    velocity_sample(sh->o->velocity, (int64_t)sh->first + ci, ax->t_first_s, ax->dt_s, ax->ns,
                    v, e);
    sh->tag[slot] = ci;
  }
  *vel = v;
  *eta = e;
}

/* S[i] += o[i], W[i] += w[i] for i in [a, b). Four lanes at a time with GCC
 * vector types (element-wise adds: exactly the scalar result, so thread counts
 * and builds agree bit for bit); memcpy keeps the loads unaligned-safe. */
typedef float v4f __attribute__((vector_size(16)));

static void accumulate(float *S, float *W, const float *o, const float *w, size_t a, size_t b)
{
  size_t i = a;
  for (; i + 4 <= b; i += 4) {
    v4f s, x, ws, y;
    memcpy(&s, S + i, sizeof s);
    memcpy(&x, o + i, sizeof x);
    memcpy(&ws, W + i, sizeof ws);
    memcpy(&y, w + i, sizeof y);
    s += x;
    ws += y;
    memcpy(S + i, &s, sizeof s);
    memcpy(W + i, &ws, sizeof ws);
  }
  for (; i < b; i++) {
    S[i] += o[i];
    W[i] += w[i];
  }
}

static int stack_slice(worker *w)
{
  run_shared *sh = w->sh;
  const nmo_axis *ax = &sh->p->axis;
  const nmo_top_mute *mute = sh->o->mute.n ? &sh->o->mute : NULL;
  for (size_t j = 0; j < (size_t)sh->bn; j++) {
    int32_t ci = sh->bidx[j];
    if (ci < 0 || (ci / OWNER_BLOCK) % sh->T != w->id)
      continue;
    const float *vel, *eta;
    velocity_of(sh, ci, &vel, &eta);
    nmo_trace_info info;
    int rc = nmo_apply(w->ws, &sh->o->nmo, mute, ax, sh->boff[j], sh->in + j * sh->ns, vel, eta,
                       w->out, w->w, &info, &w->err);
    if (rc) {
      tz_err_path(&w->err, sh->p->inputs[sh->bfile].path);
      w->err.trace = sh->ba + (int64_t)j;
      return rc;
    }
    accumulate(sh->sum + (size_t)ci * sh->ns, sh->wsum + (size_t)ci * sh->ns, w->out, w->w,
               info.first_live, info.end_live);
    sh->fold[ci]++;
    sh->live[ci] += (int64_t)info.live;
    if ((int32_t)info.first_live > sh->maxfirst[ci])
      sh->maxfirst[ci] = (int32_t)info.first_live;
    w->stacked++;
    w->samples += (int64_t)sh->ns;
    w->muted_stretch += (int64_t)info.muted_stretch;
    w->muted_top += (int64_t)info.muted_top;
    w->muted_end += (int64_t)info.muted_end;
    size_t k = (size_t)(sh->boff[j] / sh->class_m);
    if (k >= sh->nclasses)
      k = sh->nclasses - 1;
    stack_mute_class *c = &w->cls[k];
    c->traces++;
    c->samples += (int64_t)sh->ns;
    c->muted_stretch += (int64_t)info.muted_stretch;
    c->muted_top += (int64_t)info.muted_top;
    c->muted_end += (int64_t)info.muted_end;
  }
  return TZ_OK;
}

static int any_failed(const run_shared *sh)
{
  for (int t = 0; t < sh->T; t++)
    if (sh->wk[t].failed)
      return 1;
  return 0;
}

static void *work(void *arg)
{
  worker *w = arg;
  run_shared *sh = w->sh;
  const stack_plan *p = sh->p;
  int64_t done = 0;
  pthread_mutex_lock(&sh->gate_mu);
  while (sh->gate == 0)
    pthread_cond_wait(&sh->gate_cv, &sh->gate_mu);
  int go = sh->gate > 0;
  pthread_mutex_unlock(&sh->gate_mu);
  if (!go)
    return NULL;
  for (size_t fi = 0; fi < p->ninputs; fi++) {
    if (p->inputs[fi].bad)
      continue;
    int64_t ntr = p->inputs[fi].traces;
    for (int64_t a = 0; a < ntr; a += BATCH_TRACES) {
      int64_t n = ntr - a < BATCH_TRACES ? ntr - a : BATCH_TRACES;
      if (w->id == 0) {
        sh->bfile = fi;
        sh->ba = a;
        sh->bn = n;
      }
      pthread_barrier_wait(&sh->bar);     /* batch set */
      int64_t lo = a + n * w->id / sh->T, hi = a + n * (w->id + 1) / sh->T;
      if (read_slice(w, lo, hi))
        w->failed = 1;
      pthread_barrier_wait(&sh->bar);     /* batch read */
      if (any_failed(sh))
        goto out;
      if (stack_slice(w))
        w->failed = 1;
      pthread_barrier_wait(&sh->bar);     /* batch stacked */
      if (any_failed(sh))
        goto out;
      done += n;
      if (w->id == 0 && sh->o->progress)
        sh->o->progress(sh->o->progress_ctx, done, p->traces);
    }
  }
out:
  segy_close(w->f);
  w->f = NULL;
  return NULL;
}

void stack_section_free(stack_section *s)
{
  if (!s)
    return;
  free(s->samples);
  free(s->cmps);
  free(s);
}

/* Zeroed memory starting on a cache line, rounded up to whole lines. */
static void *zalloc_lines(size_t n)
{
  size_t m = (n + LINE - 1) / LINE * LINE;
  void *p = aligned_alloc(LINE, m ? m : LINE);
  if (p)
    memset(p, 0, m ? m : LINE);
  return p;
}

static double now_s(void)
{
  struct timespec ts;
  clock_gettime(CLOCK_MONOTONIC, &ts);
  return (double)ts.tv_sec + ts.tv_nsec * 1e-9;
}

static void free_shared(run_shared *sh)
{
  free(sh->sum);
  free(sh->wsum);
  free(sh->fold);
  free(sh->live);
  free(sh->maxfirst);
  free(sh->tag);
  free(sh->cvel);
  free(sh->ceta);
  free(sh->in);
  free(sh->bidx);
  free(sh->boff);
  if (sh->wk)
    for (int t = 0; t < sh->T; t++) {
      nmo_workspace_free(sh->wk[t].ws);
      free(sh->wk[t].out);
      free(sh->wk[t].w);
    }
  free(sh->wk);
}

int stack_run(const stack_plan *p, const stack_run_opts *o, stack_section **out, tz_err *err)
{
  double t0 = now_s();
  if (!o->velocity)
    return tz_fail(err, TZ_E_ARG, "stack_run: no velocity table");
  if (o->first_cmp > o->last_cmp || o->first_cmp < p->first_cmp || o->last_cmp > p->last_cmp)
    return tz_fail(err, TZ_E_ARG, "CMP range %d-%d is outside the plan's %d-%d",
                   (int)o->first_cmp, (int)o->last_cmp, (int)p->first_cmp, (int)p->last_cmp);
  run_shared sh;
  memset(&sh, 0, sizeof sh);
  sh.p = p;
  sh.o = o;
  long cores = sysconf(_SC_NPROCESSORS_ONLN);
  sh.T = o->threads > 0 ? o->threads : (cores > 0 ? (int)cores : 1);
  if (sh.T > JOB_MAX_THREADS)
    sh.T = JOB_MAX_THREADS;
  sh.ns = p->axis.ns;
  sh.first = o->first_cmp;
  sh.ncmps = (size_t)((int64_t)o->last_cmp - o->first_cmp + 1);
  sh.subset = o->first_cmp != p->first_cmp || o->last_cmp != p->last_cmp;
  sh.use_eta = o->nmo.use_eta && velocity_table_has_eta(o->velocity);
  sh.class_m = o->offset_class_m > 0 ? o->offset_class_m : 1;
  double maxoff = 0;
  for (size_t c = 0; c < p->ncmps; c++)
    if (p->cmps[c].offset_max_m > maxoff)
      maxoff = p->cmps[c].offset_max_m;
  sh.nclasses = (size_t)(maxoff / sh.class_m) + 1;
  if (sh.nclasses > STACK_MUTE_CLASSES)
    sh.nclasses = STACK_MUTE_CLASSES;
  size_t fn = sh.ncmps * sh.ns;
  size_t per = sh.ns * sizeof(float) * (sh.use_eta ? 2 : 1);
  sh.cache_n = sh.ncmps;
  if (sh.cache_n * per > CACHE_BYTES) {
    size_t c = CACHE_BYTES / per;
    size_t unit = (size_t)OWNER_BLOCK * (size_t)sh.T;   /* slot owner = CMP owner */
    c -= c % unit;
    sh.cache_n = c ? c : unit;
  }
  sh.sum = calloc(fn, sizeof *sh.sum);
  sh.wsum = calloc(fn, sizeof *sh.wsum);
  sh.fold = zalloc_lines(sh.ncmps * sizeof *sh.fold);
  sh.live = zalloc_lines(sh.ncmps * sizeof *sh.live);
  sh.maxfirst = zalloc_lines(sh.ncmps * sizeof *sh.maxfirst);
  sh.tag = malloc(sh.cache_n * sizeof *sh.tag);
  sh.cvel = malloc(sh.cache_n * sh.ns * sizeof *sh.cvel);
  sh.ceta = sh.use_eta ? malloc(sh.cache_n * sh.ns * sizeof *sh.ceta) : NULL;
  sh.in = malloc((size_t)BATCH_TRACES * sh.ns * sizeof *sh.in);
  sh.bidx = malloc(BATCH_TRACES * sizeof *sh.bidx);
  sh.boff = malloc(BATCH_TRACES * sizeof *sh.boff);
  sh.wk = calloc((size_t)sh.T, sizeof *sh.wk);
  if (!sh.sum || !sh.wsum || !sh.fold || !sh.live || !sh.maxfirst || !sh.tag || !sh.cvel ||
      (sh.use_eta && !sh.ceta) || !sh.in || !sh.bidx || !sh.boff || !sh.wk) {
    free_shared(&sh);
    return tz_fail(err, TZ_E_NOMEM, "section of %zu CMPs x %zu samples", sh.ncmps, sh.ns);
  }
  for (size_t c = 0; c < sh.cache_n; c++)
    sh.tag[c] = -1;
  int rc = TZ_OK;
  for (int t = 0; t < sh.T && !rc; t++) {
    worker *w = &sh.wk[t];
    w->id = t;
    w->sh = &sh;
    tz_err_init(&w->err);
    w->out = malloc(sh.ns * sizeof *w->out);
    w->w = malloc(sh.ns * sizeof *w->w);
    if (!w->out || !w->w)
      rc = tz_fail(err, TZ_E_NOMEM, "trace buffers");
    else
      rc = nmo_workspace_new(&w->ws, sh.ns, err);
  }
  if (rc) {
    free_shared(&sh);
    return rc;
  }
  if (pthread_barrier_init(&sh.bar, NULL, (unsigned)sh.T)) {
    free_shared(&sh);
    return tz_fail(err, TZ_E_INTERNAL, "cannot make a thread barrier");
  }
  pthread_mutex_init(&sh.gate_mu, NULL);
  pthread_cond_init(&sh.gate_cv, NULL);
  for (int t = 1; t < sh.T && !rc; t++) {
    if (pthread_create(&sh.wk[t].th, NULL, work, &sh.wk[t]))
      rc = tz_fail(err, TZ_E_INTERNAL, "cannot start thread %d of %d", t + 1, sh.T);
    else
      sh.wk[t].started = 1;
  }
  pthread_mutex_lock(&sh.gate_mu);
  sh.gate = rc ? -1 : 1;
  pthread_cond_broadcast(&sh.gate_cv);
  pthread_mutex_unlock(&sh.gate_mu);
  if (!rc)
    work(&sh.wk[0]);
  for (int t = 1; t < sh.T; t++)
    if (sh.wk[t].started)
      pthread_join(sh.wk[t].th, NULL);
  pthread_barrier_destroy(&sh.bar);
  pthread_mutex_destroy(&sh.gate_mu);
  pthread_cond_destroy(&sh.gate_cv);
  if (!rc)
    for (int t = 0; t < sh.T; t++)
      if (sh.wk[t].failed) {
        *err = sh.wk[t].err;
        rc = err->status ? err->status : TZ_E_INTERNAL;
        break;
      }
  if (rc) {
    free_shared(&sh);
    return rc;
  }

  stack_section *s = calloc(1, sizeof *s);
  stack_cmp_result *cr = calloc(sh.ncmps, sizeof *cr);
  if (!s || !cr) {
    free(s);
    free(cr);
    free_shared(&sh);
    return tz_fail(err, TZ_E_NOMEM, "section");
  }
  /* divide by the live weight, in place */
  for (size_t c = 0; c < sh.ncmps; c++) {
    float *S = sh.sum + c * sh.ns;
    const float *W = sh.wsum + c * sh.ns;
    for (size_t i = 0; i < sh.ns; i++)
      S[i] = W[i] > 0 ? S[i] / W[i] : 0.0f;
    int32_t cmp = sh.first + (int32_t)c;
    const stack_cmp_plan *cp = &p->cmps[cmp - p->first_cmp];
    stack_cmp_result *r = &cr[c];
    r->cmp = cmp;
    r->x_m = cp->x_m;
    r->y_m = cp->y_m;
    r->fold = sh.fold[c];
    r->offset_min_m = cp->offset_min_m;
    r->offset_max_m = cp->offset_max_m;
    r->live_fraction = sh.fold[c] ? (double)sh.live[c] / ((double)sh.fold[c] * (double)sh.ns) : 0;
    r->full_fold_ms = sh.fold[c] && (size_t)sh.maxfirst[c] < sh.ns
                          ? (p->axis.t_first_s + sh.maxfirst[c] * p->axis.dt_s) * 1e3
                          : NAN;
  }
  s->axis = p->axis;
  s->interval_us = p->interval_us;
  s->first_cmp = sh.first;
  s->ncmps = sh.ncmps;
  s->samples = sh.sum;
  sh.sum = NULL;
  s->cmps = cr;
  s->nclasses = sh.nclasses;
  s->offset_class_m = sh.class_m;
  for (size_t k = 0; k < sh.nclasses; k++) {
    s->classes[k].offset_from_m = (double)k * sh.class_m;
    s->classes[k].offset_to_m = k + 1 < sh.nclasses ? (double)(k + 1) * sh.class_m : INFINITY;
  }
  for (int t = 0; t < sh.T; t++) {
    worker *w = &sh.wk[t];
    s->traces_read += w->read;
    s->traces_stacked += w->stacked;
    for (int r = 0; r < STACK_SKIP__COUNT; r++)
      s->skipped[r] += w->skipped[r];
    s->samples_total += w->samples;
    s->muted_stretch += w->muted_stretch;
    s->muted_top += w->muted_top;
    s->muted_end += w->muted_end;
    for (size_t k = 0; k < sh.nclasses; k++) {
      s->classes[k].traces += w->cls[k].traces;
      s->classes[k].samples += w->cls[k].samples;
      s->classes[k].muted_stretch += w->cls[k].muted_stretch;
      s->classes[k].muted_top += w->cls[k].muted_top;
      s->classes[k].muted_end += w->cls[k].muted_end;
    }
  }
  for (size_t i = 0; i < p->ninputs; i++) {
    if (p->inputs[i].bad) {
      s->traces_read += p->inputs[i].traces;
      s->skipped[STACK_SKIP_BAD_FILE] += p->inputs[i].traces;
    } else if (p->inputs[i].bytes > 0) {
      s->bytes_read += p->inputs[i].bytes;
    }
  }
  s->threads = sh.T;
  free_shared(&sh);
  s->elapsed_s = now_s() - t0;
  *out = s;
  return TZ_OK;
}
