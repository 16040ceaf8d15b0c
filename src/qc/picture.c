/* picture.c -- QC pictures: panels (section, gather, semblance) and fold charts.
 *
 * Design. Everything is drawn through the drawing context (draw.c: cairo for
 * PNG and PDF, SVG markup with real text) with fixed margins (picture.h)
 * around the plot area. The variable-density image is a raster of the plot
 * area's size filled by a plain nearest-neighbour rule (docs/pictures.md), so
 * the tests recompute every plot pixel independently:
 *   plot column c (0-based) shows trace  floor((c + 0.5) * ntraces  / plot_w),
 *   plot row    r           shows sample floor((r + 0.5) * nsamples / plot_h)
 * (a spike keeps its full colour, no smoothing hides it).
 * Clipping uses a percentile of |amplitude| computed with the usual linear
 * interpolation between order statistics (Hyndman and Fan 1996, definition 7;
 * NumPy's default), 99 % by default for seismic so that a few spikes or a
 * noisy trace do not wash out the section (common practice).
 * Wiggles: each trace's baseline sits at its column centre; an amplitude of
 * +-clip swings one trace spacing; positive lobes are filled black (variable
 * area); lines are anti-aliased vectors.
 *
 * Not here: reading QC reports beyond the four fields a fold chart needs
 * (qc.c owns the report), printing (the front end).
 */
#include "tzero/picture.h"
#include "tzero/gathers.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "util/json_doc.h"
#include "tzero/fileio.h"
#include "tzero/segy.h"

#define TICK_LEN 5
#define LABEL_PX 11.0
#define WIGGLE_MIN_SPACING 6.0                /* px between traces for AUTO wiggles */
#define FOLD_MAX_CMP_SPAN 10000000            /* CMP number range of one fold chart */
#define FOLD_GAP 24                           /* px between the fold and live panels */
#define FOLD_MAX_BYTES (512u << 20)

static const unsigned char black[3] = { 0, 0, 0 };
static const unsigned char fold_bar[3] = { 70, 110, 180 };
static const unsigned char live_bar[3] = { 220, 120, 30 };
static const unsigned char nominal_line[3] = { 0, 150, 0 };

/* ---------------------------------------------------------------- raster */

void picture_image_free(picture_image *img)
{
  if (!img)
    return;
  free(img->rgb);
  memset(img, 0, sizeof *img);
}

static int check_size(uint32_t w, uint32_t h, tz_err *err)
{
  if (w < PICTURE_MIN_WIDTH || w > PICTURE_MAX_SIDE)
    return tz_fail(err, TZ_E_ARG, "width %u px out of range %u..%u", w, PICTURE_MIN_WIDTH,
                   PICTURE_MAX_SIDE);
  if (h < PICTURE_MIN_HEIGHT || h > PICTURE_MAX_SIDE)
    return tz_fail(err, TZ_E_ARG, "height %u px out of range %u..%u", h, PICTURE_MIN_HEIGHT,
                   PICTURE_MAX_SIDE);
  return TZ_OK;
}

static int image_new(picture_image *img, uint32_t w, uint32_t h, tz_err *err)
{
  img->rgb = malloc((size_t)w * h * 3);
  if (!img->rgb)
    return tz_fail(err, TZ_E_NOMEM, "picture of %u x %u px", w, h);
  memset(img->rgb, 255, (size_t)w * h * 3);
  img->width = w;
  img->height = h;
  return TZ_OK;
}

/* ---------------------------------------------------------------- colours */

/* k-th smallest of v[0..n) (0-based), reordering v: Hoare's selection
 * (FIND, CACM 1961) with a median-of-three pivot; O(n) on average. */
static float select_kth(float *v, size_t n, size_t k)
{
  size_t lo = 0, hi = n - 1;
  while (lo < hi) {
    size_t mid = lo + (hi - lo) / 2;
    float a = v[lo], b = v[mid], c = v[hi];
    float piv = a < b ? (b < c ? b : a < c ? c : a) : (a < c ? a : b < c ? c : b);
    size_t i = lo, j = hi;
    while (i <= j) {
      while (v[i] < piv)
        i++;
      while (v[j] > piv)
        j--;
      if (i <= j) {
        float t = v[i];
        v[i] = v[j];
        v[j] = t;
        i++;
        if (j == 0)
          break;
        j--;
      }
    }
    if (k <= j)
      hi = j;
    else if (k >= i)
      lo = i;
    else
      return v[k];
  }
  return v[k];
}

int picture_abs_percentile(const float *a, size_t n, double p, double *out, tz_err *err)
{
  if (n == 0)
    return tz_fail(err, TZ_E_ARG, "percentile of no values");
  if (!(p >= 0 && p <= 100))
    return tz_fail(err, TZ_E_ARG, "percentile %g outside 0..100", p);
  float *v = malloc(n * sizeof *v);
  if (!v)
    return tz_fail(err, TZ_E_NOMEM, "%zu values for the clip percentile", n);
  for (size_t i = 0; i < n; i++)
    v[i] = fabsf(a[i]);
  double rank = p / 100.0 * (double)(n - 1);
  size_t lo = (size_t)floor(rank);
  if (lo > n - 1)
    lo = n - 1;
  double x0 = select_kth(v, n, lo), x1 = x0;
  /* the next order statistic is the smallest value above position lo */
  for (size_t i = lo + 1; i < n; i++)
    x1 = i == lo + 1 || v[i] < x1 ? v[i] : x1;
  *out = x0 + (rank - (double)lo) * (x1 - x0);
  free(v);
  return TZ_OK;
}

static unsigned char chan(double x)
{
  double r = floor(x + 0.5);
  return (unsigned char)(r < 0 ? 0 : r > 255 ? 255 : r);
}

/* Sequential map knots (u = a / clip in 0..1): navy, blue, cyan-green, yellow, red. */
static const struct { double u; unsigned char c[3]; } seq_knots[] = {
  { 0.00, { 0, 0, 96 } },    { 0.25, { 0, 96, 255 } }, { 0.50, { 0, 200, 200 } },
  { 0.75, { 255, 220, 0 } }, { 1.00, { 200, 0, 0 } },
};

