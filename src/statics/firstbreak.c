/* firstbreak.c -- energy-ratio first-break picker with a linear-moveout guide,
 * peak or zero-crossing refinement, per-pick quality and outlier rejection
 * against each record's trend (firstbreak.h states the method and sources).
 *
 * Per trace the work is one pass of cumulative energy over the samples and a
 * scan of the search window: no allocation per trace (the record's buffers are
 * made once per call) and nothing shared between calls.
 *
 * Not here: reading records (the front end drives the stack's record reader)
 * and the picks file.
 */
#include "tzero/firstbreak.h"
#include "tzero/table.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

void firstbreak_params_init(firstbreak_params *p)
{
  memset(p, 0, sizeof *p);
  p->window_ms = 16.0;
  p->search_ms = 40.0;
  p->stabilise = 0.01;
  p->refine = FIRSTBREAK_REFINE_PEAK;
  p->outlier_ms = 6.0;
  p->trend_traces = 2;
}

int firstbreak_params_check(const firstbreak_params *p, tz_err *err)
{
  if (!(p->window_ms > 0.0) || !isfinite(p->window_ms))
    return tz_fail(err, TZ_E_ARG, "first breaks: energy window %g ms is not > 0", p->window_ms);
  if (!(p->search_ms > 0.0) || !isfinite(p->search_ms))
    return tz_fail(err, TZ_E_ARG, "first breaks: search half-width %g ms is not > 0",
                   p->search_ms);
  if (!(p->stabilise >= 0.0) || !isfinite(p->stabilise))
    return tz_fail(err, TZ_E_ARG, "first breaks: stabilisation %g is not >= 0", p->stabilise);
  if (!(p->outlier_ms >= 0.0) || !isfinite(p->outlier_ms))
    return tz_fail(err, TZ_E_ARG, "first breaks: outlier limit %g ms is not >= 0",
                   p->outlier_ms);
  if (p->refine < FIRSTBREAK_REFINE_PEAK || p->refine > FIRSTBREAK_REFINE_NONE)
    return tz_fail(err, TZ_E_ARG, "first breaks: unknown refinement %d", p->refine);
  if (p->trend_traces < 2 || p->trend_traces > 32)
    return tz_fail(err, TZ_E_ARG, "first breaks: trend neighbours %zu (2 to 32)",
                   p->trend_traces);
  return TZ_OK;
}

/* ---- guides ---- */

double firstbreak_guide_time(const firstbreak_guide *g, double x)
{
  x = fabs(x);
  if (g->n == 0)
    return 0.0;
  if (g->n == 1)
    return g->time_ms[0];
  size_t k = 1;
  while (k + 1 < g->n && g->offset_m[k] < x)
    k++;
  double x0 = g->offset_m[k - 1], x1 = g->offset_m[k];
  double t0 = g->time_ms[k - 1], t1 = g->time_ms[k];
  return t0 + (t1 - t0) * (x - x0) / (x1 - x0);
}

int firstbreak_guide_linear(firstbreak_guide *g, double v, double t0, double xmax, tz_err *err)
{
  if (!(v > 0.0) || !isfinite(v) || !isfinite(t0) || !(xmax > 0.0) || !isfinite(xmax))
    return tz_fail(err, TZ_E_ARG, "first-break guide: velocity %g m/s, intercept %g ms, "
                   "offset %g m: need a velocity > 0 and finite values", v, t0, xmax);
  g->n = 2;
  g->offset_m[0] = 0.0;
  g->time_ms[0] = t0;
  g->offset_m[1] = xmax;
  g->time_ms[1] = t0 + 1000.0 * xmax / v;
  return TZ_OK;
}

