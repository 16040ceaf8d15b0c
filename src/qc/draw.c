/* draw.c -- the drawing context of QC pictures: one canvas API, three outputs.
 *
 * Design. PNG and PDF are drawn by cairo: PNG on an RGB24 image surface,
 * PDF on a recording surface replayed onto a cairo PDF surface when written
 * (so a PDF can also come back as bytes). SVG is written here as markup, one
 * element per call, because cairo's SVG surface turns text into glyph
 * outlines: our SVGs keep real <text> (searchable, editable, checkable) and
 * carry data-* attributes that the HTML pages and their tests read. Text is
 * measured by cairo with the same font (DejaVu Sans through fontconfig, hint
 * metrics off) in every format, so layouts agree. Rasters are painted 1:1 in
 * PNG and scaled by nearest neighbour elsewhere, so data-point colours are
 * exact in every format (docs/pictures.md).
 *
 * Not here: what a chart shows (picture.c, html.c), file naming (fileio).
 */
#include "tzero/picture.h"

#include <cairo-pdf.h>
#include <cairo.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#include "tzero/fileio.h"
#include "util/strbuf.h"

#define FONT "DejaVu Sans"
#define PDF_PT_PER_PX 0.75        /* 96 px per inch, as CSS pixels */

static const unsigned char ink[3] = { 0, 0, 0 };
static const unsigned char grid[3] = { 225, 225, 225 };

struct picture_ctx {
  int format;
  uint32_t width, height;
  cairo_surface_t *surface;      /* PNG: image; PDF: recording; SVG: NULL */
  cairo_t *cr;                   /* draws on surface (PNG, PDF) */
  cairo_surface_t *measure_s;    /* 1 x 1 image: text metrics for every format */
  cairo_t *measure;
  tz_buf svg;                    /* SVG elements */
  char attrs[512];               /* for the next SVG element */
  int groups;                    /* open SVG groups */
};

int picture_format_from_name(const char *name)
{
  static const char *const names[] = { "png", "svg", "pdf" };
  for (int i = 0; name && i < 3; i++)
    if (!strcasecmp(name, names[i]))
      return i;
  return -1;
}

int picture_format_from_path(const char *path)
{
  const char *dot = path ? strrchr(path, '.') : NULL;
  const char *slash = path ? strrchr(path, '/') : NULL;
  if (!dot || (slash && dot < slash))
    return -1;
  return picture_format_from_name(dot + 1);
}

const char *picture_format_name(int format)
{
  return format == PICTURE_FORMAT_SVG ? "svg" : format == PICTURE_FORMAT_PDF ? "pdf" : "png";
}

static void set_font(cairo_t *cr, double size, int bold)
{
  cairo_select_font_face(cr, FONT, CAIRO_FONT_SLANT_NORMAL,
                         bold ? CAIRO_FONT_WEIGHT_BOLD : CAIRO_FONT_WEIGHT_NORMAL);
  cairo_set_font_size(cr, size);
}

static void font_options(cairo_t *cr)
{
  cairo_font_options_t *fo = cairo_font_options_create();
  cairo_font_options_set_hint_metrics(fo, CAIRO_HINT_METRICS_OFF);
  cairo_font_options_set_antialias(fo, CAIRO_ANTIALIAS_GRAY);
  cairo_set_font_options(cr, fo);
  cairo_font_options_destroy(fo);
}

