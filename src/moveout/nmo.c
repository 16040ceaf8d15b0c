/* nmo.c -- exact normal-moveout correction of one trace, with stretch and top mutes.
 *
 * Inverse mapping ("pull", Yilmaz 2001, hyperbolic moveout): output sample i sits at zero-offset
 * time t0_i = t_first + i dt and takes the input value at
 *     t_i^2 = t0_i^2 + x^2 / v_i^2                                  (hyperbola)
 *             - 2 eta x^4 / (v^2 (t0^2 v^2 + (1 + 2 eta) x^2))      (Alkhalifah and
 *                                                                     Tsvankin 1995)
 * read by linear or 8-point Kaiser-windowed sinc interpolation.
 *
 * Design for speed: the mutes are decided on t^2 (no square root, no branch in
 * the hot loops). One trace costs three passes over its samples:
 *   1. t^2 for every sample with t0 >= 0 (pure arithmetic, vectorisable);
 *   2. boundary scans: the stretch mute (t^2 > (1 + s)^2 t0^2), the top mute
 *      (t < t_mute) and the trace end (t > last input time) only move indexes;
 *   3. over the live range only: t = sqrt(t^2), fractional input index, gather.
 * Tapers touch only the few samples at the mute edges afterwards. Input is
 * first copied into a zero-padded buffer (with the top mute applied in recorded
 * time), so interpolation never needs a bounds test.
 *
 * On x86-64 CPUs with AVX2 (checked once per workspace with
 * __builtin_cpu_supports; the binary still runs on any x86-64) passes 2 and 3
 * run eight samples at a time (the *_avx2 functions). They perform exactly the
 * scalar operations lane by lane (IEEE add, multiply, divide and square root
 * are correctly rounded; no fused multiply-add: the "avx2" target does not
 * enable FMA, and -std=c11 keeps contraction off), so both paths give the same
 * bits; tests/unit/check_simd.c compares them on random gathers.
 *
 * Not here: velocity functions (velocity.c), gathers, files and stacking.
 */
#include "tzero/nmo.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#ifdef __SSE__
#include <xmmintrin.h>
#endif
#if defined(__x86_64__) && defined(__GNUC__)
#include <immintrin.h>
#define NMO_AVX2 1
#define AVX2_FN __attribute__((target("avx2")))
#else
#define NMO_AVX2 0
#endif

#if defined(__GNUC__) && !defined(__clang__)
#define NMO_VECTORISE __attribute__((optimize("tree-vectorize")))
#else
#define NMO_VECTORISE
#endif

#define PAD 8               /* zeros on each side of the input copy (sinc8 reach 4;
                               the AVX2 linear gather loads 8 past a sample) */
#define NPHASE 2048         /* sinc8 kernel table: fractional positions 0..1 */
#define SINC_HALF 4         /* taps at offsets -3..+4 around floor(u) */
#define KAISER_BETA 5.0     /* window shape; see docs/nmo.md for the error it gives */

struct nmo_workspace {
  size_t ns_max;
  float *pad;               /* ns_max + 2 PAD: input copy, top-muted, zero-padded */
  float *tsq;               /* ns_max: t^2 per output sample */
  float *u;                 /* ns_max: fractional input index per output sample */
  float *sinc;              /* (NPHASE + 1) x 8 kernel weights, built at first use */
  int sinc_built;
  int avx2;                 /* the CPU has AVX2: use the *_avx2 kernels */
};

void nmo_params_init(nmo_params *p)
{
  p->stretch_limit_pct = 50.0;   /* Sheriff's dictionary: often 50-100 % (Sheriff's Encyclopedic Dictionary, stretch mute; Yilmaz 2001) */
  p->stretch_taper_ms = 10.0;
  p->interp = NMO_INTERP_LINEAR;
  p->use_eta = 1;
}

const char *nmo_interp_name(int interp)
{
  return interp == NMO_INTERP_SINC8 ? "sinc8" : interp == NMO_INTERP_LINEAR ? "linear"
                                                                             : "unknown";
}

int nmo_interp_parse(const char *s)
{
  if (!s)
    return -1;
  if (!strcmp(s, "linear"))
    return NMO_INTERP_LINEAR;
  if (!strcmp(s, "sinc8"))
    return NMO_INTERP_SINC8;
  return -1;
}

/* ---- formulas ---- */

double nmo_moveout_time(double t0_s, double offset_m, double v_mps, double eta)
{
  double x2 = offset_m * offset_m, v2 = v_mps * v_mps;
  double t2 = t0_s * t0_s + x2 / v2;
  if (eta != 0)
    t2 -= 2 * eta * x2 * x2 / (v2 * (t0_s * t0_s * v2 + (1 + 2 * eta) * x2));
  return sqrt(t2);
}

double nmo_stretch(double offset_m, double t0_s, double v_mps)
{
  return (nmo_moveout_time(t0_s, offset_m, v_mps, 0) - t0_s) / t0_s;
}

double nmo_stretch_mute_offset(double t0_s, double v_mps, double s)
{
  return v_mps * t0_s * sqrt((1 + s) * (1 + s) - 1);
}

/* ---- top mute ---- */

