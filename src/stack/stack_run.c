/* stack_run.c -- the data pass: NMO, mutes and live-weighted sums, one CMP per thread.
 *
 * The traces are read in input order, file by file, in batches of whole field
 * records (up to BATCH_TRACES, or one record when it is longer). Each batch
 * goes through three phases:
 *   A. reading: thread t reads its contiguous slice of the batch (each thread
 *      keeps its own segy_file handle, so reading and sample conversion run in
 *      parallel) and locates each trace (stack_locate());
 *   B. the pre-NMO chain: record r of the batch goes to thread r mod T, which
 *      runs edits, statics and conditioning on the whole record in place
 *      (stack_chain_record(): one chain shared, a workspace per thread);
 *   C. stacking: thread t takes, in batch order, the traces of the CMPs it
 *      owns in this batch: NMO (nmo_apply) with the CMP's velocity function,
 *      then sum[i] += out[i], weight[i] += w[i] over the live span.
 * The phases are pipelined over three batch buffers: in one step every
 * thread reads its slice of batch k+2, runs the chain on its records of batch
 * k+1 and stacks its CMPs of batch k, then all meet at one barrier (a short spin before sleeping: a futex wake-up costs
 * hundreds of microseconds on a virtual machine, as long as a phase). The spin
 * adapts: the job's thread count is capped at the CPUs the process may use
 * (online and in its affinity mask); no spin when there are still more
 * threads than cores; otherwise a budget that shrinks each time a spin ends in sleep anyway (other runs share the cores)
 * and grows back when spins succeed, with sched_yield() between polls so a
 * spinning thread hands its core to whichever thread it is waiting for.
 * Ownership is decided per batch from the batch's own CMPs: their traces are
 * split into T contiguous CMP ranges of about equal trace counts, so a shot
 * whose CMPs fall mostly in one place still keeps every thread busy. (When a
 * batch spans more CMPs than the velocity cache or the histogram holds, the
 * fixed rule "CMP index / OWNER_BLOCK modulo T" is used instead.)
 * Every CMP of a batch is therefore summed by exactly one thread, in input
 * order, and batches follow each other through the barrier: the same float
 * operations in the same order whatever the thread count, so the section is
 * bitwise identical for any N (tests/e2e/test_stack.sh proves it).
 *
 * Velocity functions are sampled once per CMP into a direct-mapped cache. A
 * slot is only ever touched by the thread owning its CMP in the current batch
 * (no locks): per-batch ranges are used only when the batch's CMP span fits
 * in the cache (no two of its CMPs share a slot), and the cache size is a
 * multiple of OWNER_BLOCK x T for the fixed rule.
 * The big arrays (sum, weight, velocity cache) are first touched, and so
 * faulted in and zeroed, by all threads together before the first batch
 * (each its share), on transparent huge pages where the system offers them:
 * otherwise the thread owning the leading CMPs of a roll-along line takes
 * nearly all the page faults, one per 4 KB. Memory: sum and weight
 * (2 x section), the cache (at most the section, capped at CACHE_BYTES), three
 * batches of input traces.
 *
 * Stack trace (Yilmaz 2001, CMP stacking): s(t0) = sum_i w_i f_i(t0) / sum_i w_i, where
 * the NMO output f_i already carries its taper weight w_i and muted samples have
 * w_i = 0; a sample with no live trace is 0.
 */
#include "stack_int.h"

#include <math.h>
#include <pthread.h>
#include <sched.h>
#include <stdatomic.h>
#include <stdlib.h>
#include <string.h>
#include <sys/mman.h>
#include <time.h>
#include <unistd.h>

#define BATCH_TRACES 512
#define CACHE_BYTES ((size_t)64 << 20)
#define OWNER_BLOCK 16            /* CMPs per ownership block (16 x 4 bytes = a cache line) */
#define LINE 64
#define SPAN_MAX 4096             /* CMP span of a batch split into balanced ranges */
#define SPIN_ROUNDS 20000         /* most barrier polls (about 100 us) before sleeping */
#define SPIN_YIELD 64             /* polls between sched_yield() calls while spinning */
#define SPIN_MIN 256              /* the least spin (a few yields) while threads <= cores */

#if defined(__x86_64__) || defined(__i386__)
#define cpu_relax() __builtin_ia32_pause()
#else
#define cpu_relax() ((void)0)
#endif

/* A barrier that spins briefly before it sleeps. The last thread to arrive
 * resets the count and advances the generation; the others poll the
 * generation, then wait on the condition variable. Sequentially consistent
 * atomics order everything written before the barrier before everything read
 * after it, as pthread_barrier_wait does.
 * It also tells every thread the same thing about failures: a thread passes
 * `failed` in, and the last one to arrive freezes "has any thread failed so
 * far" for this round, so all threads leave the loop at the same barrier (a
 * failure raised during the next round cannot reach a slow reader early). */