int picture_ctx_new(picture_ctx **out, int format, uint32_t width, uint32_t height, tz_err *err)
{
  *out = NULL;
  if (width < 1 || height < 1 || width > PICTURE_MAX_SIDE || height > PICTURE_MAX_SIDE)
    return tz_fail(err, TZ_E_ARG, "picture %u x %u px outside 1..%u", width, height,
                   PICTURE_MAX_SIDE);
  if (format < PICTURE_FORMAT_PNG || format > PICTURE_FORMAT_PDF)
    return tz_fail(err, TZ_E_ARG, "unknown picture format %d", format);
  picture_ctx *c = calloc(1, sizeof *c);
  if (!c)
    return tz_fail(err, TZ_E_NOMEM, "picture context");
  c->format = format;
  c->width = width;
  c->height = height;
  c->measure_s = cairo_image_surface_create(CAIRO_FORMAT_RGB24, 1, 1);
  c->measure = cairo_create(c->measure_s);
  font_options(c->measure);
  if (format == PICTURE_FORMAT_PNG)
    c->surface = cairo_image_surface_create(CAIRO_FORMAT_RGB24, (int)width, (int)height);
  else if (format == PICTURE_FORMAT_PDF)
    c->surface = cairo_recording_surface_create(
      CAIRO_CONTENT_COLOR, &(cairo_rectangle_t){ 0, 0, width, height });
  if (c->surface) {
    c->cr = cairo_create(c->surface);
    font_options(c->cr);
  }
  if (cairo_status(c->measure) != CAIRO_STATUS_SUCCESS ||
      (c->cr && cairo_status(c->cr) != CAIRO_STATUS_SUCCESS)) {
    picture_ctx_free(c);
    return tz_fail(err, TZ_E_NOMEM, "picture of %u x %u px", width, height);
  }
  if (c->cr) {
    cairo_set_source_rgb(c->cr, 1, 1, 1);
    cairo_paint(c->cr);
  } else {
    tz_buf_put(&c->svg, "<rect x=\"0\" y=\"0\" width=\"%u\" height=\"%u\" fill=\"#ffffff\"/>\n",
               width, height);
  }
  *out = c;
  return TZ_OK;
}

void picture_ctx_free(picture_ctx *c)
{
  if (!c)
    return;
  if (c->cr)
    cairo_destroy(c->cr);
  if (c->surface)
    cairo_surface_destroy(c->surface);
  if (c->measure)
    cairo_destroy(c->measure);
  if (c->measure_s)
    cairo_surface_destroy(c->measure_s);
  tz_buf_free(&c->svg);
  free(c);
}

int picture_ctx_format(const picture_ctx *c) { return c->format; }

void picture_ctx_attrs(picture_ctx *c, const char *fmt, ...)
{
  va_list ap;
  va_start(ap, fmt);
  int k = vsnprintf(c->attrs, sizeof c->attrs, fmt, ap);
  va_end(ap);
  if (k < 0 || (size_t)k >= sizeof c->attrs)
    c->attrs[0] = '\0';
}

/* The pending attributes, then clears them. */
static const char *take_attrs(picture_ctx *c, char *buf, size_t cap)
{
  snprintf(buf, cap, "%s%s", c->attrs[0] ? " " : "", c->attrs);
  c->attrs[0] = '\0';
  return buf;
}

void picture_ctx_group(picture_ctx *c, const char *attrs)
{
  if (c->cr)
    return;
  tz_buf_put(&c->svg, "<g%s%s>\n", attrs ? " " : "", attrs ? attrs : "");
  c->groups++;
}

void picture_ctx_group_end(picture_ctx *c)
{
  if (c->cr || c->groups == 0)
    return;
  tz_buf_put(&c->svg, "</g>\n");
  c->groups--;
}

static void source(cairo_t *cr, const unsigned char rgb[3])
{
  cairo_set_source_rgb(cr, rgb[0] / 255.0, rgb[1] / 255.0, rgb[2] / 255.0);
}

#define HEX "#%02x%02x%02x"
#define HEXV(c) (c)[0], (c)[1], (c)[2]

void picture_ctx_fill_rect(picture_ctx *c, double x, double y, double w, double h,
                           const unsigned char rgb[3])
{
  char a[600];
  if (!(w > 0 && h > 0)) {
    c->attrs[0] = '\0';
    return;
  }
  if (c->cr) {
    source(c->cr, rgb);
    cairo_rectangle(c->cr, x, y, w, h);
    cairo_fill(c->cr);
    c->attrs[0] = '\0';
    return;
  }
  tz_buf_put(&c->svg, "<rect x=\"%.6g\" y=\"%.6g\" width=\"%.6g\" height=\"%.6g\" fill=\"" HEX
             "\"%s/>\n", x, y, w, h, HEXV(rgb), take_attrs(c, a, sizeof a));
}

