/* migrate.c -- post-stack time migration: phase shift (Gazdag 1978) and Kirchhoff
 * (Schneider 1978), see migrate.h for the methods and their sources.
 *
 * Grid: the traces sit at CMP numbers cmp_first + k cmp_step; CMPs without a trace are
 * zero traces of the grid, and x = (cmp - cmp_first) / cmp_step * dx with dx the
 * distance between grid positions.
 *
 * Phase shift: the grid, padded in CMPs (against the wrap-around of diffraction tails)
 * and in time, with cosine tapers over the first and last traces, goes through a real
 * FFT over time and a complex FFT over CMPs (FFTW, plans made before the threads
 * start). For each wavenumber (threads deal wavenumbers) the image column is
 *   I(k, tau_j) = sum_w c_w P(w, k) exp(i phi_j(w, k)),
 *   phi_j = phi_{j-1} + dtau sqrt(w^2 - (v_j k / 2)^2),
 * with c_w = 1 at w = 0 and Nyquist, 2 between (the negative frequencies are the
 * complex conjugates), summed in frequency order in double precision. A frequency
 * whose argument turns negative is evanescent and is dropped from then on (the lowest
 * live frequency only rises). Then an inverse FFT over k per tau and the real part.
 * v_j is the Dix interval velocity of the lateral mean of the RMS functions.
 *
 * Kirchhoff: each input trace is filtered by sqrt(-i w) (the 2D half derivative with
 * its 45 degree phase; FFTW's forward transform has exp(-i w t), as NumPy's rfft) and,
 * for anti-aliasing, integrated twice (running sums in double), so a triangle filter
 * of half-width L is [S2(t + L) - 2 S2(t) + S2(t - L)] / L^2 (Lumley, Claerbout & Bevc
 * 1994). Output CMPs are dealt to threads; each output trace sums its input traces in
 * grid order, sample by sample.
 *
 * Not here: reading the velocity table (velocity.c), the front end (cli/migrate.c).
 */
#include "tzero/migrate.h"

#include <fftw3.h>
#include <math.h>
#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

#include "util/fft_size.h"

/* ---------------------------------------------------------------- params */

void migrate_params_init(migrate_params *p)
{
  memset(p, 0, sizeof *p);
  p->method = MIGRATE_PHASE_SHIFT;
  p->velocity_pct = 100;
  p->max_dip_deg = 80;
  p->antialias = 1;
  p->first_cmp = INT32_MIN;
  p->last_cmp = INT32_MAX;
}

const char *migrate_method_name(int method)
{
  return method == MIGRATE_KIRCHHOFF ? "kirchhoff" : "phase-shift";
}

int migrate_method_parse(const char *s)
{
  if (!strcmp(s, "phase-shift"))
    return MIGRATE_PHASE_SHIFT;
  if (!strcmp(s, "kirchhoff"))
    return MIGRATE_KIRCHHOFF;
  return -1;
}

static double now_s(void)
{
  struct timespec ts;
  clock_gettime(CLOCK_MONOTONIC, &ts);
  return (double)ts.tv_sec + ts.tv_nsec * 1e-9;
}

static int thread_count(int want)
{
  long cores = sysconf(_SC_NPROCESSORS_ONLN);
  int T = want > 0 ? want : (cores > 0 ? (int)cores : 1);
  return T > 256 ? 256 : T;
}

/* ---------------------------------------------------------------- the section */

void migrate_section_free(migrate_section *s)
{
  if (!s)
    return;
  free(s->headers);
  free(s->samples);
  free(s);
}

static int cmp_dbl(const void *a, const void *b)
{
  double x = *(const double *)a, y = *(const double *)b;
  return (x > y) - (x < y);
}

static int32_t gcd32(int32_t a, int32_t b)
{
  while (b) {
    int32_t t = a % b;
    a = b;
    b = t;
  }
  return a;
}

/* CMP interval from the CMP X/Y: the median over consecutive traces of distance
 * divided by CMP difference (traces without coordinates are passed over). */
static double interval_from_xy(const migrate_section *s)
{
  double *d = malloc(s->ntraces * sizeof *d);
  size_t n = 0;
  if (!d)
    return 0;
  for (size_t i = 1; i < s->ntraces; i++) {
    const segy_trace_header *a = &s->headers[i - 1], *b = &s->headers[i];
    if ((a->cmp_x == 0 && a->cmp_y == 0) || (b->cmp_x == 0 && b->cmp_y == 0))
      continue;
    double dist = hypot(b->cmp_x - a->cmp_x, b->cmp_y - a->cmp_y);
    d[n++] = dist / (double)(b->cmp - a->cmp);
  }
  double m = 0;
  if (n) {
    qsort(d, n, sizeof *d, cmp_dbl);
    m = n % 2 ? d[n / 2] : 0.5 * (d[n / 2 - 1] + d[n / 2]);
  }
  free(d);
  return m;
}

