/* check_picture.c -- QC pictures: percentile clip, colour maps, pixel mapping, fold
 * report reading, size limits, PNG, SVG and PDF output and the drawing context.
 * No check depends on font hinting: sizes, colours at known data points, text
 * present in the SVG. (PNG decoding and NumPy percentiles: tests/xcheck/test_picture.py.) */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "tzero/picture.h"
#include "unit.h"

/* Percentile by linear interpolation between order statistics at rank
 * p/100 (n-1): Hyndman and Fan (1996), "Sample quantiles in statistical
 * packages", definition 7. |a| sorted = 1, 2, 3, 4: p 0 -> 1, p 50 -> rank 1.5
 * -> 2.5, p 99 -> rank 2.97 -> 3.97, p 100 -> 4 (worked by hand). */
START_TEST(test_percentile)
{
  const float a[] = { -4, 1, 2, -3 };
  double v;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(picture_abs_percentile(a, 4, 0, &v, &e), TZ_OK);
  ck_assert_double_eq_tol(v, 1.0, 1e-12);
  ck_assert_int_eq(picture_abs_percentile(a, 4, 50, &v, &e), TZ_OK);
  ck_assert_double_eq_tol(v, 2.5, 1e-12);
  ck_assert_int_eq(picture_abs_percentile(a, 4, 99, &v, &e), TZ_OK);
  ck_assert_double_eq_tol(v, 3.97, 1e-12);
  ck_assert_int_eq(picture_abs_percentile(a, 4, 100, &v, &e), TZ_OK);
  ck_assert_double_eq_tol(v, 4.0, 1e-12);
  ck_assert_int_eq(picture_abs_percentile(a, 1, 30, &v, &e), TZ_OK);
  ck_assert_double_eq_tol(v, 4.0, 1e-12);
  ck_assert_int_eq(picture_abs_percentile(a, 0, 50, &v, &e), TZ_E_ARG);
  tz_err_init(&e);
  ck_assert_int_eq(picture_abs_percentile(a, 4, 101, &v, &e), TZ_E_ARG);
  ck_assert_ptr_nonnull(strstr(e.msg, "101"));
}
END_TEST

static int cmp_f(const void *a, const void *b)
{
  float x = *(const float *)a, y = *(const float *)b;
  return (x > y) - (x < y);
}

/* The selection against a full sort (the definition above applied to sorted
 * |a|), on sizes 1..300 with many ties and zeros as in muted sections. */
START_TEST(test_percentile_select)
{
  unsigned seed = 12345;
  float a[300], s[300];
  tz_err e;
  tz_err_init(&e);
  for (size_t n = 1; n <= 300; n += 7) {
    for (size_t i = 0; i < n; i++) {
      seed = seed * 1103515245u + 12345u;
      int r = (int)((seed >> 16) % 21) - 10;
      a[i] = (seed >> 8) % 3 == 0 ? 0.0f : (float)r * 0.5f;
      s[i] = fabsf(a[i]);
    }
    qsort(s, n, sizeof *s, cmp_f);
    const double ps[] = { 0, 10, 50, 90, 99, 99.9, 100 };
    for (size_t q = 0; q < sizeof ps / sizeof ps[0]; q++) {
      double rank = ps[q] / 100.0 * (double)(n - 1), v;
      size_t lo = (size_t)floor(rank), hi = lo + 1 < n ? lo + 1 : lo;
      double want = s[lo] + (rank - (double)lo) * (s[hi] - s[lo]);
      ck_assert_int_eq(picture_abs_percentile(a, n, ps[q], &v, &e), TZ_OK);
      ck_assert_msg(fabs(v - want) <= 1e-12, "n %zu p %g: %g want %g", n, ps[q], v, want);
    }
  }
}
END_TEST

static void expect_rgb(int map, double a, double clip, int r, int g, int b)
{
  unsigned char c[3];
  picture_colour(map, a, clip, c);
  ck_assert_msg(c[0] == r && c[1] == g && c[2] == b, "map %d a %g: got %d,%d,%d want %d,%d,%d",
                map, a, c[0], c[1], c[2], r, g, b);
}