void picture_ctx_stroke_rect(picture_ctx *c, double x, double y, double w, double h, double lw,
                             const unsigned char rgb[3])
{
  char a[600];
  if (c->cr) {
    source(c->cr, rgb);
    cairo_set_line_width(c->cr, lw);
    cairo_rectangle(c->cr, x - lw / 2, y - lw / 2, w + lw, h + lw);
    cairo_stroke(c->cr);
    c->attrs[0] = '\0';
    return;
  }
  tz_buf_put(&c->svg, "<rect x=\"%.6g\" y=\"%.6g\" width=\"%.6g\" height=\"%.6g\" fill=\"none\" "
             "stroke=\"" HEX "\" stroke-width=\"%.3g\"%s/>\n", x - lw / 2, y - lw / 2, w + lw,
             h + lw, HEXV(rgb), lw, take_attrs(c, a, sizeof a));
}

static void svg_points(tz_buf *b, const double *x, const double *y, size_t n)
{
  for (size_t i = 0; i < n; i++)
    tz_buf_put(b, "%s%.2f,%.2f", i ? " " : "", x[i], y[i]);
}

void picture_ctx_polyline(picture_ctx *c, const double *x, const double *y, size_t n, double lw,
                          int dashed, const unsigned char rgb[3])
{
  char a[600];
  if (n < 2) {
    c->attrs[0] = '\0';
    return;
  }
  if (c->cr) {
    source(c->cr, rgb);
    cairo_set_line_width(c->cr, lw);
    cairo_set_line_join(c->cr, CAIRO_LINE_JOIN_ROUND);
    if (dashed)
      cairo_set_dash(c->cr, (const double[]){ 6, 4 }, 2, 0);
    cairo_move_to(c->cr, x[0], y[0]);
    for (size_t i = 1; i < n; i++)
      cairo_line_to(c->cr, x[i], y[i]);
    cairo_stroke(c->cr);
    cairo_set_dash(c->cr, NULL, 0, 0);
    c->attrs[0] = '\0';
    return;
  }
  tz_buf_put(&c->svg, "<polyline fill=\"none\" stroke=\"" HEX "\" stroke-width=\"%.3g\"%s "
             "stroke-linejoin=\"round\"%s points=\"", HEXV(rgb), lw,
             dashed ? " stroke-dasharray=\"6 4\"" : "", take_attrs(c, a, sizeof a));
  svg_points(&c->svg, x, y, n);
  tz_buf_put(&c->svg, "\"/>\n");
}

void picture_ctx_polygon(picture_ctx *c, const double *x, const double *y, size_t n,
                         const unsigned char rgb[3])
{
  char a[600];
  if (n < 3) {
    c->attrs[0] = '\0';
    return;
  }
  if (c->cr) {
    source(c->cr, rgb);
    cairo_move_to(c->cr, x[0], y[0]);
    for (size_t i = 1; i < n; i++)
      cairo_line_to(c->cr, x[i], y[i]);
    cairo_close_path(c->cr);
    cairo_fill(c->cr);
    c->attrs[0] = '\0';
    return;
  }
  tz_buf_put(&c->svg, "<polygon fill=\"" HEX "\" stroke=\"none\"%s points=\"", HEXV(rgb),
             take_attrs(c, a, sizeof a));
  svg_points(&c->svg, x, y, n);
  tz_buf_put(&c->svg, "\"/>\n");
}

void picture_ctx_dot(picture_ctx *c, double x, double y, double r, const unsigned char rgb[3])
{
  char a[600];
  if (c->cr) {
    source(c->cr, rgb);
    cairo_new_sub_path(c->cr);
    cairo_arc(c->cr, x, y, r, 0, 2 * M_PI);
    cairo_fill(c->cr);
    c->attrs[0] = '\0';
    return;
  }
  tz_buf_put(&c->svg, "<circle cx=\"%.2f\" cy=\"%.2f\" r=\"%.3g\" fill=\"" HEX "\"%s/>\n", x, y,
             r, HEXV(rgb), take_attrs(c, a, sizeof a));
}

double picture_ctx_text_width(picture_ctx *c, const char *s, double size_px, int bold)
{
  cairo_text_extents_t e;
  set_font(c->measure, size_px, bold);
  cairo_text_extents(c->measure, s, &e);
  return e.x_advance;
}

