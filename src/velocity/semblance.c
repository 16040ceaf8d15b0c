/* semblance.c -- velocity analysis: semblance panels and automatic picks.
 *
 * Coherence (Neidell & Taner 1971): for every trial
 * velocity the whole (super)gather is NMO-corrected once by nmo_apply() -- the
 * stack's own exact hyperbolic equation, interpolation and stretch mute, so a
 * velocity picked here flattens the events the stack will sum -- while three
 * per-sample series are accumulated: the stack sum, the energy sum and the live
 * count. Window sums come from prefix sums of (stack)^2 and count*energy, so a
 * panel costs O(ntraces * ns) per velocity whatever the window length.
 * Dead-sample handling: N in the denominator is the number of traces live at
 * each sample (muted samples are not live), so a one-trace-live window gives
 * 1 and a fully muted window gives 0.
 *
 * Threads split the trial velocities; each row of the panel is computed by one
 * worker from the same inputs in the same order, so the panel is bitwise the
 * same for any thread count. Each worker owns its nmo workspace and buffers.
 *
 * Picking: the candidates are local maxima of the panel; dynamic programming
 * chooses the time-ordered chain of candidates with the largest summed
 * semblance whose consecutive picks are far enough apart, do not decrease in
 * velocity (unless inversions are allowed) and imply Dix (1955) interval
 * velocities inside the given bounds (computed by velocity_dix()).
 *
 * Not here: reading gathers from files (stack_collect() in src/stack/stack_collect.c; this file
 * only joins collected gathers into supergathers), file output, NMO itself
 * (nmo.c).
 */
#include "tzero/semblance.h"

#include <math.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/spectrum.h"
#include "tzero/table.h"
#include "tzero/velocity.h"

/* The accumulation of corrected traces runs four samples at a time on CPUs
 * with AVX2 (chosen at run time, as nmo.c does): a float widened to double,
 * one add to the sum, one multiply and one add to the sum of squares, each
 * lane exactly the scalar loop's operations (no fused multiply-add), so the
 * panel is bit for bit the same on any CPU. */
#if defined(__x86_64__) && defined(__GNUC__)
#include <immintrin.h>
#define SEMB_AVX2 1
#else
#define SEMB_AVX2 0
#endif

/* ---------------------------------------------------------------- accumulator */

struct semblance_acc {
  size_t ns;
  double *sum;      /* sum_i f_ij */
  double *sq;       /* sum_i f_ij^2 */
  int32_t *diff;    /* live-range counts as a difference array (ns + 1) */
  int32_t *cnt;     /* per-sample live counts from weighted adds */
  double *pa, *pb, *pc, *pd;  /* prefix sums for the finish (ns + 1) */
  double min_live;  /* windows with fewer live traces on average give 0 */
  int32_t min_fold; /* samples with fewer live traces give 0 (no pick there) */
  int32_t max_live; /* largest live count at a sample, from the last finish */
  int avx2;         /* the CPU has AVX2 */
};

#if SEMB_AVX2
__attribute__((target("avx2"))) static size_t add_avx2(double *restrict sum,
                                                       double *restrict sq,
                                                       const float *restrict s, size_t lo,
                                                       size_t hi)
{
  size_t j = lo;
  for (; j + 4 <= hi; j += 4) {
    __m256d v = _mm256_cvtps_pd(_mm_loadu_ps(s + j));
    _mm256_storeu_pd(sum + j, _mm256_add_pd(_mm256_loadu_pd(sum + j), v));
    _mm256_storeu_pd(sq + j, _mm256_add_pd(_mm256_loadu_pd(sq + j), _mm256_mul_pd(v, v)));
  }
  return j;
}
#endif

int semblance_acc_new(semblance_acc **out, size_t ns, tz_err *err)
{
  if (ns == 0 || ns > NMO_MAX_SAMPLES)
    return tz_fail(err, TZ_E_ARG, "semblance: %zu samples per trace out of range", ns);
  semblance_acc *a = calloc(1, sizeof *a);
  if (!a)
    return tz_fail(err, TZ_E_NOMEM, "semblance accumulator");
  a->ns = ns;
  a->sum = malloc(ns * sizeof *a->sum);
  a->sq = malloc(ns * sizeof *a->sq);
  a->diff = malloc((ns + 1) * sizeof *a->diff);
  a->cnt = malloc(ns * sizeof *a->cnt);
  a->pa = malloc((ns + 1) * sizeof *a->pa);
  a->pb = malloc((ns + 1) * sizeof *a->pb);
  a->pc = malloc((ns + 1) * sizeof *a->pc);
  a->pd = malloc((ns + 1) * sizeof *a->pd);
  if (!a->sum || !a->sq || !a->diff || !a->cnt || !a->pa || !a->pb || !a->pc || !a->pd) {
    semblance_acc_free(a);
    return tz_fail(err, TZ_E_NOMEM, "semblance accumulator of %zu samples", ns);
  }
  semblance_acc_reset(a);
#if SEMB_AVX2
  a->avx2 = __builtin_cpu_supports("avx2") ? 1 : 0;
#endif
  *out = a;
  return TZ_OK;
}