int migrate_section_load(migrate_section **out, const char *path, double cmp_interval_m,
                         tz_err *err)
{
  segy_file *f = NULL;
  int rc = segy_open(&f, path, NULL, err);
  if (rc)
    return rc;
  const segy_info *in = segy_get_info(f);
  int64_t n = segy_trace_count(f);
  migrate_section *s = calloc(1, sizeof *s);
  if (!s) {
    segy_close(f);
    return tz_fail(err, TZ_E_NOMEM, "section");
  }
  if (n < 2 || n > MIGRATE_MAX_TRACES) {
    rc = tz_fail(err, TZ_E_FORMAT, "%lld traces: a section to migrate has 2 to %d",
                 (long long)n, MIGRATE_MAX_TRACES);
    goto fail;
  }
  s->ntraces = (size_t)n;
  s->ns = in->samples;
  s->interval_us = in->interval_us;
  s->dt_s = in->interval_us * 1e-6;
  s->format_code = in->format_code == 1 ? 1 : 5;
  s->polarity = (int16_t)(in->binary[3257 - 3201] << 8 | in->binary[3258 - 3201]);
  snprintf(s->text, sizeof s->text, "%s", in->text);
  if (!s->ns || !s->interval_us) {
    rc = tz_fail(err, TZ_E_FORMAT, "no sample count or interval");
    goto fail;
  }
  s->headers = malloc(s->ntraces * sizeof *s->headers);
  s->samples = malloc(s->ntraces * s->ns * sizeof *s->samples);
  if (!s->headers || !s->samples) {
    rc = tz_fail(err, TZ_E_NOMEM, "section of %zu x %zu samples", s->ntraces, s->ns);
    goto fail;
  }
  for (size_t i = 0; i < s->ntraces; i++) {
    segy_trace_header *h = &s->headers[i];
    if ((rc = segy_trace_read(f, (int64_t)i, h, s->samples + i * s->ns, s->ns, err)))
      goto fail;
    if (h->samples != s->ns || h->interval_us != s->interval_us) {
      rc = tz_fail_at(err, TZ_E_FORMAT, (int64_t)i, -1, "%u samples of %u us where the "
                      "first trace has %zu of %u us", (unsigned)h->samples,
                      (unsigned)h->interval_us, s->ns, (unsigned)s->interval_us);
      goto fail;
    }
    if (i == 0) {
      s->t0_s = h->delay_ms * 1e-3;
      continue;
    }
    const segy_trace_header *p = &s->headers[i - 1];
    if (h->cmp == p->cmp) {
      rc = tz_fail_at(err, TZ_E_FORMAT, (int64_t)i, 20, "CMP %d again: several traces per "
                      "CMP (a prestack file, not a stacked section)", (int)h->cmp);
      goto fail;
    }
    if (h->cmp < p->cmp) {
      rc = tz_fail_at(err, TZ_E_FORMAT, (int64_t)i, 20, "CMP %d after CMP %d: CMP numbers "
                      "(bytes 21-24) must increase along the section", (int)h->cmp,
                      (int)p->cmp);
      goto fail;
    }
    if (h->delay_ms * 1e-3 != s->t0_s) {
      rc = tz_fail_at(err, TZ_E_FORMAT, (int64_t)i, 108, "delay %d ms where the first trace "
                      "has %g ms", (int)h->delay_ms, s->t0_s * 1e3);
      goto fail;
    }
    int64_t d = (int64_t)h->cmp - p->cmp;
    s->cmp_step = gcd32(s->cmp_step, (int32_t)(d > INT32_MAX ? INT32_MAX : d));
  }
  if (s->t0_s < 0) {
    rc = tz_fail(err, TZ_E_FORMAT, "the section starts at %g ms: migration needs traces that "
                 "start at or after time 0", s->t0_s * 1e3);
    goto fail;
  }
  if ((int64_t)(s->headers[s->ntraces - 1].cmp - s->headers[0].cmp) / s->cmp_step + 1 >
      MIGRATE_MAX_GRID) {
    rc = tz_fail(err, TZ_E_FORMAT, "CMPs %d to %d in steps of %d: more than %d positions",
                 (int)s->headers[0].cmp, (int)s->headers[s->ntraces - 1].cmp,
                 (int)s->cmp_step, MIGRATE_MAX_GRID);
    goto fail;
  }
  if (cmp_interval_m > 0) {
    s->cmp_interval_m = cmp_interval_m;
  } else {
    s->cmp_interval_m = interval_from_xy(s);
    s->interval_from_headers = 1;
    if (!(s->cmp_interval_m > 0)) {
      rc = tz_fail(err, TZ_E_FORMAT, "no CMP coordinates (bytes 181-188) to measure the CMP "
                   "interval: give it with --cmp-interval-m");
      goto fail;
    }
  }
  segy_close(f);
  *out = s;
  return TZ_OK;
fail:
  tz_err_path(err, path);
  segy_close(f);
  migrate_section_free(s);
  return rc;
}

/* ---------------------------------------------------------------- shared set-up */

typedef struct grid {
  size_t nx;            /* grid positions */
  int32_t cmp0, step;
  double dx;            /* metres between grid positions */
  long *trace_at;       /* nx: the section's trace at each position, or -1 */
} grid;

static int make_grid(grid *g, const migrate_section *s, tz_err *err)
{
  g->cmp0 = s->headers[0].cmp;
  g->step = s->cmp_step;
  g->nx = (size_t)((s->headers[s->ntraces - 1].cmp - g->cmp0) / g->step) + 1;
  g->dx = s->cmp_interval_m * g->step;
  g->trace_at = malloc(g->nx * sizeof *g->trace_at);
  if (!g->trace_at)
    return tz_fail(err, TZ_E_NOMEM, "grid of %zu CMPs", g->nx);
  for (size_t k = 0; k < g->nx; k++)
    g->trace_at[k] = -1;
  for (size_t i = 0; i < s->ntraces; i++)
    g->trace_at[(s->headers[i].cmp - g->cmp0) / g->step] = (long)i;
  return TZ_OK;
}

/* RMS velocities at every grid position and sample (scaled), and how much they vary
 * across the line. */
