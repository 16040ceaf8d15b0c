/* bins.h -- processing line, CMP numbering and fold (straight, fitted or crooked lines).
 *
 * Straight line (tzero-geometry(1)): a midpoint (mx, my)
 * projects to s = (mx - ox) sin(az) + (my - oy) cos(az), its CMP number is
 * first_cmp + round(s / size_m), bin centres sit at whole multiples of size_m
 * from the origin. A crooked line is a polyline of nodes; each midpoint goes to
 * its nearest segment (the first and last segments extend beyond the end
 * nodes), s is the distance along the polyline from the first node, the signed
 * distance off the line is kept, and a limit marks traces too far off to bin.
 *
 * A bins_line is read-only once made and may be shared by threads. A
 * bins_fold accumulator belongs to one thread.
 */
#ifndef TZERO_BINS_H
#define TZERO_BINS_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"
#include "tzero/geometry.h"

#define BINS_MAX_NODES 100000          /* crooked-line nodes */
#define BINS_MAX_CMPS 10000000         /* CMP range a fold accumulator may span */
#define BINS_OFFSET_CLASSES 16         /* offset distribution classes per CMP */
#define BINS_CROOKED_PASSES 3          /* smoothing passes of an automatic crooked line */

/* A straight processing line. */
typedef struct bins_params {
  double origin_x, origin_y;   /* metres */
  double azimuth_deg;          /* clockwise from north */
  double size_m;               /* bin size along the line, > 0 */
  int32_t first_cmp;           /* CMP number of the bin centred on the origin */
  double max_off_line_m;       /* traces farther off the line are BINS_OFF_LINE; 0 = no limit */
} bins_params;

enum bins_status {
  BINS_IN = 0,
  BINS_OFF_LINE = 1,      /* farther from the line than max_off_line_m */
  BINS_OUT_OF_RANGE = 2   /* the CMP number would not fit int32 (bad origin, size or
                           * coordinates); loc->cmp is clamped and meaningless */
};

typedef struct bins_loc {
  int32_t cmp;
  double along_m;        /* s: distance along the line from the origin / first node */
  double off_line_m;     /* signed distance off the line, positive to the right */
  double centre_x, centre_y; /* bin centre on the line */
  int status;            /* enum bins_status */
} bins_loc;

typedef struct bins_line bins_line;

/* On success *out owns a new line: release it with bins_line_free(). */
int bins_line_straight(bins_line **out, const bins_params *p, tz_err *err);
/* Crooked line through n >= 2 nodes (copied). Consecutive nodes must differ. */
int bins_line_crooked(bins_line **out, const double *node_x, const double *node_y, size_t n,
                      double size_m, int32_t first_cmp, double max_off_line_m, tz_err *err);
void bins_line_free(bins_line *l);                       /* NULL is a no-op */
int bins_line_is_crooked(const bins_line *l);
/* Straight-line parameters (for a crooked line: first node, first segment's
 * azimuth, size, first CMP and limit). */
bins_params bins_line_get_params(const bins_line *l);
/* Midpoint -> CMP. Returns the status (enum bins_status); *loc is filled
 * either way. */
int bins_locate(const bins_line *l, double mx, double my, bins_loc *loc);
/* Bin centre of a CMP number on the line. */
void bins_cmp_centre(const bins_line *l, int32_t cmp, double *x, double *y);

/* ---- fitting a straight line through midpoints (least squares) ----
 * Orthogonal least squares (principal axis of the midpoint scatter, computed
 * relative to the first midpoint so large coordinates keep their precision).
 * The azimuth is oriented so that later midpoints (in the order added) lie
 * farther along the line; the origin is the projection onto the fitted line of
 * the midpoint with the smallest along-line position, so that midpoint's bin is
 * first_cmp. The fitter keeps the midpoints (16 bytes each). */
typedef struct bins_fitter bins_fitter;

typedef struct bins_fit_report {
  size_t n;                    /* midpoints used */
  double rms_off_line_m;       /* RMS distance of the midpoints from the fitted line */
  double max_off_line_m;       /* largest distance */
  double length_m;             /* along-line extent of the midpoints */
} bins_fit_report;

int bins_fitter_new(bins_fitter **out, tz_err *err);
void bins_fitter_free(bins_fitter *f);                   /* NULL is a no-op */
int bins_fitter_add(bins_fitter *f, double mx, double my, tz_err *err);
/* Fits the line. Fewer than 2 distinct midpoints is TZ_E_FORMAT. `size_m`,
 * `first_cmp` and `max_off_line_m` are copied into *p. rep may be NULL. */