void semblance_acc_free(semblance_acc *a)
{
  if (!a)
    return;
  free(a->sum);
  free(a->sq);
  free(a->diff);
  free(a->cnt);
  free(a->pa);
  free(a->pb);
  free(a->pc);
  free(a->pd);
  free(a);
}

void semblance_acc_min_fold(semblance_acc *a, size_t min_fold)
{
  a->min_fold = min_fold > INT32_MAX ? INT32_MAX : (int32_t)min_fold;
}

size_t semblance_acc_max_live(const semblance_acc *a)
{
  return a->max_live > 0 ? (size_t)a->max_live : 0;
}

void semblance_acc_min_live(semblance_acc *a, double min_live)
{
  a->min_live = min_live > 0 ? min_live : 0;
}

void semblance_acc_reset(semblance_acc *a)
{
  memset(a->sum, 0, a->ns * sizeof *a->sum);
  memset(a->sq, 0, a->ns * sizeof *a->sq);
  memset(a->diff, 0, (a->ns + 1) * sizeof *a->diff);
  memset(a->cnt, 0, a->ns * sizeof *a->cnt);
}

int semblance_acc_simd(semblance_acc *a, int simd)
{
#if SEMB_AVX2
  a->avx2 = simd && __builtin_cpu_supports("avx2");
#else
  (void)simd;
  a->avx2 = 0;
#endif
  return a->avx2;
}

void semblance_acc_add(semblance_acc *a, const float *s, size_t lo, size_t hi)
{
  if (hi > a->ns)
    hi = a->ns;
  if (lo >= hi)
    return;
  double *restrict sum = a->sum, *restrict sq = a->sq;
  size_t j0 = lo;
#if SEMB_AVX2
  if (a->avx2)
    j0 = add_avx2(sum, sq, s, lo, hi);
#endif
  for (size_t j = j0; j < hi; j++) {
    double v = s[j];
    sum[j] += v;
    sq[j] += v * v;
  }
  a->diff[lo]++;
  a->diff[hi]--;
}

void semblance_acc_add_weighted(semblance_acc *a, const float *s, const float *weight)
{
  double *restrict sum = a->sum, *restrict sq = a->sq;
  int32_t *restrict cnt = a->cnt;
  for (size_t j = 0; j < a->ns; j++) {
    double v = s[j];
    sum[j] += v;
    sq[j] += v * v;
    cnt[j] += weight[j] > 0.0f;
  }
}

void semblance_acc_finish(semblance_acc *a, size_t half, float *out, float *power)
{
  size_t ns = a->ns;
  int32_t live = 0;
  a->max_live = 0;
  a->pa[0] = a->pb[0] = a->pc[0] = a->pd[0] = 0.0;
  for (size_t j = 0; j < ns; j++) {
    live += a->diff[j];
    int32_t nl = live + a->cnt[j];
    if (nl > a->max_live)
      a->max_live = nl;
    double n = (double)nl, s2 = a->sum[j] * a->sum[j];
    double n1 = nl > 0 ? n : 1.0;   /* no live trace: the sum is 0 anyway */
    a->pa[j + 1] = a->pa[j] + s2;
    a->pb[j + 1] = a->pb[j] + n * a->sq[j];
    a->pc[j + 1] = a->pc[j] + s2 / (n1 * n1);
    a->pd[j + 1] = a->pd[j] + n;
  }
  /* Differences of prefix sums carry rounding of order 1e-16 of the total;
   * a window whose live energy is below that is treated as empty (S = 0). */
  double floor_den = a->pb[ns] * 1e-12;
  for (size_t j = 0; j < ns; j++) {
    size_t lo = j > half ? j - half : 0;
    size_t hi = j + half + 1 < ns ? j + half + 1 : ns;
    double den = a->pb[hi] - a->pb[lo];
    double num = a->pa[hi] - a->pa[lo];
    int enough = a->pd[hi] - a->pd[lo] >= a->min_live * (double)(hi - lo) &&
                 a->pd[j + 1] - a->pd[j] >= (double)a->min_fold;
    double s = enough && den > floor_den && den > 0 ? num / den : 0.0;
    out[j] = (float)(s < 0 ? 0 : s > 1 ? 1 : s);
    if (power) {
      double pw = enough ? (a->pc[hi] - a->pc[lo]) / (double)(hi - lo) : 0.0;
      power[j] = (float)(pw > 0 ? pw : 0);
    }
  }
}

/* ---------------------------------------------------------------- parameters */

void semblance_params_init(semblance_params *p)
{
  memset(p, 0, sizeof *p);
  p->velocity_min_mps = 1400;
  p->velocity_max_mps = 4500;
  p->velocity_step_mps = 20;
  p->window_ms = 40;
  p->min_live_fraction = 0.25;
  p->min_fold = 0;
  nmo_params_init(&p->nmo);
  p->mute = NULL;
  p->threads = 1;
}