static int sample_velocities(const migrate_section *s, const grid *g, const velocity_table *v,
                             double pct, float **vel, migrate_info *info, tz_err *err)
{
  size_t nc = velocity_table_ncmps(v);
  if (!nc)
    return tz_fail(err, TZ_E_FORMAT, "the velocity table has no control CMP");
  int64_t lo = INT64_MAX, hi = INT64_MIN;
  int inside = 0;
  int64_t first = g->cmp0, last = g->cmp0 + (int64_t)(g->nx - 1) * g->step;
  for (size_t i = 0; i < nc; i++) {
    int64_t c = velocity_table_cmp(v, i);
    lo = c < lo ? c : lo;
    hi = c > hi ? c : hi;
    inside |= c >= first && c <= last;
  }
  info->velocity_cmp_min = lo;
  info->velocity_cmp_max = hi;
  if (!inside && nc > 1 && (hi < first || lo > last))
    return tz_fail(err, TZ_E_FORMAT, "the velocity table's control CMPs %lld-%lld do not "
                   "cover the section's CMPs %lld-%lld (another line's table?)",
                   (long long)lo, (long long)hi, (long long)first, (long long)last);
  if (!inside && nc == 1 && (lo < first - (last - first) || lo > last + (last - first)))
    return tz_fail(err, TZ_E_FORMAT, "the velocity table's only control CMP %lld is far "
                   "outside the section's CMPs %lld-%lld (another line's table?)",
                   (long long)lo, (long long)first, (long long)last);
  float *w = malloc(g->nx * s->ns * sizeof *w);
  if (!w)
    return tz_fail(err, TZ_E_NOMEM, "velocities of %zu CMPs", g->nx);
  for (size_t k = 0; k < g->nx; k++) {
    float *row = w + k * s->ns;
    velocity_sample(v, g->cmp0 + (int64_t)k * g->step, s->t0_s, s->dt_s, s->ns, row, NULL);
    for (size_t j = 0; j < s->ns; j++)
      row[j] = (float)(row[j] * pct / 100.0);
  }
  double worst = 0;
  for (size_t j = 0; j < s->ns; j++) {
    double mn = INFINITY, mx = 0, sum = 0;
    for (size_t k = 0; k < g->nx; k++) {
      double x = w[k * s->ns + j];
      mn = x < mn ? x : mn;
      mx = x > mx ? x : mx;
      sum += x;
    }
    double var = (mx - mn) / (sum / (double)g->nx);
    worst = var > worst ? var : worst;
  }
  info->lateral_variation_pct = 100 * worst;
  *vel = w;
  return TZ_OK;
}

/* ---------------------------------------------------------------- phase shift */

typedef struct ps_shared {
  size_t nkx, nw, ns;
  double dt, dk, dw;
  const float *Pr, *Pi;       /* nkx x nw, times c_w (1 at w = 0 and Nyquist, 2 between) */
  fftwf_complex *image;       /* nkx x ns */
  const double *q_v;          /* ns: (v_j / 2)^2, interval velocities */
  const float *w2;            /* nw: w^2 */
  double t0;
  int T;
  int avx2;                   /* 1 = the AVX2 kernels (same bits as the portable ones) */
} ps_shared;

typedef struct ps_worker {
  ps_shared *sh;
  int t;
  float *er, *ei;             /* nw: the phasors exp(i phi) */
} ps_worker;

static double wavenumber(size_t k, size_t n, double dk)
{
  return (k <= n / 2 ? (double)k : (double)k - (double)n) * dk;
}

/* sin and cos of x in [0, pi] without branches: y = x - pi/2 in [-pi/2, pi/2], where
 * sin x = cos y and cos x = -sin y, by Taylor series to y^12 and y^11 (truncation error
 * below 5e-8, under float's resolution). */
static inline void sincos_0pi(float x, float *sn, float *cs)
{
  float y = x - 1.57079632679489662f, y2 = y * y;
  float c = 1 + y2 * (-1.f / 2 + y2 * (1.f / 24 + y2 * (-1.f / 720 + y2 * (1.f / 40320 +
            y2 * (-1.f / 3628800 + y2 * (1.f / 479001600))))));
  float s = y * (1 + y2 * (-1.f / 6 + y2 * (1.f / 120 + y2 * (-1.f / 5040 + y2 * (1.f / 362880 +
            y2 * (-1.f / 39916800))))));
  *sn = c;
  *cs = -s;
}

#define PS_LANES 8            /* partial sums per image sample: a fixed order for any T */

/* One step down for frequencies lo..nw-1: the phasor turns by dtau sqrt(w^2 - q),
 * an angle in [0, pi]. */
static void ps_step(float *er, float *ei, const float *w2, size_t lo, size_t nw, float q,
                    float dtau)
{
  for (size_t i = lo; i < nw; i++) {
    float sn, cs, a = sqrtf(w2[i] - q) * dtau;
    sincos_0pi(a, &sn, &cs);
    float r = er[i] * cs - ei[i] * sn, m = er[i] * sn + ei[i] * cs;
    er[i] = r;
    ei[i] = m;
  }
}

/* The image sample: sum over frequencies lo..nw-1 of P exp(i phi), in PS_LANES partial
 * sums (lane l takes frequencies lo + l, lo + l + 8, ...), then the remainder. */
static void ps_sum(const float *Pr, const float *Pi, const float *er, const float *ei,
                   size_t lo, size_t nw, double *re_out, double *im_out)
{
  float ar[PS_LANES] = { 0 }, ai[PS_LANES] = { 0 };
  size_t i = lo;
  for (; i + PS_LANES <= nw; i += PS_LANES)
    for (size_t l = 0; l < PS_LANES; l++) {
      ar[l] += Pr[i + l] * er[i + l] - Pi[i + l] * ei[i + l];
      ai[l] += Pr[i + l] * ei[i + l] + Pi[i + l] * er[i + l];
    }
  double re = 0, im = 0;
  for (size_t l = 0; l < PS_LANES; l++) {
    re += ar[l];
    im += ai[l];
  }
  for (; i < nw; i++) {
    re += Pr[i] * er[i] - Pi[i] * ei[i];
    im += Pr[i] * ei[i] + Pi[i] * er[i];
  }
  *re_out = re;
  *im_out = im;
}

#if defined(__x86_64__) && defined(__GNUC__)
#include <immintrin.h>
#define MIG_AVX2 1
#define AVX2_FN __attribute__((target("avx2")))
/* The same operations as ps_step and ps_sum, eight frequencies at a time: sqrt is
 * correctly rounded and there is no fused multiply-add, so the bits are the same. */
