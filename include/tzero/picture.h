/* picture.h -- QC pictures: panels (section, gather, semblance) and charts as PNG, SVG or PDF.
 *
 * A panel is traces x samples of float (trace-major: data[i * nsamples + j]).
 * It is drawn as variable density (one colour per amplitude, clipped at a
 * percentile of |amplitude|, with a colour bar), as wiggle traces with
 * variable-area fill, or both, with time increasing downward and traces left
 * to right, a frame, labelled axes and a title. The fold chart draws fold per
 * CMP as bars with the nominal fold as a dashed line, and the live fraction
 * (samples left after the mutes) as a second bar series below. Drawing goes
 * through a picture_ctx (below: how to add a chart kind), which writes PNG
 * and PDF with cairo and SVG with real text. The mapping from amplitude to
 * colour and from pixel to sample is fixed and documented in docs/pictures.md
 * so that it can be checked from outside. The library never prints: pictures
 * come back in memory or are written through a temporary file renamed on
 * success.
 */
#ifndef TZERO_PICTURE_H
#define TZERO_PICTURE_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"

#define PICTURE_MAX_SIDE 20000u          /* width or height cap, pixels */
#define PICTURE_MIN_WIDTH 240u           /* room for margins, labels and a plot */
#define PICTURE_MIN_HEIGHT 160u
#define PICTURE_MAX_SAMPLES (64u << 20)  /* traces x samples cap of one panel */
#define PICTURE_MAX_TITLE 200            /* characters of the title line */

/* Fixed margins around the plot area (pixels). The plot area of a panel
 * picture of W x H is x in [LEFT, W - RIGHT), y in [TOP, H - BOTTOM); the
 * right margin holds the colour bar. Charts (fold) use CHART_MARGIN_RIGHT. */
#define PICTURE_MARGIN_LEFT 80
#define PICTURE_MARGIN_TOP 72
#define PICTURE_MARGIN_RIGHT 110
#define PICTURE_MARGIN_BOTTOM 16
#define PICTURE_CHART_MARGIN_RIGHT 24

enum picture_map {
  PICTURE_MAP_DIVERGING = 0,  /* -clip blue (0,0,255), 0 white, +clip red (255,0,0) */
  PICTURE_MAP_GREY,           /* -clip white (255), 0 mid grey (128), +clip black (0) */
  PICTURE_MAP_SEQUENTIAL      /* 0 .. clip through five colour knots (semblance) */
};

enum picture_style {
  PICTURE_STYLE_AUTO = 0,     /* density, plus wiggles when traces are >= 6 px apart
                               * (never over the SEQUENTIAL map) */
  PICTURE_STYLE_DENSITY,
  PICTURE_STYLE_WIGGLE,       /* white background, black wiggles, positive lobes filled */
  PICTURE_STYLE_BOTH
};

/* An RGB raster, 8 bits per channel, rows top to bottom. */
typedef struct picture_image {
  uint32_t width, height;
  unsigned char *rgb;         /* owned: 3 * width * height bytes; picture_image_free() */
} picture_image;

void picture_image_free(picture_image *img);   /* frees rgb and zeroes the struct */

/* A panel to draw. Borrowed pointers; nothing is retained. */
typedef struct picture_panel {
  const float *data;          /* ntraces * nsamples values, trace after trace */
  size_t ntraces, nsamples;
  double time_first_ms;       /* time of sample 0 */
  double interval_ms;         /* sample interval */
  const double *xvalue;       /* per trace value for the horizontal axis (CMP, offset,
                               * velocity): ticks at round values when it runs
                               * monotonically, else every k-th trace labelled with
                               * its value; NULL: trace numbers 1..n */
  const char *xlabel;         /* e.g. "CMP"; NULL: "TRACE" */
  const char *title;          /* title line; NULL: none */
  const double *marks_ms;     /* per trace a time to mark with a dot (first-break
                               * picks), NAN for none; NULL: no marks */
  const int32_t *group;       /* per trace a group number 1..ngroups (test panels): a
                               * line between groups and group_label[g - 1] at the top
                               * of each; NULL: no groups */
  const char *const *group_label;
  size_t ngroups;
  const double *lines_ms;     /* nlines values per trace (line j of trace i at
                               * lines_ms[i * nlines + j]): times joined trace to
                               * trace as lines over the panel (mutes: top, inner
                               * start, inner end, bottom), broken at NAN; NULL: none */
  size_t nlines;              /* at most PICTURE_MAX_LINES */
  /* Gathers or panels side by side: group_starts[g] is the first trace of group g
   * (group_starts[0] = 0, increasing); a long tick above the plot marks each
   * boundary. With group_labels set each group is labelled at its centre with
   * the xvalue of its first trace (one velocity per constant-velocity panel)
   * instead of trace by trace. nstarts 0 or 1: no boundaries. */
  const size_t *group_starts;
  size_t nstarts;
  int group_labels;
  const char *group_unit;     /* appended to each group label ("m/s"); NULL: none */
} picture_panel;

