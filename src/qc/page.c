/* page.c -- HTML QC pages: a line's report, a survey of lines, a comparison of two stacks.
 *
 * Design. A page is built as one string (util/strbuf): a fixed style sheet
 * (screen and print), sections in a fixed order, each drawn only when the
 * report has its keys, and one plain script. Charts are SVG from the picture
 * drawing context, every CMP chart on one CMP axis (the plot area of
 * picture.h's panel margins at PAGE_WIDTH_PX), so the section thumbnail,
 * drawn as a panel of one trace per CMP of the report's range, lines up with
 * the fold chart column for column. Chart elements carry data-* values (CMP,
 * fold, ...) that the script and the browser tests read. Per-CMP numbers the
 * page does not know (added to the report later, e.g. statics) get a chart of
 * their own, and unknown top-level sections are shown as JSON, so the page
 * grows with the report.
 *
 * Not here: reading SEG-Y beyond picture_load_segy, the report's keys
 * (qc.c), the comparison itself (compare.c).
 */
#include "tzero/page.h"

#include <cjson/cJSON.h>
#include <limits.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "qc/qc_int.h"
#include "tzero/fileio.h"
#include "tzero/picture.h"
#include "tzero/qc.h"
#include "util/strbuf.h"

#define W PAGE_WIDTH_PX
#define PX PICTURE_MARGIN_LEFT
#define PW (PAGE_WIDTH_PX - PICTURE_MARGIN_LEFT - PICTURE_MARGIN_RIGHT)
#define CHART_TOP 30.0
#define CHART_BOTTOM 44.0

typedef unsigned char rgb3[3];
static const rgb3 c_fold = { 70, 110, 180 }, c_nominal = { 0, 150, 0 }, c_acq = { 90, 90, 90 },
                  c_live = { 220, 120, 30 }, c_time = { 120, 60, 150 }, c_off = { 40, 130, 130 },
                  c_stretch = { 200, 80, 60 }, c_top = { 230, 170, 50 }, c_end = { 150, 150, 150 },
                  c_db = { 60, 60, 160 }, c_corr = { 150, 60, 60 }, c_grey = { 190, 190, 190 },
                  c_ink = { 0, 0, 0 };
/* velocity functions: plain, well-separated colours */
static const rgb3 cycle[8] = { { 31, 90, 170 }, { 200, 70, 40 }, { 40, 140, 60 }, { 140, 70, 160 },
                               { 190, 140, 0 }, { 0, 140, 160 }, { 120, 80, 40 }, { 200, 60, 140 } };

/* ---------------------------------------------------------------- paths */

static int exists(const char *p)
{
  struct stat st;
  return p && stat(p, &st) == 0 && S_ISREG(st.st_mode);
}

static const char *base_name(const char *p)
{
  const char *s = strrchr(p, '/');
  return s ? s + 1 : p;
}

/* Absolute form of p (its folder resolved, the name kept): malloc'd or NULL. */
static char *absolute(const char *p)
{
  const char *slash = strrchr(p, '/');
  char dir[PATH_MAX];
  if (!slash)
    snprintf(dir, sizeof dir, ".");
  else if (slash == p)
    snprintf(dir, sizeof dir, "/");
  else
    snprintf(dir, sizeof dir, "%.*s", (int)(slash - p), p);
  char real[PATH_MAX];
  if (!realpath(dir, real))
    return NULL;
  size_t n = strlen(real) + strlen(base_name(p)) + 2;
  char *out = malloc(n);
  if (out)
    snprintf(out, n, "%s%s%s", real, strcmp(real, "/") ? "/" : "", base_name(p));
  return out;
}

/* target as a relative link from the folder of page (falls back to target). */
static void rel_link(tz_buf *b, const char *page, const char *target)
{
  char *pa = absolute(page), *ta = absolute(target);
  if (!pa || !ta) {
    tz_buf_xml(b, target);
    free(pa), free(ta);
    return;
  }
  size_t common = 0; /* length of the shared folder prefix, through a '/' */
  for (size_t i = 0; pa[i] && pa[i] == ta[i]; i++)
    if (pa[i] == '/')
      common = i + 1;
  for (const char *s = pa + common; (s = strchr(s, '/')); s++)
    tz_buf_put(b, "../");
  tz_buf_xml(b, ta + common);
  free(pa), free(ta);
}

int page_path_for_report(const char *report_path, char **out, tz_err *err)
{
  size_t n = strlen(report_path);
  *out = malloc(n + 6);
  if (!*out)
    return tz_fail(err, TZ_E_NOMEM, "page path");
  if (n > 5 && !strcmp(report_path + n - 5, ".json"))
    snprintf(*out, n + 6, "%.*s.html", (int)(n - 5), report_path);
  else
    snprintf(*out, n + 6, "%s.html", report_path);
  return TZ_OK;
}

/* ---------------------------------------------------------------- page frame */

static const char *style_sheet =
  "body{font-family:'DejaVu Sans',Verdana,sans-serif;color:#111;background:#fff;margin:0 auto;"
  "max-width:1140px;padding:12px 20px 40px;font-size:14px;line-height:1.4}\n"
  "h1{font-size:22px;margin:6px 0 2px}h2{font-size:17px;margin:26px 0 6px;border-bottom:1px "
  "solid #bbb;padding-bottom:2px}h3{font-size:14px;margin:14px 0 4px}\n"
  ".meta{color:#444;margin:0 0 10px}\n"
  "table{border-collapse:collapse;margin:4px 0}td,th{border:1px solid #ccc;padding:2px 8px;"
  "text-align:left;vertical-align:top}th{background:#f1f1f1}td.n,th.n{text-align:right;"
  "font-variant-numeric:tabular-nums}\n"
  "table.sortable th{cursor:pointer}table.sortable th:after{content:' \\2195';color:#999}\n"
  "tr.warn td:first-child{border-left:4px solid #c33}\n"
  ".chart{display:block;margin:2px 0}svg{overflow:visible}\n"
  "#cmp-info{position:sticky;top:0;background:#fffbe6;border:1px solid #d9c98a;padding:4px 10px;"
  "margin:8px 0;min-height:1.4em;z-index:2;font-variant-numeric:tabular-nums}\n"
  ".note{color:#555;font-style:italic}.bad{color:#b00}.ok{color:#070}\n"
  ".bar{display:inline-block;height:10px;background:#4670b4;vertical-align:middle}\n"
  "pre{background:#f7f7f7;border:1px solid #ddd;padding:6px;overflow:auto;font-size:12px}\n"
  "ul.warnings li{margin:2px 0}\n"
  "@media print{body{max-width:none;padding:0;font-size:11px}#cmp-info,.noprint{display:none}"
  "h2{break-after:avoid}.chart,table,figure{break-inside:avoid}a{color:#000;text-decoration:none}"
  "details{display:block}details>summary{list-style:none}pre{white-space:pre-wrap}}\n";

/* Before anything else runs: any script error is written into the page (the
 * browser tests read it back), so a broken page says so. */
static const char *error_hook =
  "window.onerror=function(m,s,l){document.documentElement.setAttribute('data-js-error',"
  "String(m)+' (line '+l+')');};\n";

static void page_open(tz_buf *b, const char *title)
{
  tz_buf_put(b, "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
             "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n"
             "<meta name=\"generator\" content=\"tzero\">\n<title>");
  tz_buf_xml(b, title);
  tz_buf_put(b, "</title>\n<style>\n%s</style>\n<script>\n%s</script>\n</head>\n<body>\n",
             style_sheet, error_hook);
}

static void page_close(tz_buf *b, const char *script)
{
  tz_buf_put(b, "<p class=\"note\">Generated by tzero. A processed section is an interpretation "
             "aid: have it reviewed by a qualified geophysicist; local regulations and licensed "
             "practice govern site work.</p>\n<script>\n%s</script>\n</body>\n</html>\n",
             script ? script : "document.documentElement.setAttribute('data-ready','1');\n");
}

/* A chart's SVG inlined, with extra attributes on its root element. */
static int inline_svg(tz_buf *b, picture_ctx *c, const char *attrs, tz_err *err)
{
  char *svg = NULL;
  size_t n = 0;
  int rc = picture_ctx_bytes(c, &svg, &n, err);
  if (rc)
    return rc;
  const char *open = strstr(svg, "<svg ");
  if (!open) {
    free(svg);
    return tz_fail(err, TZ_E_INTERNAL, "chart without an <svg> element");
  }
  tz_buf_add(b, svg, (size_t)(open - svg) + 5);
  tz_buf_put(b, "class=\"chart\" %s ", attrs ? attrs : "");
  tz_buf_add(b, open + 5, n - (size_t)(open + 5 - svg));
  free(svg);
  return TZ_OK;
}

static void fmt_num(char *buf, size_t cap, double v, int decimals)
{
  if (!isfinite(v))
    snprintf(buf, cap, "-");
  else
    snprintf(buf, cap, "%.*f", decimals, v);
}