int semblance_params_check(const semblance_params *p, size_t *nvel, tz_err *err)
{
  if (!(p->velocity_min_mps > 0) || !isfinite(p->velocity_min_mps))
    return tz_fail(err, TZ_E_ARG, "minimum velocity %g m/s must be positive",
                   p->velocity_min_mps);
  if (!(p->velocity_max_mps >= p->velocity_min_mps) || !isfinite(p->velocity_max_mps))
    return tz_fail(err, TZ_E_ARG, "maximum velocity %g m/s is below the minimum %g m/s",
                   p->velocity_max_mps, p->velocity_min_mps);
  if (!(p->velocity_step_mps > 0) || !isfinite(p->velocity_step_mps))
    return tz_fail(err, TZ_E_ARG, "velocity step %g m/s must be positive",
                   p->velocity_step_mps);
  double n = floor((p->velocity_max_mps - p->velocity_min_mps) / p->velocity_step_mps + 1e-9) + 1;
  if (n > SEMBLANCE_MAX_VELOCITIES)
    return tz_fail(err, TZ_E_ARG, "%.0f trial velocities: more than %u", n,
                   SEMBLANCE_MAX_VELOCITIES);
  if (!(p->window_ms > 0) || !isfinite(p->window_ms) || p->window_ms > 10000)
    return tz_fail(err, TZ_E_ARG, "semblance window %g ms must be in (0, 10000]",
                   p->window_ms);
  if (p->min_fold > SEMBLANCE_MAX_MIN_FOLD)
    return tz_fail(err, TZ_E_ARG, "minimum fold %zu: more than %u traces", p->min_fold,
                   SEMBLANCE_MAX_MIN_FOLD);
  if (!(p->min_live_fraction >= 0 && p->min_live_fraction <= 1))
    return tz_fail(err, TZ_E_ARG, "minimum live fraction %g must be in [0, 1]",
                   p->min_live_fraction);
  if (p->threads > SEMBLANCE_MAX_THREADS)
    return tz_fail(err, TZ_E_ARG, "%d threads: more than %d", p->threads,
                   SEMBLANCE_MAX_THREADS);
  *nvel = (size_t)n;
  return TZ_OK;
}

static size_t half_window(double window_ms, double dt_s)
{
  double h = floor(window_ms / 2000.0 / dt_s + 0.5);
  return h < 0 ? 0 : (size_t)h;
}

/* ---------------------------------------------------------------- supergathers */

int semblance_supergather(const stack_gathers *gs, int32_t first_cmp, int32_t last_cmp,
                          float **samples, double **offsets, size_t *ntraces, tz_err *err)
{
  size_t ns = gs->axis.ns, n = 0;
  *samples = NULL;
  *offsets = NULL;
  *ntraces = 0;
  for (size_t i = 0; i < gs->n; i++)
    if (gs->g[i].cmp >= first_cmp && gs->g[i].cmp <= last_cmp)
      n += gs->g[i].ntraces;
  if (!n)
    return TZ_OK;
  float *s = malloc(n * ns * sizeof *s);
  double *o = malloc(n * sizeof *o);
  if (!s || !o) {
    free(s);
    free(o);
    return tz_fail(err, TZ_E_NOMEM, "supergather of CMPs %d-%d (%zu traces)", first_cmp,
                   last_cmp, n);
  }
  size_t at = 0;
  for (size_t i = 0; i < gs->n; i++) {
    const stack_gather *g = &gs->g[i];
    if (g->cmp < first_cmp || g->cmp > last_cmp || !g->ntraces)
      continue;   /* an empty CMP (past the line end) has no sample buffer */
    memcpy(s + at * ns, g->samples, g->ntraces * ns * sizeof *s);
    memcpy(o + at, g->offset_m, g->ntraces * sizeof *o);
    at += g->ntraces;
  }
  *samples = s;
  *offsets = o;
  *ntraces = n;
  return TZ_OK;
}

int semblance_supergather_mutes(const stack_gathers *gs, int32_t first_cmp, int32_t last_cmp,
                                const mute_set *m, double **out, tz_err *err)
{
  *out = NULL;
  if (!mute_set_active(m) ||
      (m->kind[MUTE_INNER].n == 0 && m->kind[MUTE_BOTTOM].n == 0 &&
       isnan(m->after_first_break_ms) && m->kind[MUTE_TOP].n <= 1))
    return TZ_OK;
  size_t n = 0;
  for (size_t i = 0; i < gs->n; i++)
    if (gs->g[i].cmp >= first_cmp && gs->g[i].cmp <= last_cmp)
      n += gs->g[i].ntraces;
  double *v = malloc((n ? n : 1) * STACK_MUTE_LINES * sizeof *v);
  if (!v)
    return tz_fail(err, TZ_E_NOMEM, "mutes of %zu traces", n);
  size_t at = 0;
  for (size_t i = 0; i < gs->n; i++) {
    const stack_gather *g = &gs->g[i];
    if (g->cmp < first_cmp || g->cmp > last_cmp)
      continue;
    for (size_t k = 0; k < g->ntraces; k++, at++) {
      mute_trace t = { g->cmp, g->headers[k].field_record, g->headers[k].channel,
                       g->offset_signed_m[k], g->static_ms[k] };
      mute_times mt;
      mute_eval(m, &t, &mt);
      double *o = v + at * STACK_MUTE_LINES;
      o[0] = isfinite(mt.top_ms) ? mt.top_ms : NAN;
      o[1] = mt.inner_from_ms;
      o[2] = mt.inner_to_ms;
      o[3] = isfinite(mt.bottom_ms) ? mt.bottom_ms : NAN;
    }
  }
  *out = v;
  return TZ_OK;
}

