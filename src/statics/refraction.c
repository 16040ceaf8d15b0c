/* refraction.c -- delay-time refraction statics.
 *
 * The two-layer formulas and the thickness from a delay are the textbook ones
 * (Sheriff and Geldart 1995, refraction chapter). The all-stations solution is
 * the delay-time ("time-term") method: every head-wave pick is modelled as the
 * delay of its source plus the delay of its receiver plus the refractor path
 * times the refractor slowness, the path running along the line from source to
 * receiver through cells of length cell_m whose slownesses are unknowns tied to
 * their neighbours by first-difference rows (a smooth refractor velocity). The
 * sparse system is solved by LSQR (lsq.h); picks that miss the first solution by
 * more than max(reject_ms, 3 RMS) are dropped and the system solved again.
 *
 * Not here: reading picks files and writing statics tables (the front end and
 * the statics tables module), picking (firstbreak.c).
 */
#include "tzero/refraction.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/lsq.h"

#define DEG (180.0 / 3.14159265358979323846)

double refraction_critical_angle_deg(double v0, double v1)
{
  return asin(v0 / v1) * DEG;
}

double refraction_intercept_ms(double h, double v0, double v1)
{
  return 2.0 * refraction_delay_ms(h, v0, v1);
}

double refraction_delay_ms(double h, double v0, double v1)
{
  double cosic = sqrt(1.0 - (v0 / v1) * (v0 / v1));
  return 1000.0 * h * cosic / v0;
}

double refraction_crossover_m(double h, double v0, double v1)
{
  return 2.0 * h * sqrt((v1 + v0) / (v1 - v0));
}

double refraction_thickness_m(double delay_ms, double v0, double v1)
{
  return delay_ms / 1000.0 * v0 * v1 / sqrt(v1 * v1 - v0 * v0);
}

double refraction_datum_static_ms(double e, double h, double v0, double datum, double vr)
{
  return -1000.0 * (h / v0 + (e - h - datum) / vr);
}

/* ---- two-segment fit ---- */

typedef struct xt { double x, t; } xt;

static int cmp_xt(const void *a, const void *b)
{
  const xt *p = a, *q = b;
  if (p->x != q->x)
    return p->x < q->x ? -1 : 1;
  return (p->t > q->t) - (p->t < q->t);
}

/* Sums for a straight-line fit over a range of points. */
typedef struct sums { double n, x, t, xx, xt, tt; } sums;

static void line_fit(const sums *s, double *a, double *b, double *sse)
{
  double den = s->n * s->xx - s->x * s->x;
  if (s->n < 2 || !(den > 0.0)) {
    *a = s->n > 0 ? s->t / s->n : 0.0;
    *b = 0.0;
    *sse = s->n > 0 ? s->tt - s->t * s->t / s->n : 0.0;
    return;
  }
  *b = (s->n * s->xt - s->x * s->t) / den;
  *a = (s->t - *b * s->x) / s->n;
  /* residual sum of squares from centred moments */
  double sxx = s->xx - s->x * s->x / s->n, sxt = s->xt - s->x * s->t / s->n;
  double stt = s->tt - s->t * s->t / s->n;
  *sse = stt - sxt * sxt / sxx;
  if (*sse < 0.0)
    *sse = 0.0;
}

