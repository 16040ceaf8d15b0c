/* picture.c -- QC pictures: panels (section, gather, semblance) and fold charts as PNG.
 *
 * Design. Everything is drawn into an 8-bit RGB raster in memory with fixed
 * margins (picture.h) around the plot area, then written with libpng through
 * fileio (temporary name, renamed on success). The amplitude-to-colour maps
 * and the pixel-to-sample rule are plain formulas (docs/pictures.md), so the
 * tests recompute them independently:
 *   plot column c (0-based) shows trace  floor((c + 0.5) * ntraces  / plot_w),
 *   plot row    r           shows sample floor((r + 0.5) * nsamples / plot_h)
 * (nearest neighbour: a spike keeps its full colour, no smoothing hides it).
 * Clipping uses a percentile of |amplitude| computed with the usual linear
 * interpolation between order statistics (Hyndman and Fan 1996, definition 7;
 * NumPy's default), 99 % by default for seismic so that a few spikes or a
 * noisy trace do not wash out the section (common practice).
 * Wiggles: each trace's baseline sits at its column centre; an amplitude of
 * +-clip swings one trace spacing; positive lobes are filled black (variable
 * area). Text uses a 5x7 bitmap font (a const table below), drawn at scale 2.
 *
 * Not here: reading QC reports beyond the four fields a fold chart needs
 * (qc.c owns the report), printing (the front end).
 */
#include "tzero/picture.h"

#include <math.h>
#include <png.h>
#include <setjmp.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "util/json_doc.h"
#include "tzero/fileio.h"
#include "tzero/segy.h"

#define TEXT_SCALE 2
#define GLYPH_W 5
#define GLYPH_H 7
#define CELL_W ((GLYPH_W + 1) * TEXT_SCALE)   /* 12 px per character */
#define TEXT_H (GLYPH_H * TEXT_SCALE)         /* 14 px */
#define TICK_LEN 5
#define XLABEL_X 6                            /* left edge of the axis name */
#define WIGGLE_MIN_SPACING 6.0                /* px between traces for AUTO wiggles */
#define FOLD_MAX_CMP_SPAN 10000000            /* CMP number range of one fold chart */
#define FOLD_GAP 24                           /* px between the fold and live panels */
#define FOLD_MAX_BYTES (512u << 20)

static const unsigned char black[3] = { 0, 0, 0 };
static const unsigned char dark[3] = { 60, 60, 60 };
static const unsigned char fold_bar[3] = { 70, 110, 180 };
static const unsigned char live_bar[3] = { 220, 120, 30 };
static const unsigned char nominal_line[3] = { 0, 150, 0 };

/* ---------------------------------------------------------------- font */