/* "static_ms" -> "Static (ms)": a report key as an axis title. */
static void humanise(const char *key, char *out, size_t cap)
{
  static const struct { const char *suffix, *unit; } units[] = {
    { "_ms", "ms" }, { "_mps", "m/s" }, { "_m", "m" }, { "_pct", "%" }, { "_db", "dB" },
    { "_s", "s" },   { "_hz", "Hz" },
  };
  size_t n = strlen(key);
  const char *unit = NULL;
  for (size_t i = 0; i < sizeof units / sizeof units[0]; i++) {
    size_t k = strlen(units[i].suffix);
    if (n > k && !strcmp(key + n - k, units[i].suffix)) {
      unit = units[i].unit;
      n -= k;
      break;
    }
  }
  size_t o = 0;
  for (size_t i = 0; i < n && o + 1 < cap; i++)
    out[o++] = key[i] == '_' ? ' ' : (i == 0 && key[i] >= 'a' && key[i] <= 'z')
                                       ? (char)(key[i] - 'a' + 'A') : key[i];
  out[o] = '\0';
  if (unit)
    snprintf(out + o, cap - o, " (%s)", unit);
}

/* ---------------------------------------------------------------- CMP charts */

typedef struct cmp_axis {
  int64_t c0, c1;              /* CMP range of the report */
} cmp_axis;

static picture_frame cmp_frame(const cmp_axis *ax, double height, double y0, double y1)
{
  picture_frame f = { .x = PX, .y = CHART_TOP, .w = PW, .h = height - CHART_TOP - CHART_BOTTOM,
                      .x0 = (double)ax->c0 - 0.5, .x1 = (double)ax->c1 + 0.5, .y0 = y0, .y1 = y1 };
  return f;
}

/* The vertical cursor the script moves to the CMP under the mouse. */
static void cursor(picture_ctx *c, const picture_frame *f)
{
  double xs[2] = { f->x, f->x }, ys[2] = { f->y, f->y + f->h };
  picture_ctx_attrs(c, "class=\"cursor\" visibility=\"hidden\" data-y0=\"%g\" data-y1=\"%g\"", ys[0],
                    ys[1]);
  picture_ctx_polyline(c, xs, ys, 2, 1, 0, c_ink);
}

static int finish_cmp_chart(tz_buf *b, picture_ctx *c, const picture_frame *f, const char *ytitle,
                            const char *name, tz_err *err)
{
  picture_frame_draw(c, f);
  picture_axis_x(c, f, PICTURE_SIDE_BOTTOM, "CMP", 1);
  picture_axis_y(c, f, PICTURE_SIDE_LEFT, ytitle, 0);
  cursor(c, f);
  char attrs[256];
  snprintf(attrs, sizeof attrs, "data-chart=\"%s\" data-plot-x=\"%g\" data-plot-w=\"%g\" "
           "data-cmp0=\"%g\" data-cmp1=\"%g\"", name, f->x, f->w, f->x0 + 0.5, f->x1 - 0.5);
  int rc = inline_svg(b, c, attrs, err);
  picture_ctx_free(c);
  return rc;
}

/* Upper bound of a value axis: the first 1-2-5 tick above vmax. */
static double axis_top(double vmax, double px)
{
  if (!(vmax > 0))
    return 1;
  double step = picture_nice_step(vmax * 30.0 / px);
  return (floor(vmax / step + 1e-9) + 1) * step;
}

/* x extent of CMP cmp in the frame: left edge and width. */
static void cmp_span(const picture_frame *f, int64_t cmp, double *x, double *w)
{
  *x = picture_frame_px(f, (double)cmp - 0.5);
  *w = picture_frame_px(f, (double)cmp + 0.5) - *x;
}

static int chart_fold(tz_buf *b, const cJSON *root, const cmp_axis *ax, tz_err *err)
{
  const cJSON *cm = cJSON_GetObjectItemCaseSensitive(root, "cmps");
  double nominal = qc_json_num(root, "fold.nominal"), ftop = isfinite(nominal) ? nominal : 0;
  int acquired = 0;
  for (const cJSON *e = cm->child; e; e = e->next) {
    ftop = fmax(ftop, qc_json_num(e, "fold"));
    double a = qc_json_num(e, "acquired_fold");
    if (isfinite(a)) {
      acquired = 1;
      ftop = fmax(ftop, a);
    }
  }
  picture_ctx *c = NULL;
  int rc = picture_ctx_new(&c, PICTURE_FORMAT_SVG, W, 260, err);
  if (rc)
    return rc;
  picture_frame f = cmp_frame(ax, 260, 0, 0);
  f.y1 = axis_top(ftop, f.h);
  picture_grid_y(c, &f);
  if (nominal > 0) {
    double y = floor(picture_frame_py(&f, nominal)) + 0.5, xs[2] = { f.x, f.x + f.w },
           ys[2] = { y, y };
    picture_ctx_attrs(c, "class=\"nominal\" data-nominal=\"%g\"", nominal);
    picture_ctx_polyline(c, xs, ys, 2, 2, 1, c_nominal);
  }
  picture_ctx_group(c, "class=\"fold-bars\" shape-rendering=\"crispEdges\"");
  for (const cJSON *e = cm->child; e; e = e->next) {
    double fold = qc_json_num(e, "fold"), x, w;
    int64_t cmp = (int64_t)qc_json_num(e, "cmp");
    cmp_span(&f, cmp, &x, &w);
    double y = picture_frame_py(&f, fold);
    picture_ctx_attrs(c, "data-cmp=\"%lld\" data-fold=\"%g\"", (long long)cmp, fold);
    picture_ctx_fill_rect(c, x, y, w, f.y + f.h - y, c_fold);
  }
  picture_ctx_group_end(c);
  if (acquired) { /* acquisition fold as a step line over the bars */
    size_t n = (size_t)cJSON_GetArraySize(cm), k = 0;
    double *xs = malloc(2 * n * sizeof *xs), *ys = malloc(2 * n * sizeof *ys);
    for (const cJSON *e = cm->child; xs && ys && e; e = e->next) {
      double a = qc_json_num(e, "acquired_fold"), x, w;
      if (!isfinite(a))
        continue;
      cmp_span(&f, (int64_t)qc_json_num(e, "cmp"), &x, &w);
      xs[k] = x, ys[k++] = picture_frame_py(&f, a);
      xs[k] = x + w, ys[k++] = picture_frame_py(&f, a);
    }
    if (xs && ys) {
      picture_ctx_attrs(c, "class=\"acquired\"");
      picture_ctx_polyline(c, xs, ys, k, 1.2, 0, c_acq);
    }
    free(xs), free(ys);
  }
  char nom[64];
  snprintf(nom, sizeof nom, nominal > 0 ? "Nominal fold %g" : "Nominal fold unknown", nominal);
  const char *labels[3] = { "Fold (live traces stacked)", nom, "Acquired fold" };
  const rgb3 keys[3] = { { 70, 110, 180 }, { 0, 150, 0 }, { 90, 90, 90 } };
  const int dashed[3] = { 0, 1, 0 };
  picture_legend(c, PX - 4, 18, acquired ? 3 : 2, labels, keys, dashed);
  return finish_cmp_chart(b, c, &f, "Fold", "fold", err);
}

/* A per-CMP series as bars (bars = 1) or a line; scale multiplies the value. */
static int chart_series(tz_buf *b, const cJSON *root, const cmp_axis *ax, const char *key,
                        double scale, int bars, const char *title, const char *ytitle,
                        double ymax_fixed, const rgb3 colour, double mark, tz_err *err)
{
  const cJSON *cm = cJSON_GetObjectItemCaseSensitive(root, "cmps");
  double vmax = 0, vmin = 0;
  size_t n = 0;
  for (const cJSON *e = cm->child; e; e = e->next) {
    double v = qc_json_num(e, key) * scale;
    if (isfinite(v)) {
      vmax = fmax(vmax, v), vmin = fmin(vmin, v);
      n++;
    }
  }
  if (n == 0)
    return TZ_OK;
  picture_ctx *c = NULL;
  int rc = picture_ctx_new(&c, PICTURE_FORMAT_SVG, W, 200, err);
  if (rc)
    return rc;
  picture_frame f = cmp_frame(ax, 200, 0, 0);
  f.y1 = ymax_fixed > 0 ? ymax_fixed : axis_top(vmax, f.h);
  f.y0 = vmin < 0 ? -axis_top(-vmin, f.h) : 0;
  if (mark > 0) { /* dashed lines at +-mark, inside the axis */
    f.y1 = fmax(f.y1, axis_top(mark, f.h));
    f.y0 = fmin(f.y0, -axis_top(mark, f.h));
  }
  picture_grid_y(c, &f);
  for (int sgn = -1; mark > 0 && sgn <= 1; sgn += 2) {
    double y = floor(picture_frame_py(&f, sgn * mark)) + 0.5, mx[2] = { f.x, f.x + f.w },
           my[2] = { y, y };
    picture_ctx_attrs(c, "class=\"mark\" data-value=\"%g\"", sgn * mark);
    picture_ctx_polyline(c, mx, my, 2, 1, 1, c_ink);
  }
  double *xs = malloc(2 * n * sizeof *xs), *ys = malloc(2 * n * sizeof *ys);
  size_t k = 0;
  char g[96];
  snprintf(g, sizeof g, "class=\"series\" data-key=\"%s\"%s", key,
           bars ? " shape-rendering=\"crispEdges\"" : "");
  picture_ctx_group(c, g);
  for (const cJSON *e = cm->child; xs && ys && e; e = e->next) {
    double v = qc_json_num(e, key) * scale, x, w;
    int64_t cmp = (int64_t)qc_json_num(e, "cmp");
    if (!isfinite(v))
      continue;
    cmp_span(&f, cmp, &x, &w);
    double y = picture_frame_py(&f, v), y0 = picture_frame_py(&f, 0);
    if (bars) {
      picture_ctx_attrs(c, "data-cmp=\"%lld\" data-value=\"%g\"", (long long)cmp, v);
      picture_ctx_fill_rect(c, x, fmin(y, y0), w, fabs(y0 - y), colour);
    } else {
      xs[k] = x + w / 2, ys[k++] = y;
    }
  }
  if (!bars && xs && ys) {
    picture_ctx_attrs(c, "data-key=\"%s\"", key);
    picture_ctx_polyline(c, xs, ys, k, 1.5, 0, colour);
  }
  picture_ctx_group_end(c);
  free(xs), free(ys);
  picture_ctx_text(c, PX, 18, title, 12, PICTURE_ANCHOR_LEFT, 1, 0, c_ink);
  return finish_cmp_chart(b, c, &f, ytitle, key, err);
}