void picture_colour(int map, double a, double clip, unsigned char rgb[3])
{
  double u = clip > 0 ? a / clip : 0;
  if (!(u == u))
    u = 0;
  if (u > 1)
    u = 1;
  if (u < -1)
    u = -1;
  switch (map) {
  case PICTURE_MAP_GREY:
    rgb[0] = rgb[1] = rgb[2] = chan(127.5 * (1.0 - u));
    break;
  case PICTURE_MAP_SEQUENTIAL: {
    if (u < 0)
      u = 0;
    size_t k = 0;
    while (k + 2 < sizeof seq_knots / sizeof seq_knots[0] && u > seq_knots[k + 1].u)
      k++;
    double f = (u - seq_knots[k].u) / (seq_knots[k + 1].u - seq_knots[k].u);
    for (int c = 0; c < 3; c++)
      rgb[c] = chan(seq_knots[k].c[c] + f * (seq_knots[k + 1].c[c] - seq_knots[k].c[c]));
    break;
  }
  default: /* diverging: white to red for positive, white to blue for negative */
    if (u >= 0) {
      rgb[0] = 255;
      rgb[1] = rgb[2] = chan(255.0 * (1.0 - u));
    } else {
      rgb[0] = rgb[1] = chan(255.0 * (1.0 + u));
      rgb[2] = 255;
    }
    break;
  }
}

/* ---------------------------------------------------------------- axes */

/* Horizontal positions of trace values: fractional trace index of value v
 * along monotonic xs (or -1 when outside). */
static double trace_pos(const double *xs, size_t n, double v)
{
  int inc = xs[n - 1] > xs[0];
  if (n == 1)
    return v == xs[0] ? 0 : -1;
  if (inc ? (v < xs[0] || v > xs[n - 1]) : (v > xs[0] || v < xs[n - 1]))
    return -1;
  size_t lo = 0, hi = n - 1;
  while (hi - lo > 1) {
    size_t mid = (lo + hi) / 2;
    if (inc ? xs[mid] <= v : xs[mid] >= v)
      lo = mid;
    else
      hi = mid;
  }
  return (double)lo + (v - xs[lo]) / (xs[hi] - xs[lo]);
}

static int monotonic(const double *xs, size_t n)
{
  if (!xs || n == 0)
    return 0;
  int inc = n < 2 || xs[1] > xs[0];
  for (size_t i = 1; i < n; i++)
    if (inc ? !(xs[i] > xs[i - 1]) : !(xs[i] < xs[i - 1]))
      return 0;
  for (size_t i = 0; i < n; i++)
    if (!isfinite(xs[i]))
      return 0;
  return 1;
}

static void tick_down(picture_ctx *c, double x, double y)
{
  double xs[2] = { x, x }, ys[2] = { y - 1, y - 1 - TICK_LEN };
  picture_ctx_polyline(c, xs, ys, 2, 1, 0, black);
}

static void top_label(picture_ctx *c, double x, double y, const char *lab)
{
  picture_ctx_text(c, x, y - TICK_LEN - 4, lab, LABEL_PX, PICTURE_ANCHOR_CENTRE, 0, 0, black);
}

/* The axis name in the top-left corner, on the row of the labels above the plot. */
static void corner_title(picture_ctx *c, double x, double y, const char *xlabel)
{
  picture_ctx_text(c, x - 8, y - TICK_LEN - 4, xlabel, 12, PICTURE_ANCHOR_RIGHT, 1, 0, black);
}

/* Ticks and labels above the plot for per-slot values (slot i centred at
 * x + (i + 0.5) * w / n). With xs NULL the values are 1..n. Label spacing
 * follows the measured width of the widest label, so labels never overlap. */
static void top_axis(picture_ctx *c, double x, double y, double w, const double *xs, size_t n,
                     const char *xlabel)
{
  double first = xs ? xs[0] : 1, last = xs ? xs[n - 1] : (double)n;
  double lo = fmin(first, last), hi = fmax(first, last);
  double px_per_unit = n > 1 ? w / (double)n * (double)(n - 1) / (hi - lo) : 0;
  char lab[32];
  snprintf(lab, sizeof lab, "%.0f", fmax(fabs(lo), fabs(hi)) * (lo < 0 ? -1 : 1));
  double min_px = picture_ctx_text_width(c, lab, LABEL_PX, 0) + 16;
  double step = n > 1 && hi > lo ? picture_nice_step(min_px / px_per_unit) : 1;
  int whole = 1; /* CMP and trace numbers: no ticks between them */
  for (size_t i = 0; xs && i < n && whole; i++)
    whole = xs[i] == floor(xs[i]);
  if (whole && step < 1)
    step = 1;
  double last_right = -1e30;
  for (double v = ceil(lo / step - 1e-9) * step; v <= hi + step * 1e-9; v += step) {
    double fi = xs ? trace_pos(xs, n, v) : v - 1;
    if (fi < 0)
      continue;
    double xi = floor(x + (fi + 0.5) * w / (double)n) + 0.5;
    tick_down(c, xi, y);
    if (fabs(v) < step * 1e-9)
      v = 0;
    snprintf(lab, sizeof lab, step >= 1 ? "%.0f" : "%g", v);
    double lw = picture_ctx_text_width(c, lab, LABEL_PX, 0);
    if (xi - lw / 2 > last_right + 4) {
      top_label(c, xi, y, lab);
      last_right = xi + lw / 2;
    }
  }
  corner_title(c, x, y, xlabel);
}

/* Boundaries between gathers side by side: a tick three times the usual length
 * above the plot at the edge between the last trace of one group and the first
 * of the next; with labels, each group's value at its centre. */
static void group_axis(picture_ctx *c, double x, double y, double w, const picture_panel *p,
                       const char *xlabel)
{
  double dx = w / (double)p->ntraces, last_right = -1e30;
  for (size_t g = 0; g < p->nstarts; g++) {
    size_t a = p->group_starts[g];
    size_t b = g + 1 < p->nstarts ? p->group_starts[g + 1] : p->ntraces;
    if (a >= p->ntraces || b <= a)
      continue;
    if (g > 0) {
      double xb = floor(x + (double)a * dx) + 0.5;
      double xs[2] = { xb, xb }, ys[2] = { y - 1, y - 1 - 3 * TICK_LEN };
      picture_ctx_polyline(c, xs, ys, 2, 1, 0, black);
    }
    if (!p->group_labels || !p->xvalue)
      continue;
    char lab[32];
    snprintf(lab, sizeof lab, "%g%s%s", p->xvalue[a], p->group_unit ? " " : "",
             p->group_unit ? p->group_unit : "");
    double xc = floor(x + 0.5 * (double)(a + b) * dx) + 0.5;
    double lw = picture_ctx_text_width(c, lab, LABEL_PX, 0);
    if (xc - lw / 2 > last_right + 4) {
      tick_down(c, xc, y);
      top_label(c, xc, y, lab);
      last_right = xc + lw / 2;
    }
  }
  if (p->group_labels)
    corner_title(c, x, y, xlabel);
}

