/* bins.c -- processing lines, CMP numbers and fold.
 *
 * Straight lines follow tzero-geometry(1) exactly: s = (m - o) . u with u = (sin az,
 * cos az), CMP = first_cmp + floor(s / size + 1/2) (Sheriff & Geldart 1995; common practice), bin
 * centres at whole multiples of the bin size from the origin. Crooked lines
 * measure s along a polyline (first and last segments extended). Everything
 * works on differences from the origin or a node, so large projected
 * coordinates do not lose centimetres.
 *
 * The fold accumulator is a dense array over the CMP range seen so far that
 * grows (in either direction) as traces arrive: one streaming pass, memory in
 * proportion to the number of CMPs, never to the number of traces.
 *
 * Not here: trace positions (geometry.c), stacking (src/stack/).
 */
#include "tzero/bins.h"
#include "tzero/table.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

struct bins_line {
  bins_params p;
  double su, cu;               /* sin, cos of the azimuth */
  size_t n;                    /* crooked: node count (0 for straight) */
  double *x, *y;               /* nodes */
  double *len;                 /* segment lengths, n-1 */
  double *cum;                 /* along-line position of node i */
};

static int check_common(double size_m, double max_off, tz_err *err)
{
  if (!(size_m > 0) || !isfinite(size_m))
    return tz_fail(err, TZ_E_ARG, "bin size must be > 0 (got %g)", size_m);
  if (!(max_off >= 0) || !isfinite(max_off))
    return tz_fail(err, TZ_E_ARG, "off-line limit must be >= 0 (got %g)", max_off);
  return TZ_OK;
}

int bins_line_straight(bins_line **out, const bins_params *p, tz_err *err)
{
  if (check_common(p->size_m, p->max_off_line_m, err))
    return err->status;
  if (!isfinite(p->origin_x) || !isfinite(p->origin_y) || !isfinite(p->azimuth_deg))
    return tz_fail(err, TZ_E_ARG, "line origin and azimuth must be finite");
  bins_line *l = calloc(1, sizeof *l);
  if (!l)
    return tz_fail(err, TZ_E_NOMEM, "processing line");
  l->p = *p;
  geometry_sincos_deg(p->azimuth_deg, &l->su, &l->cu);
  *out = l;
  return TZ_OK;
}

int bins_line_crooked(bins_line **out, const double *node_x, const double *node_y, size_t n,
                      double size_m, int32_t first_cmp, double max_off_line_m, tz_err *err)
{
  if (check_common(size_m, max_off_line_m, err))
    return err->status;
  if (n < 2 || n > BINS_MAX_NODES)
    return tz_fail(err, TZ_E_ARG, "a crooked line needs 2 to %d nodes (got %zu)",
                   BINS_MAX_NODES, n);
  for (size_t i = 0; i < n; i++)
    if (!isfinite(node_x[i]) || !isfinite(node_y[i]))
      return tz_fail(err, TZ_E_ARG, "crooked-line node %zu is not finite", i + 1);
  bins_line *l = calloc(1, sizeof *l);
  if (!l)
    return tz_fail(err, TZ_E_NOMEM, "processing line");
  l->n = n;
  l->x = malloc(n * sizeof *l->x);
  l->y = malloc(n * sizeof *l->y);
  l->len = malloc(n * sizeof *l->len);
  l->cum = malloc(n * sizeof *l->cum);
  if (!l->x || !l->y || !l->len || !l->cum) {
    bins_line_free(l);
    return tz_fail(err, TZ_E_NOMEM, "processing line nodes");
  }
  memcpy(l->x, node_x, n * sizeof *l->x);
  memcpy(l->y, node_y, n * sizeof *l->y);
  l->cum[0] = 0;
  for (size_t i = 0; i + 1 < n; i++) {
    l->len[i] = hypot(l->x[i + 1] - l->x[i], l->y[i + 1] - l->y[i]);
    if (!(l->len[i] > 0)) {
      bins_line_free(l);
      return tz_fail(err, TZ_E_ARG, "crooked-line nodes %zu and %zu coincide", i + 1, i + 2);
    }
    l->cum[i + 1] = l->cum[i] + l->len[i];
  }
  double az = atan2(l->x[1] - l->x[0], l->y[1] - l->y[0]) * 180.0 / M_PI;
  l->p = (bins_params){ .origin_x = l->x[0], .origin_y = l->y[0],
                        .azimuth_deg = az < 0 ? az + 360.0 : az, .size_m = size_m,
                        .first_cmp = first_cmp, .max_off_line_m = max_off_line_m };
  geometry_sincos_deg(l->p.azimuth_deg, &l->su, &l->cu);
  *out = l;
  return TZ_OK;
}

