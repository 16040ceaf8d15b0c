/* poststack_fx.c -- f-x prediction filtering of a section (Canales, L. L., 1984,
 * "Random noise reduction", 54th SEG Annual Meeting, Expanded Abstracts).
 *
 * Windows: nt = round(window_ms / dt) samples by nx = window_traces traces (each
 * clipped to the section), starting every nt/2 samples and nx/2 traces, the last
 * one placed against the section's end. In each window every trace's nt samples
 * are zero-padded to nfft = the smallest 2^a 3^b 5^c >= 2 nt and transformed. At
 * each frequency bin f_k with min_hz <= f_k <= max_hz the complex values X_0 ..
 * X_{nx-1} along x are predicted:
 *
 *   forward   Xf_m = sum_{j=1..L} a_j X_{m-j},  m = L .. nx-1
 *   backward  Xb_m = sum_{j=1..L} b_j X_{m+j},  m = 0 .. nx-1-L
 *
 * with a (and b) the least-squares (Wiener) solution of the normal equations
 * (A + lambda I) a = g, A_ij = sum_m conj(X_{m-i}) X_{m-j}, g_i = sum_m
 * conj(X_{m-i}) X_m over the rows where every term exists (the backward system
 * likewise), lambda = prewhitening_pct / 100 times the mean of A's diagonal; A is
 * Hermitian positive definite then, and solved by Cholesky. Each trace becomes the
 * mean of the predictions that reach it (both in the middle, one near the window's
 * sides: window_traces >= 2 L guarantees one). Dead traces (live = 0) are neither
 * design rows nor inputs of a prediction: a prediction that would need one is left
 * out, and a trace with no prediction left keeps its value. Bins outside [min_hz,
 * max_hz] pass unchanged. Random noise is not predictable from trace to trace and is reduced;
 * events that are linear within the window are.
 *
 * Merge: the filtered windows are added with weights s(i) = sin^2(pi (i + 0.5) / n)
 * in time and in x (positive everywhere, so every sample is covered) and divided by
 * the sum of the weights at each sample; where windows do not overlap (the
 * section's edges) the one window's output is taken as it is.
 *
 * Everything is allocated by poststack_fx_new(); the apply loop allocates nothing.
 */
#include "signal/poststack_int.h"
#include "signal/signal_int.h"

#include <fftw3.h>
#include <complex.h>   /* after fftw3.h: fftwf_complex stays float[2] */
#include <math.h>
#include <stdlib.h>
#include <string.h>

typedef double complex cplx;

struct poststack_fx {
  size_t ns, ntr;             /* section */
  size_t nt, nx, L;           /* window samples, window traces, operator */
  size_t ntw, nxw;            /* windows in time and in x */
  size_t *t0, *x0;            /* their first sample and first trace */
  size_t nfft, nspec, stride; /* transform; spectra rows of `stride` bins */
  size_t klo, khi;            /* bins filtered: [klo, khi] */
  double pw;                  /* prewhitening fraction */
  float *wt, *wx;             /* nt time weights (over nfft), nx trace weights */
  float *norm_t, *norm_x;     /* ns, ntr: 1 / sum of the weights */
  fftwf_plan fwd, inv;
  float *buf;                 /* nfft */
  fftwf_complex *spec;        /* nx rows of stride bins */
  float *out;                 /* ntr x ns sums */
  cplx *X, *P, *A, *g, *coef; /* nx, nx, L x L, L, L */
  double *cnt;                /* nx */
  unsigned char *dead;        /* nx: the window's dead traces */
  unsigned char *ok[2], *in[2];  /* per direction (0 forward, 1 backward), nx each:
                                  * in[d][m] = every input of m's prediction is live,
                                  * ok[d][m] = that and m is live (a design row) */
};

void poststack_fx_free(poststack_fx *fx)
{
  if (!fx)
    return;
  if (fx->fwd)
    fftwf_destroy_plan(fx->fwd);
  if (fx->inv)
    fftwf_destroy_plan(fx->inv);
  fftwf_free(fx->buf);
  fftwf_free(fx->spec);
  free(fx->t0);
  free(fx->x0);
  free(fx->wt);
  free(fx->wx);
  free(fx->norm_t);
  free(fx->norm_x);
  free(fx->out);
  free(fx->X);
  free(fx->P);
  free(fx->A);
  free(fx->g);
  free(fx->coef);
  free(fx->cnt);
  free(fx->dead);
  for (int d = 0; d < 2; d++) {
    free(fx->ok[d]);
    free(fx->in[d]);
  }
  free(fx);
}