/* Labels for values that do not run monotonically (offsets of a split-spread
 * gather): every k-th trace is labelled with its own value, k the smallest
 * stride that keeps the labels apart. */
static void trace_labels(picture_ctx *c, double x, double y, double w, const double *xs,
                         size_t n, const char *xlabel)
{
  double dx = w / (double)n, widest = 0;
  char lab[32];
  for (size_t i = 0; i < n; i++) {
    snprintf(lab, sizeof lab, "%g", xs[i]);
    widest = fmax(widest, picture_ctx_text_width(c, lab, LABEL_PX, 0));
  }
  size_t k = (size_t)ceil((widest + 8) / dx);
  k = k < 1 ? 1 : k;
  for (size_t i = 0; i < n; i += k) {
    double xi = floor(x + ((double)i + 0.5) * dx) + 0.5;
    tick_down(c, xi, y);
    snprintf(lab, sizeof lab, "%g", xs[i]);
    top_label(c, xi, y, lab);
  }
  corner_title(c, x, y, xlabel);
}

/* Time (or any value) axis on the left: v0 at pixel row y0 to v1 at row y1 (pixel centres). */
static void left_axis(picture_ctx *c, double x, double y0, double y1, double v0, double v1,
                      const char *title)
{
  picture_frame f = { .x = x, .w = 1, .x0 = 0, .x1 = 1 };
  /* a frame whose bottom edge is y0 + 0.5 at v0 and top edge y1 + 0.5 at v1 */
  f.y = y1 + 0.5;
  f.h = y0 - y1;
  f.y0 = v0;
  f.y1 = v1;
  if (!(fabs(f.h) > 0) || !(fabs(v1 - v0) > 0))
    return;
  if (f.h < 0) { /* value grows upward on the page: swap to keep h positive */
    f.y = y0 + 0.5;
    f.h = y1 - y0;
    f.y0 = v1;
    f.y1 = v0;
  }
  picture_axis_y(c, &f, PICTURE_SIDE_LEFT, title, 0);
}

/* ---------------------------------------------------------------- panels */

void picture_default_size(size_t ntraces, size_t nsamples, uint32_t *width, uint32_t *height)
{
  /* About 1200 px of plot for a line, 2..12 px per trace, 600..1000 px of time. */
  size_t per = ntraces ? 1200 / ntraces : 1;
  per = per < 1 ? 1 : per > 12 ? 12 : per;
  size_t pw = ntraces * per;
  pw = pw < 600 ? 600 : pw > 4000 ? 4000 : pw;
  size_t ph = nsamples < 600 ? 600 : nsamples > 1000 ? 1000 : nsamples;
  *width = (uint32_t)(pw + PICTURE_MARGIN_LEFT + PICTURE_MARGIN_RIGHT);
  *height = (uint32_t)(ph + PICTURE_MARGIN_TOP + PICTURE_MARGIN_BOTTOM);
}

/* The density raster of the plot area (nearest neighbour, docs/pictures.md). */
static int density_raster(const picture_panel *p, int map, double clip, const picture_info *in,
                          picture_image *ras, tz_err *err)
{
  int rc = image_new(ras, in->plot_w, in->plot_h, err);
  if (rc)
    return rc;
  size_t *ti = malloc(in->plot_w * sizeof *ti);
  if (!ti) {
    picture_image_free(ras);
    return tz_fail(err, TZ_E_NOMEM, "density raster");
  }
  for (uint32_t col = 0; col < in->plot_w; col++)
    ti[col] = (size_t)(((double)col + 0.5) * (double)p->ntraces / in->plot_w);
  for (uint32_t r = 0; r < in->plot_h; r++) {
    size_t j = (size_t)(((double)r + 0.5) * (double)p->nsamples / in->plot_h);
    unsigned char *row = ras->rgb + 3 * (size_t)r * in->plot_w;
    for (uint32_t col = 0; col < in->plot_w; col++)
      picture_colour(map, p->data[ti[col] * p->nsamples + j], clip, row + 3 * col);
  }
  free(ti);
  return TZ_OK;
}

/* Amplitude of trace i at fractional sample s, linear between samples. */
static double sample_at(const picture_panel *p, size_t i, double s)
{
  const float *t = p->data + i * p->nsamples;
  if (s <= 0)
    return t[0];
  size_t k = (size_t)s;
  if (k + 1 >= p->nsamples)
    return t[p->nsamples - 1];
  double f = s - (double)k;
  return t[k] + f * (t[k + 1] - t[k]);
}

/* One point per pixel row (or per sample when samples are sparser): the
 * wiggle line and, for variable area, the positive lobes filled. */
static int draw_wiggles(picture_ctx *c, const picture_panel *p, double clip,
                        const picture_info *in, tz_err *err)
{
  double dx = (double)in->plot_w / (double)p->ntraces;
  size_t np = in->plot_h;
  double *xs = malloc((2 * np + 2) * sizeof *xs), *ys = malloc((2 * np + 2) * sizeof *ys);
  double *fx = malloc((2 * np + 2) * sizeof *fx), *fy = malloc((2 * np + 2) * sizeof *fy);
  if (!xs || !ys || !fx || !fy) {
    free(xs), free(ys), free(fx), free(fy);
    return tz_fail(err, TZ_E_NOMEM, "wiggles of %zu traces", p->ntraces);
  }
  double xmax = in->plot_x + in->plot_w;
  for (size_t i = 0; i < p->ntraces; i++) {
    double base = (double)in->plot_x + ((double)i + 0.5) * dx;
    size_t nf = 0;
    for (size_t r = 0; r < np; r++) {
      double s = ((double)r + 0.5) * (double)p->nsamples / in->plot_h - 0.5;
      double u = sample_at(p, i, s) / clip;
      u = u > 1 ? 1 : u < -1 ? -1 : u;
      xs[r] = fmin(fmax(base + u * dx, in->plot_x), xmax);
      ys[r] = (double)in->plot_y + (double)r + 0.5;
      fx[nf] = u > 0 ? xs[r] : base;
      fy[nf++] = ys[r];
    }
    /* the lobes: the curve clipped at the baseline, closed along it */
    fx[nf] = base, fy[nf++] = ys[np - 1];
    fx[nf] = base, fy[nf++] = ys[0];
    picture_ctx_polygon(c, fx, fy, nf, black);
    picture_ctx_polyline(c, xs, ys, np, 0.8, 0, black);
  }
  free(xs), free(ys), free(fx), free(fy);
  return TZ_OK;
}