/* 5x7 glyphs, one byte per row, bit 4 the leftmost pixel. */
static const char font_chars[] = "0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ.,-:/()%=+_'[]<>#*|";
static const unsigned char font_rows[][GLYPH_H] = {
  { 0x0E, 0x11, 0x13, 0x15, 0x19, 0x11, 0x0E }, /* 0 */
  { 0x04, 0x0C, 0x04, 0x04, 0x04, 0x04, 0x0E }, /* 1 */
  { 0x0E, 0x11, 0x01, 0x02, 0x04, 0x08, 0x1F }, /* 2 */
  { 0x1F, 0x02, 0x04, 0x02, 0x01, 0x11, 0x0E }, /* 3 */
  { 0x02, 0x06, 0x0A, 0x12, 0x1F, 0x02, 0x02 }, /* 4 */
  { 0x1F, 0x10, 0x1E, 0x01, 0x01, 0x11, 0x0E }, /* 5 */
  { 0x06, 0x08, 0x10, 0x1E, 0x11, 0x11, 0x0E }, /* 6 */
  { 0x1F, 0x01, 0x02, 0x04, 0x08, 0x08, 0x08 }, /* 7 */
  { 0x0E, 0x11, 0x11, 0x0E, 0x11, 0x11, 0x0E }, /* 8 */
  { 0x0E, 0x11, 0x11, 0x0F, 0x01, 0x02, 0x0C }, /* 9 */
  { 0x0E, 0x11, 0x11, 0x11, 0x1F, 0x11, 0x11 }, /* A */
  { 0x1E, 0x11, 0x11, 0x1E, 0x11, 0x11, 0x1E }, /* B */
  { 0x0E, 0x11, 0x10, 0x10, 0x10, 0x11, 0x0E }, /* C */
  { 0x1C, 0x12, 0x11, 0x11, 0x11, 0x12, 0x1C }, /* D */
  { 0x1F, 0x10, 0x10, 0x1E, 0x10, 0x10, 0x1F }, /* E */
  { 0x1F, 0x10, 0x10, 0x1E, 0x10, 0x10, 0x10 }, /* F */
  { 0x0E, 0x11, 0x10, 0x17, 0x11, 0x11, 0x0F }, /* G */
  { 0x11, 0x11, 0x11, 0x1F, 0x11, 0x11, 0x11 }, /* H */
  { 0x0E, 0x04, 0x04, 0x04, 0x04, 0x04, 0x0E }, /* I */
  { 0x07, 0x02, 0x02, 0x02, 0x02, 0x12, 0x0C }, /* J */
  { 0x11, 0x12, 0x14, 0x18, 0x14, 0x12, 0x11 }, /* K */
  { 0x10, 0x10, 0x10, 0x10, 0x10, 0x10, 0x1F }, /* L */
  { 0x11, 0x1B, 0x15, 0x15, 0x11, 0x11, 0x11 }, /* M */
  { 0x11, 0x11, 0x19, 0x15, 0x13, 0x11, 0x11 }, /* N */
  { 0x0E, 0x11, 0x11, 0x11, 0x11, 0x11, 0x0E }, /* O */
  { 0x1E, 0x11, 0x11, 0x1E, 0x10, 0x10, 0x10 }, /* P */
  { 0x0E, 0x11, 0x11, 0x11, 0x15, 0x12, 0x0D }, /* Q */
  { 0x1E, 0x11, 0x11, 0x1E, 0x14, 0x12, 0x11 }, /* R */
  { 0x0F, 0x10, 0x10, 0x0E, 0x01, 0x01, 0x1E }, /* S */
  { 0x1F, 0x04, 0x04, 0x04, 0x04, 0x04, 0x04 }, /* T */
  { 0x11, 0x11, 0x11, 0x11, 0x11, 0x11, 0x0E }, /* U */
  { 0x11, 0x11, 0x11, 0x11, 0x11, 0x0A, 0x04 }, /* V */
  { 0x11, 0x11, 0x11, 0x15, 0x15, 0x15, 0x0A }, /* W */
  { 0x11, 0x11, 0x0A, 0x04, 0x0A, 0x11, 0x11 }, /* X */
  { 0x11, 0x11, 0x11, 0x0A, 0x04, 0x04, 0x04 }, /* Y */
  { 0x1F, 0x01, 0x02, 0x04, 0x08, 0x10, 0x1F }, /* Z */
  { 0x00, 0x00, 0x00, 0x00, 0x00, 0x0C, 0x0C }, /* . */
  { 0x00, 0x00, 0x00, 0x00, 0x0C, 0x04, 0x08 }, /* , */
  { 0x00, 0x00, 0x00, 0x1F, 0x00, 0x00, 0x00 }, /* - */
  { 0x00, 0x0C, 0x0C, 0x00, 0x0C, 0x0C, 0x00 }, /* : */
  { 0x00, 0x01, 0x02, 0x04, 0x08, 0x10, 0x00 }, /* / */
  { 0x02, 0x04, 0x08, 0x08, 0x08, 0x04, 0x02 }, /* ( */
  { 0x08, 0x04, 0x02, 0x02, 0x02, 0x04, 0x08 }, /* ) */
  { 0x18, 0x19, 0x02, 0x04, 0x08, 0x13, 0x03 }, /* % */
  { 0x00, 0x00, 0x1F, 0x00, 0x1F, 0x00, 0x00 }, /* = */
  { 0x00, 0x04, 0x04, 0x1F, 0x04, 0x04, 0x00 }, /* + */
  { 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x1F }, /* _ */
  { 0x0C, 0x04, 0x08, 0x00, 0x00, 0x00, 0x00 }, /* ' */
  { 0x0E, 0x08, 0x08, 0x08, 0x08, 0x08, 0x0E }, /* [ */
  { 0x0E, 0x02, 0x02, 0x02, 0x02, 0x02, 0x0E }, /* ] */
  { 0x02, 0x04, 0x08, 0x10, 0x08, 0x04, 0x02 }, /* < */
  { 0x08, 0x04, 0x02, 0x01, 0x02, 0x04, 0x08 }, /* > */
  { 0x0A, 0x0A, 0x1F, 0x0A, 0x1F, 0x0A, 0x0A }, /* # */
  { 0x00, 0x04, 0x15, 0x0E, 0x15, 0x04, 0x00 }, /* * */
  { 0x04, 0x04, 0x04, 0x04, 0x04, 0x04, 0x04 }, /* | */
};
_Static_assert(sizeof font_rows / sizeof font_rows[0] == sizeof font_chars - 1,
               "one glyph per font character");