/* Window starts over n positions for windows of w <= n: every w/2, the last at n - w. */
static size_t window_starts(size_t n, size_t w, size_t *starts)
{
  if (w >= n) {
    starts[0] = 0;
    return 1;
  }
  size_t h = w / 2 ? w / 2 : 1, c = 0;
  for (size_t s = 0; s + w < n; s += h)
    starts[c++] = s;
  starts[c++] = n - w;
  return c;
}

static void taper(float *w, size_t n, double scale)
{
  for (size_t i = 0; i < n; i++) {
    double s = sin(M_PI * ((double)i + 0.5) / (double)n);
    w[i] = (float)(scale * (s * s));
  }
}

/* 1 / sum over the windows of the weights w (length n) starting at starts[]. */
static void weight_norm(float *norm, size_t len, const float *w, size_t n,
                        const size_t *starts, size_t nstarts, double scale)
{
  double *sum = (double *)calloc(len, sizeof *sum);
  if (!sum) {   /* cannot happen after the checks of poststack_fx_new; keep defined */
    for (size_t i = 0; i < len; i++)
      norm[i] = 0;
    return;
  }
  for (size_t k = 0; k < nstarts; k++)
    for (size_t i = 0; i < n; i++)
      sum[starts[k] + i] += (double)w[i] / scale;
  for (size_t i = 0; i < len; i++)
    norm[i] = (float)(sum[i] > 0 ? 1.0 / sum[i] : 0.0);
  free(sum);
}

int poststack_fx_new(poststack_fx **out, const poststack_step *s, const char *path, size_t ns,
                     double dt_s, size_t ntr, tz_err *err)
{
  *out = NULL;
  double nyq = 0.5 / dt_s;
  double nt_d = floor(s->window_s / dt_s + 0.5);
  if (nt_d < 4)
    return tz_fail(err, TZ_E_JOB, "%s.window_ms: %.10g ms gives fewer than 4 samples at the "
                   "%.10g ms sample interval", path, s->window_s * 1e3, dt_s * 1e3);
  if (ntr < 2 * s->operator_traces)
    return tz_fail(err, TZ_E_JOB, "%s.operator_traces: %zu traces is longer than the section "
                   "allows: its %zu traces are fewer than twice the operator", path,
                   s->operator_traces, ntr);
  if (s->min_hz >= nyq)
    return tz_fail(err, TZ_E_JOB, "%s.min_hz: %.10g Hz is at or above the Nyquist frequency "
                   "%.10g Hz of the %.10g ms sample interval", path, s->min_hz, nyq, dt_s * 1e3);
  if (s->max_hz > nyq)
    return tz_fail(err, TZ_E_JOB, "%s.max_hz: %.10g Hz is above the Nyquist frequency %.10g Hz "
                   "of the %.10g ms sample interval", path, s->max_hz, nyq, dt_s * 1e3);
  poststack_fx *fx = calloc(1, sizeof *fx);
  if (!fx)
    return tz_fail(err, TZ_E_NOMEM, "f-x prediction");
  fx->ns = ns;
  fx->ntr = ntr;
  fx->nt = nt_d > (double)ns ? ns : (size_t)nt_d;
  fx->nx = s->window_traces < ntr ? s->window_traces : ntr;
  fx->L = s->operator_traces;
  fx->pw = s->prewhitening_pct / 100.0;
  fx->nfft = condition_fast_size(2 * fx->nt);
  fx->nspec = fx->nfft / 2 + 1;
  fx->stride = (fx->nspec + 7) & ~(size_t)7;   /* every row keeps the first's alignment */
  double df = 1.0 / ((double)fx->nfft * dt_s);
  fx->klo = (size_t)ceil(s->min_hz / df - 1e-9);
  double kh = s->max_hz > 0 ? floor(s->max_hz / df + 1e-9) : (double)(fx->nspec - 1);
  fx->khi = kh > (double)(fx->nspec - 1) ? fx->nspec - 1 : (size_t)kh;
  size_t L = fx->L, nx = fx->nx;
  fx->t0 = malloc((ns / (fx->nt / 2 ? fx->nt / 2 : 1) + 2) * sizeof *fx->t0);
  fx->x0 = malloc((ntr / (nx / 2) + 2) * sizeof *fx->x0);
  fx->wt = malloc(fx->nt * sizeof *fx->wt);
  fx->wx = malloc(nx * sizeof *fx->wx);
  fx->norm_t = malloc(ns * sizeof *fx->norm_t);
  fx->norm_x = malloc(ntr * sizeof *fx->norm_x);
  fx->out = malloc(ntr * ns * sizeof *fx->out);
  fx->buf = fftwf_malloc(fx->nfft * sizeof *fx->buf);
  fx->spec = fftwf_malloc(nx * fx->stride * sizeof *fx->spec);
  fx->X = malloc(nx * sizeof *fx->X);
  fx->P = malloc(nx * sizeof *fx->P);
  fx->A = malloc(L * L * sizeof *fx->A);
  fx->g = malloc(L * sizeof *fx->g);
  fx->coef = malloc(L * sizeof *fx->coef);
  fx->cnt = malloc(nx * sizeof *fx->cnt);
  fx->dead = malloc(nx);
  for (int d = 0; d < 2; d++) {
    fx->ok[d] = malloc(nx);
    fx->in[d] = malloc(nx);
  }
  if (!fx->t0 || !fx->x0 || !fx->wt || !fx->wx || !fx->norm_t || !fx->norm_x || !fx->out ||
      !fx->buf || !fx->spec || !fx->X || !fx->P || !fx->A || !fx->g || !fx->coef || !fx->cnt ||
      !fx->dead || !fx->ok[0] || !fx->ok[1] || !fx->in[0] || !fx->in[1]) {
    poststack_fx_free(fx);
    return tz_fail(err, TZ_E_NOMEM, "f-x prediction of %zu x %zu samples", ntr, ns);
  }
  fx->ntw = window_starts(ns, fx->nt, fx->t0);
  fx->nxw = window_starts(ntr, nx, fx->x0);
  double scale = 1.0 / (double)fx->nfft;   /* the inverse transform's factor, folded in */
  taper(fx->wt, fx->nt, scale);
  taper(fx->wx, nx, 1.0);
  weight_norm(fx->norm_t, ns, fx->wt, fx->nt, fx->t0, fx->ntw, scale);
  weight_norm(fx->norm_x, ntr, fx->wx, nx, fx->x0, fx->nxw, 1.0);
  fx->fwd = fftwf_plan_dft_r2c_1d((int)fx->nfft, fx->buf, fx->spec, FFTW_ESTIMATE);
  fx->inv = fftwf_plan_dft_c2r_1d((int)fx->nfft, fx->spec, fx->buf, FFTW_ESTIMATE);
  if (!fx->fwd || !fx->inv) {
    poststack_fx_free(fx);
    return tz_fail(err, TZ_E_FFT, "FFTW could not plan a transform of %zu samples", fx->nfft);
  }
  *out = fx;
  return TZ_OK;
}