/* Test panels: a black line between groups of traces and each group's label
 * at its top left, on a white box so it reads over the data. */
static void draw_groups(picture_ctx *c, const picture_panel *p, const picture_info *in)
{
  static const unsigned char white[3] = { 255, 255, 255 };
  double cols = (double)in->plot_w / (double)p->ntraces;
  picture_ctx_group(c, "class=\"panels\"");
  for (size_t i = 0; i < p->ntraces; i++) {
    if (i > 0 && p->group[i] == p->group[i - 1])
      continue;
    double x = in->plot_x + (double)i * cols;
    if (i > 0) {
      double xs[2] = { floor(x) + 0.5, floor(x) + 0.5 };
      double ys[2] = { in->plot_y, in->plot_y + in->plot_h };
      picture_ctx_polyline(c, xs, ys, 2, 2, 0, black);
    }
    int32_t g = p->group[i];
    if (g < 1 || (size_t)g > p->ngroups || !p->group_label[g - 1])
      continue;
    /* the whole "KEY = VALUE", else its last key part, else the value, whichever
     * fits the panel's width */
    size_t j = i;
    while (j < p->ntraces && p->group[j] == g)
      j++;
    double room = (double)(j - i) * cols - 8;
    const char *lab = p->group_label[g - 1], *eq = strstr(lab, " = ");
    double tw = picture_ctx_text_width(c, lab, 12, 1);
    if (tw > room && eq) {
      const char *k = eq;
      while (k > lab && k[-1] != '.' && k[-1] != ']')
        k--;
      lab = k;
      tw = picture_ctx_text_width(c, lab, 12, 1);
      if (tw > room) {
        lab = eq + 3;
        tw = picture_ctx_text_width(c, lab, 12, 1);
      }
    }
    picture_ctx_fill_rect(c, x + 3, in->plot_y + 3, tw + 6, 17, white);
    picture_ctx_text(c, x + 6, in->plot_y + 16, lab, 12, PICTURE_ANCHOR_LEFT, 1, 0, black);
  }
  picture_ctx_group_end(c);
}

static void plot_area(uint32_t w, uint32_t h, int right, picture_info *in)
{
  in->plot_x = PICTURE_MARGIN_LEFT;
  in->plot_y = PICTURE_MARGIN_TOP;
  in->plot_w = w - PICTURE_MARGIN_LEFT - (uint32_t)right;
  in->plot_h = h - PICTURE_MARGIN_TOP - PICTURE_MARGIN_BOTTOM;
  in->width = w;
  in->height = h;
}

/* Lines over a panel (mutes): line j joins its time at the centre of each trace,
 * broken where a trace has none (NAN); colours and dashes per line in
 * docs/pictures.md. */
static void draw_lines(picture_ctx *c, const picture_panel *p, const picture_info *in,
                       double rows_per_sample)
{
  static const unsigned char col[PICTURE_MAX_LINES][3] = {
    { 230, 120, 0 }, { 140, 0, 170 }, { 140, 0, 170 }, { 0, 120, 120 } };
  static const char *const names[PICTURE_MAX_LINES] = { "top", "inner-start", "inner-end",
                                                        "bottom" };
  double cols_per_trace = (double)in->plot_w / (double)p->ntraces;
  double *x = malloc(p->ntraces * sizeof *x), *y = malloc(p->ntraces * sizeof *y);
  if (!x || !y) {
    free(x);
    free(y);
    return;
  }
  size_t nl = p->nlines < PICTURE_MAX_LINES ? p->nlines : PICTURE_MAX_LINES;
  double ymin = in->plot_y, ymax = in->plot_y + in->plot_h;
  for (size_t j = 0; j < nl; j++) {
    char attrs[64];
    snprintf(attrs, sizeof attrs, "class=\"mute-%s\"", names[j]);
    picture_ctx_group(c, attrs);
    size_t n = 0;
    for (size_t i = 0; i <= p->ntraces; i++) {
      double tm = i < p->ntraces ? p->lines_ms[i * p->nlines + j] : NAN;
      if (isfinite(tm)) {
        double js = (tm - p->time_first_ms) / p->interval_ms;
        double yy = in->plot_y + (js + 0.5) * rows_per_sample - 0.5;
        x[n] = in->plot_x + ((double)i + 0.5) * cols_per_trace - 0.5;
        y[n++] = yy < ymin ? ymin : yy > ymax ? ymax : yy;
        continue;
      }
      if (n == 1)
        picture_ctx_dot(c, x[0], y[0], 1.5, col[j]);
      else if (n > 1)
        picture_ctx_polyline(c, x, y, n, 2.0, j == 2, col[j]);
      n = 0;
    }
    picture_ctx_group_end(c);
  }
  free(x);
  free(y);
}