AVX2_FN static void ps_step_avx2(float *er, float *ei, const float *w2, size_t lo, size_t nw,
                                 float q, float dtau)
{
  const __m256 vq = _mm256_set1_ps(q), vdt = _mm256_set1_ps(dtau),
               half_pi = _mm256_set1_ps(1.57079632679489662f), one = _mm256_set1_ps(1);
  size_t i = lo;
  for (; i + 8 <= nw; i += 8) {
    __m256 a = _mm256_mul_ps(_mm256_sqrt_ps(_mm256_sub_ps(_mm256_loadu_ps(w2 + i), vq)), vdt);
    __m256 y = _mm256_sub_ps(a, half_pi), y2 = _mm256_mul_ps(y, y);
    __m256 c = _mm256_set1_ps(1.f / 479001600);
    c = _mm256_add_ps(_mm256_set1_ps(-1.f / 3628800), _mm256_mul_ps(y2, c));
    c = _mm256_add_ps(_mm256_set1_ps(1.f / 40320), _mm256_mul_ps(y2, c));
    c = _mm256_add_ps(_mm256_set1_ps(-1.f / 720), _mm256_mul_ps(y2, c));
    c = _mm256_add_ps(_mm256_set1_ps(1.f / 24), _mm256_mul_ps(y2, c));
    c = _mm256_add_ps(_mm256_set1_ps(-1.f / 2), _mm256_mul_ps(y2, c));
    c = _mm256_add_ps(one, _mm256_mul_ps(y2, c));
    __m256 t = _mm256_set1_ps(-1.f / 39916800);
    t = _mm256_add_ps(_mm256_set1_ps(1.f / 362880), _mm256_mul_ps(y2, t));
    t = _mm256_add_ps(_mm256_set1_ps(-1.f / 5040), _mm256_mul_ps(y2, t));
    t = _mm256_add_ps(_mm256_set1_ps(1.f / 120), _mm256_mul_ps(y2, t));
    t = _mm256_add_ps(_mm256_set1_ps(-1.f / 6), _mm256_mul_ps(y2, t));
    t = _mm256_add_ps(one, _mm256_mul_ps(y2, t));
    __m256 sn = c, cs = _mm256_sub_ps(_mm256_setzero_ps(), _mm256_mul_ps(y, t));
    __m256 r0 = _mm256_loadu_ps(er + i), m0 = _mm256_loadu_ps(ei + i);
    _mm256_storeu_ps(er + i, _mm256_sub_ps(_mm256_mul_ps(r0, cs), _mm256_mul_ps(m0, sn)));
    _mm256_storeu_ps(ei + i, _mm256_add_ps(_mm256_mul_ps(r0, sn), _mm256_mul_ps(m0, cs)));
  }
  ps_step(er, ei, w2, i, nw, q, dtau);
}

AVX2_FN static void ps_sum_avx2(const float *Pr, const float *Pi, const float *er,
                                const float *ei, size_t lo, size_t nw, double *re_out,
                                double *im_out)
{
  __m256 ar = _mm256_setzero_ps(), ai = _mm256_setzero_ps();
  size_t i = lo;
  for (; i + PS_LANES <= nw; i += PS_LANES) {
    __m256 pr = _mm256_loadu_ps(Pr + i), pi = _mm256_loadu_ps(Pi + i);
    __m256 r = _mm256_loadu_ps(er + i), m = _mm256_loadu_ps(ei + i);
    ar = _mm256_add_ps(ar, _mm256_sub_ps(_mm256_mul_ps(pr, r), _mm256_mul_ps(pi, m)));
    ai = _mm256_add_ps(ai, _mm256_add_ps(_mm256_mul_ps(pr, m), _mm256_mul_ps(pi, r)));
  }
  float lr[PS_LANES], li[PS_LANES];
  _mm256_storeu_ps(lr, ar);
  _mm256_storeu_ps(li, ai);
  double re = 0, im = 0;
  for (size_t l = 0; l < PS_LANES; l++) {
    re += lr[l];
    im += li[l];
  }
  for (; i < nw; i++) {
    re += Pr[i] * er[i] - Pi[i] * ei[i];
    im += Pr[i] * ei[i] + Pi[i] * er[i];
  }
  *re_out = re;
  *im_out = im;
}
#else
#define MIG_AVX2 0
#endif

static void *ps_thread(void *arg)
{
  ps_worker *w = arg;
  ps_shared *sh = w->sh;
  const float dtau = (float)sh->dt;
#if MIG_AVX2
  int avx2 = sh->avx2;
#endif
  for (size_t k = (size_t)w->t; k < sh->nkx; k += (size_t)sh->T) {
    double kx = wavenumber(k, sh->nkx, sh->dk), kx2 = kx * kx;
    const float *Pr = sh->Pr + k * sh->nw, *Pi = sh->Pi + k * sh->nw;
    fftwf_complex *img = sh->image + k * sh->ns;
    size_t lo = 0;           /* lowest live frequency index (only rises) */
    for (size_t i = 0; i < sh->nw; i++) {
      /* above the first sample: the velocity of the first interval, and the data's
       * time origin t0 (exp(-i w t0) shifts the FFT's origin to absolute time) */
      double om = (double)i * sh->dw, d = om * om - sh->q_v[0] * kx2;
      double ph = d > 0 ? sh->t0 * (sqrt(d) - om) : 0, sn, cs;
      sincos(ph, &sn, &cs);
      w->er[i] = (float)cs;
      w->ei[i] = (float)sn;
      if (d <= 0 && i == lo)
        lo = i + 1;
    }
    for (size_t j = 0; j < sh->ns; j++) {
      if (j > 0) {
        float q = (float)(sh->q_v[j] * kx2);
        while (lo < sh->nw && sh->w2[lo] <= q)
          lo++;
#if MIG_AVX2
        if (avx2)
          ps_step_avx2(w->er, w->ei, sh->w2, lo, sh->nw, q, dtau);
        else
#endif
          ps_step(w->er, w->ei, sh->w2, lo, sh->nw, q, dtau);
      }
      double re, im;
#if MIG_AVX2
      if (avx2)
        ps_sum_avx2(Pr, Pi, w->er, w->ei, lo, sh->nw, &re, &im);
      else
#endif
        ps_sum(Pr, Pi, w->er, w->ei, lo, sh->nw, &re, &im);
      img[j][0] = (float)re;
      img[j][1] = (float)im;
    }
  }
  return NULL;
}