/* The documented maps (docs/pictures.md): diverging white at zero, pure red at
 * +clip, pure blue at -clip, saturating beyond; grey 255 (1 - u) / 2 rounded,
 * black for positive (common practice for variable density); sequential
 * through its five knots. Half clip: 255 x 0.5 = 127.5 rounds to 128. */
START_TEST(test_colour_maps)
{
  expect_rgb(PICTURE_MAP_DIVERGING, 0, 2, 255, 255, 255);
  expect_rgb(PICTURE_MAP_DIVERGING, 2, 2, 255, 0, 0);
  expect_rgb(PICTURE_MAP_DIVERGING, 7, 2, 255, 0, 0);
  expect_rgb(PICTURE_MAP_DIVERGING, -2, 2, 0, 0, 255);
  expect_rgb(PICTURE_MAP_DIVERGING, -9, 2, 0, 0, 255);
  expect_rgb(PICTURE_MAP_DIVERGING, 1, 2, 255, 128, 128);
  expect_rgb(PICTURE_MAP_DIVERGING, -0.5, 2, 191, 191, 255); /* 255 x 0.75 = 191.25 */
  expect_rgb(PICTURE_MAP_GREY, 0, 1, 128, 128, 128);
  expect_rgb(PICTURE_MAP_GREY, 1, 1, 0, 0, 0);
  expect_rgb(PICTURE_MAP_GREY, -1, 1, 255, 255, 255);
  expect_rgb(PICTURE_MAP_GREY, 0.5, 1, 64, 64, 64); /* 127.5 x 0.5 = 63.75 */
  expect_rgb(PICTURE_MAP_SEQUENTIAL, 0, 1, 0, 0, 96);
  expect_rgb(PICTURE_MAP_SEQUENTIAL, -1, 1, 0, 0, 96);
  expect_rgb(PICTURE_MAP_SEQUENTIAL, 0.25, 1, 0, 96, 255);
  expect_rgb(PICTURE_MAP_SEQUENTIAL, 0.5, 1, 0, 200, 200);
  expect_rgb(PICTURE_MAP_SEQUENTIAL, 0.75, 1, 255, 220, 0);
  expect_rgb(PICTURE_MAP_SEQUENTIAL, 1, 1, 200, 0, 0);
  expect_rgb(PICTURE_MAP_SEQUENTIAL, 0.875, 1, 228, 110, 0); /* halfway: 227.5, 110, 0 */
}
END_TEST

static const unsigned char *px(const picture_image *img, uint32_t x, uint32_t y)
{
  return img->rgb + 3 * ((size_t)y * img->width + x);
}

/* One positive spike on trace 3 of 10, sample 40 of 100, in a 20x larger
 * plot: by the nearest-neighbour rule (plot column c shows trace
 * floor((c + 0.5) n / w)) the spike fills a block of 20 x 2 plot pixels in
 * pure red and everything else in the plot is white; traces and samples are
 * placed where the rule says (common practice: pixel centres sample the panel). */