/* Solves (A + lambda I) c = g for the n x n Hermitian A (lower triangle used,
 * overwritten by its Cholesky factor) in place of g. 0 when A has no energy or is
 * not positive definite (then c = 0: no prediction). */
static int solve(cplx *A, cplx *g, size_t n, double pw)
{
  double tr = 0;
  for (size_t i = 0; i < n; i++)
    tr += creal(A[i * n + i]);
  if (!(tr > 0))
    return 0;
  double lambda = (pw > 1e-10 ? pw : 1e-10) * tr / (double)n;
  for (size_t i = 0; i < n; i++)
    A[i * n + i] += lambda;
  for (size_t j = 0; j < n; j++) {
    double d = creal(A[j * n + j]);
    for (size_t k = 0; k < j; k++)
      d -= creal(A[j * n + k] * conj(A[j * n + k]));
    if (!(d > 0))
      return 0;
    double ljj = sqrt(d);
    A[j * n + j] = ljj;
    for (size_t i = j + 1; i < n; i++) {
      cplx v = A[i * n + j];
      for (size_t k = 0; k < j; k++)
        v -= A[i * n + k] * conj(A[j * n + k]);
      A[i * n + j] = v / ljj;
    }
  }
  for (size_t i = 0; i < n; i++) {   /* L y = g */
    cplx v = g[i];
    for (size_t k = 0; k < i; k++)
      v -= A[i * n + k] * g[k];
    g[i] = v / creal(A[i * n + i]);
  }
  for (size_t i = n; i-- > 0;) {     /* L^H c = y */
    cplx v = g[i];
    for (size_t k = i + 1; k < n; k++)
      v -= conj(A[k * n + i]) * g[k];
    g[i] = v / creal(A[i * n + i]);
  }
  return 1;
}

/* Forward (dir = +1: X_m from X_{m-1} .. X_{m-L}) or backward (dir = -1: from
 * X_{m+1} .. X_{m+L}) prediction of X (nx values) added to P, with cnt counting
 * the predictions each position received. */