/* The NMO of trace i of g with its own mutes (g->mute_ms): the top as a
 * one-point polyline, then the bottom and the cone (nmo_band_mute). */
static int nmo_muted(nmo_workspace *ws, const semblance_params *p, const semblance_gather *g,
                     size_t i, const float *vel, float *buf, float *wt, nmo_trace_info *info,
                     nmo_top_mute *scratch, tz_err *err)
{
  const double *m = g->mute_ms + i * STACK_MUTE_LINES;
  const nmo_top_mute *top = NULL;
  if (!isnan(m[0])) {
    double off0 = 0, tm = m[0];
    int rc = nmo_top_mute_set(scratch, &off0, &tm, 1, g->mute_taper_ms, err);
    if (rc)
      return rc;
    top = scratch;
  }
  size_t ns = g->axis.ns;
  int rc = nmo_apply(ws, &p->nmo, top, &g->axis, g->offset_m[i], g->samples + i * ns, vel,
                     NULL, buf, wt, info, err);
  if (rc)
    return rc;
  double taper = g->mute_taper_ms * 1e-3;
  if (!isnan(m[3]))
    nmo_band_mute(ws, &g->axis, m[3] * 1e-3, INFINITY, taper, buf, wt, info);
  if (!isnan(m[1]))
    nmo_band_mute(ws, &g->axis, m[1] * 1e-3, m[2] * 1e-3, taper, buf, wt, info);
  return TZ_OK;
}

/* ---------------------------------------------------------------- panel */

struct worker {
  const semblance_gather *g;
  const semblance_params *p;
  float *panel, *power;
  size_t nvel, first, stride, half;
  size_t max_live;             /* largest live count over this worker's velocities */
  nmo_top_mute scratch;        /* a trace's own top mute (nmo_muted) */
  tz_err err;
  int rc;
};

static void *panel_worker(void *arg)
{
  struct worker *w = arg;
  const semblance_gather *g = w->g;
  size_t ns = g->axis.ns;
  nmo_workspace *ws = NULL;
  semblance_acc *acc = NULL;
  float *vel = malloc(ns * sizeof *vel), *buf = malloc(ns * sizeof *buf),
        *wt = malloc(ns * sizeof *wt);
  if (!vel || !buf || !wt) {
    w->rc = tz_fail(&w->err, TZ_E_NOMEM, "semblance buffers of %zu samples", ns);
    goto done;
  }
  if ((w->rc = nmo_workspace_new(&ws, ns, &w->err)) != TZ_OK)
    goto done;
  if ((w->rc = semblance_acc_new(&acc, ns, &w->err)) != TZ_OK)
    goto done;
  double ml = w->p->min_live_fraction * (double)g->ntraces;
  semblance_acc_min_live(acc, ml > 2 ? ml : 2);
  semblance_acc_min_fold(acc, w->p->min_fold);
  for (size_t k = w->first; k < w->nvel; k += w->stride) {
    float v = (float)(w->p->velocity_min_mps + (double)k * w->p->velocity_step_mps);
    for (size_t j = 0; j < ns; j++)
      vel[j] = v;
    semblance_acc_reset(acc);
    for (size_t i = 0; i < g->ntraces && g->mute_ms; i++) {
      nmo_trace_info info;   /* the job's own mutes: weights, the cone leaves a gap */
      w->rc = nmo_muted(ws, w->p, g, i, vel, buf, wt, &info, &w->scratch, &w->err);
      if (w->rc) {
        w->err.trace = (int64_t)i;
        goto done;
      }
      semblance_acc_add_weighted(acc, buf, wt);
    }
    for (size_t i = 0; i < g->ntraces && !g->mute_ms; i++) {
      nmo_trace_info info;
      /* nmo.c keeps live samples contiguous; the weight array is only asked
       * for (a second call) should a trace ever come back with gaps. */
      w->rc = nmo_apply(ws, &w->p->nmo, w->p->mute, &g->axis, g->offset_m[i],
                        g->samples + i * ns, vel, NULL, buf, NULL, &info, &w->err);
      if (!w->rc && info.live != info.end_live - info.first_live) {
        w->rc = nmo_apply(ws, &w->p->nmo, w->p->mute, &g->axis, g->offset_m[i],
                          g->samples + i * ns, vel, NULL, buf, wt, &info, &w->err);
        if (!w->rc)
          semblance_acc_add_weighted(acc, buf, wt);
      } else if (!w->rc) {
        semblance_acc_add(acc, buf, info.first_live, info.end_live);
      }
      if (w->rc) {
        w->err.trace = (int64_t)i;
        goto done;
      }
    }
    semblance_acc_finish(acc, w->half, w->panel + k * ns, w->power ? w->power + k * ns : NULL);
    if (semblance_acc_max_live(acc) > w->max_live)
      w->max_live = semblance_acc_max_live(acc);
  }
done:
  semblance_acc_free(acc);
  nmo_workspace_free(ws);
  free(vel);
  free(buf);
  free(wt);
  return NULL;
}