int nmo_top_mute_set(nmo_top_mute *m, const double *offset_m, const double *time_ms,
                     size_t n, double taper_ms, tz_err *err)
{
  if (n > NMO_MUTE_MAX_POINTS)
    return tz_fail(err, TZ_E_ARG, "top mute has %zu points; at most %d", n,
                   NMO_MUTE_MAX_POINTS);
  if (!isfinite(taper_ms) || taper_ms < 0)
    return tz_fail(err, TZ_E_ARG, "top mute taper %.10g ms must be >= 0", taper_ms);
  for (size_t i = 0; i < n; i++) {
    if (!isfinite(offset_m[i]) || offset_m[i] < 0)
      return tz_fail(err, TZ_E_ARG, "top mute point %zu: offset %.10g m must be >= 0",
                     i + 1, offset_m[i]);
    if (i > 0 && offset_m[i] <= offset_m[i - 1])
      return tz_fail(err, TZ_E_ARG,
                     "top mute point %zu: offset %.10g m is not after %.10g m", i + 1,
                     offset_m[i], offset_m[i - 1]);
    if (!isfinite(time_ms[i]))
      return tz_fail(err, TZ_E_ARG, "top mute point %zu: time must be finite", i + 1);
  }
  m->n = n;
  for (size_t i = 0; i < n; i++) {
    m->offset_m[i] = offset_m[i];
    m->time_ms[i] = time_ms[i];
  }
  m->taper_ms = taper_ms;
  return TZ_OK;
}

double nmo_top_mute_seconds(const nmo_top_mute *m, double offset_m)
{
  if (!m || m->n == 0)
    return -INFINITY;
  double x = fabs(offset_m);
  size_t n = m->n;
  if (x <= m->offset_m[0])
    return m->time_ms[0] * 1e-3;
  if (x >= m->offset_m[n - 1])
    return m->time_ms[n - 1] * 1e-3;
  size_t k = 0;
  while (m->offset_m[k + 1] < x)
    k++;
  double f = (x - m->offset_m[k]) / (m->offset_m[k + 1] - m->offset_m[k]);
  return (m->time_ms[k] + f * (m->time_ms[k + 1] - m->time_ms[k])) * 1e-3;
}

/* ---- workspace and sinc table ---- */

/* Modified Bessel function I0 by its power series (converges fast for x < 20). */
static double bessel_i0(double x)
{
  double sum = 1, term = 1, q = x * x / 4;
  for (int k = 1; k < 60; k++) {
    term *= q / ((double)k * k);
    sum += term;
    if (term < 1e-17 * sum)
      break;
  }
  return sum;
}

/* Row p holds weights for fractional position f = p / NPHASE: tap j (0..7) multiplies
 * input sample floor(u) - 3 + j, at distance d = f + 3 - j from the output point.
 * w = sinc(d) * Kaiser(d / 4), normalised to sum 1 (unit gain at zero frequency). */
static void build_sinc(float *tab)
{
  double i0b = bessel_i0(KAISER_BETA);
  for (int p = 0; p <= NPHASE; p++) {
    double f = (double)p / NPHASE, w[8], sum = 0;
    for (int j = 0; j < 8; j++) {
      double d = f + (SINC_HALF - 1) - j;
      double s = fabs(d) < 1e-12 ? 1.0 : sin(M_PI * d) / (M_PI * d);
      double r = d / SINC_HALF, a = 1 - r * r;
      double win = a > 0 ? bessel_i0(KAISER_BETA * sqrt(a)) / i0b : 0.0;
      w[j] = s * win;
      sum += w[j];
    }
    for (int j = 0; j < 8; j++)
      tab[p * 8 + j] = (float)(w[j] / sum);
  }
}

/* The sinc8 table of ws, built on the first call that interpolates with it:
 * a workspace that only ever interpolates linearly never computes it. */
static const float *sinc_table(nmo_workspace *ws)
{
  if (!ws->sinc_built) {
    build_sinc(ws->sinc);
    ws->sinc_built = 1;
  }
  return ws->sinc;
}

int nmo_workspace_new(nmo_workspace **out, size_t ns_max, tz_err *err)
{
  if (ns_max == 0 || ns_max > NMO_MAX_SAMPLES)
    return tz_fail(err, TZ_E_ARG, "NMO workspace: %zu samples (1 to %d allowed)", ns_max,
                   NMO_MAX_SAMPLES);
  nmo_workspace *ws = calloc(1, sizeof *ws);
  if (ws) {
    ws->ns_max = ns_max;
    ws->pad = calloc(ns_max + 2 * PAD, sizeof *ws->pad);
    ws->tsq = malloc(ns_max * sizeof *ws->tsq);
    ws->u = malloc(ns_max * sizeof *ws->u);
    ws->sinc = malloc((NPHASE + 1) * 8 * sizeof *ws->sinc);
  }
  if (!ws || !ws->pad || !ws->tsq || !ws->u || !ws->sinc) {
    nmo_workspace_free(ws);
    return tz_fail(err, TZ_E_NOMEM, "NMO workspace for %zu samples", ns_max);
  }
#if NMO_AVX2
  ws->avx2 = __builtin_cpu_supports("avx2") ? 1 : 0;
#endif
  *out = ws;
  return TZ_OK;
}