int refraction_fit_two_segments(const double *offset_m, const double *time_ms, size_t n,
                                size_t min_points, refraction_two_segments *out, tz_err *err)
{
  memset(out, 0, sizeof *out);
  if (min_points < 2)
    min_points = 2;
  if (n < 2 * min_points)
    return tz_fail(err, TZ_E_ARG, "two-segment fit: %zu picks (at least %zu needed)", n,
                   2 * min_points);
  xt *p = malloc(n * sizeof *p);
  sums *pre = malloc((n + 1) * sizeof *pre);
  if (!p || !pre) {
    free(p), free(pre);
    return tz_fail(err, TZ_E_NOMEM, "two-segment fit: %zu picks", n);
  }
  for (size_t i = 0; i < n; i++) {
    if (!isfinite(offset_m[i]) || !isfinite(time_ms[i])) {
      free(p), free(pre);
      return tz_fail(err, TZ_E_ARG, "two-segment fit: pick %zu is not finite", i);
    }
    p[i].x = fabs(offset_m[i]);
    p[i].t = time_ms[i];
  }
  qsort(p, n, sizeof *p, cmp_xt);
  /* Prefix sums, centred on the mean offset and time for precision. */
  double mx = 0.0, mt = 0.0;
  for (size_t i = 0; i < n; i++)
    mx += p[i].x, mt += p[i].t;
  mx /= (double)n, mt /= (double)n;
  memset(&pre[0], 0, sizeof pre[0]);
  for (size_t i = 0; i < n; i++) {
    double x = p[i].x - mx, t = p[i].t - mt;
    pre[i + 1] = (sums){ pre[i].n + 1, pre[i].x + x, pre[i].t + t, pre[i].xx + x * x,
                         pre[i].xt + x * t, pre[i].tt + t * t };
  }
  double best = INFINITY;
  size_t kbest = 0;
  for (size_t k = min_points; k + min_points <= n; k++) {
    if (p[k].x == p[k - 1].x)
      continue;             /* the break falls between distinct offsets */
    sums lo = pre[k], hi;
    hi.n = pre[n].n - lo.n, hi.x = pre[n].x - lo.x, hi.t = pre[n].t - lo.t;
    hi.xx = pre[n].xx - lo.xx, hi.xt = pre[n].xt - lo.xt, hi.tt = pre[n].tt - lo.tt;
    double a0, b0, e0, a1, b1, e1;
    line_fit(&lo, &a0, &b0, &e0);
    line_fit(&hi, &a1, &b1, &e1);
    if (!(b0 > b1 && b1 > 0.0))
      continue;             /* a slow direct wave over a faster refractor only */
    if (e0 + e1 < best) {
      best = e0 + e1;
      kbest = k;
    }
  }
  if (kbest == 0) {
    free(p), free(pre);
    return tz_fail(err, TZ_E_ARG,
                   "two-segment fit: no break between a slow direct wave and a faster "
                   "refractor in %zu picks", n);
  }
  sums lo = pre[kbest], hi;
  hi.n = pre[n].n - lo.n, hi.x = pre[n].x - lo.x, hi.t = pre[n].t - lo.t;
  hi.xx = pre[n].xx - lo.xx, hi.xt = pre[n].xt - lo.xt, hi.tt = pre[n].tt - lo.tt;
  double a0, b0, e0, a1, b1, e1;
  line_fit(&lo, &a0, &b0, &e0);
  line_fit(&hi, &a1, &b1, &e1);
  /* back from centred coordinates: t - mt = a + b (x - mx) */
  double i0 = a0 + mt - b0 * mx, i1 = a1 + mt - b1 * mx;
  out->n_direct = kbest;
  out->n_head = n - kbest;
  out->direct_mps = 1000.0 / b0;
  out->direct_intercept_ms = i0;
  out->refractor_mps = 1000.0 / b1;
  out->intercept_ms = i1;
  out->crossover_m = (i1 - i0) / (b0 - b1);
  out->break_offset_m = p[kbest].x;
  out->rms_ms = sqrt(best / (double)n);
  free(p), free(pre);
  return TZ_OK;
}

/* ---- delay-time solution ---- */

void refraction_params_init(refraction_params *p)
{
  memset(p, 0, sizeof *p);
  p->cell_m = 0.0;
  p->smoothing = 1.0;
  p->reject_ms = 4.0;
}

void refraction_solution_free(refraction_solution *s)
{
  if (!s)
    return;
  free(s->stations);
  free(s->cell_mps);
  free(s->residual_ms);
  free(s);
}

typedef struct st_key { int32_t station; double along_sum; size_t n; } st_key;

static int cmp_i32(const void *a, const void *b)
{
  int32_t x = *(const int32_t *)a, y = *(const int32_t *)b;
  return (x > y) - (x < y);
}