/* Dix interval velocities of the lateral mean RMS function, as (v / 2)^2 per sample. */
static int interval_q(const migrate_section *s, const grid *g, const float *vel, double **out,
                      migrate_info *info, tz_err *err)
{
  double *q = malloc(s->ns * sizeof *q);
  if (!q)
    return tz_fail(err, TZ_E_NOMEM, "interval velocities");
  double prev_t = 0, prev_v2t = 0, vint = 0;
  for (size_t j = 0; j < s->ns; j++) {
    double sum = 0;
    for (size_t k = 0; k < g->nx; k++)
      sum += vel[k * s->ns + j];
    double vr = sum / (double)g->nx, t = s->t0_s + (double)j * s->dt_s;
    double v2t = vr * vr * t;
    if (j == 0 || t <= prev_t) {
      vint = vr;
    } else {
      double vi2 = (v2t - prev_v2t) / (t - prev_t);   /* Dix 1955 */
      if (vi2 > 0)
        vint = sqrt(vi2);
      else
        info->imaginary_intervals++;                  /* hold the velocity above */
    }
    prev_t = t;
    prev_v2t = v2t;
    q[j] = 0.25 * vint * vint;
  }
  *out = q;
  return TZ_OK;
}

static int phase_shift(const migrate_section *s, const grid *g, const float *vel,
                       const migrate_params *p, float *img_out, migrate_info *info, tz_err *err)
{
  /* twice the CMPs and samples: diffraction tails and the upward shift of late
   * energy do not wrap around into the image (with 1.5 times, a NumPy phase shift
   * padded twice differed by 0.2 % in correlation) */
  size_t nkx = tz_fft_size(2 * g->nx), nt = tz_fft_size(2 * s->ns);
  size_t nw_all = nt / 2 + 1;
  info->padded_cmps = nkx;
  info->padded_samples = nt;
  if ((double)nkx * (double)nt > MIGRATE_MAX_CELLS)
    return tz_fail(err, TZ_E_FORMAT, "%zu x %zu padded samples: beyond the %u a phase-shift "
                   "migration may use (migrate in parts of the line)", nkx, nt,
                   MIGRATE_MAX_CELLS);
  double dw = 2 * M_PI / (nt * s->dt_s);
  size_t nw = nw_all;
  if (p->max_hz > 0) {
    size_t m = (size_t)floor(p->max_hz * nt * s->dt_s) + 1;
    nw = m < nw_all ? m : nw_all;
  }
  float *R = fftwf_alloc_real(nkx * nt);
  fftwf_complex *C = fftwf_alloc_complex(nkx * nw_all);
  float *Pr = fftwf_alloc_real(nkx * nw), *Pi = fftwf_alloc_real(nkx * nw);
  float *w2 = malloc(nw * sizeof *w2);
  fftwf_complex *I = fftwf_alloc_complex(nkx * s->ns);
  double *q = NULL, *cw = malloc(nw * sizeof *cw);
  ps_worker *wk = NULL;
  pthread_t *th = NULL;
  int rc = TZ_OK;
  if (!R || !C || !Pr || !Pi || !I || !cw || !w2) {
    rc = tz_fail(err, TZ_E_NOMEM, "phase shift of %zu x %zu samples", nkx, nt);
    goto done;
  }
  if ((rc = interval_q(s, g, vel, &q, info, err)))
    goto done;
  info->one_function = 1;
  /* the grid, tapered at the line ends, zero-padded */
  memset(R, 0, nkx * nt * sizeof *R);
  size_t ntaper = g->nx / 10 < 20 ? g->nx / 10 : 20;
  for (size_t k = 0; k < g->nx; k++) {
    long tr = g->trace_at[k];
    if (tr < 0)
      continue;
    double wt = 1;
    size_t e = k < g->nx - 1 - k ? k : g->nx - 1 - k;
    if (e < ntaper)
      wt = 0.5 - 0.5 * cos(M_PI * (e + 0.5) / ntaper);
    const float *src = s->samples + (size_t)tr * s->ns;
    for (size_t j = 0; j < s->ns; j++)
      R[k * nt + j] = (float)(src[j] * wt);
  }
  fftwf_plan ft = fftwf_plan_many_dft_r2c(1, (int[]){ (int)nt }, (int)nkx, R, NULL, 1, (int)nt,
                                          C, NULL, 1, (int)nw_all, FFTW_ESTIMATE);
  fftwf_plan fx = fftwf_plan_many_dft(1, (int[]){ (int)nkx }, (int)nw_all, C, NULL, (int)nw_all,
                                      1, C, NULL, (int)nw_all, 1, FFTW_FORWARD, FFTW_ESTIMATE);
  fftwf_plan ix = fftwf_plan_many_dft(1, (int[]){ (int)nkx }, (int)s->ns, I, NULL, (int)s->ns,
                                      1, I, NULL, (int)s->ns, 1, FFTW_BACKWARD, FFTW_ESTIMATE);
  if (!ft || !fx || !ix) {
    rc = tz_fail(err, TZ_E_FFT, "FFTW could not plan %zu x %zu transforms", nkx, nt);
    if (ft) fftwf_destroy_plan(ft);
    if (fx) fftwf_destroy_plan(fx);
    if (ix) fftwf_destroy_plan(ix);
    goto done;
  }
  fftwf_execute(ft);
  fftwf_execute(fx);
  for (size_t i = 0; i < nw; i++) {
    cw[i] = i == 0 || (nt % 2 == 0 && i == nt / 2) ? 1.0 : 2.0;
    w2[i] = (float)((double)i * dw * ((double)i * dw));
  }
  for (size_t k = 0; k < nkx; k++)
    for (size_t i = 0; i < nw; i++) {
      Pr[k * nw + i] = (float)(cw[i] * C[k * nw_all + i][0]);
      Pi[k * nw + i] = (float)(cw[i] * C[k * nw_all + i][1]);
    }
  ps_shared sh = { .nkx = nkx, .nw = nw, .ns = s->ns, .dt = s->dt_s,
                   .dk = 2 * M_PI / (nkx * g->dx), .dw = dw, .Pr = Pr, .Pi = Pi, .image = I,
                   .q_v = q, .w2 = w2, .t0 = s->t0_s, .T = thread_count(p->threads) };
#if MIG_AVX2
  sh.avx2 = p->simd >= 0 && __builtin_cpu_supports("avx2");
#endif
  if ((size_t)sh.T > nkx)
    sh.T = (int)nkx;
  wk = calloc((size_t)sh.T, sizeof *wk);
  th = calloc((size_t)sh.T, sizeof *th);
  if (!wk || !th) {
    rc = tz_fail(err, TZ_E_NOMEM, "threads");
  } else {
    int started = 0;
    for (int t = 0; t < sh.T && !rc; t++) {
      wk[t].sh = &sh;
      wk[t].t = t;
      wk[t].er = malloc(nw * sizeof *wk[t].er);
      wk[t].ei = malloc(nw * sizeof *wk[t].ei);
      if (!wk[t].er || !wk[t].ei)
        rc = tz_fail(err, TZ_E_NOMEM, "phase buffers");
    }
    /* thread 0 is this one; a thread that cannot start leaves its wavenumbers to
     * this one, which then also runs that worker (same results, fixed per k) */
    for (int t = 1; t < sh.T && !rc; t++, started++)
      if (pthread_create(&th[t], NULL, ps_thread, &wk[t]))
        break;
    if (!rc) {
      ps_thread(&wk[0]);
      for (int t = started + 1; t < sh.T; t++)
        ps_thread(&wk[t]);
    }
    for (int t = 1; t <= started; t++)
      pthread_join(th[t], NULL);
  }
  if (!rc) {
    fftwf_execute(ix);
    double norm = 1.0 / ((double)nt * (double)nkx);
    for (size_t k = 0; k < g->nx; k++)
      for (size_t j = 0; j < s->ns; j++)
        img_out[k * s->ns + j] = (float)(I[k * s->ns + j][0] * norm);
  }
  fftwf_destroy_plan(ft);
  fftwf_destroy_plan(fx);
  fftwf_destroy_plan(ix);
done:
  if (wk)
    for (int t = 0; t < thread_count(p->threads) && t < (int)nkx; t++) {
      free(wk[t].er);
      free(wk[t].ei);
    }
  free(wk);
  free(th);
  free(q);
  free(cw);
  free(w2);
  fftwf_free(Pr);
  fftwf_free(Pi);
  fftwf_free(R);
  fftwf_free(C);
  fftwf_free(I);
  return rc;
}

