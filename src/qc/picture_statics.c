/* picture_statics.c -- the statics chart: elevation profile with the datum, and source
 * and receiver statics along the line, from a QC report's "statics" object.
 *
 * Two plots over the station axis: on top the receiver and source elevations
 * (lines through the stations, sources as dots) with the flat datum dashed;
 * below the receiver and source statics in ms (static_ms, the total applied per
 * station). Drawn with the chart helpers of picture.h (cairo), so PNG, SVG and
 * PDF all work.
 *
 * Not here: the report itself (qc.c), the other pictures (picture.c).
 */
#include "tzero/picture.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/fileio.h"
#include "util/json_doc.h"

#define STATICS_CHART_MAX_BYTES (512u << 20)
#define GAP 28                       /* px between the two plots */

static const unsigned char rcv_rgb[3] = { 31, 90, 180 };
static const unsigned char src_rgb[3] = { 200, 70, 30 };
static const unsigned char datum_rgb[3] = { 60, 60, 60 };

void picture_statics_free(picture_statics *s)
{
  if (!s)
    return;
  free(s->pt[0]);
  free(s->pt[1]);
  memset(s, 0, sizeof *s);
}

static int read_kind(picture_statics *s, int k, const cJSON *arr, const char *path, tz_err *err)
{
  if (!cJSON_IsArray(arr))
    return tz_fail(err, TZ_E_FORMAT, "%s: expected an array of stations", path);
  size_t n = (size_t)cJSON_GetArraySize(arr), i = 0;
  if (n && !(s->pt[k] = calloc(n, sizeof *s->pt[k])))
    return tz_fail(err, TZ_E_NOMEM, "statics chart of %zu stations", n);
  for (const cJSON *c = arr->child; c; c = c->next, i++) {
    char p[96];
    const char *keys[3] = { "station", "elevation_m", "static_ms" };
    double *dst[3] = { &s->pt[k][i].station, &s->pt[k][i].elevation_m, &s->pt[k][i].static_ms };
    for (int q = 0; q < 3; q++) {
      snprintf(p, sizeof p, "%s[%zu].%s", path, i, keys[q]);
      int rc = json_doc_number(cJSON_GetObjectItemCaseSensitive(c, keys[q]), p, -HUGE_VAL,
                               HUGE_VAL, dst[q], TZ_E_FORMAT, err);
      if (rc)
        return rc;
    }
  }
  s->n[k] = n;
  return TZ_OK;
}

int picture_statics_parse(picture_statics *out, const char *json, size_t len, const char *name,
                          tz_err *err)
{
  memset(out, 0, sizeof *out);
  cJSON *root = NULL;
  int rc = json_doc_parse(&root, json, len, name, "QC report", TZ_E_FORMAT, err);
  if (rc)
    return rc;
  const cJSON *st = cJSON_GetObjectItemCaseSensitive(root, "statics");
  if (!cJSON_IsObject(st))
    rc = tz_fail(err, TZ_E_FORMAT, "$.statics: the report has no statics (the job applied "
                 "none)");
  if (!rc)
    rc = json_doc_number(cJSON_GetObjectItemCaseSensitive(st, "datum_m"), "$.statics.datum_m",
                         -HUGE_VAL, HUGE_VAL, &out->datum_m, TZ_E_FORMAT, err);
  if (!rc)
    rc = read_kind(out, 0, cJSON_GetObjectItemCaseSensitive(st, "sources"), "$.statics.sources",
                   err);
  if (!rc)
    rc = read_kind(out, 1, cJSON_GetObjectItemCaseSensitive(st, "receivers"),
                   "$.statics.receivers", err);
  if (!rc && !out->n[0] && !out->n[1])
    rc = tz_fail(err, TZ_E_FORMAT, "$.statics: no stations");
  cJSON_Delete(root);
  if (rc) {
    picture_statics_free(out);
    if (name)
      tz_err_path(err, name);
  }
  return rc;
}

int picture_statics_load(picture_statics *out, const char *path, tz_err *err)
{
  char *text = NULL;
  size_t len = 0;
  memset(out, 0, sizeof *out);
  int rc = fileio_read_all(path, STATICS_CHART_MAX_BYTES, &text, &len, err);
  if (rc)
    return rc;
  rc = picture_statics_parse(out, text, len, path, err);
  free(text);
  return rc;
}

/* A polyline through the stations of one kind in one plot. */
static void draw_kind(picture_ctx *c, const picture_frame *f, const picture_statics_point *p,
                      size_t n, int elevation, int dots, const unsigned char rgb[3], double *xs,
                      double *ys)
{
  for (size_t i = 0; i < n; i++) {
    xs[i] = picture_frame_px(f, p[i].station);
    ys[i] = picture_frame_py(f, elevation ? p[i].elevation_m : p[i].static_ms);
  }
  if (dots)
    for (size_t i = 0; i < n; i++)
      picture_ctx_dot(c, xs[i], ys[i], 2.2, rgb);
  else
    picture_ctx_polyline(c, xs, ys, n, 1.6, 0, rgb);
}

/* Value range [lo, hi] widened to whole steps of a 1-2-5 grid with room. */
static void nice_range(double lo, double hi, double px, double *a, double *b)
{
  if (!(hi > lo)) {
    lo -= 1;
    hi += 1;
  }
  double step = picture_nice_step((hi - lo) * 30.0 / (px > 1 ? px : 1));
  *a = floor(lo / step) * step;
  *b = ceil(hi / step) * step;
  if (*b <= *a)
    *b = *a + step;
}