int semblance_panel(const semblance_gather *g, const semblance_params *p, float *panel,
                    float *power, tz_err *err)
{
  return semblance_panel_live(g, p, panel, power, NULL, err);
}

int semblance_panel_live(const semblance_gather *g, const semblance_params *p, float *panel,
                         float *power, size_t *max_live, tz_err *err)
{
  size_t nvel;
  int rc = semblance_params_check(p, &nvel, err);
  if (rc)
    return rc;
  if (!(g->axis.dt_s > 0) || g->axis.ns == 0 || g->axis.ns > NMO_MAX_SAMPLES)
    return tz_fail(err, TZ_E_ARG, "semblance: bad time axis (%zu samples, interval %g s)",
                   g->axis.ns, g->axis.dt_s);
  size_t nth = p->threads > 1 ? (size_t)p->threads : 1;
  if (nth > nvel)
    nth = nvel;
  struct worker *w = calloc(nth, sizeof *w);
  pthread_t *tid = calloc(nth, sizeof *tid);
  int *started = calloc(nth, sizeof *started);
  if (!w || !tid || !started) {
    free(w);
    free(tid);
    free(started);
    return tz_fail(err, TZ_E_NOMEM, "semblance threads");
  }
  size_t half = half_window(p->window_ms, g->axis.dt_s);
  for (size_t t = 0; t < nth; t++) {
    w[t] = (struct worker){ .g = g, .p = p, .panel = panel, .power = power, .nvel = nvel, .first = t,
                            .stride = nth, .half = half };
    tz_err_init(&w[t].err);
  }
  for (size_t t = 1; t < nth; t++)
    started[t] = pthread_create(&tid[t], NULL, panel_worker, &w[t]) == 0;
  panel_worker(&w[0]);
  for (size_t t = 1; t < nth; t++) {
    if (started[t])
      pthread_join(tid[t], NULL);
    else
      panel_worker(&w[t]);   /* could not start a thread: do its share here */
  }
  for (size_t t = 0; t < nth && !rc; t++)
    if (w[t].rc) {
      *err = err->status ? *err : w[t].err;
      rc = w[t].rc;
    }
  if (max_live) {
    *max_live = 0;
    for (size_t t = 0; t < nth; t++)
      if (w[t].max_live > *max_live)
        *max_live = w[t].max_live;
  }
  free(w);
  free(tid);
  free(started);
  return rc;
}

/* ---------------------------------------------------------------- picking */

void semblance_pick_params_init(semblance_pick_params *p)
{
  memset(p, 0, sizeof *p);
  p->min_semblance = 0.3;
  p->min_relative_power = 0.001;
  p->min_separation_ms = 60;
  p->interval_min_mps = VELOCITY_PLAUSIBLE_MIN_MPS;
  p->interval_max_mps = VELOCITY_PLAUSIBLE_MAX_MPS;
  p->allow_inversions = 0;
  p->time_min_ms = 0;
  p->time_max_ms = 0;
}

struct cand {
  size_t k, j;        /* grid position */
  double s;           /* semblance */
  double w;           /* picking weight: semblance x relative stack power */
  double t, v;        /* refined time (s) and velocity */
  double best;        /* DP: best chain score ending here */
  long prev;          /* DP: previous candidate, -1 = from the surface */
};

static int by_score(const void *a, const void *b)
{
  const struct cand *x = a, *y = b;
  if (x->w != y->w)
    return x->w < y->w ? 1 : -1;
  if (x->j != y->j)
    return x->j < y->j ? -1 : 1;
  return x->k < y->k ? -1 : x->k > y->k;
}

static int by_time(const void *a, const void *b)
{
  const struct cand *x = a, *y = b;
  if (x->j != y->j)
    return x->j < y->j ? -1 : 1;
  return x->k < y->k ? -1 : x->k > y->k;
}

/* Vertex offset of the parabola through (-1, a), (0, b), (1, c), within +-0.5. */
static double parabola_peak(double a, double b, double c)
{
  double d = a - 2 * b + c;
  if (!(d < 0))
    return 0;
  double x = 0.5 * (a - c) / d;
  return x < -0.5 ? -0.5 : x > 0.5 ? 0.5 : x;
}

/* 1 when (k, j) is the maximum of its neighbourhood; ties go to the earlier
 * (j, then k) position so that a plateau yields exactly one candidate. */