static int chart_offsets(tz_buf *b, const cJSON *root, const cmp_axis *ax, tz_err *err)
{
  const cJSON *cm = cJSON_GetObjectItemCaseSensitive(root, "cmps");
  double vmax = 0;
  for (const cJSON *e = cm->child; e; e = e->next)
    vmax = fmax(vmax, fmax(fabs(qc_json_num(e, "offset_max_m")), fabs(qc_json_num(e, "offset_min_m"))));
  picture_ctx *c = NULL;
  int rc = picture_ctx_new(&c, PICTURE_FORMAT_SVG, W, 200, err);
  if (rc)
    return rc;
  picture_frame f = cmp_frame(ax, 200, 0, 0);
  f.y1 = axis_top(vmax, f.h);
  picture_grid_y(c, &f);
  picture_ctx_group(c, "class=\"offsets\" shape-rendering=\"crispEdges\"");
  for (const cJSON *e = cm->child; e; e = e->next) {
    double lo = qc_json_num(e, "offset_min_m"), hi = qc_json_num(e, "offset_max_m"), x, w;
    if (!isfinite(lo) || !isfinite(hi) || qc_json_num(e, "fold") <= 0)
      continue;
    int64_t cmp = (int64_t)qc_json_num(e, "cmp");
    cmp_span(&f, cmp, &x, &w);
    double ya = picture_frame_py(&f, fabs(hi) > fabs(lo) ? fabs(hi) : fabs(lo));
    double yb = picture_frame_py(&f, fabs(hi) > fabs(lo) ? fabs(lo) : fabs(hi));
    if (lo < 0 && hi > 0) /* split spread: offsets on both sides, the band reaches 0 */
      yb = picture_frame_py(&f, 0);
    picture_ctx_attrs(c, "data-cmp=\"%lld\" data-min=\"%g\" data-max=\"%g\"", (long long)cmp, lo, hi);
    picture_ctx_fill_rect(c, x, ya, w, fmax(yb - ya, 1), c_off);
  }
  picture_ctx_group_end(c);
  picture_ctx_text(c, PX, 18, "Offset range per CMP (|offset|, smallest to largest)", 12,
                   PICTURE_ANCHOR_LEFT, 1, 0, c_ink);
  return finish_cmp_chart(b, c, &f, "Offset (m)", "offsets", err);
}

/* The stacked section as a panel of one trace per CMP of the axis (zero
 * traces where the section has none), drawn as a PNG at the page width. */
static int thumbnail(tz_buf *b, const char *section, const cmp_axis *ax, const char *caption,
                     double *clip, tz_err *err)
{
  picture_loaded l;
  int rc = picture_load_segy(section, NULL, &l, err);
  if (rc)
    return rc;
  size_t span = (size_t)(ax->c1 - ax->c0 + 1);
  if (span * l.nsamples > PAGE_THUMB_MAX_SAMPLES) {
    picture_loaded_free(&l);
    return tz_fail(err, TZ_E_ARG, "%zu CMPs x %zu samples: too large for a thumbnail", span,
                   l.nsamples);
  }
  float *d = calloc(span * l.nsamples, sizeof *d);
  if (!d) {
    picture_loaded_free(&l);
    return tz_fail(err, TZ_E_NOMEM, "thumbnail");
  }
  double *xs = malloc(span * sizeof *xs);
  for (size_t k = 0; xs && k < span; k++)
    xs[k] = (double)(ax->c0 + (int64_t)k);
  for (size_t i = 0; i < l.ntraces; i++) {
    int64_t cmp = (int64_t)l.cmp[i];
    if (cmp >= ax->c0 && cmp <= ax->c1)
      memcpy(d + (size_t)(cmp - ax->c0) * l.nsamples, l.data + i * l.nsamples,
             l.nsamples * sizeof *d);
  }
  picture_panel p = { .data = d, .ntraces = span, .nsamples = l.nsamples,
                      .time_first_ms = l.time_first_ms, .interval_ms = l.interval_ms,
                      .xvalue = xs, .xlabel = "CMP", .title = caption };
  picture_opts o = { .style = PICTURE_STYLE_DENSITY, .width = W, .height = 420,
                     .clip_value = clip && *clip > 0 ? *clip : 0 };
  picture_ctx *c = NULL;
  picture_info in;
  rc = xs ? picture_draw_panel(&p, &o, PICTURE_FORMAT_PNG, &c, &in, err)
          : tz_fail(err, TZ_E_NOMEM, "thumbnail");
  char *png = NULL;
  size_t n = 0;
  if (!rc)
    rc = picture_ctx_bytes(c, &png, &n, err);
  if (!rc && clip)
    *clip = in.clip;
  if (!rc) {
    tz_buf_put(b, "<img class=\"chart cmp-axis\" id=\"thumbnail\" width=\"%u\" height=\"%u\" "
               "data-plot-x=\"%u\" data-plot-w=\"%u\" data-cmp0=\"%lld\" data-cmp1=\"%lld\" "
               "data-clip=\"%g\" alt=\"stacked section\" src=\"data:image/png;base64,",
               in.width, in.height, in.plot_x, in.plot_w, (long long)ax->c0, (long long)ax->c1,
               in.clip);
    tz_buf_base64(b, (const unsigned char *)png, n);
    tz_buf_put(b, "\">\n");
  }
  free(png);
  picture_ctx_free(c);
  free(xs);
  free(d);
  picture_loaded_free(&l);
  return rc;
}

/* ---------------------------------------------------------------- other charts */

static int chart_mute(tz_buf *b, const cJSON *root, tz_err *err)
{
  const cJSON *bo = qc_json_at(root, "mute.by_offset");
  if (!cJSON_IsArray(bo) || !bo->child)
    return TZ_OK;
  double lo = INFINITY, hi = -INFINITY, vmax = 0;
  for (const cJSON *e = bo->child; e; e = e->next) {
    lo = fmin(lo, qc_json_num(e, "offset_from_m"));
    hi = fmax(hi, qc_json_num(e, "offset_to_m"));
    vmax = fmax(vmax, 100 * qc_json_num(e, "muted_fraction"));
  }
  if (!(hi > lo))
    return TZ_OK;
  picture_ctx *c = NULL;
  int rc = picture_ctx_new(&c, PICTURE_FORMAT_SVG, W, 240, err);
  if (rc)
    return rc;
  picture_frame f = { .x = PX, .y = CHART_TOP, .w = PW, .h = 240 - CHART_TOP - CHART_BOTTOM,
                      .x0 = lo, .x1 = hi, .y0 = 0, .y1 = fmin(100, axis_top(vmax, 150)) };
  picture_grid_y(c, &f);
  picture_ctx_group(c, "class=\"mute-classes\"");
  for (const cJSON *e = bo->child; e; e = e->next) {
    double a = qc_json_num(e, "offset_from_m"), z = qc_json_num(e, "offset_to_m");
    double parts[3] = { qc_json_num(e, "stretch_muted_fraction"), qc_json_num(e, "top_muted_fraction"),
                        qc_json_num(e, "beyond_trace_end_fraction") };
    const unsigned char *cols[3] = { c_stretch, c_top, c_end };
    double x0 = picture_frame_px(&f, a) + 1, x1 = picture_frame_px(&f, z) - 1, acc = 0;
    for (int k = 0; k < 3; k++) {
      double v = isfinite(parts[k]) ? 100 * parts[k] : 0;
      double ya = picture_frame_py(&f, acc + v), yb = picture_frame_py(&f, acc);
      picture_ctx_attrs(c, "data-offset-from=\"%g\" data-offset-to=\"%g\" data-part=\"%d\" "
                        "data-pct=\"%g\" data-muted-pct=\"%g\"", a, z, k, v,
                        100 * qc_json_num(e, "muted_fraction"));
      picture_ctx_fill_rect(c, x0, ya, x1 - x0, yb - ya, cols[k]);
      acc += v;
    }
  }
  picture_ctx_group_end(c);
  picture_frame_draw(c, &f);
  picture_axis_x(c, &f, PICTURE_SIDE_BOTTOM, "Offset class (m)", 0);
  picture_axis_y(c, &f, PICTURE_SIDE_LEFT, "Muted samples (%)", 0);
  const char *labels[3] = { "Stretch mute", "Top mute", "Beyond the trace end" };
  const rgb3 keys[3] = { { 200, 80, 60 }, { 230, 170, 50 }, { 150, 150, 150 } };
  picture_legend(c, PX - 4, 18, 3, labels, keys, NULL);
  rc = inline_svg(b, c, "data-chart=\"mute\"", err);
  picture_ctx_free(c);
  return rc;
}