void bins_line_free(bins_line *l)
{
  if (!l)
    return;
  free(l->x);
  free(l->y);
  free(l->len);
  free(l->cum);
  free(l);
}

int bins_line_is_crooked(const bins_line *l) { return l->n > 0; }
bins_params bins_line_get_params(const bins_line *l) { return l->p; }

/* Point at along-line position s on a crooked line (end segments extended). */
static void crooked_point(const bins_line *l, double s, double *x, double *y)
{
  size_t i = 0;
  while (i + 2 < l->n && s > l->cum[i + 1])
    i++;
  double t = (s - l->cum[i]) / l->len[i];
  *x = l->x[i] + t * (l->x[i + 1] - l->x[i]);
  *y = l->y[i] + t * (l->y[i + 1] - l->y[i]);
}

void bins_cmp_centre(const bins_line *l, int32_t cmp, double *x, double *y)
{
  double s = (double)((int64_t)cmp - l->p.first_cmp) * l->p.size_m;
  if (l->n) {
    crooked_point(l, s, x, y);
  } else {
    *x = l->p.origin_x + s * l->su;
    *y = l->p.origin_y + s * l->cu;
  }
}

int bins_locate(const bins_line *l, double mx, double my, bins_loc *loc)
{
  double s, off;
  if (!l->n) {
    double dx = mx - l->p.origin_x, dy = my - l->p.origin_y;
    s = dx * l->su + dy * l->cu;
    off = dx * l->cu - dy * l->su;
  } else {
    double best = INFINITY;
    s = off = 0;
    for (size_t i = 0; i + 1 < l->n; i++) {
      double ex = l->x[i + 1] - l->x[i], ey = l->y[i + 1] - l->y[i];
      double px = mx - l->x[i], py = my - l->y[i];
      double t = (px * ex + py * ey) / (l->len[i] * l->len[i]);
      if (t < 0 && i > 0)
        t = 0;
      if (t > 1 && i + 2 < l->n)
        t = 1;
      double qx = px - t * ex, qy = py - t * ey;
      double d = hypot(qx, qy);
      if (d < best) {
        best = d;
        s = l->cum[i] + t * l->len[i];
        double side = (px * ey - py * ex) / l->len[i];
        off = side < 0 ? -d : d;
      }
    }
  }
  double kd = floor(s / l->p.size_m + 0.5) + (double)l->p.first_cmp;
  int range = kd >= (double)INT32_MIN && kd <= (double)INT32_MAX;
  int64_t cmp = range ? (int64_t)kd : kd > 0 ? INT32_MAX : INT32_MIN;
  loc->cmp = (int32_t)cmp;
  loc->along_m = s;
  loc->off_line_m = off;
  bins_cmp_centre(l, loc->cmp, &loc->centre_x, &loc->centre_y);
  loc->status = !range ? BINS_OUT_OF_RANGE
                : l->p.max_off_line_m > 0 && fabs(off) > l->p.max_off_line_m ? BINS_OFF_LINE
                                                                               : BINS_IN;
  return loc->status;
}

/* ---- fitting ---- */

struct bins_fitter {
  double x0, y0;               /* first midpoint */
  double *p;                   /* x, y pairs relative to the first midpoint */
  size_t n, cap;
};

int bins_fitter_new(bins_fitter **out, tz_err *err)
{
  bins_fitter *f = calloc(1, sizeof *f);
  if (!f)
    return tz_fail(err, TZ_E_NOMEM, "line fitter");
  *out = f;
  return TZ_OK;
}