static void put_px(picture_image *img, int64_t x, int64_t y, const unsigned char c[3])
{
  if (x < 0 || y < 0 || x >= (int64_t)img->width || y >= (int64_t)img->height)
    return;
  unsigned char *p = img->rgb + 3 * ((size_t)y * img->width + (size_t)x);
  p[0] = c[0];
  p[1] = c[1];
  p[2] = c[2];
}

static void fill_rect(picture_image *img, int64_t x0, int64_t y0, int64_t x1, int64_t y1,
                      const unsigned char c[3])
{
  for (int64_t y = y0; y < y1; y++)
    for (int64_t x = x0; x < x1; x++)
      put_px(img, x, y, c);
}

uint32_t picture_text(picture_image *img, int64_t x, int64_t y, const char *s, int scale,
                      const unsigned char rgb[3])
{
  if (scale < 1)
    scale = 1;
  int64_t x0 = x;
  for (; *s; s++) {
    char ch = *s >= 'a' && *s <= 'z' ? (char)(*s - 'a' + 'A') : *s;
    const char *at = ch ? strchr(font_chars, ch) : NULL;
    if (at) {
      const unsigned char *g = font_rows[at - font_chars];
      for (int r = 0; r < GLYPH_H; r++)
        for (int c = 0; c < GLYPH_W; c++)
          if (g[r] & (0x10 >> c))
            fill_rect(img, x + c * scale, y + r * scale, x + (c + 1) * scale,
                      y + (r + 1) * scale, rgb);
    }
    x += (GLYPH_W + 1) * scale;
  }
  return (uint32_t)(x - x0);
}

static int64_t text_width(const char *s) { return (int64_t)strlen(s) * CELL_W; }

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
  int rc = check_size(w, h, err);
  if (rc)
    return rc;
  img->rgb = malloc((size_t)w * h * 3);
  if (!img->rgb)
    return tz_fail(err, TZ_E_NOMEM, "picture of %u x %u px", w, h);
  memset(img->rgb, 255, (size_t)w * h * 3);
  img->width = w;
  img->height = h;
  return TZ_OK;
}