static int chart_velocity(tz_buf *b, const cJSON *root, tz_err *err)
{
  const cJSON *fs = qc_json_at(root, "velocity.functions");
  if (!cJSON_IsArray(fs) || !fs->child)
    return TZ_OK;
  double tmax = 0, vmin = INFINITY, vmax = 0;
  for (const cJSON *f = fs->child; f; f = f->next)
    for (const cJSON *k = qc_json_at(f, "knots") ? qc_json_at(f, "knots")->child : NULL; k; k = k->next) {
      tmax = fmax(tmax, qc_json_num(k, "time_ms"));
      double r = qc_json_num(k, "rms_mps"), v = qc_json_num(k, "interval_mps");
      vmin = fmin(vmin, r), vmax = fmax(vmax, r);
      if (isfinite(v))
        vmin = fmin(vmin, v), vmax = fmax(vmax, v);
    }
  if (!(vmax > vmin) || !(tmax > 0))
    return TZ_OK;
  double step = picture_nice_step((vmax - vmin) / 6);
  picture_ctx *c = NULL;
  int rc = picture_ctx_new(&c, PICTURE_FORMAT_SVG, W, 460, err);
  if (rc)
    return rc;
  picture_frame f = { .x = PX, .y = CHART_TOP + 14, .w = PW - 170, .h = 460 - CHART_TOP - 14 - CHART_BOTTOM,
                      .x0 = floor(vmin / step - 0.5) * step, .x1 = ceil(vmax / step + 0.5) * step,
                      .y0 = tmax * 1.05, .y1 = 0 };
  picture_grid_y(c, &f);
  size_t i = 0, nf = (size_t)cJSON_GetArraySize(fs);
  for (const cJSON *fn = fs->child; fn; fn = fn->next, i++) {
    const cJSON *ks = qc_json_at(fn, "knots");
    size_t nk = (size_t)cJSON_GetArraySize(ks), a = 0, q = 0;
    double *rx = malloc(nk * sizeof *rx), *ry = malloc(nk * sizeof *ry);
    double *ix = malloc(2 * nk * sizeof *ix), *iy = malloc(2 * nk * sizeof *iy);
    double prev_t = 0;
    for (const cJSON *k = ks ? ks->child : NULL; rx && ry && ix && iy && k; k = k->next) {
      double t = qc_json_num(k, "time_ms"), r = qc_json_num(k, "rms_mps"),
             v = qc_json_num(k, "interval_mps");
      rx[a] = picture_frame_px(&f, r), ry[a++] = picture_frame_py(&f, t);
      if (isfinite(v) && t > prev_t) { /* interval velocity: constant over its interval */
        ix[q] = picture_frame_px(&f, v), iy[q++] = picture_frame_py(&f, prev_t);
        ix[q] = picture_frame_px(&f, v), iy[q++] = picture_frame_py(&f, t);
      }
      prev_t = t;
    }
    const unsigned char *col = i < 8 ? cycle[i] : c_grey;
    long long cmp = (long long)qc_json_num(fn, "cmp");
    if (rx && ry) {
      picture_ctx_attrs(c, "data-cmp=\"%lld\" data-kind=\"rms\"", cmp);
      picture_ctx_polyline(c, rx, ry, a, i < 8 ? 1.8 : 1, 0, col);
    }
    if (ix && iy) {
      picture_ctx_attrs(c, "data-cmp=\"%lld\" data-kind=\"interval\"", cmp);
      picture_ctx_polyline(c, ix, iy, q, i < 8 ? 1.2 : 0.8, 1, col);
    }
    if (i < 8) {
      char lab[48];
      snprintf(lab, sizeof lab, "CMP %lld", cmp);
      double ly = f.y + 16 + 18 * (double)i;
      picture_ctx_fill_rect(c, f.x + f.w + 24, ly - 9, 14, 10, col);
      picture_ctx_text(c, f.x + f.w + 44, ly, lab, 11, PICTURE_ANCHOR_LEFT, 0, 0, c_ink);
    }
    free(rx), free(ry), free(ix), free(iy);
  }
  if (nf > 8) {
    char lab[64];
    snprintf(lab, sizeof lab, "%zu more in grey", nf - 8);
    picture_ctx_text(c, f.x + f.w + 24, f.y + 16 + 18 * 8, lab, 11, PICTURE_ANCHOR_LEFT, 0, 0, c_ink);
  }
  picture_frame_draw(c, &f);
  picture_axis_x(c, &f, PICTURE_SIDE_BOTTOM, "Velocity (m/s)", 0);
  picture_axis_y(c, &f, PICTURE_SIDE_LEFT, "Time (ms)", 0);
  const char *labels[2] = { "RMS (stacking) velocity", "Dix interval velocity" };
  const rgb3 keys[2] = { { 0, 0, 0 }, { 0, 0, 0 } };
  const int dashed[2] = { 0, 1 };
  picture_ctx_text(c, PX, 18, "Velocity functions of the control CMPs", 12, PICTURE_ANCHOR_LEFT, 1,
                   0, c_ink);
  picture_legend(c, PX + 300, 18, 2, labels, keys, dashed);
  rc = inline_svg(b, c, "data-chart=\"velocity\"", err);
  picture_ctx_free(c);
  return rc;
}

/* Station statics along the line: every array under "statics" whose entries
 * have a station and a static_ms (sources, receivers, ...), one series each,
 * plus residual_ms where the entries carry it. */
static int chart_statics(tz_buf *b, const cJSON *root, tz_err *err)
{
  const cJSON *st = cJSON_GetObjectItemCaseSensitive(root, "statics");
  const char *keys[2] = { "static_ms", "residual_ms" };
  double s0 = INFINITY, s1 = -INFINITY, lo = 0, hi = 0;
  size_t nseries = 0;
  for (const cJSON *a = st ? st->child : NULL; a; a = a->next)
    for (const cJSON *e = cJSON_IsArray(a) ? a->child : NULL; e; e = e->next) {
      double sn = qc_json_num(e, "station");
      for (int k = 0; k < 2; k++) {
        double v = qc_json_num(e, keys[k]);
        if (!isfinite(sn) || !isfinite(v))
          continue;
        s0 = fmin(s0, sn), s1 = fmax(s1, sn), lo = fmin(lo, v), hi = fmax(hi, v);
        nseries++;
      }
    }
  if (!nseries || !(s1 > s0))
    return TZ_OK;
  picture_ctx *c = NULL;
  int rc = picture_ctx_new(&c, PICTURE_FORMAT_SVG, W, 280, err);
  if (rc)
    return rc;
  double span = hi - lo > 0 ? hi - lo : 1, step = picture_nice_step(span / 5);
  picture_frame f = { .x = PX, .y = CHART_TOP, .w = PW, .h = 280 - CHART_TOP - CHART_BOTTOM,
                      .x0 = s0 - 0.5, .x1 = s1 + 0.5, .y0 = floor(lo / step) * step,
                      .y1 = ceil(hi / step) * step };
  if (!(f.y1 > f.y0))
    f.y1 = f.y0 + step;
  picture_grid_y(c, &f);
  const char *labels[8];
  rgb3 cols[8];
  char names[8][64];
  int dashed[8] = { 0 };
  size_t nl = 0;
  for (const cJSON *a = st->child; a; a = a->next)
    for (int k = 0; k < 2 && cJSON_IsArray(a); k++) {
      size_t n = (size_t)cJSON_GetArraySize(a), q = 0;
      double *xs = malloc(n * sizeof *xs), *ys = malloc(n * sizeof *ys);
      for (const cJSON *e = a->child; xs && ys && e; e = e->next) {
        double sn = qc_json_num(e, "station"), v = qc_json_num(e, keys[k]);
        if (isfinite(sn) && isfinite(v))
          xs[q] = picture_frame_px(&f, sn), ys[q++] = picture_frame_py(&f, v);
      }
      if (q && nl < 8) {
        memcpy(cols[nl], cycle[nl], 3);
        picture_ctx_attrs(c, "data-series=\"%s.%s\" data-points=\"%zu\"", a->string, keys[k], q);
        picture_ctx_polyline(c, xs, ys, q, 1.5, k == 1, cols[nl]);
        snprintf(names[nl], sizeof names[nl], "%s %s", a->string, k ? "residual" : "static");
        labels[nl] = names[nl];
        dashed[nl] = k == 1;
        nl++;
      }
      free(xs), free(ys);
    }
  picture_frame_draw(c, &f);
  picture_axis_x(c, &f, PICTURE_SIDE_BOTTOM, "Station", 1);
  picture_axis_y(c, &f, PICTURE_SIDE_LEFT, "Static (ms)", 0);
  picture_legend(c, PX - 4, 18, nl, labels, (const unsigned char(*)[3])cols, dashed);
  rc = inline_svg(b, c, "data-chart=\"statics\"", err);
  picture_ctx_free(c);
  return rc;
}

/* ---------------------------------------------------------------- tables */

static void row_num(tz_buf *b, const char *label, const char *value)
{
  tz_buf_put(b, "<tr><th>%s</th><td class=\"n\">", label);
  tz_buf_xml(b, value);
  tz_buf_put(b, "</td></tr>\n");
}