int picture_draw_panel(const picture_panel *p, const picture_opts *o, int format,
                       picture_ctx **out, picture_info *info, tz_err *err)
{
  *out = NULL;
  if (!p->data || p->ntraces == 0 || p->nsamples == 0)
    return tz_fail(err, TZ_E_ARG, "empty panel: %zu traces of %zu samples", p->ntraces,
                   p->nsamples);
  if (p->nsamples > PICTURE_MAX_SAMPLES / p->ntraces)
    return tz_fail(err, TZ_E_ARG, "panel of %zu traces x %zu samples exceeds %u values",
                   p->ntraces, p->nsamples, PICTURE_MAX_SAMPLES);
  if (!(p->interval_ms > 0) || !isfinite(p->time_first_ms))
    return tz_fail(err, TZ_E_ARG, "sample interval %g ms must be positive", p->interval_ms);
  int map = o->map;
  if (map < PICTURE_MAP_DIVERGING || map > PICTURE_MAP_SEQUENTIAL)
    return tz_fail(err, TZ_E_ARG, "unknown colour map %d", map);
  double pct = o->clip_percentile;
  if (pct == 0)
    pct = map == PICTURE_MAP_SEQUENTIAL ? 100 : 99;
  if (!(pct > 0 && pct <= 100))
    return tz_fail(err, TZ_E_ARG, "clip percentile %g outside (0, 100]", pct);
  uint32_t w = o->width, h = o->height, dw, dh;
  picture_default_size(p->ntraces, p->nsamples, &dw, &dh);
  w = w ? w : dw;
  h = h ? h : dh;
  int rc = check_size(w, h, err);
  if (rc)
    return rc;

  picture_info in = { 0 };
  plot_area(w, h, PICTURE_MARGIN_RIGHT, &in);
  if (o->clip_value > 0) {
    in.clip = o->clip_value;
  } else {
    in.clip_percentile = pct;
    if ((rc = picture_abs_percentile(p->data, p->ntraces * p->nsamples, pct, &in.clip, err)))
      return rc;
    if (!(in.clip > 0))
      in.clip = 1; /* an all-zero panel: every sample gets the zero colour */
  }
  int style = o->style;
  if (style == PICTURE_STYLE_AUTO) /* no wiggles over semblance: it is never negative */
    style = map != PICTURE_MAP_SEQUENTIAL &&
                    (double)in.plot_w / (double)p->ntraces >= WIGGLE_MIN_SPACING
                ? PICTURE_STYLE_BOTH
                : PICTURE_STYLE_DENSITY;
  if (style < PICTURE_STYLE_DENSITY || style > PICTURE_STYLE_BOTH)
    return tz_fail(err, TZ_E_ARG, "unknown style %d", style);
  in.style = style;

  picture_ctx *c = NULL;
  if ((rc = picture_ctx_new(&c, format, w, h, err)))
    return rc;
  if (style != PICTURE_STYLE_WIGGLE) {
    picture_image ras = { 0 };
    rc = density_raster(p, map, in.clip, &in, &ras, err);
    if (!rc)
      rc = picture_ctx_image(c, &ras, in.plot_x, in.plot_y, 0, 0, err);
    picture_image_free(&ras);
  }
  if (!rc && style != PICTURE_STYLE_DENSITY)
    rc = draw_wiggles(c, p, in.clip, &in, err);
  if (rc) {
    picture_ctx_free(c);
    return rc;
  }
  picture_frame pf = { .x = in.plot_x, .y = in.plot_y, .w = in.plot_w, .h = in.plot_h };
  picture_frame_draw(c, &pf);

  /* time axis: sample j is centred on row (j + 0.5) * plot_h / ns - 0.5 */
  double rows_per_sample = (double)in.plot_h / (double)p->nsamples;
  if (p->marks_ms) {
    /* marks (first-break picks): a dot at the trace centre and the marked time */
    static const unsigned char mark[3] = { 0, 150, 0 };
    double cols_per_trace = (double)in.plot_w / (double)p->ntraces;
    double r = cols_per_trace >= 6.0 ? 3.5 : 2.0;
    picture_ctx_group(c, "class=\"marks\"");
    for (size_t i = 0; i < p->ntraces; i++) {
      double tm = p->marks_ms[i], js = (tm - p->time_first_ms) / p->interval_ms;
      if (!isfinite(tm) || js < -0.5 || js > (double)p->nsamples - 0.5)
        continue;
      picture_ctx_dot(c, in.plot_x + ((double)i + 0.5) * cols_per_trace - 0.5,
                      in.plot_y + (js + 0.5) * rows_per_sample - 0.5, r, mark);
    }
    picture_ctx_group_end(c);
  }
  if (p->group && p->ngroups)
    draw_groups(c, p, &in);
  if (p->lines_ms && p->nlines)
    draw_lines(c, p, &in, rows_per_sample);
  double t_last = p->time_first_ms + (double)(p->nsamples - 1) * p->interval_ms;
  left_axis(c, in.plot_x, in.plot_y + 0.5 * rows_per_sample - 0.5,
            in.plot_y + ((double)p->nsamples - 0.5) * rows_per_sample - 0.5, p->time_first_ms,
            t_last, "Time (ms)");
  int mono = monotonic(p->xvalue, p->ntraces);
  int finite = p->xvalue != NULL;
  for (size_t i = 0; finite && i < p->ntraces; i++)
    finite = isfinite(p->xvalue[i]);
  const char *xlabel = mono || finite ? (p->xlabel ? p->xlabel : "X") : "Trace";
  int grouped = p->group_starts && p->nstarts > 1;
  if (grouped)
    group_axis(c, in.plot_x, in.plot_y, in.plot_w, p, xlabel);
  if (grouped && p->group_labels && finite)
    ;   /* the groups carry the labels */
  else if (!mono && finite)
    trace_labels(c, in.plot_x, in.plot_y, in.plot_w, p->xvalue, p->ntraces, xlabel);
  else
    top_axis(c, in.plot_x, in.plot_y, in.plot_w, mono ? p->xvalue : NULL, p->ntraces, xlabel);

  char cap[256];
  const char *legend = map == PICTURE_MAP_GREY         ? "black positive, white negative"
                       : map == PICTURE_MAP_SEQUENTIAL ? "navy at 0 to red at the clip"
                                                       : "red positive, blue negative";
  if (style == PICTURE_STYLE_WIGGLE)
    legend = "wiggles, positive lobes filled";
  else if (style == PICTURE_STYLE_BOTH)
    legend = map == PICTURE_MAP_GREY ? "wiggles over density, black positive"
                                     : "wiggles over density, red positive";
  if (in.clip_percentile > 0)
    snprintf(cap, sizeof cap, "Clip %.4g (%g%% of |amplitude|); %s", in.clip, pct, legend);
  else
    snprintf(cap, sizeof cap, "Clip %.4g; %s", in.clip, legend);
  picture_title(c, p->title, cap);
  if (style != PICTURE_STYLE_WIGGLE) {
    double bh = fmin(in.plot_h, 280);
    picture_colour_bar(c, in.plot_x + in.plot_w + 34, in.plot_y, 14, bh, map, in.clip,
                       map == PICTURE_MAP_SEQUENTIAL ? "Semblance" : "Amplitude");
  }
  if (info)
    *info = in;
  *out = c;
  return TZ_OK;
}

/* A PNG canvas handed back as a raster. */
static int to_raster(picture_ctx *c, picture_image *img, tz_err *err)
{
  int rc = picture_ctx_raster(c, img, err);
  picture_ctx_free(c);
  return rc;
}

int picture_render_panel(const picture_panel *p, const picture_opts *o, picture_image *img,
                         picture_info *info, tz_err *err)
{
  picture_ctx *c = NULL;
  memset(img, 0, sizeof *img);
  int rc = picture_draw_panel(p, o, PICTURE_FORMAT_PNG, &c, info, err);
  return rc ? rc : to_raster(c, img, err);
}