double picture_ctx_text(picture_ctx *c, double x, double y, const char *s, double size_px,
                        int anchor, int bold, int vertical, const unsigned char rgb[3])
{
  char a[600];
  double w = picture_ctx_text_width(c, s, size_px, bold);
  double k = anchor == PICTURE_ANCHOR_CENTRE ? 0.5 : anchor == PICTURE_ANCHOR_RIGHT ? 1 : 0;
  if (c->cr) {
    cairo_save(c->cr);
    set_font(c->cr, size_px, bold);
    source(c->cr, rgb);
    cairo_translate(c->cr, x, y);
    if (vertical)
      cairo_rotate(c->cr, -M_PI / 2);
    cairo_move_to(c->cr, -k * w, 0);
    cairo_show_text(c->cr, s);
    cairo_new_path(c->cr);
    cairo_restore(c->cr);
    c->attrs[0] = '\0';
    return w;
  }
  static const char *const anchors[] = { "start", "middle", "end" };
  tz_buf_put(&c->svg, "<text x=\"%.2f\" y=\"%.2f\" font-family=\"" FONT ", sans-serif\" "
             "font-size=\"%.3g\" text-anchor=\"%s\" fill=\"" HEX "\"%s", x, y, size_px,
             anchors[anchor < 0 || anchor > 2 ? 0 : anchor], HEXV(rgb),
             bold ? " font-weight=\"bold\"" : "");
  if (vertical)
    tz_buf_put(&c->svg, " transform=\"rotate(-90 %.2f %.2f)\"", x, y);
  tz_buf_put(&c->svg, "%s>", take_attrs(c, a, sizeof a));
  tz_buf_xml(&c->svg, s);
  tz_buf_put(&c->svg, "</text>\n");
  return w;
}

/* An RGB24 cairo surface holding a copy of img. */
static cairo_surface_t *surface_of(const picture_image *img)
{
  cairo_surface_t *s =
    cairo_image_surface_create(CAIRO_FORMAT_RGB24, (int)img->width, (int)img->height);
  if (cairo_surface_status(s) != CAIRO_STATUS_SUCCESS)
    return s;
  cairo_surface_flush(s);
  unsigned char *d = cairo_image_surface_get_data(s);
  int stride = cairo_image_surface_get_stride(s);
  for (uint32_t y = 0; y < img->height; y++) {
    uint32_t *row = (uint32_t *)(void *)(d + (size_t)y * (size_t)stride);
    const unsigned char *p = img->rgb + 3 * (size_t)y * img->width;
    for (uint32_t x = 0; x < img->width; x++, p += 3)
      row[x] = (uint32_t)p[0] << 16 | (uint32_t)p[1] << 8 | p[2];
  }
  cairo_surface_mark_dirty(s);
  return s;
}

static cairo_status_t to_buf(void *closure, const unsigned char *data, unsigned int len)
{
  tz_buf *b = closure;
  tz_buf_add(b, (const char *)data, len);
  return b->bad ? CAIRO_STATUS_NO_MEMORY : CAIRO_STATUS_SUCCESS;
}

static cairo_status_t to_file(void *closure, const unsigned char *data, unsigned int len)
{
  return fwrite(data, 1, len, closure) == len ? CAIRO_STATUS_SUCCESS : CAIRO_STATUS_WRITE_ERROR;
}