int firstbreak_guide_load(firstbreak_guide *g, const char *path, tz_err *err)
{
  memset(g, 0, sizeof *g);
  table_reader *t;
  int rc = table_open(&t, path, err);
  if (rc)
    return rc;
  size_t nf;
  int header = 1;
  long ix = -1, it = -1;
  while (!(rc = table_next(t, &nf, err)) && nf > 0) {
    if (header) {
      for (size_t i = 0; i < nf; i++) {
        if (!strcmp(table_field(t, i), "offset_m")) ix = (long)i;
        if (!strcmp(table_field(t, i), "time_ms")) it = (long)i;
      }
      if (ix < 0 || it < 0) {
        rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t),
                          "expected a header row with columns offset_m and time_ms");
        break;
      }
      header = 0;
      continue;
    }
    if (g->n >= FIRSTBREAK_MAX_GUIDE) {
      rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t), "more than %d guide points",
                        FIRSTBREAK_MAX_GUIDE);
      break;
    }
    double x, tm;
    if ((rc = table_field_f64(t, (size_t)ix, "offset_m", &x, err)) ||
        (rc = table_field_f64(t, (size_t)it, "time_ms", &tm, err)))
      break;
    if (x < 0.0 || (g->n && !(x > g->offset_m[g->n - 1]))) {
      rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t),
                        "offset_m %g: offsets must be >= 0 and strictly increasing", x);
      break;
    }
    g->offset_m[g->n] = x;
    g->time_ms[g->n++] = tm;
  }
  if (!rc && g->n == 0)
    rc = tz_fail(err, TZ_E_FORMAT, "no guide points");
  if (rc)
    tz_err_path(err, table_name(t));
  table_close(t);
  return rc;
}

static int cmp_dbl(const void *a, const void *b)
{
  double x = *(const double *)a, y = *(const double *)b;
  return (x > y) - (x < y);
}