int bins_fitter_solve(const bins_fitter *f, double size_m, int32_t first_cmp,
                      double max_off_line_m, bins_params *p, bins_fit_report *rep,
                      tz_err *err);

/* An automatic crooked line through the midpoints: a straight fit first, then
 * BINS_CROOKED_PASSES passes that locate every midpoint on the current line and
 * put nodes every smoothing_m / 8 (at least a bin apart) along it, from the first
 * midpoint to the last, each moved across the line by a least-squares straight
 * line through the midpoints' signed distances within smoothing_m of along-line
 * window centred on it (moved inside the data at the ends): a running linear fit;
 * the first pass smooths about the straight fit, the later ones about the
 * previous polyline, so a bend is followed. The first node is at the first
 * midpoint along the line, so its bin is first_cmp. On success *out owns a new
 * crooked line; rep (may be NULL) gives the RMS and largest midpoint distance
 * from it and the along-line length. */
int bins_fitter_solve_crooked(const bins_fitter *f, double smoothing_m, double size_m,
                              int32_t first_cmp, double max_off_line_m, bins_line **out,
                              bins_fit_report *rep, tz_err *err);

/* Nodes of a crooked line (0 for a straight line) and node i. */
size_t bins_line_node_count(const bins_line *l);
void bins_line_node(const bins_line *l, size_t i, double *x, double *y);

/* Reads a node file: CSV with the header row x_m,y_m and the nodes in order (at
 * least 2, none repeating the previous one). On success *x and *y own the
 * coordinates (free()); errors name the file and line. */
int bins_nodes_load(const char *path, double **x, double **y, size_t *n, tz_err *err);

/* The processing line of a layout before any data exists: the layout azimuth,
 * origin at the projection of the layout's smallest along-line midpoint, so its
 * bin is first_cmp. size_m <= 0 picks the default (half the receiver interval).
 * tzero synth writes CMP numbers with this line. */
int bins_params_from_layout(const geometry_layout *l, double size_m, int32_t first_cmp,
                            bins_params *p, tz_err *err);

/* ---- fold accumulator (one streaming pass; memory ~ number of CMPs) ---- */
typedef struct bins_fold bins_fold;

typedef struct bins_cmp_stats {
  int32_t cmp;
  double x, y;                 /* bin centre */
  int64_t fold;                /* traces added */
  double offset_min_m;         /* of |offset|; 0 when fold is 0 */
  double offset_max_m;
  double offset_mean_m;
  uint32_t offset_hist[BINS_OFFSET_CLASSES]; /* |offset| classes of offset_class_m;
                                              * the last class takes everything beyond */
} bins_cmp_stats;

typedef struct bins_fold_summary {
  int32_t first_cmp, last_cmp; /* range of CMPs with fold > 0; first > last if empty */
  int64_t traces;              /* traces added */
  int64_t min, max;            /* fold over first_cmp..last_cmp (gaps count as 0) */
  double mean;
  int64_t cmps_live;           /* CMPs with fold > 0 */
} bins_fold_summary;

/* The line is borrowed (for bin centres) and must outlive the accumulator.
 * offset_class_m is the width of the offset distribution classes (> 0). */
int bins_fold_new(bins_fold **out, const bins_line *line, double offset_class_m, tz_err *err);
void bins_fold_free(bins_fold *f);                       /* NULL is a no-op */
/* Adds one trace (call only for live traces inside the line limits). The CMP
 * range grows as needed up to BINS_MAX_CMPS (beyond that: TZ_E_FORMAT). */
int bins_fold_add(bins_fold *f, int32_t cmp, double offset_m, tz_err *err);
void bins_fold_summarise(const bins_fold *f, bins_fold_summary *s);
/* Stats of one CMP (zero fold outside the range). */
void bins_fold_get(const bins_fold *f, int32_t cmp, bins_cmp_stats *st);
double bins_fold_offset_class(const bins_fold *f);

/* Predicted fold: adds every trace of the layout, located on `line`, to `f`
 * (traces off the line are left out and counted in *off_line if not NULL). */
int bins_fold_predict(bins_fold *f, const bins_line *line, const geometry_layout *l,
                      int64_t *off_line, tz_err *err);

#endif