int nmo_workspace_simd(nmo_workspace *ws, int simd)
{
#if NMO_AVX2
  ws->avx2 = simd && __builtin_cpu_supports("avx2");
#else
  (void)simd;
  ws->avx2 = 0;
#endif
  return ws->avx2;
}

void nmo_workspace_free(nmo_workspace *ws)
{
  if (!ws)
    return;
  free(ws->pad);
  free(ws->tsq);
  free(ws->u);
  free(ws->sinc);
  free(ws);
}

/* ---- the correction ---- */

static int check_args(const nmo_workspace *ws, const nmo_params *p, const nmo_axis *ax,
                      double offset_m, tz_err *err)
{
  if (!(ax->dt_s > 0) || !isfinite(ax->dt_s) || !isfinite(ax->t_first_s))
    return tz_fail(err, TZ_E_ARG, "NMO: sample interval %.10g s must be > 0", ax->dt_s);
  if (ax->ns == 0 || ax->ns > ws->ns_max)
    return tz_fail(err, TZ_E_ARG, "NMO: %zu samples; the workspace holds %zu", ax->ns,
                   ws->ns_max);
  if (!isfinite(offset_m))
    return tz_fail(err, TZ_E_ARG, "NMO: offset is not finite");
  if (p->interp != NMO_INTERP_LINEAR && p->interp != NMO_INTERP_SINC8)
    return tz_fail(err, TZ_E_ARG, "NMO: unknown interpolation %d", p->interp);
  if (!isfinite(p->stretch_limit_pct) || p->stretch_limit_pct < 0)
    return tz_fail(err, TZ_E_ARG, "NMO: stretch limit %.10g %% must be >= 0",
                   p->stretch_limit_pct);
  if (!isfinite(p->stretch_taper_ms) || p->stretch_taper_ms < 0)
    return tz_fail(err, TZ_E_ARG, "NMO: stretch taper %.10g ms must be >= 0",
                   p->stretch_taper_ms);
  return TZ_OK;
}

/* Pass 1: t^2 for output samples [i0, ns). Hyperbolic, or with the fourth-order term. */
NMO_VECTORISE
static void moveout_sq(float *restrict tsq, const float *restrict vel,
                       const float *restrict eta, float tf, float dt, float x2, size_t i0,
                       size_t ns)
{
  /* int32 counters: ns <= NMO_MAX_SAMPLES, and int -> float converts in SIMD. */
  int a = (int)i0, b = (int)ns;
  if (!eta) {
    for (int i = a; i < b; i++) {
      float t0 = tf + (float)i * dt;
      tsq[i] = t0 * t0 + x2 / (vel[i] * vel[i]);
    }
    return;
  }
  float x4 = x2 * x2;
  for (int i = a; i < b; i++) {
    float t0 = tf + (float)i * dt, v2 = vel[i] * vel[i], e = eta[i];
    float t02 = t0 * t0;
    tsq[i] = t02 + x2 / v2 - 2.0f * e * x4 / (v2 * (t02 * v2 + (1.0f + 2.0f * e) * x2));
  }
}

/* Pass 3a: fractional input index u = (t - t_first)/dt, clamped to [0, last sample].
 * SSE when available (sqrtf is a library call under errno semantics, which blocks
 * auto-vectorisation); IEEE square root is correctly rounded either way, so both
 * paths give identical results. */
static void input_index(float *restrict u, const float *restrict tsq, float tf, float idt,
                        float umax, size_t i0, size_t i1)
{
  size_t i = i0;
#ifdef __SSE__
  __m128 vtf = _mm_set1_ps(tf), vidt = _mm_set1_ps(idt), vmax = _mm_set1_ps(umax);
  __m128 vzero = _mm_setzero_ps();
  for (; i + 4 <= i1; i += 4) {
    __m128 v = _mm_mul_ps(_mm_sub_ps(_mm_sqrt_ps(_mm_loadu_ps(tsq + i)), vtf), vidt);
    _mm_storeu_ps(u + i, _mm_max_ps(_mm_min_ps(v, vmax), vzero));
  }
#endif
  for (; i < i1; i++) {
    float v = (sqrtf(tsq[i]) - tf) * idt;
    v = v < umax ? v : umax;
    u[i] = v > 0.0f ? v : 0.0f;
  }
}

/* Pass 3b: gathers. `a` points at input sample 0 inside the padded copy. */
static void gather_linear(float *restrict out, const float *restrict u,
                          const float *restrict a, size_t i0, size_t i1)
{
  /* int conversions: float -> int32 is one instruction, float -> size_t is not. */
  for (int i = (int)i0; i < (int)i1; i++) {
    int k = (int)u[i];
    float f = u[i] - (float)k;
    out[i] = a[k] + f * (a[k + 1] - a[k]);
  }
}