static void frame(picture_image *img, int64_t x, int64_t y, int64_t w, int64_t h)
{
  fill_rect(img, x - 1, y - 1, x + w + 1, y, black);
  fill_rect(img, x - 1, y + h, x + w + 1, y + h + 1, black);
  fill_rect(img, x - 1, y, x, y + h, black);
  fill_rect(img, x + w, y, x + w + 1, y + h, black);
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

/* Smallest step of 1, 2 or 5 x 10^k that is >= min_step (> 0). */
static double nice_step(double min_step)
{
  double e = pow(10.0, floor(log10(min_step)));
  const double m[] = { 1, 2, 5, 10 };
  for (int i = 0; i < 4; i++)
    if (m[i] * e >= min_step * (1 - 1e-12))
      return m[i] * e;
  return 10 * e;
}

static void fmt_tick(char *buf, size_t cap, double v, double step)
{
  if (fabs(v) < step * 1e-9)
    v = 0;
  if (step >= 1)
    snprintf(buf, cap, "%.0f", v);
  else
    snprintf(buf, cap, "%g", v);
}

/* Vertical axis on the left of the plot: values v0 at row y0 to v1 at row y1
 * (pixel centres, may be decreasing). */
static void left_axis(picture_image *img, int64_t x, double y0, double y1, double v0, double v1,
                      double min_px)
{
  double span = fabs(v1 - v0);
  if (!(span > 0) || !(fabs(y1 - y0) > 0))
    return;
  double step = nice_step(span * min_px / fabs(y1 - y0));
  double lo = fmin(v0, v1), hi = fmax(v0, v1);
  for (double v = ceil(lo / step - 1e-9) * step; v <= hi + step * 1e-9; v += step) {
    double y = y0 + (v - v0) / (v1 - v0) * (y1 - y0);
    int64_t yi = (int64_t)floor(y + 0.5);
    fill_rect(img, x - TICK_LEN - 1, yi, x - 1, yi + 1, black);
    char lab[32];
    fmt_tick(lab, sizeof lab, v, step);
    picture_text(img, x - TICK_LEN - 3 - text_width(lab), yi - TEXT_H / 2, lab, TEXT_SCALE,
                 black);
  }
}

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

/* Ticks and labels above the plot for per-slot values (slot i centred at
 * x + (i + 0.5) * w / n). With xs NULL the values are 1..n. */
static void top_axis(picture_image *img, int64_t x, int64_t y, int64_t w, const double *xs,
                     size_t n, const char *xlabel)
{
  int64_t free_from = XLABEL_X + text_width(xlabel) + CELL_W / 2;
  double first = xs ? xs[0] : 1, last = xs ? xs[n - 1] : (double)n;
  double lo = fmin(first, last), hi = fmax(first, last);
  double px_per_unit = n > 1 ? (double)w / (double)n * (double)(n - 1) / (hi - lo) : 0;
  char lab[32];
  snprintf(lab, sizeof lab, "%.0f", fmax(fabs(lo), fabs(hi)));
  double min_px = (double)text_width(lab) + 3.0 * CELL_W;
  double step = n > 1 && hi > lo ? nice_step(min_px / px_per_unit) : 1;
  int whole = 1; /* CMP and trace numbers: no ticks between them */
  for (size_t i = 0; xs && i < n && whole; i++)
    whole = xs[i] == floor(xs[i]);
  if (whole && step < 1)
    step = 1;
  for (double v = ceil(lo / step - 1e-9) * step; v <= hi + step * 1e-9; v += step) {
    double fi = xs ? trace_pos(xs, n, v) : v - 1;
    if (fi < 0)
      continue;
    int64_t xi = x + (int64_t)floor((fi + 0.5) * (double)w / (double)n);
    fill_rect(img, xi, y - TICK_LEN - 1, xi + 1, y - 1, black);
    fmt_tick(lab, sizeof lab, v, step);
    if (xi - text_width(lab) / 2 >= free_from)
      picture_text(img, xi - text_width(lab) / 2, y - TICK_LEN - 3 - TEXT_H, lab, TEXT_SCALE,
                   black);
  }
}

/* Labels for values that do not run monotonically (offsets of a split-spread
 * gather): every k-th trace is labelled with its own value, k the smallest
 * stride that keeps the labels apart. */
static void trace_labels(picture_image *img, int64_t x, int64_t y, int64_t w, const double *xs,
                         size_t n, const char *xlabel)
{
  int64_t free_from = XLABEL_X + text_width(xlabel) + CELL_W / 2;
  double dx = (double)w / (double)n, widest = 0;
  char lab[32];
  for (size_t i = 0; i < n; i++) {
    snprintf(lab, sizeof lab, "%g", xs[i]);
    widest = fmax(widest, (double)text_width(lab));
  }
  size_t k = (size_t)ceil((widest + CELL_W) / dx);
  k = k < 1 ? 1 : k;
  for (size_t i = 0; i < n; i += k) {
    int64_t xi = x + (int64_t)floor(((double)i + 0.5) * dx);
    fill_rect(img, xi, y - TICK_LEN - 1, xi + 1, y - 1, black);
    snprintf(lab, sizeof lab, "%g", xs[i]);
    if (xi - text_width(lab) / 2 >= free_from)
      picture_text(img, xi - text_width(lab) / 2, y - TICK_LEN - 3 - TEXT_H, lab, TEXT_SCALE,
                   black);
  }
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

static void draw_density(picture_image *img, const picture_panel *p, int map, double clip,
                         const picture_info *in)
{
  for (uint32_t r = 0; r < in->plot_h; r++) {
    size_t j = (size_t)(((double)r + 0.5) * (double)p->nsamples / in->plot_h);
    unsigned char *row = img->rgb + 3 * ((size_t)(in->plot_y + r) * img->width + in->plot_x);
    for (uint32_t c = 0; c < in->plot_w; c++) {
      size_t i = (size_t)(((double)c + 0.5) * (double)p->ntraces / in->plot_w);
      picture_colour(map, p->data[i * p->nsamples + j], clip, row + 3 * c);
    }
  }
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

static void draw_wiggles(picture_image *img, const picture_panel *p, double clip,
                         const picture_info *in)
{
  double dx = (double)in->plot_w / (double)p->ntraces;
  int64_t xmin = in->plot_x, xmax = (int64_t)in->plot_x + in->plot_w - 1;
  for (size_t i = 0; i < p->ntraces; i++) {
    double base = (double)in->plot_x + ((double)i + 0.5) * dx - 0.5;
    double prev = base;
    for (uint32_t r = 0; r < in->plot_h; r++) {
      double s = ((double)r + 0.5) * (double)p->nsamples / in->plot_h - 0.5;
      double u = sample_at(p, i, s) / clip;
      u = u > 1 ? 1 : u < -1 ? -1 : u;
      double x = base + u * dx;
      int64_t y = (int64_t)in->plot_y + r;
      int64_t b = (int64_t)floor(base + 0.5), xi = (int64_t)floor(x + 0.5);
      if (xi > b) /* variable area: fill the positive lobe */
        for (int64_t k = b; k <= xi && k <= xmax; k++)
          put_px(img, k, y, black);
      int64_t a0 = (int64_t)floor(fmin(prev, x) + 0.5), a1 = (int64_t)floor(fmax(prev, x) + 0.5);
      for (int64_t k = a0 < xmin ? xmin : a0; k <= a1 && k <= xmax; k++)
        put_px(img, k, y, black);
      prev = x;
    }
  }
}

static void plot_area(uint32_t w, uint32_t h, int right, picture_info *in)
{
  in->plot_x = PICTURE_MARGIN_LEFT;
  in->plot_y = PICTURE_MARGIN_TOP;
  in->plot_w = w - PICTURE_MARGIN_LEFT - (uint32_t)right;
  in->plot_h = h - PICTURE_MARGIN_TOP - PICTURE_MARGIN_BOTTOM;
}

static void header_lines(picture_image *img, const char *title, const char *caption,
                         const char *xlabel)
{
  if (title)
    picture_text(img, 6, 4, title, TEXT_SCALE, black);
  if (caption)
    picture_text(img, 6, 24, caption, 1, dark);
  if (xlabel)
    picture_text(img, XLABEL_X, PICTURE_MARGIN_TOP - TICK_LEN - 3 - TEXT_H, xlabel, TEXT_SCALE,
                 black);
}

int picture_render_panel(const picture_panel *p, const picture_opts *o, picture_image *img,
                         picture_info *info, tz_err *err)
{
  memset(img, 0, sizeof *img);
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

  if ((rc = image_new(img, w, h, err)))
    return rc;
  if (style != PICTURE_STYLE_WIGGLE)
    draw_density(img, p, map, in.clip, &in);
  if (style != PICTURE_STYLE_DENSITY)
    draw_wiggles(img, p, in.clip, &in);
  frame(img, in.plot_x, in.plot_y, in.plot_w, in.plot_h);

  /* time axis: sample j is centred on row (j + 0.5) * plot_h / ns - 0.5 */
  double rows_per_sample = (double)in.plot_h / (double)p->nsamples;
  double t_last = p->time_first_ms + (double)(p->nsamples - 1) * p->interval_ms;
  left_axis(img, in.plot_x, in.plot_y + 0.5 * rows_per_sample - 0.5,
            in.plot_y + ((double)p->nsamples - 0.5) * rows_per_sample - 0.5, p->time_first_ms,
            t_last, 40);
  int mono = monotonic(p->xvalue, p->ntraces);
  int finite = p->xvalue != NULL;
  for (size_t i = 0; finite && i < p->ntraces; i++)
    finite = isfinite(p->xvalue[i]);
  const char *xlabel = mono || finite ? (p->xlabel ? p->xlabel : "X") : "TRACE";
  if (!mono && finite)
    trace_labels(img, in.plot_x, in.plot_y, in.plot_w, p->xvalue, p->ntraces, xlabel);
  else
    top_axis(img, in.plot_x, in.plot_y, in.plot_w, mono ? p->xvalue : NULL, p->ntraces, xlabel);

  char cap[256];
  const char *legend = map == PICTURE_MAP_GREY         ? "BLACK POSITIVE, WHITE NEGATIVE"
                       : map == PICTURE_MAP_SEQUENTIAL ? "NAVY 0 TO RED AT CLIP"
                                                       : "RED POSITIVE, BLUE NEGATIVE";
  if (style == PICTURE_STYLE_WIGGLE)
    legend = "WIGGLES, POSITIVE FILLED";
  if (in.clip_percentile > 0)
    snprintf(cap, sizeof cap, "TIME MS DOWN.  CLIP %g%% OF |AMPLITUDE| = %.4g.  %s", pct, in.clip,
             legend);
  else
    snprintf(cap, sizeof cap, "TIME MS DOWN.  CLIP %.4g.  %s", in.clip, legend);
  header_lines(img, p->title, cap, xlabel);
  if (info)
    *info = in;
  return TZ_OK;
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

static void dashed_hline(picture_image *img, int64_t x0, int64_t x1, int64_t y,
                         const unsigned char c[3])
{
  for (int64_t x = x0; x < x1; x++)
    if ((x - x0) % 10 < 6) {
      put_px(img, x, y, c);
      put_px(img, x, y + 1, c);
    }
}

int picture_render_fold(const picture_fold *f, const char *title, uint32_t width,
                        uint32_t height, picture_image *img, picture_info *info, tz_err *err)
{
  memset(img, 0, sizeof *img);
  if (!f->rows || f->n == 0)
    return tz_fail(err, TZ_E_ARG, "no CMPs to chart");
  int64_t c0 = f->rows[0].cmp, c1 = f->rows[f->n - 1].cmp;
  size_t span = (size_t)(c1 - c0 + 1);
  if (!width) {
    size_t pw = span * 3;
    pw = pw < 600 ? 600 : pw > 2400 ? 2400 : pw;
    width = (uint32_t)(pw + PICTURE_MARGIN_LEFT + PICTURE_MARGIN_RIGHT);
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
  plot_area(width, height, PICTURE_MARGIN_RIGHT, &in);
  int64_t ph1 = (int64_t)floor(0.7 * (double)(in.plot_h - FOLD_GAP) + 0.5);
  int64_t ph2 = (int64_t)in.plot_h - FOLD_GAP - ph1;
  /* fold axis from 0 to the first whole tick above the largest fold (or nominal) */
  double step = nice_step(fmax * 30.0 / (double)ph1);
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
  if ((rc = image_new(img, width, height, err))) {
    free(slot);
    return rc;
  }
  int64_t x0 = in.plot_x, y_fold = in.plot_y, y_live = in.plot_y + ph1 + FOLD_GAP;
  if (f->nominal > 0) /* behind the bars */
    dashed_hline(img, x0, x0 + in.plot_w,
                 y_fold + ph1 - (int64_t)floor(f->nominal / ymax * (double)ph1 + 0.5), nominal_line);
  for (uint32_t c = 0; c < in.plot_w; c++) {
    size_t k = (size_t)(((double)c + 0.5) * (double)span / in.plot_w);
    if (slot[k] < 0)
      continue;
    const picture_fold_row *r = &f->rows[slot[k]];
    int64_t hf = (int64_t)floor(r->fold / ymax * (double)ph1 + 0.5);
    int64_t hl = (int64_t)floor(r->live_fraction * (double)ph2 + 0.5);
    fill_rect(img, x0 + c, y_fold + ph1 - hf, x0 + c + 1, y_fold + ph1, fold_bar);
    fill_rect(img, x0 + c, y_live + ph2 - hl, x0 + c + 1, y_live + ph2, live_bar);
  }
  free(slot);
  frame(img, x0, y_fold, in.plot_w, ph1);
  frame(img, x0, y_live, in.plot_w, ph2);
  left_axis(img, x0, (double)(y_fold + ph1), (double)y_fold, 0, ymax, 30);
  left_axis(img, x0, (double)(y_live + ph2), (double)y_live, 0, 100, 25);
  picture_text(img, 4, y_fold + ph1 / 2 - GLYPH_H / 2, "FOLD", 1, dark);
  picture_text(img, 4, y_live + ph2 / 2 - GLYPH_H / 2, "LIVE %", 1, dark);
  double *xs = malloc(span * sizeof *xs);
  if (xs) {
    for (size_t k = 0; k < span; k++)
      xs[k] = (double)(c0 + (int64_t)k);
    top_axis(img, x0, y_fold, in.plot_w, xs, span, "CMP");
    free(xs);
  }
  char cap[256];
  snprintf(cap, sizeof cap,
           "BLUE BARS: FOLD PER CMP; GREEN DASHES: NOMINAL FOLD %g.  ORANGE BARS (LOWER): LIVE "
           "FRACTION AFTER MUTES, %%",
           f->nominal);
  header_lines(img, title, cap, "CMP");
  in.plot_h = (uint32_t)ph1; /* the fold panel; the live panel starts FOLD_GAP below */
  in.clip = ymax;
  if (info)
    *info = in;
  return TZ_OK;
}

/* ---------------------------------------------------------------- SEG-Y panels */

void picture_loaded_free(picture_loaded *l)
{
  if (!l)
    return;
  free(l->data);
  free(l->cmp);
  free(l->offset);
  memset(l, 0, sizeof *l);
}

static int keep_trace(const picture_select *s, const segy_trace_header *h)
{
  return !s || !s->have_cmps || (h->cmp >= s->cmp_first && h->cmp <= s->cmp_last);
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
  buf = malloc(ns * sizeof *buf);
  if (!out->data || !out->cmp || !out->offset || !buf) {
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
    if (k > 0 && !(out->cmp[k] > out->cmp[k - 1]))
      out->cmps_increase = 0;
    k++;
  }
  out->ntraces = k;
  out->nsamples = nk;
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

/* ---------------------------------------------------------------- PNG */

struct png_ctx {
  jmp_buf jmp;
  char msg[200];
};

static void png_on_error(png_structp png, png_const_charp msg)
{
  struct png_ctx *c = png_get_error_ptr(png);
  snprintf(c->msg, sizeof c->msg, "%s", msg);
  longjmp(c->jmp, 1);
}

static void png_on_warning(png_structp png, png_const_charp msg) { (void)png, (void)msg; }

/* Encodes img to fp; 0 on success, else -1 with ctx->msg set. */
static int png_encode(FILE *fp, const picture_image *img, struct png_ctx *ctx)
{
  png_structp png = png_create_write_struct(PNG_LIBPNG_VER_STRING, ctx, png_on_error,
                                            png_on_warning);
  if (!png) {
    snprintf(ctx->msg, sizeof ctx->msg, "libpng could not start");
    return -1;
  }
  png_infop pi = png_create_info_struct(png);
  if (!pi || setjmp(ctx->jmp)) {
    png_destroy_write_struct(&png, pi ? &pi : NULL);
    if (!ctx->msg[0])
      snprintf(ctx->msg, sizeof ctx->msg, "libpng could not start");
    return -1;
  }
  png_init_io(png, fp);
  /* zlib level 3: most of the size gain of the default 6 at about a third of
   * the time on noisy sections (bench/part-picture.sh) */
  png_set_compression_level(png, 3);
  png_set_IHDR(png, pi, img->width, img->height, 8, PNG_COLOR_TYPE_RGB, PNG_INTERLACE_NONE,
               PNG_COMPRESSION_TYPE_DEFAULT, PNG_FILTER_TYPE_DEFAULT);
  png_write_info(png, pi);
  for (uint32_t y = 0; y < img->height; y++)
    png_write_row(png, img->rgb + (size_t)y * img->width * 3);
  png_write_end(png, pi);
  png_destroy_write_struct(&png, &pi);
  return 0;
}

int picture_write_png(const picture_image *img, const char *path, tz_err *err)
{
  if (!img->rgb)
    return tz_fail(err, TZ_E_ARG, "no picture to write");
  int rc = check_size(img->width, img->height, err);
  if (rc)
    return rc;
  fileio_out *o = NULL;
  if ((rc = fileio_create(&o, path, err)))
    return rc;
  struct png_ctx ctx;
  ctx.msg[0] = '\0';
  if (png_encode(fileio_stream(o), img, &ctx)) {
    fileio_abort(o);
    tz_err_path(err, path);
    return tz_fail(err, TZ_E_IO, "PNG write failed: %s", ctx.msg);
  }
  return fileio_commit(o, err);
}