START_TEST(test_spike_panel)
{
  enum { NT = 10, NS = 100 };
  float *d = calloc(NT * NS, sizeof *d);
  d[3 * NS + 40] = 5.0f;
  picture_panel p = { .data = d, .ntraces = NT, .nsamples = NS, .interval_ms = 4,
                      .title = "spike" };
  picture_opts o = { .style = PICTURE_STYLE_DENSITY, .clip_percentile = 100,
                     .width = 200 + PICTURE_MARGIN_LEFT + PICTURE_MARGIN_RIGHT,
                     .height = 200 + PICTURE_MARGIN_TOP + PICTURE_MARGIN_BOTTOM };
  picture_image img;
  picture_info in;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(picture_render_panel(&p, &o, &img, &in, &e), TZ_OK);
  ck_assert_uint_eq(img.width, o.width);
  ck_assert_uint_eq(in.plot_w, 200);
  ck_assert_uint_eq(in.plot_h, 200);
  ck_assert_double_eq_tol(in.clip, 5.0, 1e-12);
  size_t red = 0;
  for (uint32_t y = 0; y < in.plot_h; y++)
    for (uint32_t x = 0; x < in.plot_w; x++) {
      const unsigned char *c = px(&img, in.plot_x + x, in.plot_y + y);
      int in_spike = x >= 60 && x < 80 && y >= 80 && y < 82;
      if (in_spike) {
        ck_assert_msg(c[0] == 255 && c[1] == 0 && c[2] == 0, "spike pixel %u,%u", x, y);
        red++;
      } else {
        ck_assert_msg(c[0] == 255 && c[1] == 255 && c[2] == 255, "zero pixel %u,%u", x, y);
      }
    }
  ck_assert_uint_eq(red, 40);
  /* the frame is just outside the plot area */
  ck_assert_int_eq(px(&img, in.plot_x - 1, in.plot_y + 10)[0], 0);
  picture_image_free(&img);

  /* Wiggle: the positive spike swings right of the trace's baseline only. */
  o.style = PICTURE_STYLE_WIGGLE;
  ck_assert_int_eq(picture_render_panel(&p, &o, &img, &in, &e), TZ_OK);
  uint32_t row = in.plot_y + 80, base = in.plot_x + 70; /* trace 3 centre: (3.5 x 20) */
  ck_assert_int_lt(px(&img, base + 10, row)[0], 40); /* filled lobe (anti-aliased edge) */
  ck_assert_int_eq(px(&img, base - 10, row)[0], 255);
  ck_assert_int_eq(in.style, PICTURE_STYLE_WIGGLE);
  picture_image_free(&img);
  /* auto: 20 px between traces gives wiggles over density, except over the
   * semblance map (never negative, so wiggles would only fill; docs) */
  o.style = PICTURE_STYLE_AUTO;
  ck_assert_int_eq(picture_render_panel(&p, &o, &img, &in, &e), TZ_OK);
  ck_assert_int_eq(in.style, PICTURE_STYLE_BOTH);
  picture_image_free(&img);
  o.map = PICTURE_MAP_SEQUENTIAL;
  ck_assert_int_eq(picture_render_panel(&p, &o, &img, &in, &e), TZ_OK);
  ck_assert_int_eq(in.style, PICTURE_STYLE_DENSITY);
  picture_image_free(&img);
  free(d);
}
END_TEST

/* Size limits are checked before anything is allocated. */
START_TEST(test_sizes)
{
  float d[4] = { 1, 2, 3, 4 };
  picture_panel p = { .data = d, .ntraces = 2, .nsamples = 2, .interval_ms = 1 };
  picture_opts o = { .width = 100, .height = 400 };
  picture_image img;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(picture_render_panel(&p, &o, &img, NULL, &e), TZ_E_ARG);
  ck_assert_ptr_nonnull(strstr(e.msg, "width 100"));
  ck_assert_ptr_null(img.rgb);
  tz_err_init(&e);
  o.width = 400;
  o.height = PICTURE_MAX_SIDE + 1;
  ck_assert_int_eq(picture_render_panel(&p, &o, &img, NULL, &e), TZ_E_ARG);
  ck_assert_ptr_nonnull(strstr(e.msg, "height"));
  tz_err_init(&e);
  p.interval_ms = 0;
  o.height = 400;
  ck_assert_int_eq(picture_render_panel(&p, &o, &img, NULL, &e), TZ_E_ARG);
  tz_err_init(&e);
  p.interval_ms = 1;
  p.ntraces = 0;
  ck_assert_int_eq(picture_render_panel(&p, &o, &img, NULL, &e), TZ_E_ARG);
  /* defaults: 2..12 px per trace within 600..4000 px of plot (docs/pictures.md) */
  uint32_t w, h;
  picture_default_size(500, 1001, &w, &h);
  ck_assert_uint_eq(w, 1000 + PICTURE_MARGIN_LEFT + PICTURE_MARGIN_RIGHT);
  ck_assert_uint_eq(h, 1000 + PICTURE_MARGIN_TOP + PICTURE_MARGIN_BOTTOM);
  picture_default_size(20, 250, &w, &h);
  ck_assert_uint_eq(w, 600 + PICTURE_MARGIN_LEFT + PICTURE_MARGIN_RIGHT);
  ck_assert_uint_eq(h, 600 + PICTURE_MARGIN_TOP + PICTURE_MARGIN_BOTTOM);
}
END_TEST

