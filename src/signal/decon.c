/* decon.c -- Wiener (least-squares) deconvolution: Levinson's recursion, prediction
 * error filters, design-window autocorrelation and the filter itself.
 *
 * The normal equations of a Wiener filter, R a = g with R the Toeplitz matrix of the
 * input's autocorrelation, are solved by Levinson's recursion (Levinson 1947; Robinson
 * & Treitel 1980, "Geophysical Signal Analysis", the Toeplitz recursion chapter):
 * O(n^2) operations and O(n) memory. Predictive deconvolution with prediction
 * distance (gap) g and n coefficients solves R a = [r_g .. r_{g+n-1}] and applies the
 * prediction error filter [1, 0 .. 0, -a_0 .. -a_{n-1}] (g - 1 zeros); spiking
 * deconvolution is the case g = 1, whose filter equals the spiking filter
 * (R b = [1, 0 .. 0]) divided by b_0 (Robinson & Treitel 1980). Pre-whitening adds
 * pct/100 of r_0 to the zero lag (white noise of that power), which keeps R
 * positive definite and the operator short.
 *
 * Everything here works on caller-owned buffers and allocates nothing: condition.c
 * sizes the workspace from the plan.
 *
 * Not here: which traces share an operator (condition.c), JSON (job.c).
 */
#include <math.h>
#include <string.h>

#include "signal/signal_int.h"

int condition_levinson(const double *r, const double *g, size_t n, double *a, double *work,
                       tz_err *err)
{
  /* f: forward vector of the growing system (R_m f = [1, 0 .. 0] scaled to f_0 = 1),
   * e: its prediction error; a: the solution for g_0 .. g_{m-1}. */
  double *f = work, *tmp = work + n;
  if (n == 0)
    return tz_fail(err, TZ_E_ARG, "Levinson: empty system");
  if (!(r[0] > 0))
    return tz_fail(err, TZ_E_ARG, "Levinson: zero lag %.10g is not positive", r[0]);
  double e = r[0];
  f[0] = 1.0;
  a[0] = g[0] / r[0];
  for (size_t m = 1; m < n; m++) {
    /* reflection coefficient of the forward vector */
    double acc = 0;
    for (size_t i = 0; i < m; i++)
      acc += f[i] * r[m - i];
    double k = -acc / e;
    /* f <- [f, 0] + k [0, reverse(f)] (R symmetric: backward = reversed forward) */
    for (size_t i = 0; i < m; i++)
      tmp[i] = f[i];
    f[m] = 0;
    for (size_t i = 1; i <= m; i++)
      f[i] += k * tmp[m - i];
    e *= 1.0 - k * k;
    if (!(e > 0))
      return tz_fail(err, TZ_E_ARG, "Levinson: the system is not positive definite "
                     "(prediction error %.3g at order %zu)", e, m);
    /* a <- [a, 0] + q reverse(f), q chosen to meet equation m */
    double s = 0;
    for (size_t i = 0; i < m; i++)
      s += a[i] * r[m - i];
    double q = (g[m] - s) / e;
    a[m] = 0;
    for (size_t i = 0; i <= m; i++)
      a[i] += q * f[m - i];
  }
  return TZ_OK;
}

int condition_wiener_pef(const double *r, size_t gap, size_t n, double pct, double *pef,
                         double *work, tz_err *err)
{
  if (gap < 1)
    return tz_fail(err, TZ_E_ARG, "prediction distance of %zu samples (at least 1)", gap);
  double *rr = work, *a = work + n, *lw = work + 2 * n;
  memset(pef, 0, (gap + n) * sizeof *pef);
  pef[0] = 1.0;
  if (n == 0)
    return TZ_OK;
  memcpy(rr, r, n * sizeof *rr);
  rr[0] = r[0] * (1.0 + pct / 100.0);
  int rc = condition_levinson(rr, r + gap, n, a, lw, err);
  if (rc)
    return rc;
  for (size_t j = 0; j < n; j++)
    pef[gap + j] = -a[j];
  return TZ_OK;
}