void bins_fitter_free(bins_fitter *f)
{
  if (!f)
    return;
  free(f->p);
  free(f);
}

int bins_fitter_add(bins_fitter *f, double mx, double my, tz_err *err)
{
  if (!isfinite(mx) || !isfinite(my))
    return tz_fail(err, TZ_E_FORMAT, "midpoint is not a finite number");
  if (f->n == f->cap) {
    size_t nc = f->cap ? f->cap * 2 : 4096;
    double *np = realloc(f->p, nc * 2 * sizeof *np);
    if (!np)
      return tz_fail(err, TZ_E_NOMEM, "line fitter (%zu midpoints)", f->n);
    f->p = np;
    f->cap = nc;
  }
  if (f->n == 0) {
    f->x0 = mx;
    f->y0 = my;
  }
  f->p[2 * f->n] = mx - f->x0;
  f->p[2 * f->n + 1] = my - f->y0;
  f->n++;
  return TZ_OK;
}

int bins_fitter_solve(const bins_fitter *f, double size_m, int32_t first_cmp,
                      double max_off_line_m, bins_params *p, bins_fit_report *rep,
                      tz_err *err)
{
  if (check_common(size_m, max_off_line_m, err))
    return err->status;
  size_t n = f->n;
  double cx = 0, cy = 0;
  for (size_t i = 0; i < n; i++) {
    cx += f->p[2 * i];
    cy += f->p[2 * i + 1];
  }
  if (n) {
    cx /= (double)n;
    cy /= (double)n;
  }
  double sxx = 0, syy = 0, sxy = 0;
  for (size_t i = 0; i < n; i++) {
    double dx = f->p[2 * i] - cx, dy = f->p[2 * i + 1] - cy;
    sxx += dx * dx;
    syy += dy * dy;
    sxy += dx * dy;
  }
  if (n < 2 || sxx + syy <= 0)
    return tz_fail(err, TZ_E_FORMAT,
                   "cannot fit a processing line: fewer than 2 distinct midpoints (%zu traces)",
                   n);
  /* Principal axis of the scatter: orthogonal least squares. */
  double th = 0.5 * atan2(2.0 * sxy, sxx - syy);
  double ux = cos(th), uy = sin(th);
  if (sxy == 0 && syy == 0) { ux = 1; uy = 0; }
  if (sxy == 0 && sxx == 0) { ux = 0; uy = 1; }
  /* Orient along the order of arrival. */
  double corr = 0, mi = 0.5 * (double)(n - 1);
  for (size_t i = 0; i < n; i++)
    corr += ((double)i - mi) * ((f->p[2 * i] - cx) * ux + (f->p[2 * i + 1] - cy) * uy);
  if (corr < 0) {
    ux = -ux;
    uy = -uy;
  }
  double az = atan2(ux, uy) * 180.0 / M_PI;
  if (az < 0)
    az += 360.0;
  double smin = INFINITY, smax = -INFINITY, ss = 0, dmax = 0;
  for (size_t i = 0; i < n; i++) {
    double dx = f->p[2 * i] - cx, dy = f->p[2 * i + 1] - cy;
    double s = dx * ux + dy * uy, d = fabs(dx * uy - dy * ux);
    if (s < smin) smin = s;
    if (s > smax) smax = s;
    ss += d * d;
    if (d > dmax) dmax = d;
  }
  p->origin_x = f->x0 + cx + smin * ux;
  p->origin_y = f->y0 + cy + smin * uy;
  p->azimuth_deg = az;
  p->size_m = size_m;
  p->first_cmp = first_cmp;
  p->max_off_line_m = max_off_line_m;
  if (rep) {
    rep->n = n;
    rep->rms_off_line_m = sqrt(ss / (double)n);
    rep->max_off_line_m = dmax;
    rep->length_m = smax - smin;
  }
  return TZ_OK;
}