#define PICTURE_MAX_LINES 4

typedef struct picture_opts {
  int map;                    /* enum picture_map */
  int style;                  /* enum picture_style */
  double clip_percentile;     /* 0 < P <= 100 (percentile of |amplitude|); 0: 99 for
                               * DIVERGING/GREY, 100 for SEQUENTIAL */
  double clip_value;          /* > 0: use this clip and ignore the percentile */
  uint32_t width, height;     /* 0: chosen from the panel size (see docs) */
} picture_opts;

/* What was drawn, for the caller to report. */
typedef struct picture_info {
  double clip;                /* amplitude mapped to the extreme colour */
  double clip_percentile;     /* percentile used (0 when clip_value was given) */
  int style;                  /* resolved enum picture_style (never AUTO) */
  uint32_t plot_x, plot_y, plot_w, plot_h;  /* plot area in pixels */
  uint32_t width, height;     /* the whole picture, px */
} picture_info;

/* Value at percentile p (0..100) of |a[i]| over n values, interpolated
 * linearly between order statistics at rank p/100 * (n - 1) (the usual
 * definition, as NumPy's default "linear" method). Needs n scratch floats;
 * TZ_E_ARG when n == 0 or p is outside 0..100. */
int picture_abs_percentile(const float *a, size_t n, double p, double *out, tz_err *err);

/* Colour of amplitude a for clip c > 0 (see enum picture_map and docs). */
void picture_colour(int map, double a, double clip, unsigned char rgb[3]);

/* Default width and height for a panel of ntraces x nsamples (docs/pictures.md). */
void picture_default_size(size_t ntraces, size_t nsamples, uint32_t *width, uint32_t *height);


/* ---- output formats ---- */

enum picture_format {
  PICTURE_FORMAT_PNG = 0,     /* 8-bit RGB raster (cairo image surface) */
  PICTURE_FORMAT_SVG,         /* SVG 1.1 with real <text>, rasters embedded as PNG */
  PICTURE_FORMAT_PDF          /* vector PDF (cairo PDF surface), fonts embedded */
};

/* Format from a file name's extension (.png, .svg, .pdf, any case); -1 when
 * the name has none of them. */
int picture_format_from_path(const char *path);
/* Format from its name ("png", "svg", "pdf"); -1 when unknown. */
int picture_format_from_name(const char *name);
const char *picture_format_name(int format);

/* ---- drawing context: how to add a chart kind ----
 *
 * A picture_ctx is a canvas of W x H px in one format. Coordinates are pixels
 * from the top-left corner, y down; a line of width 1 on a half-pixel centre
 * (x + 0.5) covers exactly one pixel column. Lines and text are anti-aliased;
 * text is DejaVu Sans found through fontconfig (Debian fonts-dejavu-core),
 * in mixed case, sizes in px. Rasters (picture_ctx_image) are painted pixel
 * for pixel in PNG and scaled by nearest neighbour in SVG and PDF, so the
 * colour at a data point is exact in every format.
 *
 * A new chart kind is a function that takes a picture_ctx and draws:
 *
 *   picture_ctx *c;  picture_ctx_new(&c, picture_format_from_path(out), 800, 400, err);
 *   picture_frame f = { .x = 70, .y = 50, .w = 700, .h = 300,
 *                       .x0 = cmp_first - 0.5, .x1 = cmp_last + 0.5,  // values at left, right
 *                       .y0 = 0, .y1 = ymax };                        // values at bottom, top
 *   picture_title(c, "Statics along the line", "source and receiver, ms");
 *   picture_ctx_polyline(c, xs_px, ys_px, n, 1.5, 0, colour);  // xs_px[i] = picture_frame_px(&f, v)
 *   picture_axis_x(c, &f, PICTURE_SIDE_BOTTOM, "CMP", 1);      // ticks at 1-2-5 steps, labels
 *   picture_axis_y(c, &f, PICTURE_SIDE_LEFT, "Static (ms)", 0); //   kept apart at any width
 *   picture_frame_draw(c, &f);
 *   picture_ctx_write(c, out, err);  picture_ctx_free(c);
 *
 * picture_colour_bar() draws a labelled colour scale for a colour map;
 * picture_legend() a row of coloured keys. picture_ctx_attrs() sets extra
 * SVG attributes of the next element (data-* values read by the HTML pages
 * and their tests); the raster and PDF backends ignore them.
 */