static int is_peak(const float *panel, size_t nvel, size_t ns, size_t k, size_t j, size_t r)
{
  float s = panel[k * ns + j];
  size_t j0 = j > r ? j - r : 0, j1 = j + r < ns - 1 ? j + r : ns - 1;
  for (size_t kk = k - 1; kk <= k + 1; kk++)
    for (size_t jj = j0; jj <= j1; jj++) {
      float o = panel[kk * ns + jj];
      if (o > s)
        return 0;
      if (o == s && (jj < j || (jj == j && kk < k)))
        return 0;
    }
  (void)nvel;
  return 1;
}

static int dix_ok(double ta, double va, double tb, double vb, double vmin, double vmax)
{
  double t[2] = { ta, tb }, v[2] = { va, vb };
  velocity_interval iv[2];
  tz_err e;
  tz_err_init(&e);
  if (velocity_dix(t, v, 2, iv, &e) != TZ_OK || iv[1].imaginary)
    return 0;
  return iv[1].v_int_mps >= vmin && iv[1].v_int_mps <= vmax;
}

int semblance_autopick(const float *panel, const float *power, size_t nvel, const nmo_axis *ax,
                       const semblance_params *sp, const semblance_pick_params *pp,
                       semblance_pick **out, size_t *n, tz_err *err)
{
  *out = NULL;
  *n = 0;
  size_t ns = ax->ns;
  if (!(pp->interval_min_mps > 0) || !(pp->interval_max_mps >= pp->interval_min_mps))
    return tz_fail(err, TZ_E_ARG, "interval velocity bounds %g..%g m/s are not a range",
                   pp->interval_min_mps, pp->interval_max_mps);
  if (!(pp->min_separation_ms >= 0) || !(pp->min_semblance >= 0 && pp->min_semblance <= 1) ||
      !(pp->min_relative_power >= 0 && pp->min_relative_power <= 1))
    return tz_fail(err, TZ_E_ARG,
                   "pick separation %g ms must be >= 0, minimum semblance %g and minimum "
                   "relative power %g in [0, 1]",
                   pp->min_separation_ms, pp->min_semblance, pp->min_relative_power);
  if (pp->time_max_ms > 0 && !(pp->time_max_ms > pp->time_min_ms))
    return tz_fail(err, TZ_E_ARG, "pick time range %g-%g ms is empty", pp->time_min_ms,
                   pp->time_max_ms);
  if (nvel < 3 || ns < 3)
    return TZ_OK;   /* no interior maxima possible */
  size_t r = half_window(sp->window_ms, ax->dt_s);
  if (r < 1)
    r = 1;
  double tmin = pp->time_min_ms / 1000.0;
  double tmax = pp->time_max_ms > 0 ? pp->time_max_ms / 1000.0 : INFINITY;

  /* Picking weight: semblance times the stack power relative to the panel's
   * largest (scale-free, so the weight is comparable between panels). */
  const float *wp = panel;
  float *wbuf = NULL;
  float pfloor = 0;
  if (power) {
    size_t tot = nvel * ns;
    float pmax = 0;
    for (size_t i = 0; i < tot; i++)
      pmax = power[i] > pmax ? power[i] : pmax;
    if (!(wbuf = malloc(tot * sizeof *wbuf)))
      return tz_fail(err, TZ_E_NOMEM, "picking weights");
    float inv = pmax > 0 ? 1.0f / pmax : 0.0f;
    pfloor = (float)pp->min_relative_power;
    for (size_t i = 0; i < tot; i++)
      wbuf[i] = panel[i] * power[i] * inv;
    wp = wbuf;
  }
  size_t cap = 256, nc = 0;
  struct cand *c = malloc(cap * sizeof *c);
  if (!c) {
    free(wbuf);
    return tz_fail(err, TZ_E_NOMEM, "pick candidates");
  }
  /* Maxima on the first or last trial velocity are not picked: the true
   * maximum may lie outside the scan (common practice). */
  for (size_t k = 1; k + 1 < nvel; k++)
    for (size_t j = 0; j < ns; j++) {
      float s = panel[k * ns + j];
      if (!(s >= pp->min_semblance) || s <= 0)
        continue;
      double t = ax->t_first_s + (double)j * ax->dt_s;
      if (t <= 0 || t < tmin || t > tmax)
        continue;
      if (!(wp[k * ns + j] > 0) || (power && wp[k * ns + j] < s * pfloor) ||
          !is_peak(wp, nvel, ns, k, j, r))
        continue;
      if (nc == cap) {
        struct cand *nb = realloc(c, 2 * cap * sizeof *c);
        if (!nb) {
          free(c);
          free(wbuf);
          return tz_fail(err, TZ_E_NOMEM, "pick candidates");
        }
        c = nb;
        cap *= 2;
      }
      c[nc++] = (struct cand){ .k = k, .j = j, .s = s, .w = wp[k * ns + j] };
    }
  if (nc > SEMBLANCE_MAX_CANDIDATES) {
    qsort(c, nc, sizeof *c, by_score);
    nc = SEMBLANCE_MAX_CANDIDATES;
  }
  qsort(c, nc, sizeof *c, by_time);
  for (size_t i = 0; i < nc; i++) {
    size_t k = c[i].k, j = c[i].j;
    double dk = parabola_peak(wp[(k - 1) * ns + j], wp[k * ns + j], wp[(k + 1) * ns + j]);
    double dj = j > 0 && j + 1 < ns
                    ? parabola_peak(wp[k * ns + j - 1], wp[k * ns + j], wp[k * ns + j + 1])
                    : 0;
    c[i].v = sp->velocity_min_mps + ((double)k + dk) * sp->velocity_step_mps;
    c[i].t = ax->t_first_s + ((double)j + dj) * ax->dt_s;
  }
  free(wbuf);

  /* Dynamic programming over the time-ordered candidates. */
  double sep = pp->min_separation_ms / 1000.0 - 1e-9;
  long end = -1;
  for (size_t b = 0; b < nc; b++) {
    c[b].best = -1;
    c[b].prev = -1;
    if (c[b].v >= pp->interval_min_mps && c[b].v <= pp->interval_max_mps)
      c[b].best = c[b].s;   /* first pick: interval velocity from the surface = V_rms */
    for (size_t a = 0; a < b; a++) {
      if (c[a].best < 0 || c[b].t - c[a].t < sep || c[b].t <= c[a].t)
        continue;
      if (!pp->allow_inversions && c[b].v < c[a].v)
        continue;
      double score = c[a].best + c[b].s;
      if (score <= c[b].best)
        continue;
      if (!dix_ok(c[a].t, c[a].v, c[b].t, c[b].v, pp->interval_min_mps, pp->interval_max_mps))
        continue;
      c[b].best = score;
      c[b].prev = (long)a;
    }
    if (c[b].best >= 0 && (end < 0 || c[b].best > c[end].best))
      end = (long)b;
  }
  if (end < 0) {
    free(c);
    return TZ_OK;
  }
  size_t np = 0;
  for (long i = end; i >= 0; i = c[i].prev)
    np++;
  semblance_pick *pk = malloc(np * sizeof *pk);
  double *tt = malloc(np * sizeof *tt), *vv = malloc(np * sizeof *vv);
  velocity_interval *iv = malloc(np * sizeof *iv);
  if (!pk || !tt || !vv || !iv) {
    free(pk);
    free(tt);
    free(vv);
    free(iv);
    free(c);
    return tz_fail(err, TZ_E_NOMEM, "picks");
  }
  size_t q = np;
  for (long i = end; i >= 0; i = c[i].prev) {
    q--;
    pk[q] = (semblance_pick){ .time_s = c[i].t, .velocity_mps = c[i].v, .semblance = c[i].s };
    tt[q] = c[i].t;
    vv[q] = c[i].v;
  }
  int rc = velocity_dix(tt, vv, np, iv, err);
  for (size_t i = 0; !rc && i < np; i++)
    pk[i].interval_mps = iv[i].v_int_mps;
  free(tt);
  free(vv);
  free(iv);
  free(c);
  if (rc) {
    free(pk);
    return rc;
  }
  *out = pk;
  *n = np;
  return TZ_OK;
}