void condition_decon_window(const condition_step *s, double offset_m, double t_first_s,
                            double dt_s, size_t ns, size_t *i0, size_t *i1)
{
  double x = fabs(offset_m), t0, t1;
  const double (*w)[3] = s->window;
  size_t n = s->nwindow, k = 0;
  if (n == 1 || x <= w[0][0]) {
    t0 = w[0][1];
    t1 = w[0][2];
  } else if (x >= w[n - 1][0]) {
    t0 = w[n - 1][1];
    t1 = w[n - 1][2];
  } else {
    while (k + 1 < n && w[k + 1][0] < x)
      k++;
    double u = (x - w[k][0]) / (w[k + 1][0] - w[k][0]);
    t0 = w[k][1] + u * (w[k + 1][1] - w[k][1]);
    t1 = w[k][2] + u * (w[k + 1][2] - w[k][2]);
  }
  double a = ceil((t0 - t_first_s) / dt_s - 1e-9), b = floor((t1 - t_first_s) / dt_s + 1e-9);
  a = a < 0 ? 0 : a;
  b = b > (double)ns - 1 ? (double)ns - 1 : b;
  *i0 = (size_t)a;
  *i1 = b + 1 > a ? (size_t)(b + 1) : (size_t)a;
}

/* The two hot loops, written once and compiled twice: for the x86-64 baseline and,
 * chosen at run time, for AVX2 (as the NMO kernels are). Each output still sums its
 * terms in the same order in both (no fused multiply-add: the "avx2" target does not
 * enable FMA and -std=c11 keeps contraction off), so the bits do not depend on the
 * CPU. */
#if defined(__GNUC__) && !defined(__clang__)
#define DECON_VECTORISE __attribute__((optimize("tree-vectorize")))
#else
#define DECON_VECTORISE
#endif
#if defined(__x86_64__) && defined(__GNUC__)
#define DECON_AVX2 1
#define DECON_AVX2_FN __attribute__((target("avx2")))
#else
#define DECON_AVX2 0
#endif

/* Outer loop over samples, inner over lags: each r[l] still sums in increasing i
 * (the same bits as the textbook loop order), and the inner loop vectorises. */
#define ACF_BODY                                                                   \
  for (size_t i = i0; i < i1; i++) {                                               \
    size_t m = i1 - i < nlag ? i1 - i : nlag;                                      \
    double xi = x[i];                                                              \
    const float *xp = x + i;                                                       \
    for (size_t l = 0; l < m; l++)                                                 \
      r[l] += xi * (double)xp[l];                                                  \
  }

#define FILTER_BODY                                                                \
  for (size_t j = 0; j < n; j++) {                                                 \
    size_t lag = gap + j;                                                          \
    if (lag >= ns)                                                                 \
      break;                                                                       \
    float cj = c[j];                                                               \
    float *restrict y = x + lag;                                                   \
    const float *restrict u = tmp;                                                 \
    for (size_t i = 0; i < ns - lag; i++)                                          \
      y[i] += cj * u[i];                                                           \
  }

DECON_VECTORISE static void acf_base(const float *restrict x, size_t i0, size_t i1,
                                     size_t nlag, double *restrict r)
{
  ACF_BODY
}

DECON_VECTORISE static void filter_base(const float *restrict c, size_t gap, size_t n,
                                        float *restrict x, const float *restrict tmp,
                                        size_t ns)
{
  FILTER_BODY
}

#if DECON_AVX2
DECON_AVX2_FN DECON_VECTORISE static void acf_avx2(const float *restrict x, size_t i0,
                                                   size_t i1, size_t nlag, double *restrict r)
{
  ACF_BODY
}

DECON_AVX2_FN DECON_VECTORISE static void filter_avx2(const float *restrict c, size_t gap,
                                                      size_t n, float *restrict x,
                                                      const float *restrict tmp, size_t ns)
{
  FILTER_BODY
}
#endif

void condition_decon_acf_add(const float *restrict x, size_t i0, size_t i1, size_t nlag,
                             double *restrict r)
{
#if DECON_AVX2
  if (__builtin_cpu_supports("avx2")) {
    acf_avx2(x, i0, i1, nlag, r);
    return;
  }
#endif
  acf_base(x, i0, i1, nlag, r);
}

void condition_decon_filter(const float *restrict c, size_t gap, size_t n, float *restrict x,
                            float *restrict tmp, size_t ns)
{
  memcpy(tmp, x, ns * sizeof *x);
#if DECON_AVX2
  if (__builtin_cpu_supports("avx2")) {
    filter_avx2(c, gap, n, x, tmp, ns);
    return;
  }
#endif
  filter_base(c, gap, n, x, tmp, ns);
}