typedef struct picture_ctx picture_ctx;

enum picture_anchor { PICTURE_ANCHOR_LEFT = 0, PICTURE_ANCHOR_CENTRE, PICTURE_ANCHOR_RIGHT };
enum picture_side { PICTURE_SIDE_BOTTOM = 0, PICTURE_SIDE_TOP, PICTURE_SIDE_LEFT,
                    PICTURE_SIDE_RIGHT };

/* A new canvas, white. Sizes outside 1 .. PICTURE_MAX_SIDE are TZ_E_ARG. */
int picture_ctx_new(picture_ctx **out, int format, uint32_t width, uint32_t height, tz_err *err);
void picture_ctx_free(picture_ctx *c);               /* NULL is a no-op */
int picture_ctx_format(const picture_ctx *c);
/* Attributes (already escaped, e.g. `data-cmp="12"`) for the next element drawn
 * in SVG; printf-style; ignored by PNG and PDF. */
void picture_ctx_attrs(picture_ctx *c, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
/* Opens an SVG group <g> with attributes (as above; NULL: none); every group
 * opened is closed by picture_ctx_group_end(). PNG and PDF ignore groups. */
void picture_ctx_group(picture_ctx *c, const char *attrs);
void picture_ctx_group_end(picture_ctx *c);

void picture_ctx_fill_rect(picture_ctx *c, double x, double y, double w, double h,
                           const unsigned char rgb[3]);
/* An outline on the pixel edges of the rectangle, line width lw px. */
void picture_ctx_stroke_rect(picture_ctx *c, double x, double y, double w, double h, double lw,
                             const unsigned char rgb[3]);
/* Open polyline through n points; dashed: 6 px on, 4 px off. */
void picture_ctx_polyline(picture_ctx *c, const double *x, const double *y, size_t n, double lw,
                          int dashed, const unsigned char rgb[3]);
/* Closed polygon through n points, filled. */
void picture_ctx_polygon(picture_ctx *c, const double *x, const double *y, size_t n,
                         const unsigned char rgb[3]);
/* A filled circle (markers). */
void picture_ctx_dot(picture_ctx *c, double x, double y, double r, const unsigned char rgb[3]);
/* Text with its baseline at y, anchored at x; vertical: rotated to read
 * bottom to top. Returns the advance width in px. */
double picture_ctx_text(picture_ctx *c, double x, double y, const char *s, double size_px,
                        int anchor, int bold, int vertical, const unsigned char rgb[3]);
double picture_ctx_text_width(picture_ctx *c, const char *s, double size_px, int bold);
/* Paints an RGB raster with its top-left corner at (x, y), scaled to w x h px
 * (w, h <= 0: the raster's own size) by nearest neighbour. */
int picture_ctx_image(picture_ctx *c, const picture_image *img, double x, double y, double w,
                      double h, tz_err *err);

/* Writes the canvas to path in its format, through a temporary file renamed on
 * success; on failure nothing appears at path. */
int picture_ctx_write(picture_ctx *c, const char *path, tz_err *err);
/* The canvas as bytes of its format (an SVG without the XML declaration, for
 * inlining in HTML); *out is the caller's (free()). */
int picture_ctx_bytes(picture_ctx *c, char **out, size_t *len, tz_err *err);
/* PNG canvases only: a copy of the pixels (TZ_E_ARG for SVG and PDF). */
int picture_ctx_raster(picture_ctx *c, picture_image *img, tz_err *err);

/* ---- chart helpers ---- */

/* A plot area in px and the values at its edges. */
typedef struct picture_frame {
  double x, y, w, h;          /* plot area: left, top, width, height (px) */
  double x0, x1;              /* values at the left and right edges */
  double y0, y1;              /* values at the bottom and top edges (y0 > y1: value grows down) */
} picture_frame;

double picture_frame_px(const picture_frame *f, double v);   /* x pixel of value v */
double picture_frame_py(const picture_frame *f, double v);   /* y pixel of value v */
void picture_frame_draw(picture_ctx *c, const picture_frame *f);   /* 1-px border outside */
/* Smallest step of 1, 2 or 5 x 10^k that is >= min_step (> 0). */
double picture_nice_step(double min_step);
/* Ticks and labels along one side (BOTTOM/TOP for x, LEFT/RIGHT for y), at
 * 1-2-5 steps spaced by the measured width of the widest label so that labels
 * never overlap at any width; whole: no ticks between whole numbers (CMP
 * numbers). The title goes centred beyond the labels (NULL: none). */
void picture_axis_x(picture_ctx *c, const picture_frame *f, int side, const char *title,
                    int whole);
void picture_axis_y(picture_ctx *c, const picture_frame *f, int side, const char *title,
                    int whole);
/* Light grey lines at the y ticks (behind data: draw first). */
void picture_grid_y(picture_ctx *c, const picture_frame *f);
/* Title (bold, 15 px) at the top left and a subtitle line below it (NULL: none). */
void picture_title(picture_ctx *c, const char *title, const char *subtitle);
/* A vertical colour scale of `map` from -clip (or 0 for SEQUENTIAL) at the
 * bottom to +clip at the top, in the box x, y, w, h, with value labels on its
 * right and a vertical title. */
void picture_colour_bar(picture_ctx *c, double x, double y, double w, double h, int map,
                        double clip, const char *title);
/* Keys in a row from (x, y): a swatch of each colour then its label; returns the
 * x after the last. dashed[i]: the key is a dashed line instead of a swatch. */
double picture_legend(picture_ctx *c, double x, double y, size_t n, const char *const *labels,
                      const unsigned char (*rgb)[3], const int *dashed);

/* Draws a panel on a new canvas of the given format (*out: picture_ctx_free()).
 * Sizes outside PICTURE_MIN_* .. PICTURE_MAX_SIDE are TZ_E_ARG. */
int picture_draw_panel(const picture_panel *p, const picture_opts *o, int format,
                       picture_ctx **out, picture_info *info, tz_err *err);
/* The same as a PNG raster: on success *img owns it and *info (may be NULL) is filled. */
int picture_render_panel(const picture_panel *p, const picture_opts *o, picture_image *img,
                         picture_info *info, tz_err *err);

/* ---- fold chart ---- */

typedef struct picture_fold_row {
  int64_t cmp;
  double fold;                /* >= 0 */
  double live_fraction;       /* 0..1 */
} picture_fold_row;

typedef struct picture_fold {
  picture_fold_row *rows;     /* owned by the struct: picture_fold_free() */
  size_t n;
  double nominal;             /* nominal fold, 0 when unknown */
} picture_fold;

void picture_fold_free(picture_fold *f);       /* NULL is a no-op */

/* Reads cmps[].cmp, cmps[].fold, cmps[].live_fraction and fold.nominal from a
 * QC report ("format": "tzero-qc/1"). Errors name the file and the JSON path
 * ($.cmps[3].fold). A missing file is TZ_E_NOINPUT, anything else TZ_E_FORMAT. */
int picture_fold_parse(picture_fold *out, const char *json, size_t len, const char *name,
                       tz_err *err);
int picture_fold_load(picture_fold *out, const char *path, tz_err *err);

/* Fold bars over the top 70 % of the plot height, live-fraction bars below
 * (docs/pictures.md gives the layout). width/height 0 choose defaults. In SVG
 * every bar carries data-cmp and data-fold (or data-live). */
int picture_draw_fold(const picture_fold *f, const char *title, uint32_t width, uint32_t height,
                      int format, picture_ctx **out, picture_info *info, tz_err *err);
int picture_render_fold(const picture_fold *f, const char *title, uint32_t width,
                        uint32_t height, picture_image *img, picture_info *info, tz_err *err);

/* ---- velocity field (src/qc/picture_velocity.c) ---- */

struct velocity_table;
typedef struct picture_velocity_field {
  const struct velocity_table *table;   /* borrowed */
  int64_t cmp_first, cmp_last;          /* horizontal range */
  double time_max_s;                    /* vertical range 0 .. time_max_s */
} picture_velocity_field;

/* RMS (left) and Dix interval (right) velocity, CMP by time, on one colour
 * scale, with a dot at every knot of every control CMP (in SVG each carries
 * data-cmp, data-time-ms and data-rms-mps). width/height 0: 1200 x 720. */
int picture_draw_velocity_field(const picture_velocity_field *f, const char *title,
                                uint32_t width, uint32_t height, int format, picture_ctx **out,
                                tz_err *err);

/* ---- statics chart (src/qc/picture_statics.c) ---- */

typedef struct picture_statics_point {
  double station, elevation_m, static_ms;
} picture_statics_point;

typedef struct picture_statics {
  picture_statics_point *pt[2];   /* [0] sources, [1] receivers; owned: picture_statics_free() */
  size_t n[2];
  double datum_m;
} picture_statics;

void picture_statics_free(picture_statics *s);   /* NULL is a no-op */
/* Reads statics.datum_m and statics.sources[] / statics.receivers[] (station,
 * elevation_m, static_ms) from a QC report. A report without statics, or a bad
 * value, is TZ_E_FORMAT naming the file and the JSON path. */
int picture_statics_parse(picture_statics *out, const char *json, size_t len, const char *name,
                          tz_err *err);
int picture_statics_load(picture_statics *out, const char *path, tz_err *err);
/* Elevation profile (receivers as a line, sources as dots) with the datum dashed
 * on top; source and receiver statics (ms) below; station numbers along the
 * bottom. width/height 0 choose defaults (4 px per station, 560 px high). */
int picture_draw_statics(const picture_statics *s, const char *title, uint32_t width,
                         uint32_t height, int format, picture_ctx **out, picture_info *info,
                         tz_err *err);

/* ---- SEG-Y panels ---- */

typedef struct picture_select {
  int have_cmps;              /* 1: keep traces with cmp_first <= CMP (21-24) <= cmp_last */
  int64_t cmp_first, cmp_last;
  int have_time;              /* 1: keep samples with time_first_ms <= t <= time_last_ms */
  double time_first_ms, time_last_ms;
} picture_select;

/* A panel read from a SEG-Y file; owns its arrays (picture_loaded_free()). */
typedef struct picture_loaded {
  float *data;
  double *cmp, *offset;       /* per trace: bytes 21-24 and 37-40 */
  int32_t *field_record, *channel;   /* per trace: bytes 9-12 and 13-16 */
  int64_t *trace;             /* per trace: its 0-based index in the file */
  size_t ntraces, nsamples;
  double time_first_ms, interval_ms;
  int cmps_increase;          /* 1 when CMP numbers strictly increase trace to trace */
  int64_t traces_in_file;
  /* test panels (docs/gathers.md): when the textual header declares them, the
   * panel number of each trace (bytes 233-236) and "KEY = VALUE" per panel */
  int32_t *panel;             /* ntraces, or NULL */
  size_t npanels;
  char (*panel_label)[168];   /* npanels: "KEY = VALUE", each under 80 */
  const char **panel_label_ptr;  /* npanels pointers into panel_label */
} picture_loaded;

void picture_loaded_free(picture_loaded *l);   /* NULL is a no-op */

/* Reads the selected traces and samples (one pass in file order). A selection
 * that keeps no trace or no sample is TZ_E_ARG naming the file's ranges. */
int picture_load_segy(const char *path, const picture_select *sel, picture_loaded *out,
                      tz_err *err);

/* ---- PNG of a raster ---- */

/* Writes img as an 8-bit RGB PNG through a temporary file renamed on success;
 * on failure nothing appears at path. */
int picture_write_png(const picture_image *img, const char *path, tz_err *err);

#endif