/* Median of v[0..n-1] (reorders v). */
static double median(double *v, size_t n)
{
  qsort(v, n, sizeof *v, cmp_dbl);
  return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

int firstbreak_guide_estimate(const double *off, const double *t, size_t n, size_t nbins,
                              firstbreak_guide *g, tz_err *err)
{
  memset(g, 0, sizeof *g);
  if (nbins < 2 || nbins > FIRSTBREAK_MAX_GUIDE)
    return tz_fail(err, TZ_E_ARG, "first-break guide: %zu offset bins (2 to %d)", nbins,
                   FIRSTBREAK_MAX_GUIDE);
  double xmax = 0.0;
  size_t ngood = 0;
  for (size_t i = 0; i < n; i++)
    if (isfinite(off[i]) && isfinite(t[i])) {
      xmax = fmax(xmax, fabs(off[i]));
      ngood++;
    }
  if (ngood < 2 || !(xmax > 0.0))
    return tz_fail(err, TZ_E_ARG, "first-break guide: %zu usable picks, nothing to estimate "
                   "a guide from", ngood);
  double *buf = malloc(ngood * sizeof *buf);
  size_t *bin = malloc(ngood * sizeof *bin);
  double *bt = malloc(ngood * sizeof *bt);
  if (!buf || !bin || !bt) {
    free(buf), free(bin), free(bt);
    return tz_fail(err, TZ_E_NOMEM, "first-break guide: %zu picks", ngood);
  }
  size_t k = 0;
  for (size_t i = 0; i < n; i++)
    if (isfinite(off[i]) && isfinite(t[i])) {
      size_t b = (size_t)(fabs(off[i]) / xmax * (double)nbins);
      bin[k] = b >= nbins ? nbins - 1 : b;
      bt[k++] = t[i];
    }
  double w = xmax / (double)nbins;
  for (size_t b = 0; b < nbins; b++) {
    size_t m = 0;
    for (size_t i = 0; i < ngood; i++)
      if (bin[i] == b)
        buf[m++] = bt[i];
    if (m == 0)
      continue;
    g->offset_m[g->n] = (double)b * w + 0.5 * w;
    g->time_ms[g->n] = median(buf, m);
    if (g->n > 0 && g->time_ms[g->n] < g->time_ms[g->n - 1])
      g->time_ms[g->n] = g->time_ms[g->n - 1];
    g->n++;
  }
  free(buf), free(bin), free(bt);
  if (g->n < 2)
    return tz_fail(err, TZ_E_ARG, "first-break guide: picks fill %zu offset bin", g->n);
  return TZ_OK;
}

/* ---- one trace ---- */

static double smooth5(const float *x, long j)
{
  return (x[j - 2] + 4.0 * x[j - 1] + 6.0 * x[j] + 4.0 * x[j + 1] + x[j + 2]) / 16.0;
}

/* Picks trace x (ns samples) with cumulative energy c (ns + 1 entries filled
 * here) in samples [lo, hi]. Returns 0 and fills *pick. */
static void pick_trace(const firstbreak_params *p, const float *x, size_t ns, double dt_ms,
                       double t0_ms, long lo, long hi, double *c, firstbreak_pick *pick)
{
  pick->time_ms = NAN;
  pick->quality = 0.0;
  pick->status = FIRSTBREAK_NONE;
  c[0] = 0.0;
  for (size_t i = 0; i < ns; i++)
    c[i + 1] = c[i] + (double)x[i] * (double)x[i];
  if (!(c[ns] > 0.0) || !isfinite(c[ns]))
    return;
  long L = (long)lround(p->window_ms / dt_ms);
  if (L < 2)
    L = 2;
  long n = (long)ns;
  if (lo < 1)
    lo = 1;
  if (hi > n - L)
    hi = n - L;
  if (lo > hi)
    return;
  double beta = p->stabilise * c[ns] / (double)ns * (double)L;
  /* and at least ten windows of the trace's noise floor (its quietest window,
   * when that is not silent): near the start of a search the accumulated energy
   * is tiny, and without this noise there would outbid a late first arrival */
  double floor_e = INFINITY;
  for (long i = 0; i + L <= n; i += L)
    floor_e = fmin(floor_e, c[i + L] - c[i]);
  if (isfinite(floor_e) && 10.0 * floor_e > beta)
    beta = 10.0 * floor_e;
  if (!(beta > 0.0))
    beta = 1e-30 * c[ns];
  long i0 = -1;
  double best = -1.0;
  /* Coppens (1985): the energy of the window after the sample over the energy
   * accumulated since the start of the search, so that a later, stronger
   * arrival does not outbid the first one. */
  long cs = lo - L < 0 ? 0 : lo - L;
  for (long i = lo; i <= hi; i++) {
    double after = c[i + L] - c[i], before = c[i] - c[cs];
    double er = after / (before + beta);
    if (er > best) {
      best = er;
      i0 = i;
    }
  }
  if (i0 < 0 || !(c[i0 + L] - c[i0] > 0.0))
    return;
  long b0 = i0 - L < 0 ? 0 : i0 - L;
  double es = c[i0 + L] - c[i0], en = c[i0] - c[b0];
  pick->quality = es / (es + en);
  pick->status = FIRSTBREAK_OK;
  if (p->refine == FIRSTBREAK_REFINE_NONE) {
    pick->time_ms = t0_ms + (double)i0 * dt_ms;
    return;
  }
  /* The first extremum after the onset at least 0.65 times as strong as the
   * strongest in the next two windows: the main lobe, not a side lobe (a
   * Ricker wavelet's side lobes are 2 exp(-3/2) = 0.446 of its peak). */
  long s0 = i0 - L / 2 < 1 ? 1 : i0 - L / 2;
  long s1 = i0 + 2 * L > n - 2 ? n - 2 : i0 + 2 * L;
  double amax = 0.0;
  for (long j = s0; j <= s1; j++)
    amax = fmax(amax, fabs((double)x[j]));
  long jp = -1;
  for (long j = s0; j <= s1; j++) {
    double a = fabs((double)x[j]);
    if (a >= 0.65 * amax && a >= fabs((double)x[j - 1]) && a > fabs((double)x[j + 1])) {
      jp = j;
      break;
    }
  }
  if (jp < 0) {
    pick->time_ms = t0_ms + (double)i0 * dt_ms;
    return;
  }
  /* The largest sample of that lobe (between its zero crossings): noise can make
   * a local maximum on the lobe's flank. */
  {
    double sg = x[jp] >= 0.0f ? 1.0 : -1.0;
    long a = jp, b = jp;
    while (a > 1 && sg * (double)x[a - 1] > 0.0)
      a--;
    while (b < n - 2 && sg * (double)x[b + 1] > 0.0)
      b++;
    for (long j = a; j <= b; j++)
      if (sg * (double)x[j] > sg * (double)x[jp])
        jp = j;
  }
  if (p->refine == FIRSTBREAK_REFINE_PEAK) {
    /* Three-point parabola on the trace smoothed by the binomial filter
     * [1 4 6 4 1] / 16: a symmetric smoother keeps a symmetric peak where it is
     * and halves the noise that moves the vertex. The vertex is taken about the
     * largest smoothed sample. */
    double ym, y0, yp, d = 0.0;
    long j = jp;
    for (int it = 0; it < 3; it++) {
      if (j < 3 || j + 3 >= n)
        break;
      ym = smooth5(x, j - 1), y0 = smooth5(x, j), yp = smooth5(x, j + 1);
      double sg = x[jp] >= 0.0f ? 1.0 : -1.0;
      if (sg * ym > sg * y0) { j--; continue; }
      if (sg * yp > sg * y0) { j++; continue; }
      double den = ym - 2.0 * y0 + yp;
      if (den != 0.0)
        d = 0.5 * (ym - yp) / den;
      jp = j;
      break;
    }
    if (d > 0.5) d = 0.5;
    if (d < -0.5) d = -0.5;
    pick->time_ms = t0_ms + ((double)jp + d) * dt_ms;
    return;
  }
  /* Zero crossing before the extremum, linear between the two samples. */
  long j = jp;
  double sgn = x[jp] >= 0.0f ? 1.0 : -1.0;
  while (j > 0 && sgn * (double)x[j - 1] > 0.0)
    j--;
  if (j == 0) {
    pick->time_ms = t0_ms + (double)jp * dt_ms;
    return;
  }
  double ya = x[j - 1], yb = x[j];
  double f = ya != yb ? ya / (ya - yb) : 0.0;
  pick->time_ms = t0_ms + ((double)(j - 1) + f) * dt_ms;
}

/* ---- outliers ---- */

typedef struct ord { double off; size_t i; } ord;

static int cmp_ord(const void *a, const void *b)
{
  const ord *p = a, *q = b;
  if (p->off != q->off)
    return p->off < q->off ? -1 : 1;
  return (p->i > q->i) - (p->i < q->i);
}

/* Robust straight-line prediction at xa from n points (Theil-Sen: the median
 * of the pairwise slopes, then the median of the predictions). */
static double theil_sen(const double *nx, const double *nt, size_t n, double xa, double *sl,
                        double *pr)
{
  size_t ns = 0;
  for (size_t u = 0; u < n; u++)
    for (size_t v = u + 1; v < n; v++)
      if (nx[u] != nx[v])
        sl[ns++] = (nt[v] - nt[u]) / (nx[v] - nx[u]);
  double s = ns ? median(sl, ns) : 0.0;
  for (size_t u = 0; u < n; u++)
    pr[u] = nt[u] + s * (xa - nx[u]);
  return median(pr, n);
}

/* Rejects picks of one side (o[0..m-1], sorted by offset) off the local trend:
 * the trend is predicted from the neighbours nearer the source and, separately,
 * from those farther away; a pick is rejected when it misses both (a change of
 * slope, such as the crossover, then fits one side and is kept). */
static void reject_side(const firstbreak_params *p, const ord *o, size_t m,
                        firstbreak_pick *out, unsigned char *bad)
{
  size_t k = p->trend_traces;
  double nx[64], nt[64], sl[64 * 63 / 2], pr[64];
  for (size_t a = 0; a < m; a++) {
    double xa = fabs(o[a].off), ta = out[o[a].i].time_ms;
    double miss = INFINITY;
    int sides = 0;
    for (int side = 0; side < 2; side++) {
      size_t n = 0;
      if (side == 0)
        for (size_t b = a; b-- > 0 && n < k;)
          nx[n] = fabs(o[b].off), nt[n] = out[o[b].i].time_ms, n++;
      else
        for (size_t b = a + 1; b < m && n < k; b++)
          nx[n] = fabs(o[b].off), nt[n] = out[o[b].i].time_ms, n++;
      if (n == 1) {
        /* one neighbour supports the pick when the two lie on a plausible
         * first-arrival slope: not earlier than the nearer trace by more than
         * the limit, nor slower than 150 m/s between them (common practice) */
        double dx = xa - nx[0], dt = ta - nt[0];
        if (dx < 0.0)
          dx = -dx, dt = -dt;
        sides++;
        if (dt >= -p->outlier_ms && dt <= p->outlier_ms + dx / 0.150)
          miss = 0.0;
        continue;
      }
      if (n < 2)
        continue;
      sides++;
      miss = fmin(miss, fabs(ta - theil_sen(nx, nt, n, xa, sl, pr)));
    }
    if (sides && miss > p->outlier_ms)
      bad[o[a].i] = 1;
  }
}

int firstbreak_pick_record(const firstbreak_params *p, const firstbreak_guide *guide,
                           const float *samples, size_t ntraces, size_t ns, double dt_ms,
                           double t0_ms, const double *offset_m, const unsigned char *live,
                           firstbreak_pick *out, tz_err *err)
{
  int rc = firstbreak_params_check(p, err);
  if (rc)
    return rc;
  if (ntraces > FIRSTBREAK_MAX_TRACES)
    return tz_fail(err, TZ_E_ARG, "first breaks: record of %zu traces (at most %u)", ntraces,
                   FIRSTBREAK_MAX_TRACES);
  if (!(dt_ms > 0.0) || ns < 4)
    return tz_fail(err, TZ_E_ARG, "first breaks: %zu samples at %g ms", ns, dt_ms);
  if (ntraces == 0)
    return TZ_OK;
  double *c = malloc((ns + 1) * sizeof *c);
  ord *o = malloc(ntraces * sizeof *o);
  unsigned char *bad = calloc(ntraces, 1);
  if (!c || !o || !bad) {
    free(c), free(o), free(bad);
    return tz_fail(err, TZ_E_NOMEM, "first breaks: record of %zu x %zu samples", ntraces, ns);
  }
  for (size_t i = 0; i < ntraces; i++) {
    long lo = 0, hi = (long)ns;
    if (guide && guide->n) {
      double tg = firstbreak_guide_time(guide, offset_m[i]);
      double a = (tg - p->search_ms - t0_ms) / dt_ms, b = (tg + p->search_ms - t0_ms) / dt_ms;
      /* the onset precedes the wavelet's centre by up to a window */
      a -= p->window_ms / dt_ms;
      lo = a < 0.0 ? 0 : a > (double)ns ? (long)ns : (long)floor(a);
      hi = b < 0.0 ? -1 : b > (double)ns ? (long)ns : (long)ceil(b);
    }
    if (live && !live[i]) {
      out[i] = (firstbreak_pick){ NAN, 0.0, FIRSTBREAK_NONE };
      continue;
    }
    pick_trace(p, samples + i * ns, ns, dt_ms, t0_ms, lo, hi, c, &out[i]);
  }
  if (p->outlier_ms > 0.0) {
    for (int side = 0; side < 2; side++) {
      size_t m = 0;
      for (size_t i = 0; i < ntraces; i++)
        if (out[i].status == FIRSTBREAK_OK && (side ? offset_m[i] >= 0.0 : offset_m[i] < 0.0))
          o[m].off = offset_m[i], o[m].i = i, m++;
      qsort(o, m, sizeof *o, cmp_ord);
      reject_side(p, o, m, out, bad);
    }
    for (size_t i = 0; i < ntraces; i++)
      if (bad[i])
        out[i].status = FIRSTBREAK_REJECTED;
  }
  free(c), free(o), free(bad);
  return TZ_OK;
}