static void gather_sinc8(float *restrict out, const float *restrict u,
                         const float *restrict a, const float *restrict tab, size_t i0,
                         size_t i1)
{
  for (int i = (int)i0; i < (int)i1; i++) {
    int k = (int)u[i];
    int ph = (int)((u[i] - (float)k) * NPHASE + 0.5f);
    const float *c = tab + ph * 8, *s = a + k - (SINC_HALF - 1);
#ifdef __SSE__
    /* Two 4-wide products and a horizontal sum (same order on every call). */
    __m128 v = _mm_add_ps(_mm_mul_ps(_mm_loadu_ps(c), _mm_loadu_ps(s)),
                          _mm_mul_ps(_mm_loadu_ps(c + 4), _mm_loadu_ps(s + 4)));
    v = _mm_add_ps(v, _mm_movehl_ps(v, v));
    v = _mm_add_ss(v, _mm_shuffle_ps(v, v, 1));
    out[i] = _mm_cvtss_f32(v);
#else
    out[i] = ((c[0] * s[0] + c[4] * s[4]) + (c[2] * s[2] + c[6] * s[6])) +
             ((c[1] * s[1] + c[5] * s[5]) + (c[3] * s[3] + c[7] * s[7]));
#endif
  }
}

/* Live weights: 1 over [i0, i1) (vectorised fill). */
NMO_VECTORISE
static void fill_one(float *restrict w, size_t i0, size_t i1)
{
  for (size_t i = i0; i < i1; i++)
    w[i] = 1.0f;
}

#if NMO_AVX2
/* Pass 1, eight samples at a time: t0 = tf + (float)i dt, then t0^2 + x2 / v^2
 * with the same operations as moveout_sq(). */
AVX2_FN static void moveout_sq_avx2(float *restrict tsq, const float *restrict vel, float tf,
                                    float dt, float x2, size_t i0, size_t ns)
{
  int i = (int)i0, b = (int)ns;
  const __m256 vtf = _mm256_set1_ps(tf), vdt = _mm256_set1_ps(dt), vx2 = _mm256_set1_ps(x2);
  const __m256i step = _mm256_setr_epi32(0, 1, 2, 3, 4, 5, 6, 7);
  for (; i + 8 <= b; i += 8) {
    __m256 fi = _mm256_cvtepi32_ps(_mm256_add_epi32(_mm256_set1_epi32(i), step));
    __m256 t0 = _mm256_add_ps(vtf, _mm256_mul_ps(fi, vdt));
    __m256 v = _mm256_loadu_ps(vel + i);
    __m256 r = _mm256_add_ps(_mm256_mul_ps(t0, t0), _mm256_div_ps(vx2, _mm256_mul_ps(v, v)));
    _mm256_storeu_ps(tsq + i, r);
  }
  for (; i < b; i++) {
    float t0 = tf + (float)i * dt;
    tsq[i] = t0 * t0 + x2 / (vel[i] * vel[i]);
  }
}

/* Stretch-mute scan, eight at a time: the first i >= i0 where
 * !(tsq[i] > (k t0) t0), t0 = tf + (float)i dt (as in nmo_apply), or ns. */
AVX2_FN static size_t stretch_scan_avx2(const float *tsq, float tf, float dt, float k,
                                        size_t i0, size_t ns)
{
  int i = (int)i0, b = (int)ns;
  const __m256 vtf = _mm256_set1_ps(tf), vdt = _mm256_set1_ps(dt), vk = _mm256_set1_ps(k);
  const __m256i step = _mm256_setr_epi32(0, 1, 2, 3, 4, 5, 6, 7);
  for (; i + 8 <= b; i += 8) {
    __m256 fi = _mm256_cvtepi32_ps(_mm256_add_epi32(_mm256_set1_epi32(i), step));
    __m256 t0 = _mm256_add_ps(vtf, _mm256_mul_ps(fi, vdt));
    __m256 lim = _mm256_mul_ps(_mm256_mul_ps(vk, t0), t0);
    /* ordered compare: a NaN stops the zone, as !(a > b) does */
    int m = _mm256_movemask_ps(_mm256_cmp_ps(_mm256_loadu_ps(tsq + i), lim, _CMP_GT_OQ));
    if (m != 0xFF)
      return (size_t)i + (size_t)__builtin_ctz(~(unsigned)m);
  }
  for (; i < b; i++) {
    float t0 = tf + (float)i * dt;
    if (!(tsq[i] > k * t0 * t0))
      break;
  }
  return (size_t)i;
}

/* Passes 3a and 3b fused for linear interpolation, eight samples at a time: u as
 * in input_index(), then out = a[k] + f (a[k+1] - a[k]) with k = (int)u,
 * f = u - k, and weight 1. When the eight k lie within 8 samples of the first
 * (almost always: NMO compresses time), a[k] and a[k+1] come from two unaligned
 * loads and an in-register permutation; otherwise from AVX2 gathers. */