static const char *qc_ok =
  "{\"format\": \"tzero-qc/1\", \"fold\": {\"nominal\": 6},\n"
  " \"cmps\": [{\"cmp\": 10, \"fold\": 2, \"live_fraction\": 0.5},\n"
  "          {\"cmp\": 11, \"fold\": 6, \"live_fraction\": 1},\n"
  "          {\"cmp\": 13, \"fold\": 0, \"live_fraction\": 0}]}";

START_TEST(test_fold_parse)
{
  picture_fold f;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(picture_fold_parse(&f, qc_ok, strlen(qc_ok), "qc.json", &e), TZ_OK);
  ck_assert_uint_eq(f.n, 3);
  ck_assert_int_eq(f.rows[2].cmp, 13);
  ck_assert_double_eq(f.rows[1].fold, 6);
  ck_assert_double_eq(f.rows[0].live_fraction, 0.5);
  ck_assert_double_eq(f.nominal, 6);

  /* Fold bars: CMP 11 (fold 6) is three times as tall as CMP 10 (fold 2), the
   * missing CMP 12 and zero-fold CMP 13 draw nothing (proportional bars,
   * common practice for fold charts). */
  picture_image img;
  picture_info in;
  ck_assert_int_eq(picture_render_fold(&f, "t", 400 + PICTURE_MARGIN_LEFT + PICTURE_MARGIN_RIGHT,
                                       300, &img, &in, &e), TZ_OK);
  uint32_t bar_h[4] = { 0 };
  for (int k = 0; k < 4; k++) {
    uint32_t x = in.plot_x + (uint32_t)(k * 100 + 50);
    for (uint32_t y = in.plot_y; y < in.plot_y + in.plot_h; y++) {
      const unsigned char *c = px(&img, x, y);
      bar_h[k] += c[0] == 70 && c[1] == 110 && c[2] == 180;
    }
  }
  ck_assert_uint_gt(bar_h[0], 10);
  ck_assert_uint_le(abs((int)bar_h[1] - 3 * (int)bar_h[0]), 2);
  ck_assert_uint_eq(bar_h[2], 0);
  ck_assert_uint_eq(bar_h[3], 0);
  picture_image_free(&img);
  picture_fold_free(&f);

  static const struct { const char *json, *want; } bad[] = {
    { "{\"format\": \"other\"}", "$.format" },
    { "{\"format\": \"tzero-qc/1\", \"fold\": {\"nominal\": 1}}", "$.cmps" },
    { "{\"format\": \"tzero-qc/1\", \"fold\": {}, \"cmps\": []}", "$.fold.nominal" },
    { "{\"format\": \"tzero-qc/1\", \"fold\": {\"nominal\": 1}, \"cmps\": [{\"cmp\": 1, "
      "\"fold\": 1, \"live_fraction\": 1}, {\"cmp\": 2, \"fold\": \"x\", \"live_fraction\": 1}]}",
      "$.cmps[1].fold" },
    { "{\"format\": \"tzero-qc/1\", \"fold\": {\"nominal\": 1}, \"cmps\": [{\"cmp\": 1, "
      "\"fold\": 1, \"live_fraction\": 1.5}]}", "live_fraction: 1.5 outside" },
    { "{\"format\": \"tzero-qc/1\", \"fold\": {\"nominal\": 1}, \"cmps\": [{\"cmp\": 2, "
      "\"fold\": 1, \"live_fraction\": 1}, {\"cmp\": 2, \"fold\": 1, \"live_fraction\": 1}]}",
      "does not follow" },
    { "{\"format\": \"tzero-qc/1\", \"fold\": {\"nominal\": 1}, \"cmps\": []}", "no CMPs" },
    { "{\"format\": \"tzero-qc/1\",", "QC report is not valid JSON" },
  };
  for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
    tz_err_init(&e);
    ck_assert_int_eq(picture_fold_parse(&f, bad[i].json, strlen(bad[i].json), "qc.json", &e),
                     TZ_E_FORMAT);
    ck_assert_msg(strstr(e.msg, bad[i].want), "case %zu: %s", i, e.msg);
    ck_assert_str_eq(e.path, "qc.json");
    ck_assert_ptr_null(f.rows);
  }
  tz_err_init(&e);
  ck_assert_int_eq(picture_fold_load(&f, "/nonexistent/qc.json", &e), TZ_E_NOINPUT);
}
END_TEST