/* ---------------------------------------------------------------- fold chart */

void picture_fold_free(picture_fold *f)
{
  if (!f)
    return;
  free(f->rows);
  f->rows = NULL;
  f->n = 0;
}

static int json_num(const cJSON *o, const char *key, double *out, const char *where, size_t i,
                    tz_err *err)
{
  char path[96];
  if (i == (size_t)-1)
    snprintf(path, sizeof path, "%s.%s", where, key);
  else
    snprintf(path, sizeof path, "%s[%zu].%s", where, i, key);
  return json_doc_number(cJSON_GetObjectItemCaseSensitive(o, key), path, -HUGE_VAL, HUGE_VAL,
                         out, TZ_E_FORMAT, err);
}

static int fold_from_tree(picture_fold *out, const cJSON *root, tz_err *err)
{
  const cJSON *fmt = cJSON_GetObjectItemCaseSensitive(root, "format");
  if (!cJSON_IsString(fmt) || strcmp(fmt->valuestring, "tzero-qc/1"))
    return tz_fail(err, TZ_E_FORMAT, "$.format: expected \"tzero-qc/1\"");
  const cJSON *cm = cJSON_GetObjectItemCaseSensitive(root, "cmps");
  if (!cJSON_IsArray(cm))
    return tz_fail(err, TZ_E_FORMAT, "$.cmps: expected an array");
  const cJSON *fo = cJSON_GetObjectItemCaseSensitive(root, "fold");
  if (!cJSON_IsObject(fo))
    return tz_fail(err, TZ_E_FORMAT, "$.fold: expected an object");
  double nominal = 0;
  int rc = json_num(fo, "nominal", &nominal, "$.fold", (size_t)-1, err);
  if (rc)
    return rc;
  size_t n = (size_t)cJSON_GetArraySize(cm);
  if (n == 0)
    return tz_fail(err, TZ_E_FORMAT, "$.cmps: no CMPs to chart");
  picture_fold_row *rows = calloc(n, sizeof *rows);
  if (!rows)
    return tz_fail(err, TZ_E_NOMEM, "%zu fold rows", n);
  size_t i = 0;
  for (const cJSON *c = cm->child; c; c = c->next, i++) {
    double cmp = 0, fold = 0, live = 0;
    if ((rc = json_num(c, "cmp", &cmp, "$.cmps", i, err)) ||
        (rc = json_num(c, "fold", &fold, "$.cmps", i, err)) ||
        (rc = json_num(c, "live_fraction", &live, "$.cmps", i, err)))
      break;
    if (cmp != floor(cmp) || fabs(cmp) > 2147483647.0) {
      rc = tz_fail(err, TZ_E_FORMAT, "$.cmps[%zu].cmp: %g is not a CMP number", i, cmp);
      break;
    }
    if (fold < 0) {
      rc = tz_fail(err, TZ_E_FORMAT, "$.cmps[%zu].fold: %g is negative", i, fold);
      break;
    }
    if (live < 0 || live > 1) {
      rc = tz_fail(err, TZ_E_FORMAT, "$.cmps[%zu].live_fraction: %g outside 0..1", i, live);
      break;
    }
    if (i > 0 && (int64_t)cmp <= rows[i - 1].cmp) {
      rc = tz_fail(err, TZ_E_FORMAT, "$.cmps[%zu].cmp: %g does not follow CMP %lld", i, cmp,
                   (long long)rows[i - 1].cmp);
      break;
    }
    rows[i] = (picture_fold_row){ (int64_t)cmp, fold, live };
  }
  if (!rc && rows[n - 1].cmp - rows[0].cmp >= FOLD_MAX_CMP_SPAN)
    rc = tz_fail(err, TZ_E_FORMAT, "$.cmps: CMP range %lld-%lld wider than %d",
                 (long long)rows[0].cmp, (long long)rows[n - 1].cmp, FOLD_MAX_CMP_SPAN);
  if (rc) {
    free(rows);
    return rc;
  }
  out->rows = rows;
  out->n = n;
  out->nominal = nominal > 0 ? nominal : 0;
  return TZ_OK;
}

int picture_fold_parse(picture_fold *out, const char *json, size_t len, const char *name,
                       tz_err *err)
{
  memset(out, 0, sizeof *out);
  cJSON *root = NULL;
  int rc = json_doc_parse(&root, json, len, name, "QC report", TZ_E_FORMAT, err);
  if (rc)
    return rc;
  rc = fold_from_tree(out, root, err);
  cJSON_Delete(root);
  if (rc && name)
    tz_err_path(err, name);
  return rc;
}

int picture_fold_load(picture_fold *out, const char *path, tz_err *err)
{
  char *text = NULL;
  size_t len = 0;
  memset(out, 0, sizeof *out);
  int rc = fileio_read_all(path, FOLD_MAX_BYTES, &text, &len, err);
  if (rc)
    return rc;
  rc = picture_fold_parse(out, text, len, path, err);
  free(text);
  return rc;
}