int bins_params_from_layout(const geometry_layout *l, double size_m, int32_t first_cmp,
                            bins_params *p, tz_err *err)
{
  if (geometry_layout_check(l, err))
    return err->status;
  if (size_m <= 0)
    size_m = geometry_layout_default_bin(l);
  double su, cu;
  geometry_sincos_deg(l->azimuth_deg, &su, &cu);
  size_t ns = geometry_layout_shots(l), nc = geometry_layout_channels(l);
  double smin = INFINITY;
  /* Receiver positions are monotonic in the channel index, so the smallest
   * midpoint of a shot is at its first or last channel. */
  for (size_t k = 0; k < ns; k++)
    for (size_t c = 0; c < nc; c += (nc > 1 ? nc - 1 : 1)) {
      geometry_trace g;
      if (geometry_layout_trace(l, k, c, &g, err))
        return err->status;
      double s = (g.midpoint_x - l->first_station_x_m) * su +
                 (g.midpoint_y - l->first_station_y_m) * cu;
      if (s < smin)
        smin = s;
    }
  p->origin_x = l->first_station_x_m + smin * su;
  p->origin_y = l->first_station_y_m + smin * cu;
  p->azimuth_deg = l->azimuth_deg;
  p->size_m = size_m;
  p->first_cmp = first_cmp;
  p->max_off_line_m = 0;
  return check_common(size_m, 0, err);
}

/* ---- fold ---- */

typedef struct cmp_acc {
  int64_t fold;
  double omin, omax, osum;
  uint32_t hist[BINS_OFFSET_CLASSES];
} cmp_acc;

struct bins_fold {
  const bins_line *line;
  double oclass;
  int64_t base;                /* CMP number of acc[0] */
  size_t n;                    /* allocated entries */
  int64_t lo, hi;              /* range actually used; lo > hi when empty */
  int64_t traces;
  cmp_acc *acc;
};

int bins_fold_new(bins_fold **out, const bins_line *line, double offset_class_m, tz_err *err)
{
  if (!(offset_class_m > 0) || !isfinite(offset_class_m))
    return tz_fail(err, TZ_E_ARG, "offset class width must be > 0 (got %g)", offset_class_m);
  bins_fold *f = calloc(1, sizeof *f);
  if (!f)
    return tz_fail(err, TZ_E_NOMEM, "fold accumulator");
  f->line = line;
  f->oclass = offset_class_m;
  f->lo = 1;
  f->hi = 0;
  *out = f;
  return TZ_OK;
}

void bins_fold_free(bins_fold *f)
{
  if (!f)
    return;
  free(f->acc);
  free(f);
}

double bins_fold_offset_class(const bins_fold *f) { return f->oclass; }

static int grow(bins_fold *f, int64_t cmp, tz_err *err)
{
  int64_t lo = f->n ? f->base : cmp, hi = f->n ? f->base + (int64_t)f->n - 1 : cmp;
  if (cmp < lo) lo = cmp;
  if (cmp > hi) hi = cmp;
  int64_t want = hi - lo + 1;
  if (want > BINS_MAX_CMPS)
    return tz_fail(err, TZ_E_FORMAT,
                   "CMP %lld: the line would span more than %d CMPs (check coordinates, "
                   "bin size and line)", (long long)cmp, BINS_MAX_CMPS);
  /* Slack on the growing side so a line read in order grows geometrically. */
  int64_t slack = want / 2 + 64;
  if (slack > BINS_MAX_CMPS - want)
    slack = BINS_MAX_CMPS - want;
  if (f->n && cmp < f->base)
    lo -= slack;
  else
    hi += slack;
  size_t nn = (size_t)(hi - lo + 1);
  cmp_acc *na = calloc(nn, sizeof *na);
  if (!na)
    return tz_fail(err, TZ_E_NOMEM, "fold accumulator (%zu CMPs)", nn);
  if (f->n)
    memcpy(na + (f->base - lo), f->acc, f->n * sizeof *na);
  free(f->acc);
  f->acc = na;
  f->base = lo;
  f->n = nn;
  return TZ_OK;
}