/* Every number of an object of counts as a table with a bar per row. */
static void counts_table(tz_buf *b, const cJSON *o, const char *what)
{
  double top = 0;
  for (const cJSON *e = o->child; e; e = e->next)
    if (cJSON_IsNumber(e))
      top = fmax(top, e->valuedouble);
  tz_buf_put(b, "<table data-table=\"%s\"><tr><th>reason</th><th class=\"n\">traces</th><th></th></tr>\n",
             what);
  for (const cJSON *e = o->child; e; e = e->next) {
    if (!cJSON_IsNumber(e))
      continue;
    tz_buf_put(b, "<tr data-reason=\"");
    tz_buf_xml(b, e->string);
    tz_buf_put(b, "\"><td>");
    tz_buf_xml(b, e->string);
    tz_buf_put(b, "</td><td class=\"n\">%.0f</td><td><span class=\"bar\" style=\"width:%.0fpx\">"
               "</span></td></tr>\n", e->valuedouble, top > 0 ? 200 * e->valuedouble / top : 0);
  }
  tz_buf_put(b, "</table>\n");
}

static void json_block(tz_buf *b, const cJSON *v)
{
  char *s = cJSON_Print(v);
  tz_buf_put(b, "<pre>");
  tz_buf_xml(b, s ? s : "(could not print)");
  tz_buf_put(b, "</pre>\n");
  free(s);
}

/* ---------------------------------------------------------------- warnings */

typedef struct warn_ctx {
  tz_buf *b;
  const cJSON *inputs;
  size_t n;
} warn_ctx;

static long input_index(const cJSON *inputs, const char *path)
{
  long i = 0;
  for (const cJSON *e = inputs ? inputs->child : NULL; e; e = e->next, i++)
    if (path && !strcmp(qc_json_str(e, "path", ""), path))
      return i;
  return -1;
}

static void warning_item(warn_ctx *w, const cJSON *item, const char *where)
{
  const char *msg = cJSON_IsString(item) ? item->valuestring : qc_json_str(item, "message", NULL);
  char buf[256];
  if (!msg) {
    char *s = cJSON_PrintUnformatted(item);
    snprintf(buf, sizeof buf, "%s", s ? s : "?");
    free(s);
    msg = buf;
  }
  double cmp = cJSON_IsObject(item) ? qc_json_num(item, "cmp") : NAN;
  const char *file = cJSON_IsObject(item) ? qc_json_str(item, "path", qc_json_str(item, "file", NULL))
                                          : NULL;
  tz_buf_put(w->b, "<li data-source=\"%s\"", where);
  if (isfinite(cmp))
    tz_buf_put(w->b, " data-cmp=\"%.0f\"", cmp);
  tz_buf_put(w->b, ">");
  if (isfinite(cmp))
    tz_buf_put(w->b, "<a href=\"#cmp=%.0f\">CMP %.0f</a>: ", cmp, cmp);
  long fi = file ? input_index(w->inputs, file) : -1;
  if (file) {
    tz_buf_put(w->b, fi >= 0 ? "<a href=\"#file-%ld\">" : "<span>", fi);
    tz_buf_xml(w->b, base_name(file));
    tz_buf_put(w->b, fi >= 0 ? "</a>: " : "</span>: ");
  }
  tz_buf_xml(w->b, msg);
  tz_buf_put(w->b, " <span class=\"note\">(%s)</span></li>\n", where);
  w->n++;
}

/* Every array named "warnings" anywhere in the report, and the bad files. */
static void collect_warnings(warn_ctx *w, const cJSON *o, const char *where)
{
  for (const cJSON *e = o ? o->child : NULL; e; e = e->next) {
    if (e->string && !strcmp(e->string, "warnings") && cJSON_IsArray(e)) {
      for (const cJSON *it = e->child; it; it = it->next)
        warning_item(w, it, where);
    } else if (cJSON_IsObject(e) && e->string && strcmp(e->string, "parameters")) {
      collect_warnings(w, e, e->string);
    }
  }
}

static size_t count_warnings(const cJSON *root)
{
  tz_buf scratch = { 0 };
  warn_ctx w = { &scratch, cJSON_GetObjectItemCaseSensitive(root, "inputs"), 0 };
  collect_warnings(&w, root, "report");
  const cJSON *bad = cJSON_GetObjectItemCaseSensitive(root, "bad_files");
  w.n += (size_t)(cJSON_IsArray(bad) ? cJSON_GetArraySize(bad) : 0);
  tz_buf_free(&scratch);
  return w.n;
}

/* ---------------------------------------------------------------- line page */

static const char *line_script =
  "(function(){\n"
  "var cmps=JSON.parse(document.getElementById('cmp-data').textContent);\n"
  "var byCmp={};cmps.forEach(function(c){byCmp[c.cmp]=c;});\n"
  "var info=document.getElementById('cmp-info');\n"
  "var axes=Array.prototype.slice.call(document.querySelectorAll('[data-cmp0]'));\n"
  "function fmt(k,v){if(v===null)return '-';if(typeof v!=='number')return String(v);\n"
  " if(k==='live_fraction')return (100*v).toFixed(1)+' %';\n"
  " return Math.abs(v)>=1e5?v.toFixed(1):String(Math.round(v*1000)/1000);}\n"
  "function show(n){var c=byCmp[n];axes.forEach(function(el){\n"
  "  var cur=el.querySelector&&el.querySelector('.cursor');if(!cur)return;\n"
  "  if(!c){cur.setAttribute('visibility','hidden');return;}\n"
  "  var x0=+el.getAttribute('data-plot-x'),w=+el.getAttribute('data-plot-w'),\n"
  "      c0=+el.getAttribute('data-cmp0'),c1=+el.getAttribute('data-cmp1');\n"
  "  var x=x0+(n-c0+0.5)/(c1-c0+1)*w;\n"
  "  cur.setAttribute('points',x+','+cur.getAttribute('data-y0')+' '+x+','+cur.getAttribute('data-y1'));\n"
  "  cur.setAttribute('visibility','visible');});\n"
  " if(!c){info.textContent='CMP '+n+': not in this report';info.setAttribute('data-cmp',n);return;}\n"
  " var parts=[];Object.keys(c).forEach(function(k){if(k!=='cmp')parts.push(k+' '+fmt(k,c[k]));});\n"
  " info.textContent='CMP '+n+': '+parts.join(', ');info.setAttribute('data-cmp',n);}\n"
  "axes.forEach(function(el){el.addEventListener('mousemove',function(ev){\n"
  "  var r=el.getBoundingClientRect(),s=r.width/(+el.getAttribute('width')||r.width);\n"
  "  var x0=+el.getAttribute('data-plot-x'),w=+el.getAttribute('data-plot-w'),\n"
  "      c0=+el.getAttribute('data-cmp0'),c1=+el.getAttribute('data-cmp1');\n"
  "  var px=(ev.clientX-r.left)/s;if(px<x0||px>x0+w)return;\n"
  "  show(c0+Math.floor((px-x0)/w*(c1-c0+1)));});});\n"
  "function fromHash(){var m=/cmp=(-?\\d+)/.exec(location.hash);if(m)show(+m[1]);}\n"
  "window.addEventListener('hashchange',fromHash);fromHash();\n"
  "document.documentElement.setAttribute('data-ready','1');\n"
  "})();\n";

static void summary_table(tz_buf *b, const cJSON *root, size_t nwarn)
{
  char v[256], a[64], c[64], d[64];
  tz_buf_put(b, "<h2 id=\"summary\">Summary</h2>\n<table data-table=\"summary\">\n");
  double n = qc_json_num(root, "section.cmps");
  snprintf(v, sizeof v, "%.0f (CMP %.0f-%.0f)", n, qc_json_num(root, "section.cmp_first"),
           qc_json_num(root, "section.cmp_last"));
  row_num(b, "CMPs", v);
  fmt_num(a, sizeof a, qc_json_num(root, "fold.min"), 0);
  fmt_num(c, sizeof c, qc_json_num(root, "fold.mean"), 2);
  fmt_num(d, sizeof d, qc_json_num(root, "fold.max"), 0);
  snprintf(v, sizeof v, "%s / %s / %s", a, c, d);
  row_num(b, "fold min / mean / max", v);
  fmt_num(a, sizeof a, qc_json_num(root, "fold.nominal"), 1);
  row_num(b, "nominal fold", a);
  if (isfinite(qc_json_num(root, "fold.full_fold_cmp_first"))) {
    snprintf(v, sizeof v, "CMP %.0f-%.0f", qc_json_num(root, "fold.full_fold_cmp_first"),
             qc_json_num(root, "fold.full_fold_cmp_last"));
    row_num(b, "full-fold CMPs", v);
  }
  snprintf(v, sizeof v, "%.0f read, %.0f stacked, %.0f skipped", qc_json_num(root, "traces.read"),
           qc_json_num(root, "traces.stacked"), qc_json_num(root, "traces.skipped_total"));
  row_num(b, "traces", v);
  fmt_num(a, sizeof a, 100 * qc_json_num(root, "mute.muted_fraction"), 2);
  snprintf(v, sizeof v, "%s %%", a);
  row_num(b, "muted samples", v);
  snprintf(v, sizeof v, "%s", qc_json_str(root, "velocity.file", "-"));
  row_num(b, "velocity file", v);
  row_num(b, "velocity SHA-256", qc_json_str(root, "velocity.sha256", "-"));
  fmt_num(a, sizeof a, qc_json_num(root, "velocity.control_cmps"), 0);
  row_num(b, "control CMPs", a);
  snprintf(v, sizeof v, "%zu", nwarn);
  row_num(b, "warnings", v);
  fmt_num(a, sizeof a, qc_json_num(root, "timing_s.total"), 2);
  snprintf(v, sizeof v, "%s s", a);
  row_num(b, "run time", v);
  tz_buf_put(b, "</table>\n");
}