int picture_draw_fold(const picture_fold *f, const char *title, uint32_t width, uint32_t height,
                      int format, picture_ctx **out, picture_info *info, tz_err *err)
{
  *out = NULL;
  if (!f->rows || f->n == 0)
    return tz_fail(err, TZ_E_ARG, "no CMPs to chart");
  int64_t c0 = f->rows[0].cmp, c1 = f->rows[f->n - 1].cmp;
  size_t span = (size_t)(c1 - c0 + 1);
  if (!width) {
    size_t pw = span * 3;
    pw = pw < 600 ? 600 : pw > 2400 ? 2400 : pw;
    width = (uint32_t)(pw + PICTURE_MARGIN_LEFT + PICTURE_CHART_MARGIN_RIGHT);
  }
  if (!height)
    height = 480;
  int rc = check_size(width, height, err);
  if (rc)
    return rc;
  double fmax = f->nominal;
  for (size_t i = 0; i < f->n; i++)
    fmax = fmax > f->rows[i].fold ? fmax : f->rows[i].fold;
  if (!(fmax > 0))
    fmax = 1;
  picture_info in = { 0 };
  plot_area(width, height, PICTURE_CHART_MARGIN_RIGHT, &in);
  int64_t ph1 = (int64_t)floor(0.7 * (double)(in.plot_h - FOLD_GAP) + 0.5);
  int64_t ph2 = (int64_t)in.plot_h - FOLD_GAP - ph1;
  /* fold axis from 0 to the first whole tick above the largest fold (or nominal) */
  double step = picture_nice_step(fmax * 30.0 / (double)ph1);
  if (step < 1)
    step = 1;
  double ymax = (floor(fmax / step + 1e-9) + 1) * step;
  int64_t *slot = malloc(span * sizeof *slot);
  if (!slot)
    return tz_fail(err, TZ_E_NOMEM, "fold chart of %zu CMPs", span);
  for (size_t k = 0; k < span; k++)
    slot[k] = -1;
  for (size_t i = 0; i < f->n; i++)
    slot[f->rows[i].cmp - c0] = (int64_t)i;
  picture_ctx *c = NULL;
  if ((rc = picture_ctx_new(&c, format, width, height, err))) {
    free(slot);
    return rc;
  }
  double x0 = in.plot_x, y_fold = in.plot_y, y_live = in.plot_y + (double)ph1 + FOLD_GAP;
  picture_frame ff = { .x = x0, .y = y_fold, .w = in.plot_w, .h = (double)ph1,
                       .x0 = (double)c0 - 0.5, .x1 = (double)c1 + 0.5, .y0 = 0, .y1 = ymax };
  picture_frame fl = ff;
  fl.y = y_live;
  fl.h = (double)ph2;
  fl.y1 = 100;
  picture_grid_y(c, &ff);
  picture_grid_y(c, &fl);
  if (f->nominal > 0) { /* behind the bars, seen where fold falls short */
    double y = floor(picture_frame_py(&ff, f->nominal)) + 0.5;
    double xs[2] = { x0, x0 + in.plot_w }, ys[2] = { y, y };
    picture_ctx_attrs(c, "class=\"nominal\" data-nominal=\"%g\"", f->nominal);
    picture_ctx_polyline(c, xs, ys, 2, 2, 1, nominal_line);
  }
  /* Bars: one run of whole pixel columns per CMP, each column showing the CMP
   * at its centre (the slot rule of docs/pictures.md), so bar colours stay
   * exact at any width. In SVG each bar carries its CMP's numbers. */
  picture_ctx_group(c, "class=\"fold-bars\" shape-rendering=\"crispEdges\"");
  for (uint32_t col = 0; col < in.plot_w;) {
    size_t k = (size_t)(((double)col + 0.5) * (double)span / in.plot_w);
    uint32_t end = col + 1;
    while (end < in.plot_w && (size_t)(((double)end + 0.5) * (double)span / in.plot_w) == k)
      end++;
    if (slot[k] >= 0) {
      const picture_fold_row *r = &f->rows[slot[k]];
      double hf = floor(r->fold / ymax * (double)ph1 + 0.5);
      double hl = floor(r->live_fraction * (double)ph2 + 0.5);
      picture_ctx_attrs(c, "data-cmp=\"%lld\" data-fold=\"%g\"", (long long)r->cmp, r->fold);
      picture_ctx_fill_rect(c, x0 + col, y_fold + (double)ph1 - hf, end - col, hf, fold_bar);
      picture_ctx_attrs(c, "data-cmp=\"%lld\" data-live=\"%g\"", (long long)r->cmp,
                        r->live_fraction);
      picture_ctx_fill_rect(c, x0 + col, y_live + (double)ph2 - hl, end - col, hl, live_bar);
    }
    col = end;
  }
  picture_ctx_group_end(c);
  free(slot);
  picture_frame_draw(c, &ff);
  picture_frame_draw(c, &fl);
  picture_axis_y(c, &ff, PICTURE_SIDE_LEFT, "Fold", 1);
  picture_axis_y(c, &fl, PICTURE_SIDE_LEFT, "Live (%)", 0);
  double *xs = malloc(span * sizeof *xs);
  if (xs) {
    for (size_t k = 0; k < span; k++)
      xs[k] = (double)(c0 + (int64_t)k);
    top_axis(c, x0, y_fold, in.plot_w, xs, span, "CMP");
    free(xs);
  }
  char nom[64];
  snprintf(nom, sizeof nom, f->nominal > 0 ? "Nominal fold %g" : "Nominal fold unknown",
           f->nominal);
  const char *labels[3] = { "Fold per CMP", nom, "Live fraction after mutes (lower panel)" };
  const unsigned char keys[3][3] = { { 70, 110, 180 }, { 0, 150, 0 }, { 220, 120, 30 } };
  const int dashed[3] = { 0, 1, 0 };
  picture_title(c, title, NULL);
  picture_legend(c, 8, 38, 3, labels, keys, dashed);
  in.plot_h = (uint32_t)ph1; /* the fold panel; the live panel starts FOLD_GAP below */
  in.clip = ymax;
  if (info)
    *info = in;
  *out = c;
  return TZ_OK;
}

int picture_render_fold(const picture_fold *f, const char *title, uint32_t width,
                        uint32_t height, picture_image *img, picture_info *info, tz_err *err)
{
  picture_ctx *c = NULL;
  memset(img, 0, sizeof *img);
  int rc = picture_draw_fold(f, title, width, height, PICTURE_FORMAT_PNG, &c, info, err);
  return rc ? rc : to_raster(c, img, err);
}

/* ---------------------------------------------------------------- SEG-Y panels */

void picture_loaded_free(picture_loaded *l)
{
  if (!l)
    return;
  free(l->data);
  free(l->cmp);
  free(l->offset);
  free(l->field_record);
  free(l->channel);
  free(l->panel);
  free(l->panel_label);
  free(l->panel_label_ptr);
  free(l->trace);
  memset(l, 0, sizeof *l);
}

static int keep_trace(const picture_select *s, const segy_trace_header *h)
{
  return !s || !s->have_cmps || (h->cmp >= s->cmp_first && h->cmp <= s->cmp_last);
}