int picture_ctx_image(picture_ctx *c, const picture_image *img, double x, double y, double w,
                      double h, tz_err *err)
{
  c->attrs[0] = '\0';
  if (!img->rgb || img->width == 0 || img->height == 0)
    return tz_fail(err, TZ_E_ARG, "no raster to paint");
  w = w > 0 ? w : img->width;
  h = h > 0 ? h : img->height;
  cairo_surface_t *s = surface_of(img);
  if (cairo_surface_status(s) != CAIRO_STATUS_SUCCESS) {
    cairo_surface_destroy(s);
    return tz_fail(err, TZ_E_NOMEM, "raster of %u x %u px", img->width, img->height);
  }
  if (c->cr) {
    cairo_save(c->cr);
    cairo_translate(c->cr, x, y);
    cairo_scale(c->cr, w / img->width, h / img->height);
    cairo_set_source_surface(c->cr, s, 0, 0);
    cairo_pattern_set_filter(cairo_get_source(c->cr), CAIRO_FILTER_NEAREST);
    cairo_rectangle(c->cr, 0, 0, img->width, img->height);
    cairo_fill(c->cr);
    cairo_restore(c->cr);
    cairo_surface_destroy(s);
    return TZ_OK;
  }
  tz_buf png = { 0 };
  cairo_status_t st = cairo_surface_write_to_png_stream(s, to_buf, &png);
  cairo_surface_destroy(s);
  if (st != CAIRO_STATUS_SUCCESS || png.bad) {
    tz_buf_free(&png);
    return tz_fail(err, TZ_E_NOMEM, "raster of %u x %u px as PNG", img->width, img->height);
  }
  tz_buf_put(&c->svg, "<image x=\"%.6g\" y=\"%.6g\" width=\"%.6g\" height=\"%.6g\" "
             "preserveAspectRatio=\"none\" style=\"image-rendering:pixelated\" "
             "xlink:href=\"data:image/png;base64,", x, y, w, h);
  tz_buf_base64(&c->svg, (const unsigned char *)png.s, png.n);
  tz_buf_put(&c->svg, "\"/>\n");
  tz_buf_free(&png);
  return TZ_OK;
}