/* ---------------------------------------------------------------- Kirchhoff */

typedef struct kh_shared {
  const migrate_section *s;
  const grid *g;
  const float *vel;           /* nx x ns RMS velocities */
  const float *filt;          /* nx x ns half-derivative filtered grid traces */
  const double *s2;           /* nx x (ns + 2): twice-integrated filtered traces */
  const migrate_params *p;
  const long *outs;           /* grid positions of the output traces */
  size_t nout;
  float *out;                 /* nout x ns */
  double tan_dip;
  int T;
} kh_shared;

typedef struct kh_worker {
  kh_shared *sh;
  int t;
} kh_worker;

/* Linear interpolation of a trace at fractional sample u (0 <= u <= n - 1). */
static inline double lerp_f(const float *a, double u)
{
  size_t i = (size_t)u;
  double f = u - (double)i;
  return a[i] + f * (a[i + 1] - a[i]);
}

static inline double lerp_d(const double *a, double u)
{
  size_t i = (size_t)u;
  double f = u - (double)i;
  return a[i] + f * (a[i + 1] - a[i]);
}

static void *kh_thread(void *arg)
{
  kh_worker *w = arg;
  kh_shared *sh = w->sh;
  const migrate_section *s = sh->s;
  const grid *g = sh->g;
  size_t ns = s->ns;
  double dt = s->dt_s, dx = g->dx, amp = dx * sqrt(2 / M_PI);
  double aperture = sh->p->aperture_m > 0 ? sh->p->aperture_m : INFINITY;
  for (size_t o = (size_t)w->t; o < sh->nout; o += (size_t)sh->T) {
    long xo = sh->outs[o];
    float *dst = sh->out + o * ns;
    const float *vo = sh->vel + (size_t)xo * ns;
    for (size_t j = 0; j < ns; j++)
      dst[j] = 0;
    for (size_t k = 0; k < g->nx; k++) {
      if (g->trace_at[k] < 0)
        continue;
      double h = fabs((double)((long)k - xo)) * dx;
      if (h > aperture)
        continue;
      const float *f = sh->filt + k * ns;
      const double *s2 = sh->s2 + k * (ns + 2);
      double ap_taper = 1;
      if (isfinite(aperture) && h > 0.9 * aperture)
        ap_taper = 0.5 + 0.5 * cos(M_PI * (h - 0.9 * aperture) / (0.1 * aperture));
      for (size_t j = 0; j < ns; j++) {
        double tau = s->t0_s + (double)j * dt;
        if (tau <= 0)
          continue;
        double v = vo[j];
        /* dip limit: h = (v tau / 2) tan(theta) for the steepest dip */
        double hmax = 0.5 * v * tau * sh->tan_dip;
        if (h > hmax)
          continue;
        double dip_taper = h > 0.9 * hmax ? 0.5 + 0.5 * cos(M_PI * (h - 0.9 * hmax) / (0.1 * hmax))
                                          : 1;
        double t = sqrt(tau * tau + 4 * h * h / (v * v));
        double u = (t - s->t0_s) / dt;
        if (u >= (double)(ns - 1))
          continue;
        double wgt = amp / v * (tau / t) / sqrt(t) * ap_taper * dip_taper;
        double val;
        double L = sh->p->antialias ? dx * 4 * h / (v * v * t) / dt : 0;   /* samples */
        if (L > 1 && u - L >= 0 && u + L + 1 < (double)(ns + 1)) {
          /* triangle of half-width L centred on u: second difference of the double
           * running sum S2 (s2[i + 1] = S2[i], s2[0] = 0 before the trace):
           * S2[u + L - 1] - 2 S2[u - 1] + S2[u - L - 1] sums boxes of length L whose
           * centres average to u */
          val = (lerp_d(s2, u + L) - 2 * lerp_d(s2, u) + lerp_d(s2, u - L)) / (L * L);
        } else {
          val = lerp_f(f, u);
        }
        dst[j] += (float)(wgt * val);
      }
    }
  }
  return NULL;
}