/* Test panels (gathers.h): only when the textual header declares them. */
static int load_panels(segy_file *f, const picture_select *sel, int64_t first,
                       picture_loaded *out, tz_err *err)
{
  const char *text = segy_get_info(f)->text;
  if (!strstr(text, "test panels: panel number bytes 233-236"))
    return TZ_OK;
  char key[80] = "value";
  gathers_panel_key(text, key, sizeof key);
  if (!(out->panel = malloc(out->ntraces * sizeof *out->panel)))
    return tz_fail(err, TZ_E_NOMEM, "panel numbers");
  int64_t nt = segy_trace_count(f);
  size_t k = 0;
  int32_t maxp = 0;
  segy_trace_header h;
  for (int64_t i = first; i < nt && k < out->ntraces; i++) {
    int rc = segy_header_read(f, i, &h, err);
    if (rc)
      return rc;
    if (!keep_trace(sel, &h))
      continue;
    int32_t pn = gathers_panel_get(&h, NULL);
    out->panel[k++] = pn > 0 && pn <= GATHERS_MAX_PANELS ? pn : 0;
    maxp = pn > maxp && pn <= GATHERS_MAX_PANELS ? pn : maxp;
  }
  out->npanels = (size_t)maxp;
  out->panel_label = calloc(out->npanels ? out->npanels : 1, sizeof *out->panel_label);
  out->panel_label_ptr = calloc(out->npanels ? out->npanels : 1, sizeof *out->panel_label_ptr);
  if (!out->panel_label || !out->panel_label_ptr)
    return tz_fail(err, TZ_E_NOMEM, "panel labels");
  for (size_t p = 0; p < out->npanels; p++) {
    char val[80];
    if (!gathers_panel_label(text, (int32_t)p + 1, val, sizeof val))
      snprintf(val, sizeof val, "panel %zu", p + 1);
    snprintf(out->panel_label[p], sizeof out->panel_label[p], "%s = %s", key, val);
    out->panel_label_ptr[p] = out->panel_label[p];
  }
  return TZ_OK;
}

int picture_load_segy(const char *path, const picture_select *sel, picture_loaded *out,
                      tz_err *err)
{
  memset(out, 0, sizeof *out);
  segy_file *f = NULL;
  float *buf = NULL;
  int rc = segy_open(&f, path, NULL, err);
  if (rc)
    return rc;
  const segy_info *fi = segy_get_info(f);
  int64_t nt = segy_trace_count(f);
  out->traces_in_file = nt;
  segy_trace_header h;
  int64_t keep = 0, cmin = INT64_MAX, cmax = INT64_MIN, first_kept = -1;
  for (int64_t i = 0; i < nt; i++) {
    if ((rc = segy_header_read(f, i, &h, err)))
      goto fail;
    cmin = h.cmp < cmin ? h.cmp : cmin;
    cmax = h.cmp > cmax ? h.cmp : cmax;
    if (keep_trace(sel, &h)) {
      if (first_kept < 0)
        first_kept = i;
      keep++;
    }
  }
  if (nt == 0 || fi->samples == 0 || fi->interval_us == 0) {
    tz_err_path(err, path);
    rc = tz_fail(err, TZ_E_FORMAT, "no traces with samples to draw (%lld traces, %u samples)",
                 (long long)nt, fi->samples);
    goto fail;
  }
  if (keep == 0) {
    tz_err_path(err, path);
    rc = tz_fail(err, TZ_E_ARG, "no trace has a CMP in %lld-%lld (the file has CMPs %lld-%lld)",
                 (long long)sel->cmp_first, (long long)sel->cmp_last, (long long)cmin,
                 (long long)cmax);
    goto fail;
  }
  if ((rc = segy_header_read(f, first_kept, &h, err)))
    goto fail;
  double dt = fi->interval_us / 1000.0, t0 = h.delay_ms;
  size_t ns = fi->samples, j0 = 0, j1 = ns; /* kept samples [j0, j1) */
  if (sel && sel->have_time) {
    double a = ceil((sel->time_first_ms - t0) / dt - 1e-9);
    double b = floor((sel->time_last_ms - t0) / dt + 1e-9);
    a = a < 0 ? 0 : a;
    b = b > (double)ns - 1 ? (double)ns - 1 : b;
    if (b < a) {
      tz_err_path(err, path);
      rc = tz_fail(err, TZ_E_ARG, "time window %g-%g ms keeps no sample (traces cover %g-%g ms)",
                   sel->time_first_ms, sel->time_last_ms, t0, t0 + (double)(ns - 1) * dt);
      goto fail;
    }
    j0 = (size_t)a;
    j1 = (size_t)b + 1;
  }
  size_t nk = j1 - j0;
  if ((size_t)keep > PICTURE_MAX_SAMPLES / nk) {
    tz_err_path(err, path);
    rc = tz_fail(err, TZ_E_ARG, "%lld traces x %zu samples exceed %u values: choose --cmps or "
                 "--time-ms", (long long)keep, nk, PICTURE_MAX_SAMPLES);
    goto fail;
  }
  out->data = malloc((size_t)keep * nk * sizeof *out->data);
  out->cmp = malloc((size_t)keep * sizeof *out->cmp);
  out->offset = malloc((size_t)keep * sizeof *out->offset);
  out->field_record = malloc((size_t)keep * sizeof *out->field_record);
  out->channel = malloc((size_t)keep * sizeof *out->channel);
  out->trace = malloc((size_t)keep * sizeof *out->trace);
  buf = malloc(ns * sizeof *buf);
  if (!out->data || !out->cmp || !out->offset || !out->field_record || !out->channel ||
      !out->trace || !buf) {
    rc = tz_fail(err, TZ_E_NOMEM, "%lld traces of %zu samples", (long long)keep, nk);
    goto fail;
  }
  size_t k = 0;
  out->cmps_increase = 1;
  for (int64_t i = first_kept; i < nt && k < (size_t)keep; i++) {
    if ((rc = segy_header_read(f, i, &h, err)))
      goto fail;
    if (!keep_trace(sel, &h))
      continue;
    memset(buf, 0, ns * sizeof *buf);
    if ((rc = segy_trace_read(f, i, &h, buf, ns, err)))
      goto fail;
    memcpy(out->data + k * nk, buf + j0, nk * sizeof *buf);
    out->cmp[k] = h.cmp;
    out->offset[k] = h.offset;
    out->field_record[k] = h.field_record;
    out->channel[k] = h.channel;
    out->trace[k] = i;
    if (k > 0 && !(out->cmp[k] > out->cmp[k - 1]))
      out->cmps_increase = 0;
    k++;
  }
  out->ntraces = k;
  out->nsamples = nk;
  if ((rc = load_panels(f, sel, first_kept, out, err)))
    goto fail;
  out->interval_ms = dt;
  out->time_first_ms = t0 + (double)j0 * dt;
  free(buf);
  segy_close(f);
  return TZ_OK;
fail:
  free(buf);
  segy_close(f);
  picture_loaded_free(out);
  return rc;
}