/* The whole SVG document into b (decl: with the XML declaration). */
static void svg_document(picture_ctx *c, tz_buf *b, int decl)
{
  if (decl)
    tz_buf_put(b, "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
  tz_buf_put(b, "<svg xmlns=\"http://www.w3.org/2000/svg\" "
             "xmlns:xlink=\"http://www.w3.org/1999/xlink\" version=\"1.1\" width=\"%u\" "
             "height=\"%u\" viewBox=\"0 0 %u %u\">\n", c->width, c->height, c->width,
             c->height);
  if (c->svg.s)
    tz_buf_add(b, c->svg.s, c->svg.n);
  for (int i = 0; i < c->groups; i++)
    tz_buf_put(b, "</g>\n");
  tz_buf_put(b, "</svg>\n");
}

/* Encodes a cairo canvas (PNG or PDF) through write_fn. */
static cairo_status_t encode(picture_ctx *c, cairo_write_func_t fn, void *closure)
{
  cairo_surface_flush(c->surface);
  if (c->format == PICTURE_FORMAT_PNG)
    return cairo_surface_write_to_png_stream(c->surface, fn, closure);
  cairo_surface_t *pdf = cairo_pdf_surface_create_for_stream(
    fn, closure, c->width * PDF_PT_PER_PX, c->height * PDF_PT_PER_PX);
  cairo_pdf_surface_set_metadata(pdf, CAIRO_PDF_METADATA_CREATOR, "tzero");
  cairo_t *cr = cairo_create(pdf);
  cairo_scale(cr, PDF_PT_PER_PX, PDF_PT_PER_PX);
  cairo_set_source_surface(cr, c->surface, 0, 0);
  cairo_paint(cr);
  cairo_show_page(cr);
  cairo_destroy(cr);
  cairo_surface_finish(pdf);
  cairo_status_t st = cairo_surface_status(pdf);
  cairo_surface_destroy(pdf);
  return st;
}

int picture_ctx_bytes(picture_ctx *c, char **out, size_t *len, tz_err *err)
{
  tz_buf b = { 0 };
  *out = NULL;
  *len = 0;
  if (c->format == PICTURE_FORMAT_SVG) {
    svg_document(c, &b, 0);
  } else if (encode(c, to_buf, &b) != CAIRO_STATUS_SUCCESS) {
    tz_buf_free(&b);
    return tz_fail(err, TZ_E_NOMEM, "%s encoding failed", picture_format_name(c->format));
  }
  size_t n = b.n;
  int rc = tz_buf_finish(&b, out, "picture bytes", err);
  if (!rc)
    *len = n;
  return rc;
}

int picture_ctx_write(picture_ctx *c, const char *path, tz_err *err)
{
  fileio_out *o = NULL;
  int rc = fileio_create(&o, path, err);
  if (rc)
    return rc;
  FILE *fp = fileio_stream(o);
  int bad;
  if (c->format == PICTURE_FORMAT_SVG) {
    tz_buf b = { 0 };
    svg_document(c, &b, 1);
    bad = b.bad || fwrite(b.s, 1, b.n, fp) != b.n;
    tz_buf_free(&b);
  } else {
    bad = encode(c, to_file, fp) != CAIRO_STATUS_SUCCESS;
  }
  if (bad) {
    if (ferror(fp)) {
      rc = fileio_fail(o, -1, err);   /* the OS reason */
    } else {
      tz_err_path(err, path);
      rc = tz_fail(err, TZ_E_IO, "%s write failed", picture_format_name(c->format));
    }
    fileio_abort(o);
    return rc;
  }
  return fileio_commit(o, err);
}

int picture_ctx_raster(picture_ctx *c, picture_image *img, tz_err *err)
{
  memset(img, 0, sizeof *img);
  if (c->format != PICTURE_FORMAT_PNG)
    return tz_fail(err, TZ_E_ARG, "a %s picture has no raster", picture_format_name(c->format));
  img->rgb = malloc(3 * (size_t)c->width * c->height);
  if (!img->rgb)
    return tz_fail(err, TZ_E_NOMEM, "raster of %u x %u px", c->width, c->height);
  img->width = c->width;
  img->height = c->height;
  cairo_surface_flush(c->surface);
  const unsigned char *d = cairo_image_surface_get_data(c->surface);
  int stride = cairo_image_surface_get_stride(c->surface);
  for (uint32_t y = 0; y < c->height; y++) {
    const uint32_t *row = (const uint32_t *)(const void *)(d + (size_t)y * (size_t)stride);
    unsigned char *p = img->rgb + 3 * (size_t)y * c->width;
    for (uint32_t x = 0; x < c->width; x++, p += 3) {
      p[0] = (unsigned char)(row[x] >> 16);
      p[1] = (unsigned char)(row[x] >> 8);
      p[2] = (unsigned char)row[x];
    }
  }
  return TZ_OK;
}

int picture_write_png(const picture_image *img, const char *path, tz_err *err)
{
  if (!img->rgb)
    return tz_fail(err, TZ_E_ARG, "no picture to write");
  if (img->width < 1 || img->height < 1 || img->width > PICTURE_MAX_SIDE ||
      img->height > PICTURE_MAX_SIDE)
    return tz_fail(err, TZ_E_ARG, "picture %u x %u px outside 1..%u", img->width, img->height,
                   PICTURE_MAX_SIDE);
  cairo_surface_t *s = surface_of(img);
  if (cairo_surface_status(s) != CAIRO_STATUS_SUCCESS) {
    cairo_surface_destroy(s);
    return tz_fail(err, TZ_E_NOMEM, "raster of %u x %u px", img->width, img->height);
  }
  fileio_out *o = NULL;
  int rc = fileio_create(&o, path, err);
  if (!rc && cairo_surface_write_to_png_stream(s, to_file, fileio_stream(o)) !=
               CAIRO_STATUS_SUCCESS) {
    if (ferror(fileio_stream(o))) {
      rc = fileio_fail(o, -1, err);   /* the OS reason */
    } else {
      tz_err_path(err, path);
      rc = tz_fail(err, TZ_E_IO, "PNG write failed");
    }
    fileio_abort(o);
  } else if (!rc) {
    rc = fileio_commit(o, err);
  }
  cairo_surface_destroy(s);
  return rc;
}

/* ---------------------------------------------------------------- chart helpers */

double picture_frame_px(const picture_frame *f, double v)
{
  return f->x + (v - f->x0) / (f->x1 - f->x0) * f->w;
}

double picture_frame_py(const picture_frame *f, double v)
{
  return f->y + f->h - (v - f->y0) / (f->y1 - f->y0) * f->h;
}

void picture_frame_draw(picture_ctx *c, const picture_frame *f)
{
  picture_ctx_stroke_rect(c, f->x, f->y, f->w, f->h, 1, ink);
}

double picture_nice_step(double min_step)
{
  if (!(min_step > 0) || !isfinite(min_step))
    return 1;
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
    snprintf(buf, cap, "%.*f", (int)ceil(-log10(step) - 1e-9), v);
}

#define TICK 5.0
#define LABEL_PX 11.0
#define AXIS_TITLE_PX 12.0

/* Tick step along an axis of `px` pixels covering lo..hi, so that labels of
 * `label_px` pixels (plus a gap) never touch. */
static double axis_step(double lo, double hi, double px, double label_px, int whole)
{
  if (!(hi > lo) || !(px > 0))
    return 1;
  double step = picture_nice_step((hi - lo) * label_px / px);
  return whole && step < 1 ? 1 : step;
}

static double widest_label(picture_ctx *c, double lo, double hi, double step)
{
  char a[48], b[48];
  fmt_tick(a, sizeof a, lo, step);
  fmt_tick(b, sizeof b, hi, step);
  return fmax(picture_ctx_text_width(c, a, LABEL_PX, 0), picture_ctx_text_width(c, b, LABEL_PX, 0));
}

void picture_axis_x(picture_ctx *c, const picture_frame *f, int side, const char *title,
                    int whole)
{
  double lo = fmin(f->x0, f->x1), hi = fmax(f->x0, f->x1);
  /* two passes: the label width depends on the step's decimals */
  double step = axis_step(lo, hi, f->w, widest_label(c, lo, hi, 1) + 14, whole);
  step = axis_step(lo, hi, f->w, widest_label(c, lo, hi, step) + 14, whole);
  int top = side == PICTURE_SIDE_TOP;
  double y = top ? f->y : f->y + f->h;
  double dir = top ? -1 : 1;
  for (double v = ceil(lo / step - 1e-9) * step; v <= hi + step * 1e-9; v += step) {
    double x = floor(picture_frame_px(f, v)) + 0.5;
    double xs[2] = { x, x }, ys[2] = { y + dir * 1, y + dir * (1 + TICK) };
    picture_ctx_polyline(c, xs, ys, 2, 1, 0, ink);
    char lab[48];
    fmt_tick(lab, sizeof lab, v, step);
    picture_ctx_text(c, x, top ? y - TICK - 4 : y + TICK + 3 + LABEL_PX, lab, LABEL_PX,
                     PICTURE_ANCHOR_CENTRE, 0, 0, ink);
  }
  if (title)
    picture_ctx_text(c, f->x + f->w / 2,
                     top ? y - TICK - 8 - LABEL_PX : y + TICK + 8 + LABEL_PX + AXIS_TITLE_PX,
                     title, AXIS_TITLE_PX, PICTURE_ANCHOR_CENTRE, 0, 0, ink);
}

void picture_axis_y(picture_ctx *c, const picture_frame *f, int side, const char *title,
                    int whole)
{
  double lo = fmin(f->y0, f->y1), hi = fmax(f->y0, f->y1);
  double step = axis_step(lo, hi, f->h, LABEL_PX * 2.6, whole);
  int right = side == PICTURE_SIDE_RIGHT;
  double x = right ? f->x + f->w : f->x;
  double dir = right ? 1 : -1, widest = 0;
  for (double v = ceil(lo / step - 1e-9) * step; v <= hi + step * 1e-9; v += step) {
    double y = floor(picture_frame_py(f, v)) + 0.5;
    double xs[2] = { x + dir * 1, x + dir * (1 + TICK) }, ys[2] = { y, y };
    picture_ctx_polyline(c, xs, ys, 2, 1, 0, ink);
    char lab[48];
    fmt_tick(lab, sizeof lab, v, step);
    double w = picture_ctx_text(c, x + dir * (TICK + 4), y + LABEL_PX * 0.36, lab, LABEL_PX,
                                right ? PICTURE_ANCHOR_LEFT : PICTURE_ANCHOR_RIGHT, 0, 0, ink);
    widest = fmax(widest, w);
  }
  if (title)
    picture_ctx_text(c, x + dir * (TICK + 10 + widest) + (right ? AXIS_TITLE_PX * 0.8 : 0),
                     f->y + f->h / 2, title, AXIS_TITLE_PX, PICTURE_ANCHOR_CENTRE, 0, 1, ink);
}

void picture_grid_y(picture_ctx *c, const picture_frame *f)
{
  double lo = fmin(f->y0, f->y1), hi = fmax(f->y0, f->y1);
  double step = axis_step(lo, hi, f->h, LABEL_PX * 2.6, 0);
  for (double v = ceil(lo / step - 1e-9) * step; v <= hi + step * 1e-9; v += step) {
    double y = floor(picture_frame_py(f, v)) + 0.5;
    double xs[2] = { f->x, f->x + f->w }, ys[2] = { y, y };
    picture_ctx_polyline(c, xs, ys, 2, 1, 0, grid);
  }
}

void picture_title(picture_ctx *c, const char *title, const char *subtitle)
{
  if (title)
    picture_ctx_text(c, 8, 20, title, 15, PICTURE_ANCHOR_LEFT, 1, 0, ink);
  if (subtitle)
    picture_ctx_text(c, 8, 38, subtitle, 11.5, PICTURE_ANCHOR_LEFT, 0, 0,
                     (const unsigned char[3]){ 70, 70, 70 });
}


void picture_colour_bar(picture_ctx *c, double x, double y, double w, double h, int map,
                        double clip, const char *title)
{
  /* one raster row per pixel of height: value from +clip (top) to the bottom value */
  uint32_t rows = h < 2 ? 2 : (uint32_t)h;
  picture_image img = { 0 };
  img.rgb = malloc(3 * (size_t)rows);
  if (!img.rgb)
    return;
  img.width = 1;
  img.height = rows;
  double lo = map == PICTURE_MAP_SEQUENTIAL ? 0 : -clip;
  for (uint32_t r = 0; r < rows; r++) {
    double v = clip - ((double)r + 0.5) / rows * (clip - lo);
    picture_colour(map, v, clip, img.rgb + 3 * r);
  }
  tz_err e;
  tz_err_init(&e);
  picture_ctx_image(c, &img, x, y, w, h, &e);
  picture_image_free(&img);
  picture_ctx_stroke_rect(c, x, y, w, h, 1, ink);
  picture_frame f = { .x = x, .y = y, .w = w, .h = h, .x0 = 0, .x1 = 1, .y0 = lo, .y1 = clip };
  /* labels at the ends and the middle: the clip values and zero */
  double vals[3] = { clip, (clip + lo) / 2, lo };
  for (int i = 0; i < 3; i++) {
    char lab[48];
    snprintf(lab, sizeof lab, "%.3g", fabs(vals[i]) < clip * 1e-9 ? 0 : vals[i]);
    double yy = floor(picture_frame_py(&f, vals[i])) + 0.5;
    double xs[2] = { x + w + 1, x + w + 1 + TICK }, ys[2] = { yy, yy };
    picture_ctx_polyline(c, xs, ys, 2, 1, 0, ink);
    picture_ctx_text(c, x + w + TICK + 4, yy + LABEL_PX * 0.36, lab, LABEL_PX, PICTURE_ANCHOR_LEFT,
                     0, 0, ink);
  }
  if (title)
    picture_ctx_text(c, x - 6, y + h / 2, title, AXIS_TITLE_PX, PICTURE_ANCHOR_CENTRE, 0, 1, ink);
}

double picture_legend(picture_ctx *c, double x, double y, size_t n, const char *const *labels,
                      const unsigned char (*rgb)[3], const int *dashed)
{
  for (size_t i = 0; i < n; i++) {
    if (dashed && dashed[i]) {
      double xs[2] = { x, x + 22 }, ys[2] = { y - 4, y - 4 };
      picture_ctx_polyline(c, xs, ys, 2, 2, 1, rgb[i]);
    } else {
      picture_ctx_fill_rect(c, x + 4, y - 10, 14, 10, rgb[i]);
    }
    x += 28;
    x += picture_ctx_text(c, x, y, labels[i], LABEL_PX, PICTURE_ANCHOR_LEFT, 0, 0, ink) + 18;
  }
  return x;
}