/* Sorted unique station numbers of one kind. */
static int32_t *unique_stations(const refraction_pick *pk, size_t n, int kind, size_t *nu)
{
  int32_t *s = malloc((n ? n : 1) * sizeof *s);
  if (!s)
    return NULL;
  for (size_t i = 0; i < n; i++)
    s[i] = kind == REFRACTION_SOURCE ? pk[i].source_station : pk[i].receiver_station;
  qsort(s, n, sizeof *s, cmp_i32);
  size_t k = 0;
  for (size_t i = 0; i < n; i++)
    if (k == 0 || s[k - 1] != s[i])
      s[k++] = s[i];
  *nu = k;
  return s;
}

static size_t find_i32(const int32_t *a, size_t n, int32_t v)
{
  size_t lo = 0, hi = n;
  while (lo < hi) {
    size_t mid = lo + (hi - lo) / 2;
    if (a[mid] < v)
      lo = mid + 1;
    else
      hi = mid;
  }
  return lo < n && a[lo] == v ? lo : (size_t)-1;
}

typedef struct solver {
  const refraction_params *p;
  const refraction_pick *pk;
  size_t n;
  int32_t *src, *rec;          /* unique stations */
  size_t nsrc, nrec;
  size_t *src_unknown;         /* delay unknown of each source station */
  double *src_along, *rec_along;
  size_t ndelay, ncells, nunk;
  double first_cell;
  size_t *pick_src, *pick_rec; /* indexes into src/rec per pick */
} solver;

/* Adds the path from a to b (a < b) through the cells as coefficients. */
static size_t path_cells(const solver *sv, double a, double b, size_t *cols, double *vals,
                         size_t cap)
{
  double cm = sv->p->cell_m;
  size_t c0 = (size_t)floor((a - sv->first_cell) / cm);
  size_t k = 0;
  for (size_t c = c0; c < sv->ncells && k < cap; c++) {
    double lo = sv->first_cell + (double)c * cm, hi = lo + cm;
    if (lo >= b)
      break;
    double len = fmin(hi, b) - fmax(lo, a);
    if (len > 0.0) {
      cols[k] = sv->ndelay + c;
      vals[k] = len;
      k++;
    }
  }
  return k;
}

static int solve_once(solver *sv, const unsigned char *use, double *xsol, size_t *iters,
                      tz_err *err)
{
  lsq_matrix m;
  int rc = lsq_matrix_init(&m, sv->nunk, err);
  if (rc)
    return rc;
  size_t maxc = sv->ncells + 4;
  size_t *cols = malloc(maxc * sizeof *cols);
  double *vals = malloc(maxc * sizeof *vals);
  size_t nb = 0, bcap = sv->n + sv->ncells + sv->nsrc + 8;
  double *b = malloc(bcap * sizeof *b);
  size_t *nray = calloc(sv->ncells, sizeof *nray);
  if (!cols || !vals || !b || !nray) {
    rc = tz_fail(err, TZ_E_NOMEM, "refraction: system of %zu unknowns", sv->nunk);
    goto done;
  }
  for (size_t i = 0; i < sv->n; i++) {
    if (!use[i])
      continue;
    const refraction_pick *q = &sv->pk[i];
    double a = fmin(q->source_along_m, q->receiver_along_m);
    double e = fmax(q->source_along_m, q->receiver_along_m);
    size_t k = path_cells(sv, a, e, cols + 2, vals + 2, maxc - 2);
    for (size_t j = 0; j < k; j++)
      nray[cols[2 + j] - sv->ndelay]++;
    cols[0] = sv->src_unknown[sv->pick_src[i]];
    vals[0] = 1.0;
    cols[1] = sv->pick_rec[i];
    vals[1] = 1.0;
    double w = sqrt(q->weight);
    for (size_t j = 0; j < k + 2; j++)
      vals[j] *= w;
    if ((rc = lsq_matrix_add_row(&m, k + 2, cols, vals, err)))
      goto done;
    b[nb++] = w * q->time_ms;
  }
  /* Smooth refractor: first differences of neighbouring cells. */
  for (size_t c = 0; c + 1 < sv->ncells; c++) {
    double rays = 0.5 * (double)(nray[c] + nray[c + 1]);
    double coef = sv->p->smoothing * sv->p->cell_m * sqrt(rays > 1.0 ? rays : 1.0);
    if (coef < 1e-3 * sv->p->cell_m)
      coef = 1e-3 * sv->p->cell_m;    /* an empty cell still follows its neighbours */
    cols[0] = sv->ndelay + c, vals[0] = coef;
    cols[1] = sv->ndelay + c + 1, vals[1] = -coef;
    if ((rc = lsq_matrix_add_row(&m, 2, cols, vals, err)))
      goto done;
    b[nb++] = 0.0;
  }
  /* Sources with their own delay follow the receivers on either side. */
  for (size_t s = 0; s < sv->nsrc; s++) {
    if (sv->src_unknown[s] < sv->nrec)
      continue;
    double x = sv->src_along[s];
    size_t l = (size_t)-1, r = (size_t)-1;
    for (size_t k = 0; k < sv->nrec; k++) {
      if (sv->rec_along[k] <= x && (l == (size_t)-1 || sv->rec_along[k] > sv->rec_along[l]))
        l = k;
      if (sv->rec_along[k] >= x && (r == (size_t)-1 || sv->rec_along[k] < sv->rec_along[r]))
        r = k;
    }
    size_t k = 0;
    cols[k] = sv->src_unknown[s], vals[k++] = 1.0;
    if (l != (size_t)-1 && r != (size_t)-1 && l != r) {
      double f = (x - sv->rec_along[l]) / (sv->rec_along[r] - sv->rec_along[l]);
      cols[k] = l, vals[k++] = -(1.0 - f);
      cols[k] = r, vals[k++] = -f;
    } else {
      cols[k] = l != (size_t)-1 ? l : r, vals[k++] = -1.0;
    }
    if ((rc = lsq_matrix_add_row(&m, k, cols, vals, err)))
      goto done;
    b[nb++] = 0.0;
  }
  lsq_opts o;
  lsq_opts_init(&o);
  o.scale_columns = 1;
  o.atol = o.btol = 1e-14;
  o.max_iter = 20 * sv->nunk + 1000;
  lsq_info info;
  rc = lsq_solve(&m, b, &o, xsol, &info, err);
  *iters = info.iterations;
done:
  free(cols), free(vals), free(b), free(nray);
  lsq_matrix_free(&m);
  return rc;
}