typedef struct run_barrier {
  pthread_mutex_t mu;
  pthread_cond_t cv;
  atomic_uint count, gen;
  atomic_int failed;         /* sticky: some thread failed */
  atomic_int stop;           /* `failed` as of the last completed round */
  atomic_int spin;           /* current spin budget in polls, SPIN_MIN .. spin_max */
  int spin_max;              /* SPIN_ROUNDS, or 0 with more threads than cores */
  unsigned n;
} run_barrier;

/* The spin budget, SPIN_MIN .. spin_max polls: a waiter that had to sleep
 * after spinning quarters it (the thread it waited for was not running: other
 * runs hold the cores); one released while spinning doubles it. Races between
 * waiters only blur the budget, never the barrier's ordering. */
static void spin_adapt(run_barrier *b, int budget, int released)
{
  int next = released ? budget * 2 : budget / 4;
  if (next > b->spin_max)
    next = b->spin_max;
  if (next < SPIN_MIN)
    next = SPIN_MIN;
  atomic_store_explicit(&b->spin, next, memory_order_relaxed);
}

static int barrier_wait(run_barrier *b, int failed)
{
  unsigned g = atomic_load(&b->gen);
  if (failed)
    atomic_store(&b->failed, 1);
  if (atomic_fetch_add(&b->count, 1) + 1 == b->n) {
    atomic_store(&b->stop, atomic_load(&b->failed));
    atomic_store(&b->count, 0);
    pthread_mutex_lock(&b->mu);
    atomic_fetch_add(&b->gen, 1);
    pthread_cond_broadcast(&b->cv);
    pthread_mutex_unlock(&b->mu);
    return atomic_load(&b->stop);
  }
  int budget = atomic_load_explicit(&b->spin, memory_order_relaxed);
  if (b->spin_max > 0) {
    for (int k = 0; k < budget && atomic_load(&b->gen) == g; k++) {
      cpu_relax();
      if (k % SPIN_YIELD == SPIN_YIELD - 1)
        sched_yield();
    }
    spin_adapt(b, budget, atomic_load(&b->gen) != g);
  }
  if (atomic_load(&b->gen) == g) {
    pthread_mutex_lock(&b->mu);
    while (atomic_load(&b->gen) == g)
      pthread_cond_wait(&b->cv, &b->mu);
    pthread_mutex_unlock(&b->mu);
  }
  return atomic_load(&b->stop);
}

/* One batch: traces [a, a + n) of input file `file` (whole records
 * rec0 .. rec0 + nrec - 1 of it), decoded into `in`. */
typedef struct batch {
  size_t file;
  int64_t a, n;
  size_t rec0, nrec;
  float *in;                 /* cap * ns */
  stack_tinfo *ti;           /* cap: what the reader found, then the chain */
  int32_t *bidx;             /* CMP index or -1 (set after the chain) */
  double *boff;
} batch;

typedef struct run_shared run_shared;

typedef struct worker {
  int id;
  run_shared *sh;
  pthread_t th;
  int started;
  nmo_workspace *ws;
  stack_chain_ws *cws;       /* the pre-NMO chain's scratch */
  float *out, *w;
  segy_file *f;
  size_t fcur;
  tz_err err;
  int failed;
  int64_t skipped[STACK_SKIP__COUNT];
  int64_t read, stacked;
  int64_t killed[EDITS_KILL__COUNT];   /* traces in the run range removed by edits */
  int64_t reversed;
  int64_t st_n;              /* statics of the stacked traces */
  double st_min, st_max, st_sq;
  nmo_top_mute tm;           /* scratch: a static's dead zone as a top mute */
  int64_t bad_samples;       /* NaN/Inf/out-of-range samples the reader replaced by 0 */
  int64_t muted_stretch, muted_top, muted_end, muted_inner, muted_bottom, samples;
  stack_mute_class cls[STACK_MUTE_CLASSES];
  int32_t *hist;             /* SPAN_MAX: traces per CMP of the batch */
  int32_t own_lo, own_hi;    /* CMP indexes [own_lo, own_hi) owned in this batch */
  int own_fixed;             /* 1: the fixed block rule instead */
} worker;