/* The half-derivative sqrt(-i w) (2D) of every grid trace, low-passed at max_hz. */
static int half_derivative(const migrate_section *s, const grid *g, double max_hz, float *filt,
                           tz_err *err)
{
  size_t nt = tz_fft_size(2 * s->ns);
  size_t nw = nt / 2 + 1;
  float *x = fftwf_alloc_real(nt);
  fftwf_complex *X = fftwf_alloc_complex(nw);
  if (!x || !X) {
    fftwf_free(x);
    fftwf_free(X);
    return tz_fail(err, TZ_E_NOMEM, "filter buffers");
  }
  fftwf_plan fw = fftwf_plan_dft_r2c_1d((int)nt, x, X, FFTW_ESTIMATE);
  fftwf_plan bw = fftwf_plan_dft_c2r_1d((int)nt, X, x, FFTW_ESTIMATE);
  if (!fw || !bw) {
    if (fw) fftwf_destroy_plan(fw);
    if (bw) fftwf_destroy_plan(bw);
    fftwf_free(x);
    fftwf_free(X);
    return tz_fail(err, TZ_E_FFT, "FFTW could not plan a %zu-sample transform", nt);
  }
  double dw = 2 * M_PI / (nt * s->dt_s), c45 = cos(M_PI / 4);
  for (size_t k = 0; k < g->nx; k++) {
    float *dst = filt + k * s->ns;
    long tr = g->trace_at[k];
    if (tr < 0) {
      memset(dst, 0, s->ns * sizeof *dst);
      continue;
    }
    memset(x, 0, nt * sizeof *x);
    memcpy(x, s->samples + (size_t)tr * s->ns, s->ns * sizeof *x);
    fftwf_execute(fw);
    for (size_t i = 0; i < nw; i++) {
      double om = (double)i * dw, a = sqrt(om) / (double)nt;
      if (max_hz > 0 && om > 2 * M_PI * max_hz)
        a = 0;
      /* sqrt(-i w) = sqrt(w) (cos 45 - i sin 45) for w > 0 */
      double re = X[i][0], im = X[i][1];
      X[i][0] = (float)(a * c45 * (re + im));
      X[i][1] = (float)(a * c45 * (im - re));
    }
    fftwf_execute(bw);
    memcpy(dst, x, s->ns * sizeof *dst);
  }
  fftwf_destroy_plan(fw);
  fftwf_destroy_plan(bw);
  fftwf_free(x);
  fftwf_free(X);
  return TZ_OK;
}

static int kirchhoff(const migrate_section *s, const grid *g, const float *vel,
                     const migrate_params *p, const long *outs, size_t nout, float *out,
                     tz_err *err)
{
  float *filt = malloc(g->nx * s->ns * sizeof *filt);
  double *s2 = p->antialias ? malloc(g->nx * (s->ns + 2) * sizeof *s2) : NULL;
  kh_worker *wk = NULL;
  pthread_t *th = NULL;
  int rc = TZ_OK;
  if (!filt || (p->antialias && !s2)) {
    rc = tz_fail(err, TZ_E_NOMEM, "Kirchhoff buffers for %zu CMPs", g->nx);
    goto done;
  }
  if ((rc = half_derivative(s, g, p->max_hz, filt, err)))
    goto done;
  if (s2) {
    for (size_t k = 0; k < g->nx; k++) {
      const float *f = filt + k * s->ns;
      double *d = s2 + k * (s->ns + 2), s1 = 0, acc = 0;
      d[0] = 0;
      for (size_t j = 0; j < s->ns; j++) {
        s1 += f[j];
        acc += s1;
        d[j + 1] = acc;
      }
      d[s->ns + 1] = acc + s1;
    }
  }
  kh_shared sh = { .s = s, .g = g, .vel = vel, .filt = filt, .s2 = s2, .p = p, .outs = outs,
                   .nout = nout, .out = out, .T = thread_count(p->threads),
                   .tan_dip = tan(p->max_dip_deg * M_PI / 180) };
  if ((size_t)sh.T > nout)
    sh.T = (int)nout;
  wk = calloc((size_t)sh.T, sizeof *wk);
  th = calloc((size_t)sh.T, sizeof *th);
  if (!wk || !th) {
    rc = tz_fail(err, TZ_E_NOMEM, "threads");
    goto done;
  }
  int started = 0;
  for (int t = 0; t < sh.T; t++) {
    wk[t].sh = &sh;
    wk[t].t = t;
  }
  for (int t = 1; t < sh.T; t++, started++)
    if (pthread_create(&th[t], NULL, kh_thread, &wk[t]))
      break;
  kh_thread(&wk[0]);
  for (int t = started + 1; t < sh.T; t++)
    kh_thread(&wk[t]);
  for (int t = 1; t <= started; t++)
    pthread_join(th[t], NULL);
done:
  free(wk);
  free(th);
  free(filt);
  free(s2);
  return rc;
}

/* ---------------------------------------------------------------- the run */