AVX2_FN static void live_linear_avx2(float *restrict out, float *restrict wt, float *restrict u,
                                     const float *restrict tsq, const float *restrict a,
                                     float tf, float idt, float umax, size_t i0, size_t i1)
{
  int i = (int)i0, n = (int)i1;
  const __m256 vtf = _mm256_set1_ps(tf), vidt = _mm256_set1_ps(idt);
  const __m256 vmax = _mm256_set1_ps(umax), vzero = _mm256_setzero_ps();
  const __m256 one = _mm256_set1_ps(1.0f);
  const __m256i seven = _mm256_set1_epi32(7);
  for (; i + 8 <= n; i += 8) {
    __m256 v = _mm256_mul_ps(_mm256_sub_ps(_mm256_sqrt_ps(_mm256_loadu_ps(tsq + i)), vtf), vidt);
    v = _mm256_max_ps(_mm256_min_ps(v, vmax), vzero);
    _mm256_storeu_ps(u + i, v);
    __m256i k = _mm256_cvttps_epi32(v);
    __m256 f = _mm256_sub_ps(v, _mm256_cvtepi32_ps(k));
    int k0 = _mm_cvtsi128_si32(_mm256_castsi256_si128(k));
    __m256i d = _mm256_sub_epi32(k, _mm256_set1_epi32(k0));
    __m256 lo, hi;
    /* all d in [0, 7] (unsigned min leaves them unchanged) */
    if (_mm256_movemask_epi8(_mm256_cmpeq_epi32(_mm256_min_epu32(d, seven), d)) == -1) {
      lo = _mm256_permutevar8x32_ps(_mm256_loadu_ps(a + k0), d);
      hi = _mm256_permutevar8x32_ps(_mm256_loadu_ps(a + k0 + 1), d);
    } else {
      lo = _mm256_i32gather_ps(a, k, 4);
      hi = _mm256_i32gather_ps(a + 1, k, 4);
    }
    _mm256_storeu_ps(out + i, _mm256_add_ps(lo, _mm256_mul_ps(f, _mm256_sub_ps(hi, lo))));
    if (wt)
      _mm256_storeu_ps(wt + i, one);
  }
  for (; i < n; i++) {
    float x = (sqrtf(tsq[i]) - tf) * idt;
    x = x < umax ? x : umax;
    x = x > 0.0f ? x : 0.0f;
    u[i] = x;
    int k = (int)x;
    float f = x - (float)k;
    out[i] = a[k] + f * (a[k + 1] - a[k]);
    if (wt)
      wt[i] = 1.0f;
  }
}

/* Passes 3a and 3b fused for sinc8, eight output samples at a time. Each output
 * is summed exactly as gather_sinc8() does: products p0..p7, then
 * ((p0 + p4) + (p2 + p6)) + ((p1 + p5) + (p3 + p7)); the eight horizontal sums
 * are done together by 128-bit lane and in-lane shuffles (a transpose), each
 * addition pairing the same two numbers as the 4-wide code. */
AVX2_FN static void live_sinc8_avx2(float *restrict out, float *restrict u,
                                    const float *restrict tsq, const float *restrict a,
                                    const float *restrict tab, float tf, float idt, float umax,
                                    size_t i0, size_t i1)
{
  int i = (int)i0, n = (int)i1;
  const __m256 vtf = _mm256_set1_ps(tf), vidt = _mm256_set1_ps(idt);
  const __m256 vmax = _mm256_set1_ps(umax), vzero = _mm256_setzero_ps();
  const __m256 vnph = _mm256_set1_ps((float)NPHASE), half = _mm256_set1_ps(0.5f);
  const __m256i order = _mm256_setr_epi32(0, 4, 1, 5, 2, 6, 3, 7);
  int kk[8], pp[8];
  for (; i + 8 <= n; i += 8) {
    __m256 v = _mm256_mul_ps(_mm256_sub_ps(_mm256_sqrt_ps(_mm256_loadu_ps(tsq + i)), vtf), vidt);
    v = _mm256_max_ps(_mm256_min_ps(v, vmax), vzero);
    _mm256_storeu_ps(u + i, v);
    __m256i k = _mm256_cvttps_epi32(v);
    __m256 f = _mm256_sub_ps(v, _mm256_cvtepi32_ps(k));
    __m256i ph = _mm256_cvttps_epi32(_mm256_add_ps(_mm256_mul_ps(f, vnph), half));
    _mm256_storeu_si256((__m256i *)kk, _mm256_sub_epi32(k, _mm256_set1_epi32(SINC_HALF - 1)));
    _mm256_storeu_si256((__m256i *)pp, _mm256_slli_epi32(ph, 3));
    __m256 P[8];
    for (int j = 0; j < 8; j++)
      P[j] = _mm256_mul_ps(_mm256_loadu_ps(tab + pp[j]), _mm256_loadu_ps(a + kk[j]));
    /* Q: (p0 + p4, p1 + p5, p2 + p6, p3 + p7) of two outputs per register */
    __m256 Q01 = _mm256_add_ps(_mm256_permute2f128_ps(P[0], P[1], 0x20),
                               _mm256_permute2f128_ps(P[0], P[1], 0x31));
    __m256 Q23 = _mm256_add_ps(_mm256_permute2f128_ps(P[2], P[3], 0x20),
                               _mm256_permute2f128_ps(P[2], P[3], 0x31));
    __m256 Q45 = _mm256_add_ps(_mm256_permute2f128_ps(P[4], P[5], 0x20),
                               _mm256_permute2f128_ps(P[4], P[5], 0x31));
    __m256 Q67 = _mm256_add_ps(_mm256_permute2f128_ps(P[6], P[7], 0x20),
                               _mm256_permute2f128_ps(P[6], P[7], 0x31));
    /* R: (q0 + q2, q1 + q3) of four outputs per register */
    __m256 R0 = _mm256_add_ps(_mm256_shuffle_ps(Q01, Q23, _MM_SHUFFLE(1, 0, 1, 0)),
                              _mm256_shuffle_ps(Q01, Q23, _MM_SHUFFLE(3, 2, 3, 2)));
    __m256 R4 = _mm256_add_ps(_mm256_shuffle_ps(Q45, Q67, _MM_SHUFFLE(1, 0, 1, 0)),
                              _mm256_shuffle_ps(Q45, Q67, _MM_SHUFFLE(3, 2, 3, 2)));
    /* r0 + r1: outputs 0 2 4 6 | 1 3 5 7, then back in order */
    __m256 o = _mm256_add_ps(_mm256_shuffle_ps(R0, R4, _MM_SHUFFLE(2, 0, 2, 0)),
                             _mm256_shuffle_ps(R0, R4, _MM_SHUFFLE(3, 1, 3, 1)));
    _mm256_storeu_ps(out + i, _mm256_permutevar8x32_ps(o, order));
  }
  if (i < n) {
    input_index(u, tsq, tf, idt, umax, (size_t)i, i1);
    gather_sinc8(out, u, a, tab, (size_t)i, i1);
  }
}
#endif

