/* nmo.c -- exact normal-moveout correction of one trace, with stretch and top mutes.
 *
 * Inverse mapping ("pull", REFERENCE.md §3.1): output sample i sits at zero-offset
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
 * Not here: velocity functions (velocity.c), gathers, files and stacking.
 */
#include "tzero/nmo.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#ifdef __SSE__
#include <xmmintrin.h>
#endif

#if defined(__GNUC__) && !defined(__clang__)
#define NMO_VECTORISE __attribute__((optimize("tree-vectorize")))
#else
#define NMO_VECTORISE
#endif

#define PAD 4               /* zeros on each side of the input copy (sinc8 reach) */
#define NPHASE 2048         /* sinc8 kernel table: fractional positions 0..1 */
#define SINC_HALF 4         /* taps at offsets -3..+4 around floor(u) */
#define KAISER_BETA 5.0     /* window shape; see docs/nmo.md for the error it gives */

struct nmo_workspace {
  size_t ns_max;
  float *pad;               /* ns_max + 2 PAD: input copy, top-muted, zero-padded */
  float *tsq;               /* ns_max: t^2 per output sample */
  float *u;                 /* ns_max: fractional input index per output sample */
  float *sinc;              /* (NPHASE + 1) x 8 kernel weights */
};

void nmo_params_default(nmo_params *p)
{
  p->stretch_limit_pct = 50.0;   /* Sheriff's dictionary: often 50-100 % (REFERENCE.md §3.3) */
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

double nmo_top_mute_time_s(const nmo_top_mute *m, double offset_m)
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
  build_sinc(ws->sinc);
  *out = ws;
  return TZ_OK;
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

  double tm = nmo_top_mute_time_s(mute, offset_m);
  double taper_top = mute ? mute->taper_ms * 1e-3 : 0;
  load_input(ws, ax, in, tm, taper_top);

  /* Samples with t0 < 0 have no moveout meaning: muted. */
  size_t i_pos = 0;
  while (i_pos < ns && tf + (double)i_pos * dt < 0)
    i_pos++;
  moveout_sq(tsq, vel_mps, e, (float)tf, (float)dt, x2, i_pos, ns);

  /* Stretch mute: (t - t0)/t0 > s  <=>  t^2 > (1 + s)^2 t0^2 (t, t0 >= 0). The zone is
   * the top of the trace down to the first sample within the limit (docs/nmo.md). */
  size_t i_s = i_pos;
  if (p->stretch_limit_pct > 0) {
    float k = (float)((1 + p->stretch_limit_pct / 100) * (1 + p->stretch_limit_pct / 100));
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
  input_index(u, tsq, (float)tf, (float)(1.0 / dt), (float)(ns - 1), i0, i_e);
  if (p->interp == NMO_INTERP_SINC8)
    gather_sinc8(out, u, a, ws->sinc, i0, i_e);
  else
    gather_linear(out, u, a, i0, i_e);
  memset(out, 0, i0 * sizeof *out);
  memset(out + i_e, 0, (ns - i_e) * sizeof *out);
  if (weight) {
    memset(weight, 0, i0 * sizeof *weight);
    for (size_t i = i0; i < i_e; i++)
      weight[i] = 1.0f;
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
  }
  return TZ_OK;
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
      const float *c = ws->sinc + ph * 8, *s = a + q - (SINC_HALF - 1);
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