/* ---------------------------------------------------------------- velocity lists */

static int push_velocity(double **v, size_t *n, size_t *cap, double x, tz_err *err)
{
  if (*n == SEMBLANCE_MAX_VELOCITIES)
    return tz_fail(err, TZ_E_ARG, "velocity list: more than %u values",
                   SEMBLANCE_MAX_VELOCITIES);
  if (*n == *cap) {
    size_t nc = *cap ? 2 * *cap : 16;
    double *nv = realloc(*v, nc * sizeof *nv);
    if (!nv)
      return tz_fail(err, TZ_E_NOMEM, "velocity list");
    *v = nv;
    *cap = nc;
  }
  (*v)[(*n)++] = x;
  return TZ_OK;
}

int semblance_parse_velocities(const char *text, double **out, size_t *n, tz_err *err)
{
  double *v = NULL;
  size_t cnt = 0, cap = 0;
  char item[128];
  const char *p = text;
  int rc = TZ_OK;
  for (;;) {
    const char *comma = strchr(p, ',');
    size_t len = comma ? (size_t)(comma - p) : strlen(p);
    if (len >= sizeof item) {
      rc = tz_fail(err, TZ_E_ARG, "velocity list item '%.*s...': too long", 20, p);
      goto fail;
    }
    memcpy(item, p, len);
    item[len] = '\0';
    /* A range is "A-B:S"; the '-' that separates A and B is the first one
     * after a digit (so that exponents like 1e3 stay intact). */
    char *dash = NULL, *colon = strchr(item, ':');
    for (char *q = item + 1; *q; q++)
      if (*q == '-' && (q[-1] >= '0' && q[-1] <= '9')) {
        dash = q;
        break;
      }
    double a, b, step;
    if (!dash) {
      if (colon || table_parse_f64(item, &a) || !(a > 0))
        goto bad;
      if ((rc = push_velocity(&v, &cnt, &cap, a, err)))
        goto fail;
    } else {
      if (!colon || colon < dash)
        goto bad;
      *dash = *colon = '\0';
      if (table_parse_f64(item, &a) || table_parse_f64(dash + 1, &b) ||
          table_parse_f64(colon + 1, &step) || !(a > 0) || !(b >= a) || !(step > 0))
        goto bad;
      double m = floor((b - a) / step + 1e-9);
      if (m >= SEMBLANCE_MAX_VELOCITIES) {
        rc = tz_fail(err, TZ_E_ARG, "velocity list: more than %u values",
                     SEMBLANCE_MAX_VELOCITIES);
        goto fail;
      }
      for (double k = 0; k <= m; k++)
        if ((rc = push_velocity(&v, &cnt, &cap, a + k * step, err)))
          goto fail;
    }
    if (!comma)
      break;
    p = comma + 1;
    continue;
  bad:
    rc = tz_fail(err, TZ_E_ARG,
                 "velocity list item '%.*s': expected V or FIRST-LAST:STEP in m/s "
                 "(positive, FIRST <= LAST, STEP > 0)", (int)len, p);
    goto fail;
  }
  *out = v;
  *n = cnt;
  return TZ_OK;
fail:
  free(v);
  return rc;
}

