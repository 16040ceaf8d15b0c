/* picture.h -- QC pictures: a 2D panel (section, gather, semblance) or a fold chart to PNG.
 *
 * A panel is traces x samples of float (trace-major: data[i * nsamples + j]).
 * It is drawn as variable density (one colour per amplitude, clipped at a
 * percentile of |amplitude|), as wiggle traces with variable-area fill, or
 * both, with time increasing downward and traces left to right, a frame,
 * tick labels in a built-in bitmap font and a title line. The fold chart
 * draws fold per CMP as bars with the nominal fold as a dashed line, and the
 * live fraction (samples left after the mutes) as a second bar series below.
 * The mapping from amplitude to colour and from pixel to sample is fixed and
 * documented in docs/pictures.md so that it can be checked from outside.
 * The library never prints: rasters come back in memory; picture_write_png()
 * writes one through a temporary file renamed on success.
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
 * picture of W x H is x in [LEFT, W - RIGHT), y in [TOP, H - BOTTOM). */
#define PICTURE_MARGIN_LEFT 88
#define PICTURE_MARGIN_TOP 60
#define PICTURE_MARGIN_RIGHT 24
#define PICTURE_MARGIN_BOTTOM 16

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
} picture_panel;

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

/* Draws a panel. On success *img owns a new raster and *info (may be NULL) is
 * filled. Sizes outside PICTURE_MIN_* .. PICTURE_MAX_SIDE are TZ_E_ARG. */
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
 * (docs/pictures.md gives the layout). width/height 0 choose defaults. */
int picture_render_fold(const picture_fold *f, const char *title, uint32_t width,
                        uint32_t height, picture_image *img, picture_info *info, tz_err *err);

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
  size_t ntraces, nsamples;
  double time_first_ms, interval_ms;
  int cmps_increase;          /* 1 when CMP numbers strictly increase trace to trace */
  int64_t traces_in_file;
} picture_loaded;

void picture_loaded_free(picture_loaded *l);   /* NULL is a no-op */

/* Reads the selected traces and samples (one pass in file order). A selection
 * that keeps no trace or no sample is TZ_E_ARG naming the file's ranges. */
int picture_load_segy(const char *path, const picture_select *sel, picture_loaded *out,
                      tz_err *err);

/* ---- PNG ---- */

/* Writes img as an 8-bit RGB PNG through a temporary file renamed on success;
 * on failure nothing appears at path. */
int picture_write_png(const picture_image *img, const char *path, tz_err *err);

/* Draws text in the built-in 5x7 font scaled by `scale` with its top-left
 * corner at (x, y), clipped to the raster. Lower-case letters are drawn as
 * capitals; characters outside the font as a blank. Returns the width drawn. */
uint32_t picture_text(picture_image *img, int64_t x, int64_t y, const char *s, int scale,
                      const unsigned char rgb[3]);

#endif