int bins_fold_add(bins_fold *f, int32_t cmp, double offset_m, tz_err *err)
{
  if (!f->n || cmp < f->base || cmp >= f->base + (int64_t)f->n)
    if (grow(f, cmp, err))
      return err->status;
  cmp_acc *a = &f->acc[cmp - f->base];
  double o = fabs(offset_m);
  if (a->fold == 0 || o < a->omin) a->omin = o;
  if (a->fold == 0 || o > a->omax) a->omax = o;
  a->osum += o;
  a->fold++;
  double k = floor(o / f->oclass);
  size_t cls = k >= BINS_OFFSET_CLASSES - 1 ? BINS_OFFSET_CLASSES - 1 : (size_t)k;
  a->hist[cls]++;
  if (f->lo > f->hi) {
    f->lo = f->hi = cmp;
  } else {
    if (cmp < f->lo) f->lo = cmp;
    if (cmp > f->hi) f->hi = cmp;
  }
  f->traces++;
  return TZ_OK;
}

void bins_fold_get(const bins_fold *f, int32_t cmp, bins_cmp_stats *st)
{
  memset(st, 0, sizeof *st);
  st->cmp = cmp;
  if (f->line)
    bins_cmp_centre(f->line, cmp, &st->x, &st->y);
  if (!f->n || cmp < f->base || cmp >= f->base + (int64_t)f->n)
    return;
  const cmp_acc *a = &f->acc[cmp - f->base];
  st->fold = a->fold;
  if (a->fold) {
    st->offset_min_m = a->omin;
    st->offset_max_m = a->omax;
    st->offset_mean_m = a->osum / (double)a->fold;
  }
  memcpy(st->offset_hist, a->hist, sizeof st->offset_hist);
}

void bins_fold_summarise(const bins_fold *f, bins_fold_summary *s)
{
  memset(s, 0, sizeof *s);
  s->traces = f->traces;
  if (f->lo > f->hi) {
    s->first_cmp = 1;
    s->last_cmp = 0;
    return;
  }
  s->first_cmp = (int32_t)f->lo;
  s->last_cmp = (int32_t)f->hi;
  s->min = INT64_MAX;
  double sum = 0;
  for (int64_t c = f->lo; c <= f->hi; c++) {
    int64_t k = f->acc[c - f->base].fold;
    if (k < s->min) s->min = k;
    if (k > s->max) s->max = k;
    if (k > 0) s->cmps_live++;
    sum += (double)k;
  }
  s->mean = sum / (double)(f->hi - f->lo + 1);
}

int bins_fold_predict(bins_fold *f, const bins_line *line, const geometry_layout *l,
                      int64_t *off_line, tz_err *err)
{
  if (geometry_layout_check(l, err))
    return err->status;
  size_t ns = geometry_layout_shots(l), nc = geometry_layout_channels(l);
  int64_t off = 0;
  for (size_t k = 0; k < ns; k++)
    for (size_t c = 0; c < nc; c++) {
      geometry_trace g;
      bins_loc loc;
      if (geometry_layout_trace(l, k, c, &g, err))
        return err->status;
      if (bins_locate(line, g.midpoint_x, g.midpoint_y, &loc) != BINS_IN) {
        off++;
        continue;
      }
      if (bins_fold_add(f, loc.cmp, g.offset, err))
        return err->status;
    }
  if (off_line)
    *off_line = off;
  return TZ_OK;
}

/* ---- automatic crooked line ---- */

size_t bins_line_node_count(const bins_line *l) { return l->n; }

void bins_line_node(const bins_line *l, size_t i, double *x, double *y)
{
  *x = i < l->n ? l->x[i] : l->p.origin_x;
  *y = i < l->n ? l->y[i] : l->p.origin_y;
}

/* Point at along-line position s and the unit vector to the right of the line there. */
static void line_frame(const bins_line *l, double s, double *x, double *y, double *rx,
                       double *ry)
{
  if (!l->n) {
    *x = l->p.origin_x + s * l->su;
    *y = l->p.origin_y + s * l->cu;
    *rx = l->cu;
    *ry = -l->su;
    return;
  }
  size_t i = 0;
  while (i + 2 < l->n && s > l->cum[i + 1])
    i++;
  crooked_point(l, s, x, y);
  *rx = (l->y[i + 1] - l->y[i]) / l->len[i];
  *ry = -(l->x[i + 1] - l->x[i]) / l->len[i];
}

typedef struct along_off { double s, d; } along_off;