/* ---------------------------------------------------------------- window */

int semblance_dominant_hz(const semblance_gather *g, double *hz, tz_err *err)
{
  *hz = 0;
  size_t ns = g->axis.ns;
  if (g->ntraces == 0 || ns < 4)
    return TZ_OK;
  spectrum_plan *plan = NULL;
  spectrum_acc *acc = NULL;
  double *mean = NULL, *sm = NULL;
  int rc = spectrum_plan_new(&plan, ns, g->axis.dt_s, 10.0, err);
  if (!rc)
    rc = spectrum_acc_new(&acc, plan, err);
  size_t nf = rc ? 0 : spectrum_plan_nfreq(plan);
  if (!rc && !(mean = malloc(nf * sizeof *mean)))
    rc = tz_fail(err, TZ_E_NOMEM, "spectrum of %zu frequencies", nf);
  if (!rc) {
    for (size_t i = 0; i < g->ntraces; i++)
      spectrum_acc_add(acc, g->samples + i * ns);
    spectrum_acc_mean(acc, mean);
    double df = spectrum_plan_df_hz(plan);
    size_t k = 1;
    for (size_t j = 2; j < nf; j++)
      if (mean[j] > mean[k])
        k = j;
    /* Events at several times make the mean spectrum ripple with a period of
     * 1 / (their spacing) in frequency, which moves the raw peak (NumPy on three
     * 50 Hz Ricker events 150-200 ms apart: 40.6 Hz). A running mean over
     * +-SEMBLANCE_SPECTRUM_SMOOTH_HZ (a whole ripple of events 50 ms or more
     * apart; at most a quarter of the raw peak, so low frequencies keep their
     * peak) removes the ripple and keeps the wavelet's peak (50.0 Hz). */
    double hw = fmin(SEMBLANCE_SPECTRUM_SMOOTH_HZ, 0.25 * (double)k * df);
    size_t w = (size_t)fmax(1.0, floor(hw / df + 0.5));
    if (!(sm = calloc(nf, sizeof *sm))) {
      rc = tz_fail(err, TZ_E_NOMEM, "spectrum of %zu frequencies", nf);
    } else {
      double run = 0;   /* window sums by prefix: O(nf) */
      size_t lo = 0, hi = 0;
      for (size_t j = 0; j < nf; j++) {
        size_t a = j > w ? j - w : 0, b = j + w + 1 < nf ? j + w + 1 : nf;
        while (hi < b)
          run += mean[hi++];
        while (lo < a)
          run -= mean[lo++];
        sm[j] = run / (double)(b - a);
      }
      k = 1;
      for (size_t j = 2; j < nf; j++)
        if (sm[j] > sm[k])
          k = j;
      double at = (double)k;
      if (sm[k] > 0 && k + 1 < nf) {   /* vertex of the parabola through k-1, k, k+1 */
        double a = sm[k - 1], b = sm[k], c = sm[k + 1], d = a - 2 * b + c;
        if (d < 0)
          at += 0.5 * (a - c) / d;
      }
      *hz = sm[k] > 0 ? at * df : 0;
    }
  }
  free(sm);
  free(mean);
  spectrum_acc_free(acc);
  spectrum_plan_free(plan);
  return rc;
}

double semblance_window_for_hz(double hz, double dt_s)
{
  if (!(hz > 0) || !isfinite(hz))
    return 40.0;
  double ms = SEMBLANCE_WINDOW_PERIODS / hz * 1000.0, lo = fmax(SEMBLANCE_WINDOW_MIN_MS,
                                                               3000.0 * dt_s);
  return ms < lo ? lo : ms > SEMBLANCE_WINDOW_MAX_MS ? SEMBLANCE_WINDOW_MAX_MS : ms;
}