static void predict(poststack_fx *fx, int dir)
{
  size_t L = fx->L, nx = fx->nx;
  const cplx *X = fx->X;
  cplx *A = fx->A, *g = fx->g;
  /* rows m = L .. nx-1 (forward) or 0 .. nx-1-L (backward); lag u = i + 1 */
  size_t m0 = dir > 0 ? L : 0, m1 = dir > 0 ? nx : nx - L;
  const unsigned char *ok = fx->ok[dir < 0], *in_ok = fx->in[dir < 0];
  for (size_t i = 0; i < L; i++) {
    for (size_t j = 0; j <= i; j++) {
      cplx v = 0;
      for (size_t m = m0; m < m1; m++) {
        size_t pi = dir > 0 ? m - i - 1 : m + i + 1, pj = dir > 0 ? m - j - 1 : m + j + 1;
        v += ok[m] * (conj(X[pi]) * X[pj]);
      }
      A[i * L + j] = v;
    }
    cplx v = 0;
    for (size_t m = m0; m < m1; m++)
      v += ok[m] * (conj(X[dir > 0 ? m - i - 1 : m + i + 1]) * X[m]);
    g[i] = v;
  }
  if (!solve(A, g, L, fx->pw))
    memset(g, 0, L * sizeof *g);
  for (size_t m = m0; m < m1; m++) {
    cplx v = 0;
    for (size_t j = 0; j < L; j++)
      v += g[j] * X[dir > 0 ? m - j - 1 : m + j + 1];
    fx->P[m] += in_ok[m] * v;
    fx->cnt[m] += in_ok[m];
  }
}

static void filter_window(poststack_fx *fx, const float *samples, const unsigned char *live,
                          size_t t0, size_t x0)
{
  size_t nt = fx->nt, nx = fx->nx, ns = fx->ns, st = fx->stride;
  for (size_t m = 0; m < nx; m++) {
    size_t j = x0 + m;
    fx->dead[m] = live && !live[j];
    if (fx->dead[m])
      memset(fx->buf, 0, nt * sizeof *fx->buf);
    else
      memcpy(fx->buf, samples + j * ns + t0, nt * sizeof *fx->buf);
    memset(fx->buf + nt, 0, (fx->nfft - nt) * sizeof *fx->buf);
    fftwf_execute_dft_r2c(fx->fwd, fx->buf, fx->spec + m * st);
  }
  size_t L = fx->L;
  for (size_t m = 0; m < nx; m++) {   /* which predictions and design rows exist */
    unsigned char f = m >= L, b = m + L < nx;
    for (size_t j = 1; j <= L; j++) {
      f = f && !fx->dead[m - j];
      b = b && !fx->dead[m + j];
    }
    fx->in[0][m] = f;
    fx->in[1][m] = b;
    fx->ok[0][m] = f && !fx->dead[m];
    fx->ok[1][m] = b && !fx->dead[m];
  }
  for (size_t k = fx->klo; k <= fx->khi; k++) {
    for (size_t m = 0; m < nx; m++) {
      const float *c = fx->spec[m * st + k];
      fx->X[m] = (double)c[0] + (double)c[1] * I;
      fx->P[m] = 0;
      fx->cnt[m] = 0;
    }
    predict(fx, +1);
    predict(fx, -1);
    for (size_t m = 0; m < nx; m++) {
      cplx v = fx->cnt[m] > 0 ? fx->P[m] / fx->cnt[m] : fx->X[m];   /* none: kept */
      fx->spec[m * st + k][0] = (float)creal(v);
      fx->spec[m * st + k][1] = (float)cimag(v);
    }
  }
  for (size_t m = 0; m < nx; m++) {
    fftwf_execute_dft_c2r(fx->inv, fx->spec + m * st, fx->buf);
    float *o = fx->out + (x0 + m) * ns + t0;
    float w = fx->wx[m];
    for (size_t i = 0; i < nt; i++)
      o[i] += w * fx->wt[i] * fx->buf[i];
  }
}

void poststack_fx_apply(poststack_fx *fx, float *samples, const unsigned char *live)
{
  size_t ns = fx->ns;
  memset(fx->out, 0, fx->ntr * ns * sizeof *fx->out);
  for (size_t a = 0; a < fx->nxw; a++)
    for (size_t b = 0; b < fx->ntw; b++)
      filter_window(fx, samples, live, fx->t0[b], fx->x0[a]);
  for (size_t j = 0; j < fx->ntr; j++) {
    if (live && !live[j])
      continue;
    float *x = samples + j * ns;
    const float *o = fx->out + j * ns;
    float nx = fx->norm_x[j];
    for (size_t i = 0; i < ns; i++)
      x[i] = o[i] * fx->norm_t[i] * nx;
  }
}