static int cmp_along(const void *a, const void *b)
{
  const along_off *x = a, *y = b;
  return (x->s > y->s) - (x->s < y->s);
}

/* First index of v[0..n) (sorted by s) with s >= t. */
static size_t first_at(const along_off *v, size_t n, double t)
{
  size_t lo = 0, hi = n;
  while (lo < hi) {
    size_t mid = lo + (hi - lo) / 2;
    if (v[mid].s < t)
      lo = mid + 1;
    else
      hi = mid;
  }
  return lo;
}

/* One smoothing pass: the midpoints located on `cur`, nodes every h along it
 * from the first midpoint to the last, each moved across the line by a local
 * straight-line fit (least squares) of the midpoints' signed off-line distance
 * against along-line position within a window of length w centred on the node
 * (a running linear fit, the box-weighted form of Cleveland's 1979 locally
 * weighted regression); near the ends the window is moved inside the data, so
 * the end nodes follow the line's trend instead of the few midpoints there. */
static int smooth_pass(const bins_fitter *f, const bins_line *cur, double w, along_off *v,
                       double **nx, double **ny, size_t *nn, tz_err *err)
{
  size_t n = f->n;
  for (size_t i = 0; i < n; i++) {
    bins_loc loc;
    bins_locate(cur, f->x0 + f->p[2 * i], f->y0 + f->p[2 * i + 1], &loc);
    v[i].s = loc.along_m;
    v[i].d = loc.off_line_m;
  }
  qsort(v, n, sizeof *v, cmp_along);
  /* Nodes every w / 8 (but not closer than a bin): a polyline turns at its nodes,
   * and midpoints either side of a turn would crowd or thin the bins there. */
  double s0 = v[0].s, s1 = v[n - 1].s, h = fmax(w / 8.0, cur->p.size_m);
  if (!(s1 - s0 > 0))
    return tz_fail(err, TZ_E_FORMAT, "cannot fit a crooked line: the midpoints do not spread "
                   "along the line");
  double k = ceil((s1 - s0) / h);
  if (k + 1 > BINS_MAX_NODES)
    k = BINS_MAX_NODES - 1;
  if (k < 1)
    k = 1;
  size_t m = (size_t)k + 1;
  h = (s1 - s0) / k;
  double *x = malloc(m * sizeof *x), *y = malloc(m * sizeof *y);
  if (!x || !y) {
    free(x);
    free(y);
    return tz_fail(err, TZ_E_NOMEM, "crooked-line nodes");
  }
  double last = 0;
  for (size_t j = 0; j < m; j++) {
    double s = s0 + (double)j * h, lo = s - 0.5 * w, hi = s + 0.5 * w;
    if (lo < s0) { hi += s0 - lo; lo = s0; }
    if (hi > s1) { lo -= hi - s1; hi = s1; }
    if (lo < s0) lo = s0;
    size_t a = first_at(v, n, lo), b = first_at(v, n, hi);
    while (b < n && v[b].s <= hi)
      b++;
    double c = 0, st = 0, sd = 0, stt = 0, std_ = 0;
    for (size_t i = a; i < b; i++) {
      double t = v[i].s - s;
      c += 1;
      st += t;
      sd += v[i].d;
      stt += t * t;
      std_ += t * v[i].d;
    }
    double den = c * stt - st * st, d = last;
    if (c >= 2 && den > 1e-9 * c * c * w * w) {
      double slope = (c * std_ - st * sd) / den;
      d = (sd - slope * st) / c;
    } else if (c >= 1) {
      d = sd / c;
    }
    last = d;
    double px, py, rx, ry;
    line_frame(cur, s, &px, &py, &rx, &ry);
    x[j] = px + d * rx;
    y[j] = py + d * ry;
  }
  *nx = x;
  *ny = y;
  *nn = m;
  return TZ_OK;
}