static void inputs_table(tz_buf *b, const cJSON *root)
{
  const cJSON *in = cJSON_GetObjectItemCaseSensitive(root, "inputs");
  if (!cJSON_IsArray(in))
    return;
  int n = cJSON_GetArraySize(in);
  tz_buf_put(b, "<h2 id=\"inputs\">Inputs</h2>\n<details%s><summary>%d input files</summary>\n"
             "<table class=\"sortable\" data-table=\"inputs\"><tr><th>#</th><th>file</th>"
             "<th class=\"n\">bytes</th><th class=\"n\">traces</th><th>state</th></tr>\n",
             n <= 60 ? " open" : "", n);
  long i = 0;
  for (const cJSON *e = in->child; e; e = e->next, i++) {
    int bad = cJSON_IsTrue(cJSON_GetObjectItemCaseSensitive(e, "bad"));
    tz_buf_put(b, "<tr%s id=\"file-%ld\"><td class=\"n\">%ld</td><td>", bad ? " class=\"warn\"" : "",
               i, i + 1);
    tz_buf_xml(b, qc_json_str(e, "path", "?"));
    tz_buf_put(b, "</td><td class=\"n\">%.0f</td><td class=\"n\">%.0f</td><td>%s</td></tr>\n",
               qc_json_num(e, "bytes"), qc_json_num(e, "traces"), bad ? "<span class=\"bad\">bad</span>" : "read");
  }
  tz_buf_put(b, "</table>\n</details>\n");
}

/* The per-CMP keys the page draws itself; any other number gets its own chart. */
static int known_cmp_key(const char *k)
{
  static const char *const known[] = { "cmp", "x_m", "y_m", "fold", "acquired_fold", "offset_min_m",
                                       "offset_max_m", "live_fraction", "full_fold_ms", NULL };
  for (size_t i = 0; known[i]; i++)
    if (!strcmp(k, known[i]))
      return 1;
  return 0;
}

static int extra_cmp_charts(tz_buf *b, const cJSON *root, const cmp_axis *ax, tz_err *err)
{
  const cJSON *cm = cJSON_GetObjectItemCaseSensitive(root, "cmps");
  char seen[32][64];
  size_t ns = 0;
  int rc = TZ_OK;
  for (const cJSON *e = cm->child; e && !rc; e = e->next)
    for (const cJSON *k = e->child; k && !rc; k = k->next) {
      if (!cJSON_IsNumber(k) || known_cmp_key(k->string) || strlen(k->string) >= 64)
        continue;
      size_t s = 0;
      while (s < ns && strcmp(seen[s], k->string))
        s++;
      if (s < ns || ns == 32)
        continue;
      snprintf(seen[ns++], 64, "%s", k->string);
      char title[96];
      humanise(k->string, title, sizeof title);
      tz_buf_put(b, "<h3>%s per CMP</h3>\n", title);
      rc = chart_series(b, root, ax, k->string, 1, 0, title, title, 0, c_db, 0, err);
    }
  return rc;
}

static int line_body(tz_buf *b, const page_line_opts *o, const cJSON *root, tz_err *err)
{
  const char *name = qc_json_str(root, "line", "");
  if (!name[0])
    name = base_name(o->report_path);
  page_open(b, name);
  tz_buf_put(b, "<h1>");
  tz_buf_xml(b, name);
  tz_buf_put(b, "</h1>\n<p class=\"meta\">QC report <a href=\"");
  rel_link(b, o->page_path, o->report_path);
  tz_buf_put(b, "\">");
  tz_buf_xml(b, base_name(o->report_path));
  tz_buf_put(b, "</a>, run %s by %s %s", qc_json_str(root, "created_utc", "?"),
             qc_json_str(root, "tool.name", "tzero"), qc_json_str(root, "tool.version", ""));
  if (qc_json_str(root, "parameters.job_file", NULL)) {
    tz_buf_put(b, ", job ");
    tz_buf_xml(b, qc_json_str(root, "parameters.job_file", ""));
  }
  tz_buf_put(b, "</p>\n<p class=\"noprint\"><a href=\"#summary\">summary</a> &middot; <a "
             "href=\"#warnings\">warnings</a> &middot; <a href=\"#along\">along the line</a> &middot; "
             "<a href=\"#mute\">mute</a> &middot; <a href=\"#velocity\">velocity</a> &middot; <a "
             "href=\"#traces\">traces</a> &middot; <a href=\"#inputs\">inputs</a> &middot; <a "
             "href=\"#parameters\">parameters</a> &middot; <a href=\"#timing\">timing</a></p>\n");

  /* warnings first: they are what a reviewer looks for */
  tz_buf wl = { 0 };
  warn_ctx w = { &wl, cJSON_GetObjectItemCaseSensitive(root, "inputs"), 0 };
  collect_warnings(&w, root, "report");
  const cJSON *bad = cJSON_GetObjectItemCaseSensitive(root, "bad_files");
  for (const cJSON *e = cJSON_IsArray(bad) ? bad->child : NULL; e; e = e->next)
    warning_item(&w, e, "bad file");
  summary_table(b, root, w.n);
  tz_buf_put(b, "<h2 id=\"warnings\">Warnings (%zu)</h2>\n", w.n);
  if (w.n) {
    tz_buf_put(b, "<ul class=\"warnings\" data-count=\"%zu\">\n", w.n);
    if (wl.s)
      tz_buf_add(b, wl.s, wl.n);
    tz_buf_put(b, "</ul>\n");
  } else {
    tz_buf_put(b, "<p class=\"ok\" data-count=\"0\">No warnings.</p>\n");
  }
  tz_buf_free(&wl);

  /* along the line: every chart on one CMP axis */
  const cJSON *cm = cJSON_GetObjectItemCaseSensitive(root, "cmps");
  int rc = TZ_OK;
  tz_buf_put(b, "<h2 id=\"along\">Along the line</h2>\n<div id=\"cmp-info\" aria-live=\"polite\">"
             "Point at a chart (or open #cmp=N) to see a CMP's numbers.</div>\n");
  if (cJSON_IsArray(cm) && cm->child) {
    cmp_axis ax = { (int64_t)qc_json_num(cm->child, "cmp"), 0 };
    for (const cJSON *e = cm->child; e; e = e->next)
      ax.c1 = (int64_t)qc_json_num(e, "cmp");
    char *data = cJSON_PrintUnformatted(cm);
    tz_buf_put(b, "<script type=\"application/json\" id=\"cmp-data\">");
    /* "</" cannot end the script early in JSON numbers and plain keys, but be safe */
    for (const char *p = data ? data : "[]"; *p; p++)
      if (p[0] == '<' && p[1] == '/')
        tz_buf_put(b, "<\\/"), p++;
      else
        tz_buf_add(b, p, 1);
    free(data);
    tz_buf_put(b, "</script>\n");
    rc = chart_fold(b, root, &ax, err);
    if (!rc)
      rc = chart_series(b, root, &ax, "live_fraction", 100, 1,
                        "Live fraction: samples left after the mutes", "Live (%)", 100, c_live, 0, err);
    if (!rc)
      rc = chart_series(b, root, &ax, "full_fold_ms", 1, 0,
                        "Full-fold time: from where every trace of the CMP is live", "Time (ms)", 0,
                        c_time, 0, err);
    if (!rc)
      rc = chart_offsets(b, root, &ax, err);
    if (!rc)
      rc = extra_cmp_charts(b, root, &ax, err);
    if (rc)
      return rc;
    /* the section, on the same CMP axis */
    const char *sec = o->section_path;
    char *beside = NULL;
    if (!sec) {
      const char *given = qc_json_str(root, "section.path", NULL);
      if (given && exists(given)) {
        sec = given;
      } else if (given) {
        const char *slash = strrchr(o->report_path, '/');
        size_t nd = slash ? (size_t)(slash - o->report_path + 1) : 0;
        beside = malloc(nd + strlen(base_name(given)) + 1);
        if (beside) {
          snprintf(beside, nd + strlen(base_name(given)) + 1, "%.*s%s", (int)nd, o->report_path,
                   base_name(given));
          sec = exists(beside) ? beside : NULL;
        }
      }
    }
    tz_buf_put(b, "<h3>Stacked section</h3>\n");
    tz_err te;
    tz_err_init(&te);
    char caption[300];
    snprintf(caption, sizeof caption, "Stacked section %s", sec ? base_name(sec) : "");
    if (!sec || thumbnail(b, sec, &ax, caption, NULL, &te)) {
      tz_buf_put(b, "<p class=\"note\" id=\"no-thumbnail\">No thumbnail: ");
      tz_buf_xml(b, sec ? te.msg : "the stacked section was not found");
      tz_buf_put(b, "</p>\n");
    }
    free(beside);
  }

  if (cJSON_IsObject(cJSON_GetObjectItemCaseSensitive(root, "statics"))) {
    const cJSON *ap = qc_json_at(root, "statics.applied");
    tz_buf_put(b, "<h2 id=\"statics\">Statics along the line</h2>\n");
    if (cJSON_IsObject(ap))
      tz_buf_put(b, "<p>Applied to %.0f traces: total static %.2f to %.2f ms (RMS %.2f ms); time "
                 "reference: %s, datum %g m, replacement velocity %g m/s.</p>\n",
                 qc_json_num(ap, "traces"), qc_json_num(ap, "min_ms"), qc_json_num(ap, "max_ms"),
                 qc_json_num(ap, "rms_ms"), qc_json_str(root, "statics.time_reference", "-"),
                 qc_json_num(root, "statics.datum_m"),
                 qc_json_num(root, "statics.replacement_velocity_mps"));
    if ((rc = chart_statics(b, root, err)))
      return rc;
  }
  tz_buf_put(b, "<h2 id=\"mute\">Mute by offset class</h2>\n");
  if ((rc = chart_mute(b, root, err)))
    return rc;
  tz_buf_put(b, "<h2 id=\"velocity\">Velocity</h2>\n");
  if ((rc = chart_velocity(b, root, err)))
    return rc;
  if (!cJSON_IsArray(qc_json_at(root, "velocity.functions")))
    tz_buf_put(b, "<p class=\"note\">The report lists no velocity functions.</p>\n");

  tz_buf_put(b, "<h2 id=\"traces\">Skipped and edited traces</h2>\n");
  const cJSON *tr = cJSON_GetObjectItemCaseSensitive(root, "traces");
  for (const cJSON *e = tr ? tr->child : NULL; e; e = e->next)
    if (cJSON_IsObject(e)) {
      tz_buf_put(b, "<h3>");
      tz_buf_xml(b, e->string);
      tz_buf_put(b, "</h3>\n");
      counts_table(b, e, e->string);
    }
  inputs_table(b, root);

  /* sections the page does not draw itself, shown as they are */
  static const char *const drawn[] = { "format", "tool", "created_utc", "line", "inputs", "bad_files",
                                       "parameters", "section", "traces", "cmps", "fold", "mute",
                                       "timing_s", "throughput", NULL };
  for (const cJSON *e = root->child; e; e = e->next) {
    size_t i = 0;
    while (drawn[i] && strcmp(drawn[i], e->string))
      i++;
    if (drawn[i] || !(cJSON_IsObject(e) || cJSON_IsArray(e)))
      continue;
    char title[96];
    humanise(e->string, title, sizeof title);
    tz_buf_put(b, "<h2 id=\"report-");
    tz_buf_xml(b, e->string);
    tz_buf_put(b, "\">%s</h2>\n<details><summary>as recorded in the report</summary>\n", title);
    json_block(b, e);
    tz_buf_put(b, "</details>\n");
  }
  tz_buf_put(b, "<h2 id=\"parameters\">Parameters</h2>\n<details open><summary>the resolved job"
             "</summary>\n");
  json_block(b, qc_json_at(root, "parameters"));
  tz_buf_put(b, "</details>\n<h2 id=\"timing\">Timing</h2>\n<table data-table=\"timing\">\n");
  const char *groups[2] = { "timing_s", "throughput" };
  for (int g = 0; g < 2; g++)
    for (const cJSON *e = qc_json_at(root, groups[g]) ? qc_json_at(root, groups[g])->child : NULL; e;
         e = e->next)
      if (cJSON_IsNumber(e)) {
        char lab[96], val[64];
        humanise(e->string, lab, sizeof lab);
        snprintf(val, sizeof val, "%g", e->valuedouble);
        row_num(b, lab, val);
      }
  tz_buf_put(b, "</table>\n");
  page_close(b, line_script);
  return TZ_OK;
}