int picture_draw_statics(const picture_statics *s, const char *title, uint32_t width,
                         uint32_t height, int format, picture_ctx **out, picture_info *info,
                         tz_err *err)
{
  *out = NULL;
  size_t nmax = s->n[0] > s->n[1] ? s->n[0] : s->n[1];
  if (!nmax)
    return tz_fail(err, TZ_E_ARG, "no stations to chart");
  double st0 = INFINITY, st1 = -INFINITY, e0 = s->datum_m, e1 = s->datum_m, m0 = 0, m1 = 0;
  for (int k = 0; k < 2; k++)
    for (size_t i = 0; i < s->n[k]; i++) {
      const picture_statics_point *p = &s->pt[k][i];
      st0 = fmin(st0, p->station);
      st1 = fmax(st1, p->station);
      e0 = fmin(e0, p->elevation_m);
      e1 = fmax(e1, p->elevation_m);
      m0 = fmin(m0, p->static_ms);
      m1 = fmax(m1, p->static_ms);
    }
  if (!width) {
    double pw = (st1 - st0 + 1) * 4;
    pw = pw < 640 ? 640 : pw > 2400 ? 2400 : pw;
    width = (uint32_t)pw + PICTURE_MARGIN_LEFT + PICTURE_CHART_MARGIN_RIGHT;
  }
  if (!height)
    height = 560;
  if (width < PICTURE_MIN_WIDTH || height < PICTURE_MIN_HEIGHT || width > PICTURE_MAX_SIDE ||
      height > PICTURE_MAX_SIDE)
    return tz_fail(err, TZ_E_ARG, "picture size %u x %u px outside %u..%u x %u..%u", width,
                   height, PICTURE_MIN_WIDTH, PICTURE_MAX_SIDE, PICTURE_MIN_HEIGHT,
                   PICTURE_MAX_SIDE);
  double *xs = malloc(nmax * sizeof *xs), *ys = malloc(nmax * sizeof *ys);
  picture_ctx *c = NULL;
  int rc = !xs || !ys ? tz_fail(err, TZ_E_NOMEM, "statics chart") : TZ_OK;
  if (!rc)
    rc = picture_ctx_new(&c, format, width, height, err);
  if (rc) {
    free(xs);
    free(ys);
    return rc;
  }
  double x = PICTURE_MARGIN_LEFT, y = PICTURE_MARGIN_TOP;
  double w = (double)width - PICTURE_MARGIN_LEFT - PICTURE_CHART_MARGIN_RIGHT;
  double h = (double)height - PICTURE_MARGIN_TOP - 40 - GAP;
  double h1 = floor(0.5 * h), h2 = h - h1;
  picture_frame fe = { .x = x, .y = y, .w = w, .h = h1, .x0 = st0 - 0.5, .x1 = st1 + 0.5 };
  nice_range(e0, e1, h1, &fe.y0, &fe.y1);
  picture_frame fs = { .x = x, .y = y + h1 + GAP, .w = w, .h = h2, .x0 = fe.x0, .x1 = fe.x1 };
  nice_range(m0, m1, h2, &fs.y0, &fs.y1);
  picture_title(c, title, "elevations with the flat datum (dashed); station statics, ms");
  picture_grid_y(c, &fe);
  picture_grid_y(c, &fs);
  double dx[2] = { x, x + w }, dy[2];
  dy[0] = dy[1] = picture_frame_py(&fe, s->datum_m);
  picture_ctx_attrs(c, "class=\"datum\" data-datum=\"%g\"", s->datum_m);
  picture_ctx_polyline(c, dx, dy, 2, 1.5, 1, datum_rgb);
  dy[0] = dy[1] = picture_frame_py(&fs, 0);
  picture_ctx_polyline(c, dx, dy, 2, 1, 0, datum_rgb);
  picture_ctx_group(c, "class=\"receivers\"");
  draw_kind(c, &fe, s->pt[1], s->n[1], 1, 0, rcv_rgb, xs, ys);
  draw_kind(c, &fs, s->pt[1], s->n[1], 0, 0, rcv_rgb, xs, ys);
  picture_ctx_group_end(c);
  picture_ctx_group(c, "class=\"sources\"");
  draw_kind(c, &fe, s->pt[0], s->n[0], 1, 1, src_rgb, xs, ys);
  draw_kind(c, &fs, s->pt[0], s->n[0], 0, 1, src_rgb, xs, ys);
  picture_ctx_group_end(c);
  picture_frame_draw(c, &fe);
  picture_frame_draw(c, &fs);
  picture_axis_y(c, &fe, PICTURE_SIDE_LEFT, "Elevation (m)", 0);
  picture_axis_y(c, &fs, PICTURE_SIDE_LEFT, "Static (ms)", 0);
  picture_axis_x(c, &fs, PICTURE_SIDE_BOTTOM, "Station", 1);
  const char *labels[3] = { "receivers", "sources", "datum" };
  const unsigned char rgb[3][3] = { { 31, 90, 180 }, { 200, 70, 30 }, { 60, 60, 60 } };
  const int dashed[3] = { 0, 0, 1 };
  picture_legend(c, x + w - 260, y - 10, 3, labels, rgb, dashed);
  free(xs);
  free(ys);
  if (info) {
    memset(info, 0, sizeof *info);
    info->width = width;
    info->height = height;
    info->plot_x = (uint32_t)x;
    info->plot_y = (uint32_t)y;
    info->plot_w = (uint32_t)w;
    info->plot_h = (uint32_t)h;
  }
  *out = c;
  return TZ_OK;
}