/* Raised-cosine ramp: 0 at r <= 0, 1 at r >= 1. */
static float ramp(double r)
{
  if (r <= 0)
    return 0.0f;
  if (r >= 1)
    return 1.0f;
  double s = sin(M_PI_2 * r);
  return (float)(s * s);
}

/* Copies `in` into the padded buffer, zeroing recorded times before the top mute
 * time tm and tapering over the following taper_s seconds. */
static void load_input(nmo_workspace *ws, const nmo_axis *ax, const float *in, double tm,
                       double taper_s)
{
  float *a = ws->pad + PAD;
  size_t ns = ax->ns, j = 0;
  memset(ws->pad, 0, PAD * sizeof *ws->pad);
  memset(a + ns, 0, PAD * sizeof *a);
  if (tm > -INFINITY) {
    for (; j < ns && ax->t_first_s + (double)j * ax->dt_s < tm; j++)
      a[j] = 0.0f;
    for (; j < ns; j++) {
      double tj = ax->t_first_s + (double)j * ax->dt_s;
      if (taper_s <= 0 || tj >= tm + taper_s)
        break;
      a[j] = in[j] * ramp((tj - tm) / taper_s);
    }
  }
  memcpy(a + j, in + j, (ns - j) * sizeof *a);
}

int nmo_apply(nmo_workspace *ws, const nmo_params *p, const nmo_top_mute *mute,
              const nmo_axis *ax, double offset_m, const float *in, const float *vel_mps,
              const float *eta, float *out, float *weight, nmo_trace_info *info,
              tz_err *err)
{
  int rc = check_args(ws, p, ax, offset_m, err);
  if (rc)
    return rc;
  const size_t ns = ax->ns;
  const double dt = ax->dt_s, tf = ax->t_first_s;
  const float x2 = (float)(offset_m * offset_m);
  const float *e = p->use_eta ? eta : NULL;
  float *tsq = ws->tsq, *u = ws->u;

  double tm = nmo_top_mute_seconds(mute, offset_m);
  double taper_top = mute ? mute->taper_ms * 1e-3 : 0;
  load_input(ws, ax, in, tm, taper_top);

  /* Samples with t0 < 0 have no moveout meaning: muted. */
  size_t i_pos = 0;
  while (i_pos < ns && tf + (double)i_pos * dt < 0)
    i_pos++;
#if NMO_AVX2
  if (ws->avx2 && !e)
    moveout_sq_avx2(tsq, vel_mps, (float)tf, (float)dt, x2, i_pos, ns);
  else
#endif
    moveout_sq(tsq, vel_mps, e, (float)tf, (float)dt, x2, i_pos, ns);

  /* Stretch mute: (t - t0)/t0 > s  <=>  t^2 > (1 + s)^2 t0^2 (t, t0 >= 0). The zone is
   * the top of the trace down to the first sample within the limit (docs/nmo.md). */
  size_t i_s = i_pos;
  if (p->stretch_limit_pct > 0) {
    float k = (float)((1 + p->stretch_limit_pct / 100) * (1 + p->stretch_limit_pct / 100));
#if NMO_AVX2
    if (ws->avx2)
      i_s = stretch_scan_avx2(tsq, (float)tf, (float)dt, k, i_s, ns);
    else
#endif
      while (i_s < ns) {
        float t0 = (float)tf + (float)i_s * (float)dt;
        if (!(tsq[i_s] > k * t0 * t0))
          break;
        i_s++;
      }
  }
  /* Top mute in recorded time: output is muted where its input time is inside the
   * zeroed zone (t < tm, or t = tm when a taper starts there with weight 0). */
  size_t i_t = i_s;
  if (tm > 0) {
    float tm2 = (float)(tm * tm);
    if (taper_top > 0)
      while (i_t < ns && tsq[i_t] <= tm2)
        i_t++;
    else
      while (i_t < ns && tsq[i_t] < tm2)
        i_t++;
  }
  /* Trace end: t beyond the last input sample maps to nothing. */
  double t_last = tf + (double)(ns - 1) * dt;
  size_t i_e = ns;
  if (t_last < 0) {
    i_e = i_t;
  } else {
    float tl2 = (float)(t_last * t_last);
    while (i_e > i_t && tsq[i_e - 1] > tl2)
      i_e--;
  }
  size_t i0 = i_t;   /* i_t <= i_e by construction */

  const float *a = ws->pad + PAD;
  int filled = 0;   /* weights of the live range already written */
#if NMO_AVX2
  if (ws->avx2 && p->interp == NMO_INTERP_LINEAR) {
    live_linear_avx2(out, weight, u, tsq, a, (float)tf, (float)(1.0 / dt), (float)(ns - 1), i0,
                     i_e);
    filled = 1;
  } else if (ws->avx2) {
    live_sinc8_avx2(out, u, tsq, a, sinc_table(ws), (float)tf, (float)(1.0 / dt), (float)(ns - 1), i0,
                    i_e);
  } else
#endif
  {
    input_index(u, tsq, (float)tf, (float)(1.0 / dt), (float)(ns - 1), i0, i_e);
    if (p->interp == NMO_INTERP_SINC8)
      gather_sinc8(out, u, a, sinc_table(ws), i0, i_e);
    else
      gather_linear(out, u, a, i0, i_e);
  }
  memset(out, 0, i0 * sizeof *out);
  memset(out + i_e, 0, (ns - i_e) * sizeof *out);
  if (weight) {
    memset(weight, 0, i0 * sizeof *weight);
    if (!filled)
      fill_one(weight, i0, i_e);
    memset(weight + i_e, 0, (ns - i_e) * sizeof *weight);
  }

  /* Top-mute taper: the data already carry it (tapered input); the weight follows
   * the same ramp at each sample's input time. */
  if (weight && taper_top > 0 && tm > -INFINITY)
    for (size_t i = i0; i < i_e; i++) {
      double t = tf + (double)u[i] * dt;
      if (t >= tm + taper_top)
        break;
      float w = ramp((t - tm) / taper_top);
      weight[i] = w > 0 ? w : 1e-6f;   /* inside the live range: stays live */
    }
  /* Stretch-mute taper: raised cosine over the first n live samples after the edge,
   * weights sin^2(pi/2 (k+1)/(n+1)), k = 0..n-1, so none is 0. */
  if (i_s > i_pos && p->stretch_taper_ms > 0) {
    size_t n = (size_t)(p->stretch_taper_ms * 1e-3 / dt + 0.5);
    for (size_t k = 0; k < n && i_s + k < i_e; k++) {
      size_t i = i_s + k;
      if (i < i0)
        continue;
      float w = ramp((double)(k + 1) / (double)(n + 1));
      out[i] *= w;
      if (weight)
        weight[i] *= w;
    }
  }
  if (info) {   /* zones: [0,i_s) stretch (and t0 < 0), [i_s,i0) top, [i0,i_e) live */
    info->first_live = i0 < i_e ? i0 : ns;
    info->end_live = i0 < i_e ? i_e : ns;
    info->live = i_e - i0;
    info->muted_stretch = i_s;
    info->muted_top = i0 - i_s;
    info->muted_end = ns - i_e;
    info->muted_inner = info->muted_bottom = 0;
  }
  return TZ_OK;
}