int page_line(const page_line_opts *o, char **html, tz_err *err)
{
  *html = NULL;
  qc_report *r = NULL;
  int rc = qc_report_load(&r, o->report_path, err);
  if (rc)
    return rc;
  tz_buf b = { 0 };
  rc = line_body(&b, o, qc_report_root(r), err);
  qc_report_free(r);
  if (rc) {
    tz_buf_free(&b);
    return rc;
  }
  return tz_buf_finish(&b, html, "HTML page", err);
}

int page_line_write(const page_line_opts *o, tz_err *err)
{
  char *html = NULL;
  int rc = page_line(o, &html, err);
  if (!rc)
    rc = qc_write_text(o->page_path, html, err);
  free(html);
  return rc;
}

/* ---------------------------------------------------------------- survey page */

static const char *sort_script =
  "(function(){\n"
  "Array.prototype.forEach.call(document.querySelectorAll('table.sortable'),function(t){\n"
  " var ths=t.querySelectorAll('th');\n"
  " Array.prototype.forEach.call(ths,function(th,col){th.addEventListener('click',function(){\n"
  "  var rows=Array.prototype.slice.call(t.querySelectorAll('tr')).slice(1);\n"
  "  var dir=th.getAttribute('data-dir')==='asc'?-1:1;\n"
  "  Array.prototype.forEach.call(ths,function(h){h.removeAttribute('data-dir');});\n"
  "  th.setAttribute('data-dir',dir>0?'asc':'desc');\n"
  "  function key(r){var c=r.children[col];var v=c.getAttribute('data-sort');if(v===null)v=c.textContent;\n"
  "   var x=parseFloat(v);return isNaN(x)?v.toLowerCase():x;}\n"
  "  rows.sort(function(a,b){var x=key(a),y=key(b);return (x<y?-1:x>y?1:0)*dir;});\n"
  "  rows.forEach(function(r){r.parentNode.appendChild(r);});});});});\n"
  "document.documentElement.setAttribute('data-ready','1');\n"
  "})();\n";

typedef struct survey_row {
  cJSON *root;
  char *path, *page;
  size_t warnings;
} survey_row;

static int row_order(const void *pa, const void *pb)
{
  const survey_row *a = pa, *b = pb;
  if ((a->warnings > 0) != (b->warnings > 0))
    return a->warnings > 0 ? -1 : 1;
  return strcmp(qc_json_str(a->root, "line", a->path), qc_json_str(b->root, "line", b->path));
}

/* A small fold chart for a survey row (no axes): bars, nominal dashed. */
static int sparkline(tz_buf *b, const cJSON *root, tz_err *err)
{
  const cJSON *cm = cJSON_GetObjectItemCaseSensitive(root, "cmps");
  if (!cJSON_IsArray(cm) || !cm->child)
    return TZ_OK;
  double nominal = qc_json_num(root, "fold.nominal"), ftop = isfinite(nominal) ? nominal : 0;
  int64_t c0 = (int64_t)qc_json_num(cm->child, "cmp"), c1 = c0;
  for (const cJSON *e = cm->child; e; e = e->next) {
    ftop = fmax(ftop, qc_json_num(e, "fold"));
    c1 = (int64_t)qc_json_num(e, "cmp");
  }
  picture_ctx *c = NULL;
  int rc = picture_ctx_new(&c, PICTURE_FORMAT_SVG, 130, 30, err);
  if (rc)
    return rc;
  picture_frame f = { .x = 1, .y = 2, .w = 128, .h = 27, .x0 = (double)c0 - 0.5,
                      .x1 = (double)c1 + 0.5, .y0 = 0, .y1 = ftop > 0 ? ftop : 1 };
  for (const cJSON *e = cm->child; e; e = e->next) {
    double x, w, y = picture_frame_py(&f, qc_json_num(e, "fold"));
    cmp_span(&f, (int64_t)qc_json_num(e, "cmp"), &x, &w);
    picture_ctx_fill_rect(c, x, y, w, f.y + f.h - y, c_fold);
  }
  if (nominal > 0) {
    double y = picture_frame_py(&f, nominal), xs[2] = { f.x, f.x + f.w }, ys[2] = { y, y };
    picture_ctx_polyline(c, xs, ys, 2, 1, 1, c_nominal);
  }
  rc = inline_svg(b, c, "data-chart=\"fold-sparkline\"", err);
  picture_ctx_free(c);
  return rc;
}