/* PNG signature (ISO/IEC 15948, section 5.2: 89 50 4E 47 0D 0A 1A 0A) and the
 * IHDR width and height (big-endian, bytes 16-23); a write below a non-folder
 * fails with TZ_E_CREATE and leaves nothing. */
START_TEST(test_png)
{
  picture_image img = { 0 };
  img.width = 300;
  img.height = 200;
  img.rgb = calloc(300 * 200 * 3, 1);
  img.rgb[3 * 301] = 255; /* pixel (1, 1) red */
  char path[] = "/tmp/check_picture_XXXXXX";
  int fd = mkstemp(path);
  ck_assert_int_ge(fd, 0);
  close(fd);
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(picture_write_png(&img, path, &e), TZ_OK);
  FILE *fp = fopen(path, "rb");
  unsigned char h[24];
  ck_assert_uint_eq(fread(h, 1, 24, fp), 24);
  fclose(fp);
  unlink(path);
  static const unsigned char sig[8] = { 0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A };
  ck_assert_int_eq(memcmp(h, sig, 8), 0);
  ck_assert_int_eq(memcmp(h + 12, "IHDR", 4), 0);
  ck_assert_uint_eq((unsigned)h[16] << 24 | h[17] << 16 | h[18] << 8 | h[19], 300);
  ck_assert_uint_eq((unsigned)h[20] << 24 | h[21] << 16 | h[22] << 8 | h[23], 200);
  tz_err_init(&e);
  ck_assert_int_eq(picture_write_png(&img, "/dev/null/x.png", &e), TZ_E_CREATE);
  ck_assert_int_eq(access("/dev/null/x.png", F_OK), -1);
  picture_image_free(&img);
  ck_assert_ptr_null(img.rgb);
}
END_TEST

START_TEST(test_load_errors)
{
  picture_loaded l;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(picture_load_segy("/nonexistent/s.sgy", NULL, &l, &e), TZ_E_NOINPUT);
  ck_assert_ptr_null(l.data);
}
END_TEST

static int contains(const char *s, size_t n, const char *what)
{
  return memmem(s, n, what, strlen(what)) != NULL;
}

/* The drawing context: formats by extension, text kept as text in SVG (with
 * XML escapes, W3C XML 1.0 section 2.4), data-* attributes on the next
 * element only, a PDF header (ISO 32000-1, section 7.5.2: "%PDF-1.n"), and
 * raster colours exact at their pixels in PNG. */