/* ---- band mutes (inner cone, bottom) ---- */

void nmo_band_mute(const nmo_workspace *ws, const nmo_axis *ax, double t_from_s,
                   double t_to_s, double taper_s, float *out, float *weight,
                   nmo_trace_info *info)
{
  if (isnan(t_from_s) || isnan(t_to_s) || t_to_s < t_from_s || info->first_live >= info->end_live)
    return;
  const float *u = ws->u;
  const double tf = ax->t_first_s, dt = ax->dt_s;
  size_t lo = info->first_live, hi = info->end_live;
  /* The input time increases along the live range: two boundary scans. */
  size_t ia = lo;
  while (ia < hi && tf + (double)u[ia] * dt < t_from_s)
    ia++;
  size_t ib = ia;
  while (ib < hi && tf + (double)u[ib] * dt <= t_to_s)
    ib++;
  size_t n = ib - ia;   /* samples newly muted: those still live (weight > 0) */
  if (weight) {
    n = 0;
    for (size_t i = ia; i < ib; i++)
      n += weight[i] > 0;
    memset(weight + ia, 0, (ib - ia) * sizeof *weight);
  }
  memset(out + ia, 0, (ib - ia) * sizeof *out);
  if (taper_s > 0) {
    for (size_t i = ia; i > lo; i--) {
      double t = tf + (double)u[i - 1] * dt;
      if (t <= t_from_s - taper_s)
        break;
      float w = ramp((t_from_s - t) / taper_s);
      out[i - 1] *= w;
      if (weight)
        weight[i - 1] *= w;
    }
    if (isfinite(t_to_s))
      for (size_t i = ib; i < hi; i++) {
        double t = tf + (double)u[i] * dt;
        if (t >= t_to_s + taper_s)
          break;
        float w = ramp((t - t_to_s) / taper_s);
        out[i] *= w;
        if (weight)
          weight[i] *= w;
      }
  }
  if (isfinite(t_to_s))
    info->muted_inner += n;
  else
    info->muted_bottom += n;
  info->live -= n;
  if (ia <= lo && ib >= hi) {
    info->first_live = info->end_live = ax->ns;
  } else if (ia <= lo) {
    info->first_live = ib;
  } else if (ib >= hi) {
    info->end_live = ia;
  }
}

/* ---- inverse NMO ---- */