int page_survey(const char *const *reports, size_t n, const char *page_path, char **html,
                size_t *written, tz_err *err)
{
  *html = NULL;
  *written = 0;
  if (n == 0)
    return tz_fail(err, TZ_E_ARG, "no QC reports for the survey page");
  if (n > PAGE_MAX_REPORTS)
    return tz_fail(err, TZ_E_ARG, "%zu QC reports: more than %d on one page", n, PAGE_MAX_REPORTS);
  survey_row *rows = calloc(n, sizeof *rows);
  if (!rows)
    return tz_fail(err, TZ_E_NOMEM, "survey of %zu lines", n);
  int rc = TZ_OK;
  qc_report **reps = calloc(n, sizeof *reps);
  if (!reps)
    rc = tz_fail(err, TZ_E_NOMEM, "survey of %zu lines", n);
  for (size_t i = 0; !rc && i < n; i++) {
    if ((rc = qc_report_load(&reps[i], reports[i], err)))
      break;
    rows[i].root = (cJSON *)qc_report_root(reps[i]);
    rows[i].path = (char *)reports[i];
    rows[i].warnings = count_warnings(rows[i].root);
    if ((rc = page_path_for_report(reports[i], &rows[i].page, err)))
      break;
    if (!exists(rows[i].page)) {
      page_line_opts lo = { .report_path = reports[i], .page_path = rows[i].page };
      if ((rc = page_line_write(&lo, err)))
        break;
      ++*written;
    }
  }
  tz_buf b = { 0 };
  if (!rc) {
    qsort(rows, n, sizeof *rows, row_order);
    size_t nw = 0;
    for (size_t i = 0; i < n; i++)
      nw += rows[i].warnings > 0;
    page_open(&b, "Survey QC");
    tz_buf_put(&b, "<h1>Survey QC: %zu lines</h1>\n<p class=\"meta\">%zu with warnings, listed "
               "first. Click a column heading to sort; click a line to open its page.</p>\n",
               n, nw);
    tz_buf_put(&b, "<table class=\"sortable\" id=\"lines\" data-lines=\"%zu\"><tr><th>line</th>"
               "<th class=\"n\">CMPs</th><th class=\"n\">fold min</th><th class=\"n\">fold mean</th>"
               "<th class=\"n\">fold max</th><th class=\"n\">nominal</th><th class=\"n\">muted %%</th>"
               "<th class=\"n\">skipped traces</th><th class=\"n\">warnings</th><th>run (UTC)</th>"
               "<th>velocity file and SHA-256</th><th>fold along the line</th></tr>\n", n);
    for (size_t i = 0; !rc && i < n; i++) {
      const cJSON *r = rows[i].root;
      const char *name = qc_json_str(r, "line", "");
      char a[64], c[64], d[64], e[64], m[64];
      fmt_num(a, sizeof a, qc_json_num(r, "fold.min"), 0);
      fmt_num(c, sizeof c, qc_json_num(r, "fold.mean"), 2);
      fmt_num(d, sizeof d, qc_json_num(r, "fold.max"), 0);
      fmt_num(e, sizeof e, qc_json_num(r, "fold.nominal"), 1);
      fmt_num(m, sizeof m, 100 * qc_json_num(r, "mute.muted_fraction"), 2);
      tz_buf_put(&b, "<tr%s data-warnings=\"%zu\" data-report=\"", rows[i].warnings ? " class=\"warn\"" : "",
                 rows[i].warnings);
      tz_buf_xml(&b, base_name(rows[i].path));
      tz_buf_put(&b, "\"><td data-sort=\"");
      tz_buf_xml(&b, name[0] ? name : base_name(rows[i].path));
      tz_buf_put(&b, "\"><a href=\"");
      rel_link(&b, page_path, rows[i].page);
      tz_buf_put(&b, "\">");
      tz_buf_xml(&b, name[0] ? name : base_name(rows[i].path));
      tz_buf_put(&b, "</a><br><span class=\"note\">");
      tz_buf_xml(&b, base_name(rows[i].path));
      tz_buf_put(&b, "</span></td><td class=\"n\">%.0f</td><td class=\"n\">%s</td><td class=\"n\">%s"
                 "</td><td class=\"n\">%s</td><td class=\"n\">%s</td><td class=\"n\">%s</td>"
                 "<td class=\"n\">%.0f</td><td class=\"n%s\">%zu</td><td>", qc_json_num(r, "section.cmps"),
                 a, c, d, e, m, qc_json_num(r, "traces.skipped_total"),
                 rows[i].warnings ? " bad" : "", rows[i].warnings);
      tz_buf_xml(&b, qc_json_str(r, "created_utc", "-"));
      tz_buf_put(&b, "</td><td>");
      tz_buf_xml(&b, base_name(qc_json_str(r, "velocity.file", "-")));
      const char *sha = qc_json_str(r, "velocity.sha256", "-");
      tz_buf_put(&b, "<br><code title=\"");
      tz_buf_xml(&b, sha);
      tz_buf_put(&b, "\" data-sha256=\"");
      tz_buf_xml(&b, sha);
      tz_buf_put(&b, "\">%.12s</code></td><td>", sha);
      rc = sparkline(&b, r, err);
      tz_buf_put(&b, "</td></tr>\n");
    }
    tz_buf_put(&b, "</table>\n");
    page_close(&b, sort_script);
  }
  for (size_t i = 0; i < n; i++) {
    free(rows[i].page);
    if (reps)
      qc_report_free(reps[i]);
  }
  free(reps);
  free(rows);
  if (rc) {
    tz_buf_free(&b);
    return rc;
  }
  return tz_buf_finish(&b, html, "survey page", err);
}

/* ---------------------------------------------------------------- comparison page */

int page_compare(const char *path_a, const char *path_b, const compare_result *r,
                 double threshold_db, const char *page_path, char **html, tz_err *err)
{
  *html = NULL;
  if (r->n == 0)
    return tz_fail(err, TZ_E_ARG, "no CMPs compared");
  cmp_axis ax = { r->cmps[0].cmp, r->cmps[r->n - 1].cmp };
  tz_buf b = { 0 };
  page_open(&b, "Comparison of two stacks");
  tz_buf_put(&b, "<h1>Comparison of two stacks</h1>\n<p class=\"meta\">A: <a href=\"");
  rel_link(&b, page_path, path_a);
  tz_buf_put(&b, "\">");
  tz_buf_xml(&b, path_a);
  tz_buf_put(&b, "</a><br>B: <a href=\"");
  rel_link(&b, page_path, path_b);
  tz_buf_put(&b, "\">");
  tz_buf_xml(&b, path_b);
  tz_buf_put(&b, "</a></p>\n<table data-table=\"summary\">\n");
  char v[128];
  snprintf(v, sizeof v, "%zu (CMP %d-%d)", r->n, (int)ax.c0, (int)ax.c1);
  row_num(&b, "CMPs compared", v);
  snprintf(v, sizeof v, "%zu / %zu", r->only_a, r->only_b);
  row_num(&b, "CMPs in A only / B only", v);
  snprintf(v, sizeof v, "%zu stronger, %zu weaker, %zu similar (threshold %g dB)", r->stronger,
           r->weaker, r->similar, threshold_db);
  row_num(&b, "B against A", v);
  snprintf(v, sizeof v, "%.2f dB", r->energy_ratio_db);
  row_num(&b, "energy ratio B/A, whole window", v);
  snprintf(v, sizeof v, "%.3f", r->min_peak_correlation);
  row_num(&b, "lowest peak correlation", v);
  tz_buf_put(&b, "</table>\n<div id=\"cmp-info\">Point at a chart (or open #cmp=N) to see a CMP's "
             "numbers.</div>\n");
  /* the per-CMP table as the page's data, as the line page's script expects */
  cJSON *arr = cJSON_CreateArray();
  for (size_t i = 0; arr && i < r->n; i++) {
    const compare_cmp *c = &r->cmps[i];
    cJSON *o = cJSON_CreateObject();
    cJSON_AddNumberToObject(o, "cmp", c->cmp);
    cJSON_AddNumberToObject(o, "energy_ratio_db", isfinite(c->energy_ratio_db) ? c->energy_ratio_db : 0);
    cJSON_AddNumberToObject(o, "peak_correlation", c->peak_correlation);
    cJSON_AddNumberToObject(o, "lag_ms", c->lag_ms);
    cJSON_AddNumberToObject(o, "rms_a", c->rms_a);
    cJSON_AddNumberToObject(o, "rms_b", c->rms_b);
    cJSON_AddStringToObject(o, "verdict", compare_verdict_name(c->verdict));
    cJSON_AddItemToArray(arr, o);
  }
  char *data = arr ? cJSON_PrintUnformatted(arr) : NULL;
  cJSON *wrap = cJSON_CreateObject();
  if (wrap && arr)
    cJSON_AddItemToObject(wrap, "cmps", arr);
  else
    cJSON_Delete(arr);
  tz_buf_put(&b, "<script type=\"application/json\" id=\"cmp-data\">%s</script>\n",
             data ? data : "[]");
  free(data);
  int rc = wrap ? chart_series(&b, wrap, &ax, "energy_ratio_db", 1, 1,
                               "Energy ratio B/A per CMP (dB); dashed: the threshold",
                               "B/A (dB)", 0, c_db, threshold_db, err)
                : tz_fail(err, TZ_E_NOMEM, "comparison data");
  if (!rc)
    rc = chart_series(&b, wrap, &ax, "peak_correlation", 1, 0,
                      "Peak normalised cross-correlation of A and B", "Correlation", 1, c_corr, 0,
                      err);
  if (!rc)
    rc = chart_series(&b, wrap, &ax, "lag_ms", 1, 0, "Lag of the peak (ms, positive: B later)",
                      "Lag (ms)", 0, c_time, 0, err);
  cJSON_Delete(wrap);
  const char *paths[2] = { path_a, path_b };
  double clip = 0; /* B drawn at A's clip, so that amplitudes compare by eye */
  for (int k = 0; !rc && k < 2; k++) {
    char caption[300];
    snprintf(caption, sizeof caption, "%s: %s%s", k ? "B" : "A", base_name(paths[k]),
             k ? " (at the clip of A)" : "");
    tz_buf_put(&b, "<h3>Section %s</h3>\n", k ? "B" : "A");
    tz_err te;
    tz_err_init(&te);
    if (thumbnail(&b, paths[k], &ax, caption, &clip, &te)) {
      tz_buf_put(&b, "<p class=\"note\">No thumbnail: ");
      tz_buf_xml(&b, te.msg);
      tz_buf_put(&b, "</p>\n");
    }
  }
  if (rc) {
    tz_buf_free(&b);
    return rc;
  }
  page_close(&b, line_script);
  return tz_buf_finish(&b, html, "comparison page", err);
}