struct run_shared {
  const stack_plan *p;
  const stack_run_opts *o;
  int T;
  run_barrier bar;
  pthread_mutex_t gate_mu;   /* start gate: workers wait until every thread exists */
  pthread_cond_t gate_cv;
  int gate;                  /* 0 closed, 1 go, -1 abort */
  size_t ns;
  int32_t first;             /* run range */
  size_t ncmps;
  int subset;                /* run range narrower than the plan's, or CMPs carried from
                              * a reused section: headers first */
  const unsigned char *need; /* per CMP of the run: 1 stacked here, 0 carried (o->restack);
                              * NULL: every CMP */
  int skip_records;          /* records with no CMP the run stacks are not read */
  float *sum, *wsum;         /* ncmps * ns */
  int32_t *fold;
  int64_t *live;
  int32_t *maxfirst;
  int64_t *cmute;            /* ncmps * 3: samples muted by the top, inner, bottom mute */
  /* velocity cache */
  size_t cache_n;
  int32_t *tag;
  float *cvel, *ceta;
  int use_eta;
  stack_chain *chain;        /* edits, statics, conditioning; made before the threads start */
  int whole;                 /* the chain needs every stackable trace of a record */
  int chain_statics;         /* the job applies statics */
  size_t cap;                /* traces one batch buffer holds */
  batch bt[3];               /* read, chain and stack stages */
  size_t nclasses;
  double class_m;
  worker *wk;
};

int stack_run_opts_init(stack_run_opts *o, const stack_plan *p, const velocity_table *v,
                        tz_err *err)
{
  memset(o, 0, sizeof *o);
  o->velocity = v;
  /* No more threads than CPUs this process may run on: an extra thread has
   * no core to run on, and every step's barrier would wait for it to be
   * scheduled (the section does not depend on the count; a caller may still
   * set o->threads higher, as the thread-count tests do). */
  long cpus = stack_usable_cpus();
  o->threads = p->job->threads > cpus ? (int)cpus : p->job->threads;
  o->first_cmp = p->first_cmp;
  o->last_cmp = p->last_cmp;
  double maxoff = p->line_offset_max_m;
  o->offset_class_m = maxoff / 8 >= 1 ? ceil(maxoff / 8) : 1;
  o->conditioning = p->job->conditioning.n ? &p->job->conditioning : NULL;
  o->mutes = mute_set_active(p->job->mutes) ? p->job->mutes : NULL;
  return stack_plan_nmo(p, &o->nmo, &o->mute, err);
}

static int read_slice(worker *w, const batch *b, int64_t lo, int64_t hi)
{
  run_shared *sh = w->sh;
  const stack_plan *p = sh->p;
  if (lo >= hi)
    return TZ_OK;
  if (!w->f || w->fcur != b->file) {
    segy_close(w->f);
    w->f = NULL;
    int rc = stack_open_input(p, b->file, &w->f, &w->err);
    if (rc)
      return rc;
    w->fcur = b->file;
  }
  int axis_ok = stack_file_axis_ok(p, segy_get_info(w->f));
  segy_window_end(w->f, hi);
  /* A subset run (a reused section, a CMP range) reads a trace's samples only
   * when its CMP is stacked here. Such traces come in runs (a record's
   * channels over the CMPs restacked), so each read reaches 1, 2, 4, ...
   * traces ahead while the run lasts: a sparse subset reads little more than
   * its traces, a dense one soon reads whole windows again. */
  int64_t ahead = 1;
  for (int64_t t = lo; t < hi; t++) {
    size_t j = (size_t)(t - b->a);
    float *buf = b->in + j * sh->ns;
    segy_trace_header h;
    int rc;
    stack_tinfo *ti = &b->ti[j];
    b->bidx[j] = -1;
    ti->read = ti->stackable = ti->counted = 0;
    w->read++;
    int64_t bad0 = segy_bad_samples(w->f);   /* counted for the stacked traces only */
    if (!axis_ok) {
      w->skipped[STACK_SKIP_SAMPLE_AXIS]++;
      continue;
    }
    if (sh->subset) {
      if ((rc = segy_header_read(w->f, t, &h, &w->err)))
        return tz_err_path(&w->err, p->inputs[b->file].path);
    } else if ((rc = segy_trace_read(w->f, t, &h, buf, sh->ns, &w->err))) {
      return tz_err_path(&w->err, p->inputs[b->file].path);
    }
    int reason;
    if (!stack_locate(p, &h, t, &ti->cmp, &ti->off_abs, &ti->off_signed, &ti->g, &reason)) {
      w->skipped[reason]++;
      continue;
    }
    ti->stackable = 1;
    int in_run = ti->cmp >= sh->first && (int64_t)ti->cmp < sh->first + (int64_t)sh->ncmps;
    if (!in_run)
      w->skipped[STACK_SKIP_CMP_RANGE]++;
    else if (sh->need && !sh->need[ti->cmp - sh->first])
      in_run = 0;      /* its CMP is carried from the reused section: not read */
    if (sh->subset) {
      if (in_run || sh->whole) {
        segy_window_end(w->f, t + ahead < hi ? t + ahead : hi);
        if ((rc = segy_trace_read(w->f, t, &h, buf, sh->ns, &w->err)))
          return tz_err_path(&w->err, p->inputs[b->file].path);
        ahead = ahead < (INT64_C(1) << 20) ? ahead * 2 : ahead;
      } else {
        ahead = 1;
      }
    }
    ti->read = !sh->subset || in_run || sh->whole;
    ti->counted = in_run;
    if (in_run)
      w->bad_samples += segy_bad_samples(w->f) - bad0;
  }
  return TZ_OK;
}