START_TEST(test_ctx)
{
  ck_assert_int_eq(picture_format_from_path("a/b.svg"), PICTURE_FORMAT_SVG);
  ck_assert_int_eq(picture_format_from_path("B.PNG"), PICTURE_FORMAT_PNG);
  ck_assert_int_eq(picture_format_from_path("x.pdf"), PICTURE_FORMAT_PDF);
  ck_assert_int_eq(picture_format_from_path("x.jpg"), -1);
  ck_assert_int_eq(picture_format_from_path("dir.svg/x"), -1);
  ck_assert_int_eq(picture_format_from_name("pdf"), PICTURE_FORMAT_PDF);
  ck_assert_int_eq(picture_format_from_name("gif"), -1);
  tz_err e;
  tz_err_init(&e);
  picture_ctx *c = NULL;
  ck_assert_int_eq(picture_ctx_new(&c, PICTURE_FORMAT_SVG, 0, 10, &e), TZ_E_ARG);
  ck_assert_ptr_null(c);
  tz_err_init(&e);
  ck_assert_int_eq(picture_ctx_new(&c, PICTURE_FORMAT_SVG, 300, 200, &e), TZ_OK);
  const unsigned char red[3] = { 255, 0, 0 };
  picture_ctx_attrs(c, "data-cmp=\"%d\"", 17);
  picture_ctx_fill_rect(c, 10, 10, 5, 5, red);
  picture_ctx_fill_rect(c, 20, 10, 5, 5, red);
  double w = picture_ctx_text(c, 50, 50, "Fold <12> & \"m/s\"", 12, PICTURE_ANCHOR_LEFT, 0, 0, red);
  ck_assert(w > 40 && w < 200);
  picture_frame f = { .x = 40, .y = 40, .w = 200, .h = 100, .x0 = 0, .x1 = 50, .y0 = 0, .y1 = 10 };
  ck_assert_double_eq_tol(picture_frame_px(&f, 25), 140, 1e-12);
  ck_assert_double_eq_tol(picture_frame_py(&f, 10), 40, 1e-12);
  picture_axis_x(c, &f, PICTURE_SIDE_BOTTOM, "Offset (m)", 0);
  picture_axis_y(c, &f, PICTURE_SIDE_LEFT, "Fold", 1);
  char *svg = NULL;
  size_t n = 0;
  ck_assert_int_eq(picture_ctx_bytes(c, &svg, &n, &e), TZ_OK);
  ck_assert(contains(svg, n, "<svg xmlns=\"http://www.w3.org/2000/svg\""));
  ck_assert(contains(svg, n, "Fold &lt;12&gt; &amp; &quot;m/s&quot;"));
  ck_assert(contains(svg, n, ">Offset (m)</text>"));
  ck_assert(contains(svg, n, ">50</text>")); /* the last x tick */
  ck_assert(contains(svg, n, "data-cmp=\"17\""));
  char *first = strstr(svg, "data-cmp");
  ck_assert_ptr_null(strstr(first + 1, "data-cmp")); /* the second rect has none */
  free(svg);
  picture_ctx_free(c);

  /* PNG: a 2 x 1 raster painted at (3, 4) keeps its colours exactly */
  ck_assert_int_eq(picture_ctx_new(&c, PICTURE_FORMAT_PNG, 20, 10, &e), TZ_OK);
  unsigned char px2[6] = { 10, 20, 30, 200, 100, 50 };
  picture_image small = { .width = 2, .height = 1, .rgb = px2 };
  ck_assert_int_eq(picture_ctx_image(c, &small, 3, 4, 0, 0, &e), TZ_OK);
  picture_image got;
  ck_assert_int_eq(picture_ctx_raster(c, &got, &e), TZ_OK);
  ck_assert_int_eq(memcmp(px(&got, 3, 4), px2, 3), 0);
  ck_assert_int_eq(memcmp(px(&got, 4, 4), px2 + 3, 3), 0);
  ck_assert_int_eq(px(&got, 5, 4)[0], 255); /* white around it */
  picture_image_free(&got);
  picture_ctx_free(c);

  ck_assert_int_eq(picture_ctx_new(&c, PICTURE_FORMAT_PDF, 200, 100, &e), TZ_OK);
  picture_ctx_text(c, 10, 50, "Nominal fold", 12, PICTURE_ANCHOR_LEFT, 1, 0, red);
  char *pdf = NULL;
  ck_assert_int_eq(picture_ctx_bytes(c, &pdf, &n, &e), TZ_OK);
  ck_assert(n > 200 && !memcmp(pdf, "%PDF-1.", 7));
  free(pdf);
  ck_assert_int_eq(picture_ctx_raster(c, &got, &e), TZ_E_ARG); /* no raster in a PDF */
  picture_ctx_free(c);
}
END_TEST