int migrate_run(const migrate_section *s, const velocity_table *v, const migrate_params *p,
                float **out, size_t *nout, migrate_info *info, tz_err *err)
{
  double t_start = now_s();
  memset(info, 0, sizeof *info);
  if (!(p->velocity_pct >= MIGRATE_MIN_PCT && p->velocity_pct <= MIGRATE_MAX_PCT))
    return tz_fail(err, TZ_E_FORMAT, "velocity percentage %g: give %g to %g", p->velocity_pct,
                   MIGRATE_MIN_PCT, MIGRATE_MAX_PCT);
  if (p->method == MIGRATE_KIRCHHOFF) {
    if (!(p->max_dip_deg > 0 && p->max_dip_deg < 90))
      return tz_fail(err, TZ_E_FORMAT, "dip limit %g degrees: give more than 0 and less than 90",
                     p->max_dip_deg);
    if (p->aperture_m < 0 || (p->aperture_m > 0 && p->aperture_m < s->cmp_interval_m * s->cmp_step))
      return tz_fail(err, TZ_E_FORMAT, "aperture %g m is smaller than the CMP spacing %g m",
                     p->aperture_m, s->cmp_interval_m * s->cmp_step);
  }
  if (p->max_hz < 0)
    return tz_fail(err, TZ_E_ARG, "--max-hz %g: give 0 (Nyquist) or a frequency", p->max_hz);
  grid g = { 0 };
  float *vel = NULL, *img = NULL, *res = NULL;
  long *outs = NULL;
  int rc = make_grid(&g, s, err);
  if (!rc)
    rc = sample_velocities(s, &g, v, p->velocity_pct, &vel, info, err);
  size_t n = 0;
  if (!rc) {
    outs = malloc(s->ntraces * sizeof *outs);
    if (!outs)
      rc = tz_fail(err, TZ_E_NOMEM, "output list");
    for (size_t i = 0; !rc && i < s->ntraces; i++)
      if (s->headers[i].cmp >= p->first_cmp && s->headers[i].cmp <= p->last_cmp)
        outs[n++] = (s->headers[i].cmp - g.cmp0) / g.step;
    if (!rc && !n)
      rc = tz_fail(err, TZ_E_ARG, "no trace of the section in CMPs %d-%d", (int)p->first_cmp,
                   (int)p->last_cmp);
  }
  if (!rc && !(res = malloc(n * s->ns * sizeof *res)))
    rc = tz_fail(err, TZ_E_NOMEM, "%zu migrated traces", n);
  if (!rc && p->method == MIGRATE_PHASE_SHIFT) {
    if (!(img = malloc(g.nx * s->ns * sizeof *img)))
      rc = tz_fail(err, TZ_E_NOMEM, "image of %zu CMPs", g.nx);
    if (!rc)
      rc = phase_shift(s, &g, vel, p, img, info, err);
    for (size_t i = 0; !rc && i < n; i++)
      memcpy(res + i * s->ns, img + (size_t)outs[i] * s->ns, s->ns * sizeof *res);
  } else if (!rc) {
    info->padded_cmps = g.nx;
    info->padded_samples = s->ns;
    rc = kirchhoff(s, &g, vel, p, outs, n, res, err);
  }
  free(g.trace_at);
  free(vel);
  free(img);
  free(outs);
  if (rc) {
    free(res);
    return rc;
  }
  *out = res;
  *nout = n;
  info->seconds = now_s() - t_start;
  return TZ_OK;
}

/* ---------------------------------------------------------------- writing */

void migrate_describe(const migrate_section *s, const migrate_params *p, const char *velocity,
                      const char *input, const double *scan_pct, size_t nscan, char *buf,
                      size_t cap)
{
  char pl[400] = "";
  if (nscan) {
    size_t m = (size_t)snprintf(pl, sizeof pl, "scan panels at");
    for (size_t i = 0; i < nscan && m < sizeof pl; i++)
      m += (size_t)snprintf(pl + m, sizeof pl - m, " %g%%", scan_pct[i]);
    if (m < sizeof pl)
      snprintf(pl + m, sizeof pl - m, " (pct x 100 in bytes 233-236)");
  } else {
    snprintf(pl, sizeof pl, "%g %%", p->velocity_pct);
  }
  snprintf(buf, cap,
           "tzero time-migrated section (post-stack time migration)\n"
           "method: %s (%s)\n"
           "velocity: %.60s\n"
           "velocity scaled by: %s\n"
           "input: %.66s\n"
           "CMP interval %.3f m (%s)%s\n"
           "time migration, not depth imaging: review by a qualified geophysicist",
           migrate_method_name(p->method),
           p->method == MIGRATE_KIRCHHOFF ? "Schneider 1978" : "Gazdag 1978", velocity, pl, input,
           s->cmp_interval_m, s->interval_from_headers ? "from CMP X/Y" : "given",
           p->method == MIGRATE_PHASE_SHIFT ? "\nphase shift: one velocity function, the lateral "
           "mean of the table" : "");
}

int migrate_write(const migrate_section *s, const migrate_params *p, const float *samples,
                  size_t ntraces, const double *panel_pct, size_t traces_per_panel,
                  const char *text, const char *path, tz_err *err)
{
  segy_writer_opts o;
  memset(&o, 0, sizeof o);
  o.revision = 1;
  o.format_code = s->format_code;
  o.samples = (uint32_t)s->ns;
  o.interval_us = s->interval_us;
  o.sorting_code = 4;                       /* horizontally stacked (SEG-Y rev 1) */
  o.traces_per_ensemble = 1;
  o.measurement_system = 1;
  o.polarity = s->polarity;
  o.text = text;
  segy_writer *w = NULL;
  int rc = segy_writer_open(&w, path, &o, err);
  if (rc)
    return rc;
  /* the output traces are the section's traces within the CMP range, in order,
   * once per panel */
  size_t *idx = malloc(s->ntraces * sizeof *idx), nin = 0;
  if (!idx) {
    segy_writer_abort(w);
    return tz_fail(err, TZ_E_NOMEM, "trace list");
  }
  for (size_t k = 0; k < s->ntraces; k++)
    if (s->headers[k].cmp >= p->first_cmp && s->headers[k].cmp <= p->last_cmp)
      idx[nin++] = k;
  size_t per = traces_per_panel ? traces_per_panel : ntraces;
  if (!nin || per != nin)
    rc = tz_fail(err, TZ_E_INTERNAL, "%zu traces per panel where the range holds %zu", per, nin);
  for (size_t i = 0; i < ntraces && !rc; i++) {
    segy_trace_header h = s->headers[idx[i % nin]];
    if (panel_pct) {
      int32_t v = (int32_t)llround(panel_pct[i / per] * 100);
      h.raw[232] = (unsigned char)((uint32_t)v >> 24);
      h.raw[233] = (unsigned char)((uint32_t)v >> 16);
      h.raw[234] = (unsigned char)((uint32_t)v >> 8);
      h.raw[235] = (unsigned char)v;
    }
    h.line_seq = (int32_t)i + 1;
    h.file_seq = (int32_t)i + 1;
    rc = segy_trace_write(w, &h, samples + i * s->ns, err);
  }
  free(idx);
  if (rc) {
    segy_writer_abort(w);
    return rc;
  }
  return segy_writer_finish(w, err);
}