int nmo_inverse(nmo_workspace *ws, const nmo_params *p, const nmo_axis *ax,
                double offset_m, const float *in, const float *vel_mps, const float *eta,
                float *out, tz_err *err)
{
  int rc = check_args(ws, p, ax, offset_m, err);
  if (rc)
    return rc;
  const size_t ns = ax->ns;
  const double dt = ax->dt_s, tf = ax->t_first_s;
  const float *e = p->use_eta ? eta : NULL;
  float *tsq = ws->tsq, *u = ws->u;
  size_t i_pos = 0;
  while (i_pos < ns && tf + (double)i_pos * dt < 0)
    i_pos++;
  moveout_sq(tsq, vel_mps, e, (float)tf, (float)dt, (float)(offset_m * offset_m), i_pos,
             ns);
  float *a = ws->pad + PAD;
  memset(ws->pad, 0, PAD * sizeof *ws->pad);
  memcpy(a, in, ns * sizeof *a);
  memset(a + ns, 0, PAD * sizeof *a);
  /* For each recorded time t_j find the fractional t0 index where t(t0) = t_j by
   * walking the forward map once (it increases with t0), then interpolate there. */
  size_t k = i_pos;
  for (size_t j = 0; j < ns; j++) {
    double tj = tf + (double)j * dt;
    double tj2 = tj * tj;
    if (tj < 0 || k >= ns || tj2 < tsq[i_pos]) {
      u[j] = -1;
      continue;
    }
    while (k + 1 < ns && tsq[k + 1] <= tj2)
      k++;
    if (k + 1 >= ns) {
      u[j] = tsq[k] == tj2 ? (float)k : -1.0f;
      continue;
    }
    double ta = sqrt(tsq[k]), tb = sqrt(tsq[k + 1]);
    u[j] = (float)((double)k + (tb > ta ? (tj - ta) / (tb - ta) : 0));
  }
  for (size_t j = 0; j < ns; j++) {
    if (u[j] < 0) {
      out[j] = 0;
      continue;
    }
    size_t q = (size_t)u[j];
    float f = u[j] - (float)q;
    if (p->interp == NMO_INTERP_SINC8) {
      size_t ph = (size_t)(f * NPHASE + 0.5f);
      const float *c = sinc_table(ws) + ph * 8, *s = a + q - (SINC_HALF - 1);
      float acc = 0;
      for (int m = 0; m < 8; m++)
        acc += c[m] * s[m];
      out[j] = acc;
    } else {
      out[j] = a[q] + f * (a[q + 1] - a[q]);
    }
  }
  return TZ_OK;
}

int nmo_shift(nmo_workspace *ws, const nmo_axis *ax, double shift_s, const float *in,
              float *out, size_t *live_lo, size_t *live_hi, tz_err *err)
{
  size_t ns = ax->ns;
  if (!(ax->dt_s > 0) || ns == 0 || ns > ws->ns_max || !isfinite(shift_s))
    return tz_fail(err, TZ_E_ARG, "static shift: bad axis (dt %g s, %zu samples) or shift %g s",
                   ax->dt_s, ns, shift_s);
  /* output sample j reads input index u = j - d, d = shift / dt = q + f (0 <= f < 1) */
  double d = shift_s / ax->dt_s;
  double fl = floor(d);
  double f = d - fl;            /* u = j - fl - f = (j - fl - 1) + (1 - f) */
  size_t ph = (size_t)((1.0 - f) * NPHASE + 0.5);
  int64_t base = -(int64_t)fl - 1;   /* floor(u) = j + base when f > 0 */
  if (ph == NPHASE) {           /* f = 0 (or within half a table step): whole samples */
    ph = 0;
    base += 1;
  }
  /* live span: u in [0, ns - 1] */
  double lo = ceil(d), hi = floor(d + (double)(ns - 1));
  size_t l0 = lo < 0 ? 0 : lo > (double)ns ? ns : (size_t)lo;
  size_t l1 = hi < 0 ? 0 : hi + 1 > (double)ns ? ns : (size_t)(hi + 1);
  if (l1 < l0)
    l1 = l0;
  const float *c = sinc_table(ws) + ph * 8;
  /* taps q - 3 .. q + 4 with q = j + base; the live span [l0, l1) has u inside
   * the trace, so only taps near its two ends can fall outside: those samples
   * take the bounds-checked sum, the rest the plain one */
  memset(out, 0, ns * sizeof *out);
  int64_t in0 = (SINC_HALF - 1) - base, in1 = (int64_t)ns - SINC_HALF - base;
  for (size_t j = l0; j < l1; j++) {
    int64_t q = (int64_t)j + base;
    float acc = 0;
    if ((int64_t)j >= in0 && (int64_t)j < in1) {
      const float *x = in + q - (SINC_HALF - 1);
      for (int m = 0; m < 8; m++)
        acc += c[m] * x[m];
    } else {
      for (int m = 0; m < 8; m++) {
        int64_t k = q - (SINC_HALF - 1) + m;
        if (k >= 0 && k < (int64_t)ns)
          acc += c[m] * in[k];
      }
    }
    out[j] = acc;
  }
  if (live_lo)
    *live_lo = l0;
  if (live_hi)
    *live_hi = l1;
  return TZ_OK;
}