int bins_fitter_solve_crooked(const bins_fitter *f, double smoothing_m, double size_m,
                              int32_t first_cmp, double max_off_line_m, bins_line **out,
                              bins_fit_report *rep, tz_err *err)
{
  if (!(smoothing_m > 0) || !isfinite(smoothing_m))
    return tz_fail(err, TZ_E_ARG, "crooked-line smoothing length must be > 0 m (got %g)",
                   smoothing_m);
  bins_params p;
  if (bins_fitter_solve(f, size_m, first_cmp, max_off_line_m, &p, NULL, err))
    return err->status;
  size_t n = f->n;
  along_off *v = malloc(n * sizeof *v);
  bins_line *cur = NULL;
  int rc = !v ? tz_fail(err, TZ_E_NOMEM, "crooked-line fit (%zu midpoints)", n)
                      : bins_line_straight(&cur, &p, err);
  /* Three passes: the first smooths about the straight fit, the next two about
   * the previous polyline, so a bend of the line is followed, not cut. */
  for (int pass = 0; pass < BINS_CROOKED_PASSES && !rc; pass++) {
    double *nx = NULL, *ny = NULL;
    size_t nn = 0;
    bins_line *next = NULL;
    rc = smooth_pass(f, cur, smoothing_m, v, &nx, &ny, &nn, err);
    if (!rc)
      rc = bins_line_crooked(&next, nx, ny, nn, size_m, first_cmp, max_off_line_m, err);
    free(nx);
    free(ny);
    if (!rc) {
      bins_line_free(cur);
      cur = next;
    }
  }
  if (!rc && rep) {
    double ss = 0, dmax = 0, smin = INFINITY, smax = -INFINITY;
    for (size_t i = 0; i < n; i++) {
      bins_loc loc;
      bins_locate(cur, f->x0 + f->p[2 * i], f->y0 + f->p[2 * i + 1], &loc);
      ss += loc.off_line_m * loc.off_line_m;
      if (fabs(loc.off_line_m) > dmax) dmax = fabs(loc.off_line_m);
      if (loc.along_m < smin) smin = loc.along_m;
      if (loc.along_m > smax) smax = loc.along_m;
    }
    rep->n = n;
    rep->rms_off_line_m = sqrt(ss / (double)n);
    rep->max_off_line_m = dmax;
    rep->length_m = smax - smin;
  }
  free(v);
  if (rc) {
    bins_line_free(cur);
    return rc;
  }
  *out = cur;
  return TZ_OK;
}

int bins_nodes_load(const char *path, double **x, double **y, size_t *n, tz_err *err)
{
  table_reader *t;
  *x = *y = NULL;
  *n = 0;
  if (table_open(&t, path, err))
    return err->status;
  size_t nf, cap = 0;
  int rc = table_next(t, &nf, err);
  if (!rc && (nf < 2 || strcmp(table_field(t, 0), "x_m") || strcmp(table_field(t, 1), "y_m")))
    rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t), "expected the header row x_m,y_m");
  while (!rc) {
    if ((rc = table_next(t, &nf, err)) || nf == 0)
      break;
    if (*n == cap) {
      cap = cap ? cap * 2 : 64;
      if (cap > BINS_MAX_NODES * 2u) {
        rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t), "more than %d nodes", BINS_MAX_NODES);
        break;
      }
      double *nx = realloc(*x, cap * sizeof *nx), *ny = nx ? realloc(*y, cap * sizeof *ny) : NULL;
      if (nx) *x = nx;
      if (ny) *y = ny;
      if (!nx || !ny) {
        rc = tz_fail(err, TZ_E_NOMEM, "crooked-line nodes");
        break;
      }
    }
    if ((rc = table_field_f64(t, 0, "x_m", &(*x)[*n], err)) ||
        (rc = table_field_f64(t, 1, "y_m", &(*y)[*n], err)))
      break;
    if (*n && (*x)[*n] == (*x)[*n - 1] && (*y)[*n] == (*y)[*n - 1]) {
      rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t), "node repeats the previous node");
      break;
    }
    (*n)++;
  }
  table_close(t);
  if (!rc && *n < 2)
    rc = tz_fail(err, TZ_E_FORMAT, "a crooked line needs at least 2 nodes");
  if (rc) {
    tz_err_path(err, path);
    free(*x);
    free(*y);
    *x = *y = NULL;
    *n = 0;
  }
  return rc;
}