static double model_time(const solver *sv, const double *x, size_t i)
{
  const refraction_pick *q = &sv->pk[i];
  double a = fmin(q->source_along_m, q->receiver_along_m);
  double e = fmax(q->source_along_m, q->receiver_along_m);
  double t = x[sv->src_unknown[sv->pick_src[i]]] + x[sv->pick_rec[i]];
  double cm = sv->p->cell_m;
  size_t c0 = (size_t)floor((a - sv->first_cell) / cm);
  for (size_t c = c0; c < sv->ncells; c++) {
    double lo = sv->first_cell + (double)c * cm, hi = lo + cm;
    if (lo >= e)
      break;
    double len = fmin(hi, e) - fmax(lo, a);
    if (len > 0.0)
      t += len * x[sv->ndelay + c];
  }
  return t;
}

const refraction_station *refraction_find(const refraction_solution *s, int kind,
                                          int32_t station)
{
  for (size_t i = 0; i < s->nstations; i++)
    if (s->stations[i].kind == kind && s->stations[i].station == station)
      return &s->stations[i];
  return NULL;
}

int refraction_solve(const refraction_params *p, const refraction_pick *pk, size_t n,
                     refraction_solution **out, tz_err *err)
{
  *out = NULL;
  if (n == 0)
    return tz_fail(err, TZ_E_ARG, "refraction: no picks in the refractor's offset range");
  if (n > REFRACTION_MAX_PICKS)
    return tz_fail(err, TZ_E_ARG, "refraction: %zu picks (at most %u)", n,
                   REFRACTION_MAX_PICKS);
  if (!(p->cell_m > 0.0) || !isfinite(p->cell_m))
    return tz_fail(err, TZ_E_ARG, "refraction: cell length %g m is not > 0", p->cell_m);
  if (!(p->smoothing >= 0.0) || !(p->reject_ms >= 0.0))
    return tz_fail(err, TZ_E_ARG, "refraction: smoothing and rejection must be >= 0");
  double amin = INFINITY, amax = -INFINITY;
  for (size_t i = 0; i < n; i++) {
    const refraction_pick *q = &pk[i];
    if (!isfinite(q->time_ms) || !isfinite(q->source_along_m) ||
        !isfinite(q->receiver_along_m) || !(q->weight > 0.0) || !isfinite(q->weight))
      return tz_fail(err, TZ_E_ARG, "refraction: pick %zu has a value that is not finite "
                     "(or a weight <= 0)", i);
    amin = fmin(amin, fmin(q->source_along_m, q->receiver_along_m));
    amax = fmax(amax, fmax(q->source_along_m, q->receiver_along_m));
  }
  solver sv;
  memset(&sv, 0, sizeof sv);
  sv.p = p, sv.pk = pk, sv.n = n;
  int rc = TZ_OK;
  unsigned char *use = NULL;
  double *x = NULL;
  refraction_solution *s = NULL;
  double *cnt_src = NULL, *cnt_rec = NULL;
  sv.src = unique_stations(pk, n, REFRACTION_SOURCE, &sv.nsrc);
  sv.rec = unique_stations(pk, n, REFRACTION_RECEIVER, &sv.nrec);
  if (!sv.src || !sv.rec)
    goto nomem;
  if (sv.nsrc + sv.nrec > REFRACTION_MAX_STATIONS) {
    rc = tz_fail(err, TZ_E_ARG, "refraction: %zu stations (at most %u)", sv.nsrc + sv.nrec,
                 REFRACTION_MAX_STATIONS);
    goto done;
  }
  double span = amax - amin;
  sv.first_cell = amin - 0.5 * p->cell_m;
  if (span / p->cell_m + 2.0 > (double)REFRACTION_MAX_CELLS) {
    rc = tz_fail(err, TZ_E_ARG, "refraction: line of %.0f m in cells of %g m: too many cells",
                 span, p->cell_m);
    goto done;
  }
  sv.ncells = (size_t)floor(span / p->cell_m) + 2;
  sv.src_unknown = malloc(sv.nsrc * sizeof *sv.src_unknown);
  sv.src_along = calloc(sv.nsrc, sizeof *sv.src_along);
  sv.rec_along = calloc(sv.nrec, sizeof *sv.rec_along);
  sv.pick_src = malloc(n * sizeof *sv.pick_src);
  sv.pick_rec = malloc(n * sizeof *sv.pick_rec);
  cnt_src = calloc(sv.nsrc, sizeof *cnt_src);
  cnt_rec = calloc(sv.nrec, sizeof *cnt_rec);
  use = malloc(n);
  if (!sv.src_unknown || !sv.src_along || !sv.rec_along || !sv.pick_src || !sv.pick_rec ||
      !cnt_src || !cnt_rec || !use)
    goto nomem;
  for (size_t i = 0; i < n; i++) {
    sv.pick_src[i] = find_i32(sv.src, sv.nsrc, pk[i].source_station);
    sv.pick_rec[i] = find_i32(sv.rec, sv.nrec, pk[i].receiver_station);
    sv.src_along[sv.pick_src[i]] += pk[i].source_along_m;
    cnt_src[sv.pick_src[i]] += 1.0;
    sv.rec_along[sv.pick_rec[i]] += pk[i].receiver_along_m;
    cnt_rec[sv.pick_rec[i]] += 1.0;
    use[i] = 1;
  }
  for (size_t k = 0; k < sv.nsrc; k++)
    sv.src_along[k] /= cnt_src[k];
  for (size_t k = 0; k < sv.nrec; k++)
    sv.rec_along[k] /= cnt_rec[k];
  /* Delay unknowns: receivers 0..nrec-1, then sources that need their own. */
  sv.ndelay = sv.nrec;
  for (size_t k = 0; k < sv.nsrc; k++) {
    size_t r = p->separate_sources ? (size_t)-1 : find_i32(sv.rec, sv.nrec, sv.src[k]);
    if (r != (size_t)-1 && fabs(sv.rec_along[r] - sv.src_along[k]) > 0.25 * p->cell_m)
      r = (size_t)-1;         /* the same number, but not the same place */
    sv.src_unknown[k] = r != (size_t)-1 ? r : sv.ndelay++;
  }
  sv.nunk = sv.ndelay + sv.ncells;
  x = malloc(sv.nunk * sizeof *x);
  s = calloc(1, sizeof *s);
  if (!x || !s)
    goto nomem;
  s->residual_ms = malloc(n * sizeof *s->residual_ms);
  s->cell_mps = malloc(sv.ncells * sizeof *s->cell_mps);
  s->stations = calloc(sv.nsrc + sv.nrec, sizeof *s->stations);
  if (!s->residual_ms || !s->cell_mps || !s->stations)
    goto nomem;

  for (int pass = 0; pass < 2; pass++) {
    if ((rc = solve_once(&sv, use, x, &s->iterations, err)))
      goto done;
    double ss = 0.0;
    size_t nu = 0;
    for (size_t i = 0; i < n; i++) {
      double r = pk[i].time_ms - model_time(&sv, x, i);
      s->residual_ms[i] = r;
      if (use[i])
        ss += r * r, nu++;
    }
    double rms = nu ? sqrt(ss / (double)nu) : 0.0;
    if (pass == 1 || p->reject_ms <= 0.0)
      break;
    double lim = fmax(p->reject_ms, 3.0 * rms);
    size_t dropped = 0;
    for (size_t i = 0; i < n; i++)
      if (fabs(s->residual_ms[i]) > lim)
        use[i] = 0, dropped++;
    if (dropped == 0)
      break;
  }
  /* Results. */
  double ss = 0.0;
  s->picks_used = 0;
  for (size_t i = 0; i < n; i++) {
    if (use[i]) {
      ss += s->residual_ms[i] * s->residual_ms[i];
      s->picks_used++;
    } else {
      s->residual_ms[i] = NAN;
    }
  }
  s->picks_rejected = n - s->picks_used;
  s->residual_rms_ms = s->picks_used ? sqrt(ss / (double)s->picks_used) : NAN;
  s->ncells = sv.ncells;
  s->cell_m = p->cell_m;
  s->first_cell_m = sv.first_cell;
  for (size_t c = 0; c < sv.ncells; c++)
    s->cell_mps[c] = x[sv.ndelay + c] > 0.0 ? 1000.0 / x[sv.ndelay + c] : NAN;
  s->nstations = sv.nsrc + sv.nrec;
  double *ssq = calloc(s->nstations, sizeof *ssq);
  if (!ssq)
    goto nomem;
  for (size_t i = 0; i < n; i++) {
    if (!use[i])
      continue;
    double r2 = s->residual_ms[i] * s->residual_ms[i];
    ssq[sv.pick_src[i]] += r2;
    s->stations[sv.pick_src[i]].picks++;
    ssq[sv.nsrc + sv.pick_rec[i]] += r2;
    s->stations[sv.nsrc + sv.pick_rec[i]].picks++;
  }
  for (size_t k = 0; k < s->nstations; k++) {
    refraction_station *st = &s->stations[k];
    int is_src = k < sv.nsrc;
    size_t j = is_src ? k : k - sv.nsrc;
    st->kind = is_src ? REFRACTION_SOURCE : REFRACTION_RECEIVER;
    st->station = is_src ? sv.src[j] : sv.rec[j];
    st->along_m = is_src ? sv.src_along[j] : sv.rec_along[j];
    st->delay_ms = x[is_src ? sv.src_unknown[j] : j];
    double fc = floor((st->along_m - sv.first_cell) / p->cell_m);
    size_t c = fc < 0.0 ? 0 : (size_t)fc;
    if (c >= sv.ncells)
      c = sv.ncells - 1;
    st->refractor_mps = s->cell_mps[c];
    st->residual_rms_ms = st->picks ? sqrt(ssq[k] / (double)st->picks) : NAN;
  }
  free(ssq);
  *out = s;
  s = NULL;
  goto done;
nomem:
  rc = tz_fail(err, TZ_E_NOMEM, "refraction: %zu picks", n);
done:
  free(sv.src), free(sv.rec), free(sv.src_unknown), free(sv.src_along), free(sv.rec_along);
  free(sv.pick_src), free(sv.pick_rec), free(cnt_src), free(cnt_rec), free(use), free(x);
  refraction_solution_free(s);
  return rc;
}