/* A panel as SVG: the density image embedded as a PNG data URI, axis titles
 * with units as text, the colour bar's clip value as text; a fold chart's
 * bars carry their CMP's fold (consistency check with the report given). */
START_TEST(test_svg_panel_and_fold)
{
  enum { NT = 10, NS = 100 };
  float *d = calloc(NT * NS, sizeof *d);
  d[3 * NS + 40] = 5.0f;
  double cmps[NT];
  for (int i = 0; i < NT; i++)
    cmps[i] = 101 + i;
  picture_panel p = { .data = d, .ntraces = NT, .nsamples = NS, .interval_ms = 4,
                      .xvalue = cmps, .xlabel = "CMP", .title = "Spike test" };
  picture_opts o = { .clip_percentile = 100, .width = 500, .height = 400 };
  picture_ctx *c = NULL;
  picture_info in;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(picture_draw_panel(&p, &o, PICTURE_FORMAT_SVG, &c, &in, &e), TZ_OK);
  ck_assert_uint_eq(in.width, 500);
  ck_assert_uint_eq(in.height, 400);
  char *svg = NULL;
  size_t n = 0;
  ck_assert_int_eq(picture_ctx_bytes(c, &svg, &n, &e), TZ_OK);
  ck_assert(contains(svg, n, "xlink:href=\"data:image/png;base64,iVBORw0KGgo"));
  ck_assert(contains(svg, n, ">Time (ms)</text>"));
  ck_assert(contains(svg, n, ">Spike test</text>"));
  ck_assert(contains(svg, n, ">CMP</text>"));
  ck_assert(contains(svg, n, ">Amplitude</text>"));
  ck_assert(contains(svg, n, ">5</text>")); /* colour bar: +clip */
  ck_assert(contains(svg, n, ">-5</text>"));
  free(svg);
  picture_ctx_free(c);
  free(d);

  picture_fold f;
  ck_assert_int_eq(picture_fold_parse(&f, qc_ok, strlen(qc_ok), "qc.json", &e), TZ_OK);
  ck_assert_int_eq(picture_draw_fold(&f, "Fold", 0, 0, PICTURE_FORMAT_SVG, &c, &in, &e), TZ_OK);
  ck_assert_int_eq(picture_ctx_bytes(c, &svg, &n, &e), TZ_OK);
  ck_assert(contains(svg, n, "data-cmp=\"10\" data-fold=\"2\""));
  ck_assert(contains(svg, n, "data-cmp=\"11\" data-fold=\"6\""));
  ck_assert(contains(svg, n, "data-cmp=\"11\" data-live=\"1\""));
  ck_assert(!contains(svg, n, "data-cmp=\"12\"")); /* no CMP 12 in the report */
  ck_assert(contains(svg, n, "data-nominal=\"6\""));
  ck_assert(contains(svg, n, ">Nominal fold 6</text>"));
  free(svg);
  picture_ctx_free(c);
  picture_fold_free(&f);
}
END_TEST

static Suite *picture_suite(void)
{
  Suite *s = suite_create("picture");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_percentile);
  tcase_add_test(tc, test_percentile_select);
  tcase_add_test(tc, test_colour_maps);
  tcase_add_test(tc, test_spike_panel);
  tcase_add_test(tc, test_sizes);
  tcase_add_test(tc, test_fold_parse);
  tcase_add_test(tc, test_png);
  tcase_add_test(tc, test_load_errors);
  tcase_add_test(tc, test_ctx);
  tcase_add_test(tc, test_svg_panel_and_fold);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(picture_suite)