/* The chain on this thread's records of batch b (record r goes to thread
 * r mod T), then the stacking index of each trace. */
static int chain_share(worker *w, batch *b)
{
  run_shared *sh = w->sh;
  const stack_plan *p = sh->p;
  for (size_t r = (size_t)w->id; r < b->nrec; r += (size_t)sh->T) {
    int64_t a, n;
    stack_record_span(p, b->file, b->rec0 + r, &a, &n);
    size_t j0 = (size_t)(a - b->a);
    int rc = stack_chain_record(sh->chain, w->cws, b->file, a, (size_t)n, b->in + j0 * sh->ns,
                                b->ti + j0, &w->err);
    if (rc)
      return rc;
    for (size_t j = j0; j < j0 + (size_t)n; j++) {
      const stack_tinfo *ti = &b->ti[j];
      if (!ti->read || !ti->stackable || !ti->counted)
        continue;
      if (ti->killed) {
        w->killed[ti->killed - 1]++;
        continue;
      }
      w->reversed += ti->reversed;
      if (sh->chain_statics) {
        double v = ti->static_ms;
        w->st_min = w->st_n && w->st_min < v ? w->st_min : v;
        w->st_max = w->st_n && w->st_max > v ? w->st_max : v;
        w->st_sq += v * v;
        w->st_n++;
      }
      b->bidx[j] = ti->cmp - sh->first;
      b->boff[j] = ti->off_abs;
    }
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

/* Decides which CMPs of batch b this thread stacks. Every thread computes the
 * same split from the same data: CMPs in increasing order, each going to
 * thread floor(T x (traces before it + half its own) / traces), a monotone rule,
 * so each thread gets one contiguous range of about n / T traces. */
static void batch_owners(worker *w, const batch *b)
{
  run_shared *sh = w->sh;
  int32_t lo = INT32_MAX, hi = -1;
  int64_t live = 0;
  for (int64_t j = 0; j < b->n; j++) {
    int32_t ci = b->bidx[j];
    if (ci < 0)
      continue;
    lo = ci < lo ? ci : lo;
    hi = ci > hi ? ci : hi;
    live++;
  }
  w->own_fixed = 0;
  w->own_lo = w->own_hi = 0;
  if (!live || sh->T == 1) {
    w->own_hi = sh->T == 1 ? INT32_MAX : 0;
    return;
  }
  size_t span = (size_t)(hi - lo) + 1;
  if (span > SPAN_MAX || span > sh->cache_n) {
    w->own_fixed = 1;
    return;
  }
  memset(w->hist, 0, span * sizeof *w->hist);
  for (int64_t j = 0; j < b->n; j++)
    if (b->bidx[j] >= 0)
      w->hist[b->bidx[j] - lo]++;
  int64_t before = 0;
  int found = 0;
  for (size_t c = 0; c < span; c++) {
    int64_t t = (int64_t)sh->T * (2 * before + w->hist[c]) / (2 * live);
    before += w->hist[c];
    if (t == w->id && !found) {
      w->own_lo = lo + (int32_t)c;
      found = 1;
    }
    if (t > w->id) {
      w->own_hi = found ? lo + (int32_t)c : 0;
      return;
    }
  }
  w->own_hi = found ? hi + 1 : 0;
}

static int owns(const worker *w, int32_t ci)
{
  if (w->own_fixed)
    return (ci / OWNER_BLOCK) % w->sh->T == w->id;
  return ci >= w->own_lo && ci < w->own_hi;
}

static int stack_slice(worker *w, const batch *b)
{
  run_shared *sh = w->sh;
  const nmo_axis *ax = &sh->p->axis;
  const nmo_top_mute *mute = sh->o->mute.n ? &sh->o->mute : NULL;
  batch_owners(w, b);
  for (size_t j = 0; j < (size_t)b->n; j++) {
    int32_t ci = b->bidx[j];
    if (ci < 0 || !owns(w, ci))
      continue;
    const float *vel, *eta;
    velocity_of(sh, ci, &vel, &eta);
    nmo_trace_info info;
    const float *in = b->in + j * sh->ns;    /* after the chain (chain_share) */
    const stack_tinfo *ti = &b->ti[j];
    mute_trace mt = { ti->cmp, ti->g.field_record, ti->g.channel, ti->off_signed, ti->static_ms };
    int rc = stack_nmo_trace(w->ws, &sh->o->nmo, mute, sh->o->mutes, &mt, ax, b->boff[j], in, vel, eta, ti->live_lo,
                             ti->live_hi, w->out, w->w, &info, &w->tm, &w->err);
    if (rc) {
      tz_err_path(&w->err, sh->p->inputs[b->file].path);
      w->err.trace = b->a + (int64_t)j;
      return rc;
    }
    accumulate(sh->sum + (size_t)ci * sh->ns, sh->wsum + (size_t)ci * sh->ns, w->out, w->w,
               info.first_live, info.end_live);
    sh->fold[ci]++;
    sh->live[ci] += (int64_t)info.live;
    if ((int32_t)info.first_live > sh->maxfirst[ci])
      sh->maxfirst[ci] = (int32_t)info.first_live;
    sh->cmute[3 * (size_t)ci] += (int64_t)info.muted_top;
    sh->cmute[3 * (size_t)ci + 1] += (int64_t)info.muted_inner;
    sh->cmute[3 * (size_t)ci + 2] += (int64_t)info.muted_bottom;
    w->stacked++;
    w->samples += (int64_t)sh->ns;
    w->muted_stretch += (int64_t)info.muted_stretch;
    w->muted_top += (int64_t)info.muted_top;
    w->muted_end += (int64_t)info.muted_end;
    w->muted_inner += (int64_t)info.muted_inner;
    w->muted_bottom += (int64_t)info.muted_bottom;
    size_t k = (size_t)(b->boff[j] / sh->class_m);
    if (k >= sh->nclasses)
      k = sh->nclasses - 1;
    stack_mute_class *c = &w->cls[k];
    c->traces++;
    c->samples += (int64_t)sh->ns;
    c->muted_stretch += (int64_t)info.muted_stretch;
    c->muted_top += (int64_t)info.muted_top;
    c->muted_end += (int64_t)info.muted_end;
    c->muted_inner += (int64_t)info.muted_inner;
    c->muted_bottom += (int64_t)info.muted_bottom;
  }
  return TZ_OK;
}

/* Memory for a large array, not yet touched: aligned to 2 MB and marked for
 * transparent huge pages (a hint; ignored where unsupported). The caller
 * zeroes it (prefault_share). */
#define HUGE_ALIGN ((size_t)2 << 20)
static void *big_alloc(size_t n)
{
  size_t m = (n + HUGE_ALIGN - 1) / HUGE_ALIGN * HUGE_ALIGN;
  void *p = aligned_alloc(HUGE_ALIGN, m ? m : HUGE_ALIGN);
#ifdef MADV_HUGEPAGE
  if (p)
    (void)madvise(p, m ? m : HUGE_ALIGN, MADV_HUGEPAGE);
#endif
  return p;
}

/* Thread t's share of the section's rows (ncmps rows of ns floats at a):
 * zeroed, faulting their pages in. A run that carries CMPs from a reused
 * section zeroes only the rows it stacks: the others are never read (the
 * divide after the pass clears them, and the reuse overwrites them). */
static void prefault_share(const run_shared *sh, float *a, int t)
{
  size_t T = (size_t)sh->T, lo = sh->ncmps * (size_t)t / T, hi = sh->ncmps * ((size_t)t + 1) / T;
  if (!sh->need) {
    memset(a + lo * sh->ns, 0, (hi - lo) * sh->ns * sizeof *a);
    return;
  }
  for (size_t c = lo; c < hi; c++)
    if (sh->need[c])
      memset(a + c * sh->ns, 0, sh->ns * sizeof *a);
}

/* 1 when record k of file fi holds a trace of a CMP the run restacks (always
 * without o->restack, or when the plan has no CMP bounds of its records). */
static int record_wanted(const run_shared *sh, size_t fi, size_t k)
{
  const stack_records *rec = &sh->p->records[fi];
  if (!sh->skip_records || !rec->cmp_lo)
    return 1;
  int64_t lo = (int64_t)rec->cmp_lo[k] - sh->first, hi = (int64_t)rec->cmp_hi[k] - sh->first;
  if (lo < 0)
    lo = 0;
  if (hi >= (int64_t)sh->ncmps)
    hi = (int64_t)sh->ncmps - 1;
  if (!sh->need)
    return lo <= hi;
  for (int64_t c = lo; c <= hi; c++)
    if (sh->need[c])
      return 1;
  return 0;
}

/* Advances (*fi, *a) to the next batch at or after file *fi, trace *a; every
 * thread walks the same sequence. Returns 0 after the last file. A run that
 * carries CMPs from a reused section, or asks (o->records_in_range), skips the
 * records holding none of the CMPs it stacks (their traces are not read at
 * all); a batch is whole consecutive records, so it ends before a skipped one. */
static int next_batch(const run_shared *sh, batch *b, size_t fi, int64_t a)
{
  const stack_plan *p = sh->p;
  for (; fi < p->ninputs; fi++, a = 0) {
    if (p->inputs[fi].bad || a >= p->inputs[fi].traces)
      continue;
    int64_t ntr = p->inputs[fi].traces;
    const stack_records *rec = &p->records[fi];
    b->file = fi;
    b->a = a;
    b->nrec = 0;
    if (!rec->n) {             /* skipped whole (sample axis): plain chunks */
      b->n = ntr - a < BATCH_TRACES ? ntr - a : BATCH_TRACES;
      return 1;
    }
    /* whole records from the one starting at a, up to BATCH_TRACES (at least one) */
    size_t lo = 0, hi = rec->n;
    while (lo + 1 < hi) {
      size_t mid = (lo + hi) / 2;
      if (rec->start[mid] <= a)
        lo = mid;
      else
        hi = mid;
    }
    while (lo < rec->n && !record_wanted(sh, fi, lo))
      lo++;
    if (lo == rec->n)
      continue;
    b->rec0 = lo;
    b->n = 0;
    for (size_t k = lo; k < rec->n; k++) {
      int64_t ra, rn;
      stack_record_span(p, fi, k, &ra, &rn);
      if (b->nrec && (b->n + rn > BATCH_TRACES || !record_wanted(sh, fi, k)))
        break;
      if (!b->nrec)
        b->a = ra;
      b->n += rn;
      b->nrec++;
    }
    return 1;
  }
  b->n = 0;
  return 0;
}

/* Thread t's share of batch b: traces [a + n t / T, a + n (t + 1) / T). */
static void read_share(worker *w, batch *b)
{
  int64_t lo = b->a + b->n * w->id / w->sh->T, hi = b->a + b->n * (w->id + 1) / w->sh->T;
  if (read_slice(w, b, lo, hi))
    w->failed = 1;
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
  /* Step k reads batch k + 1 into one buffer and stacks batch k from the other.
   * Only the descriptors (file, a, n) are per thread; the buffers are shared. */
  /* The velocity cache is not zeroed: velocity_of fills a slot whole before
   * its tag says it holds a CMP. */
  prefault_share(sh, sh->sum, w->id);
  prefault_share(sh, sh->wsum, w->id);
  /* Step k reads batch k, runs the chain on the records of batch k - 1 and
   * stacks batch k - 2, each stage in its own buffer; one barrier per step. */
  batch rd = sh->bt[0], ch = sh->bt[1], st = sh->bt[2];
  int have_rd = next_batch(sh, &rd, 0, 0), have_ch = 0, have_st = 0, stop = 0;
  while ((have_rd || have_ch || have_st) && !stop) {
    if (have_rd)
      read_share(w, &rd);
    if (have_ch && chain_share(w, &ch))
      w->failed = 1;
    if (have_st && stack_slice(w, &st))
      w->failed = 1;
    stop = barrier_wait(&sh->bar, w->failed);
    if (have_st) {
      done += st.n;
      if (w->id == 0 && sh->o->progress && !stop)
        sh->o->progress(sh->o->progress_ctx, done, p->traces);
    }
    batch t = st;                         /* rotate the buffers */
    st = ch;
    have_st = have_ch;
    ch = rd;
    have_ch = have_rd;
    rd = t;
    have_rd = have_ch ? next_batch(sh, &rd, ch.file, ch.a + ch.n) : 0;
  }
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
  free(s->kill_hits);
  free(s->reverse_hits);
  free(s->auto_killed);
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
  free(sh->cmute);
  free(sh->tag);
  free(sh->cvel);
  free(sh->ceta);
  for (int k = 0; k < 3; k++) {
    free(sh->bt[k].in);
    free(sh->bt[k].ti);
    free(sh->bt[k].bidx);
    free(sh->bt[k].boff);
  }
  if (sh->wk)
    for (int t = 0; t < sh->T; t++) {
      free(sh->wk[t].hist);
      nmo_workspace_free(sh->wk[t].ws);
      stack_chain_ws_free(sh->wk[t].cws);
      free(sh->wk[t].out);
      free(sh->wk[t].w);
    }
  free(sh->wk);
  stack_chain_free(sh->chain);
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
  long cores = stack_usable_cpus();
  sh.T = o->threads > 0 ? o->threads : (cores > 0 ? (int)cores : 1);
  if (sh.T > JOB_MAX_THREADS)
    sh.T = JOB_MAX_THREADS;
  sh.ns = p->axis.ns;
  sh.first = o->first_cmp;
  sh.ncmps = (size_t)((int64_t)o->last_cmp - o->first_cmp + 1);
  sh.need = o->restack;
  sh.skip_records = o->restack || o->records_in_range;
  sh.subset = o->first_cmp != p->first_cmp || o->last_cmp != p->last_cmp || sh.need;
  sh.use_eta = o->nmo.use_eta && velocity_table_has_eta(o->velocity);
  sh.class_m = o->offset_class_m > 0 ? o->offset_class_m : 1;
  double maxoff = p->line_offset_max_m;
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
  sh.sum = big_alloc(fn * sizeof *sh.sum);     /* zeroed by the threads */
  sh.wsum = big_alloc(fn * sizeof *sh.wsum);
  sh.fold = zalloc_lines(sh.ncmps * sizeof *sh.fold);
  sh.live = zalloc_lines(sh.ncmps * sizeof *sh.live);
  sh.maxfirst = zalloc_lines(sh.ncmps * sizeof *sh.maxfirst);
  sh.cmute = zalloc_lines(3 * sh.ncmps * sizeof *sh.cmute);
  sh.tag = malloc(sh.cache_n * sizeof *sh.tag);
  sh.cvel = big_alloc(sh.cache_n * sh.ns * sizeof *sh.cvel);
  sh.ceta = sh.use_eta ? big_alloc(sh.cache_n * sh.ns * sizeof *sh.ceta) : NULL;
  int bt_ok = 1;
  sh.cap = p->max_record > BATCH_TRACES ? (size_t)p->max_record : BATCH_TRACES;
  for (int k = 0; k < 3; k++) {
    batch *b = &sh.bt[k];
    b->in = malloc(sh.cap * sh.ns * sizeof *b->in);
    b->ti = malloc(sh.cap * sizeof *b->ti);
    b->bidx = malloc(sh.cap * sizeof *b->bidx);
    b->boff = malloc(sh.cap * sizeof *b->boff);
    bt_ok = bt_ok && b->in && b->ti && b->bidx && b->boff;
  }
  sh.wk = calloc((size_t)sh.T, sizeof *sh.wk);
  if (!sh.sum || !sh.wsum || !sh.fold || !sh.live || !sh.maxfirst || !sh.cmute || !sh.tag || !sh.cvel ||
      (sh.use_eta && !sh.ceta) || !bt_ok || !sh.wk) {
    free_shared(&sh);
    return tz_fail(err, TZ_E_NOMEM, "section of %zu CMPs x %zu samples", sh.ncmps, sh.ns);
  }
  for (size_t c = 0; c < sh.cache_n; c++)
    sh.tag[c] = -1;
  int rc = stack_chain_new(&sh.chain, p, o->conditioning, o->velocity, err);
  if (!rc) {
    sh.whole = stack_chain_whole_records(sh.chain);
    sh.chain_statics = p->job->statics.present;
  }
  for (int t = 0; t < sh.T && !rc; t++) {
    worker *w = &sh.wk[t];
    w->id = t;
    w->sh = &sh;
    tz_err_init(&w->err);
    w->out = malloc(sh.ns * sizeof *w->out);
    w->w = malloc(sh.ns * sizeof *w->w);
    w->hist = malloc(SPAN_MAX * sizeof *w->hist);
    if (!w->out || !w->w || !w->hist)
      rc = tz_fail(err, TZ_E_NOMEM, "trace buffers");
    else
      rc = nmo_workspace_new(&w->ws, sh.ns, err);
    if (!rc)
      rc = stack_chain_ws_new(&w->cws, sh.chain, sh.cap, err);
  }
  if (rc) {
    free_shared(&sh);
    return rc;
  }
  /* The barrier's and the start gate's locks; on a failure, those made so far
   * are destroyed and nothing has started. */
  int made = 0;
  if (!pthread_mutex_init(&sh.bar.mu, NULL) && ++made && !pthread_cond_init(&sh.bar.cv, NULL) &&
      ++made && !pthread_mutex_init(&sh.gate_mu, NULL) && ++made &&
      !pthread_cond_init(&sh.gate_cv, NULL))
    made++;
  if (made < 4) {
    if (made > 2) pthread_mutex_destroy(&sh.gate_mu);
    if (made > 1) pthread_cond_destroy(&sh.bar.cv);
    if (made > 0) pthread_mutex_destroy(&sh.bar.mu);
    free_shared(&sh);
    return tz_fail(err, TZ_E_INTERNAL, "cannot make the data pass's thread locks");
  }
  atomic_init(&sh.bar.count, 0);
  atomic_init(&sh.bar.gen, 0);
  atomic_init(&sh.bar.failed, 0);
  atomic_init(&sh.bar.stop, 0);
  sh.bar.n = (unsigned)sh.T;
  /* More threads than online cores: a spinning waiter would hold the core its
   * partner needs, so the barrier sleeps at once. */
  sh.bar.spin_max = cores > 0 && sh.T > cores ? 0 : SPIN_ROUNDS;
  atomic_init(&sh.bar.spin, sh.bar.spin_max);
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
  pthread_mutex_destroy(&sh.bar.mu);
  pthread_cond_destroy(&sh.bar.cv);
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
    int carried = sh.need && !sh.need[c];    /* not stacked here: see prefault_share */
    if (carried)
      memset(S, 0, sh.ns * sizeof *S);
    else
      for (size_t i = 0; i < sh.ns; i++)
        S[i] = W[i] > 0 ? S[i] / W[i] : 0.0f;
    int32_t cmp = sh.first + (int32_t)c;
    double fd = carried ? 0 : stack_floating_ms(p, cmp);   /* floating datum -> flat datum */
    if (fd != 0) {
      if ((rc = nmo_shift(sh.wk[0].ws, &p->axis, -fd * 1e-3, S, sh.wk[0].out, NULL, NULL, err))) {
        free(cr);
        free(s);
        free_shared(&sh);
        return rc;
      }
      memcpy(S, sh.wk[0].out, sh.ns * sizeof *S);
    }
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
    r->muted_top = sh.cmute[3 * c];
    r->muted_inner = sh.cmute[3 * c + 1];
    r->muted_bottom = sh.cmute[3 * c + 2];
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
  double st_sq = 0;
  const stack_chain_counts *c0 = stack_chain_ws_counts(sh.wk[0].cws);
  s->nkill_entries = c0->nkill;
  s->nreverse_entries = c0->nreverse;
  s->kill_hits = calloc(c0->nkill ? c0->nkill : 1, sizeof *s->kill_hits);
  s->reverse_hits = calloc(c0->nreverse ? c0->nreverse : 1, sizeof *s->reverse_hits);
  if (!s->kill_hits || !s->reverse_hits) {
    stack_section_free(s);
    free_shared(&sh);
    return tz_fail(err, TZ_E_NOMEM, "section");
  }
  size_t nk = 0;
  for (int t = 0; t < sh.T; t++) {
    const stack_chain_counts *cc = stack_chain_ws_counts(sh.wk[t].cws);
    nk += cc->nauto;
    s->auto_killed_unlisted += cc->auto_unlisted;
  }
  if (nk > STACK_MAX_KILL_LIST) {
    s->auto_killed_unlisted += (int64_t)(nk - STACK_MAX_KILL_LIST);
    nk = STACK_MAX_KILL_LIST;
  }
  if (nk && !(s->auto_killed = malloc(nk * sizeof *s->auto_killed))) {
    stack_section_free(s);
    free_shared(&sh);
    return tz_fail(err, TZ_E_NOMEM, "list of %zu killed traces", nk);
  }
  for (int t = 0; t < sh.T; t++) {
    const stack_chain_counts *cc = stack_chain_ws_counts(sh.wk[t].cws);
    for (size_t i = 0; i < cc->nauto && s->nauto_killed < nk; i++)
      s->auto_killed[s->nauto_killed++] = cc->auto_killed[i];
  }
  stack_killed_sort(s->auto_killed, s->nauto_killed);
  for (int t = 0; t < sh.T; t++) {
    worker *w = &sh.wk[t];
    const stack_chain_counts *cc = stack_chain_ws_counts(w->cws);
    for (size_t e = 0; e < cc->nkill; e++)
      s->kill_hits[e] += cc->kill_hits[e];
    for (size_t e = 0; e < cc->nreverse; e++)
      s->reverse_hits[e] += cc->reverse_hits[e];
    for (int r = 0; r < EDITS_KILL__COUNT; r++)
      s->killed[r] += w->killed[r];
    s->reversed += w->reversed;
    if (w->st_n) {
      s->static_min_ms = s->static_traces && s->static_min_ms < w->st_min ? s->static_min_ms
                                                                          : w->st_min;
      s->static_max_ms = s->static_traces && s->static_max_ms > w->st_max ? s->static_max_ms
                                                                          : w->st_max;
      s->static_traces += w->st_n;
      st_sq += w->st_sq;
    }
    s->traces_read += w->read;
    s->traces_stacked += w->stacked;
    s->bad_samples += w->bad_samples;
    for (int r = 0; r < STACK_SKIP__COUNT; r++)
      s->skipped[r] += w->skipped[r];
    s->samples_total += w->samples;
    s->muted_stretch += w->muted_stretch;
    s->muted_top += w->muted_top;
    s->muted_end += w->muted_end;
    s->muted_inner += w->muted_inner;
    s->muted_bottom += w->muted_bottom;
    for (size_t k = 0; k < sh.nclasses; k++) {
      s->classes[k].traces += w->cls[k].traces;
      s->classes[k].samples += w->cls[k].samples;
      s->classes[k].muted_stretch += w->cls[k].muted_stretch;
      s->classes[k].muted_top += w->cls[k].muted_top;
      s->classes[k].muted_end += w->cls[k].muted_end;
      s->classes[k].muted_inner += w->cls[k].muted_inner;
      s->classes[k].muted_bottom += w->cls[k].muted_bottom;
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
  s->static_rms_ms = s->static_traces ? sqrt(st_sq / (double)s->static_traces) : 0;
  s->threads = sh.T;
  free_shared(&sh);
  s->elapsed_s = now_s() - t0;
  *out = s;
  return TZ_OK;
}
