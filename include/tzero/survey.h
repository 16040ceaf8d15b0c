/* survey.h -- what the acquisition was and which processing line follows from it,
 * inferred once for every command (`tzero geometry`, the stack plan, ...).
 *
 * From a header pass (one survey_add() per trace, in file order) or from a
 * layout, survey_finish() gives the acquisition figures:
 *   receiver interval dg  median of the per-record medians of the along-line
 *                         step between consecutive channels (each step
 *                         projected on the chord of the record's receivers
 *                         from 3 before it to 3 after it, so GPS scatter
 *                         across the line does not lengthen it and a bend
 *                         does not shorten it);
 *   source interval ds    median distance between the sources of consecutive
 *                         records (moves under 5 mm are repeats, not moves);
 *                         both rounded to a round figure when within 0.5 % of
 *                         one (survey_round_interval), else to the coordinates'
 *                         precision (headers: cm, tables: mm);
 *   channels per record N median over the records of every channel recorded,
 *                         dead ones included (auxiliary traces are not channels);
 *   nominal fold          N dg / (2 ds), the roll-along fold of end-on and split
 *                         spreads (Sheriff & Geldart 1995; Yilmaz 2001, the page
 *                         from memory; common practice), 0 when dg or ds is unknown;
 *   shooting direction    the line azimuth, turned round when the last record's
 *                         source lies behind the first one along it;
 * and the processing line: the one given (straight or crooked), else the
 * layout's, else a least-squares fit through the midpoints of the live traces
 * (bins.h). The default bin size is half the receiver interval (common
 * practice). A layout gives its own intervals, channel count and direction, and
 * then no trace needs to be added.
 *
 * The figures never depend on which traces later survive (mutes, offset
 * limits, dead traces): they describe the acquisition.
 */
#ifndef TZERO_SURVEY_H
#define TZERO_SURVEY_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/bins.h"
#include "tzero/error.h"
#include "tzero/geometry.h"
#include "tzero/segy.h"

#define SURVEY_MAX_RECORDS 10000000   /* records one survey may hold (GEOMETRY_MAX_SHOTS) */
#define SURVEY_REPEAT_M 0.005         /* source moves and receiver steps below this are
                                       * repeats (headers carry centimetres at best) */

/* The processing line as the user gave it; every part is optional. */
typedef struct survey_line_spec {
  double bin_size_m;            /* 0 = half the receiver interval */
  int has_line;                 /* 1 = origin and azimuth given */
  double origin_x_m, origin_y_m, azimuth_deg;
  const double *node_x, *node_y;  /* crooked line nodes (borrowed); nnodes 0 = straight */
  size_t nnodes;
  int32_t first_cmp;            /* CMP number of the origin's bin */
  double max_off_line_m;        /* 0 = no limit */
  double crooked_smoothing_m;   /* > 0: an automatic crooked line through the midpoints
                                 * with this smoothing length (bins_fitter_solve_crooked);
                                 * needs trace positions (not a layout) */
} survey_line_spec;

/* The acquisition figures (see the top of this header). */
typedef struct survey_figures {
  double receiver_interval_m;   /* 0 when unknown */
  double source_interval_m;     /* 0 when unknown (one shot position) */
  double channels_per_record;
  double nominal_fold;          /* 0 when unknown */
  double shooting_azimuth_deg;  /* degrees clockwise from north */
  int64_t records;              /* records seen (layout: recorded shots) */
  int from_layout;              /* 1 = figures and line from the layout */
  int fitted;                   /* 1 = line fitted through the midpoints */
  bins_fit_report fit;          /* when fitted */
  double receiver_step_median_m;  /* dg before rounding (0 when unknown or from a layout) */
  double source_step_median_m;    /* ds before rounding */
  size_t gaps;                  /* gaps in the shooting found (survey_gaps) */
  int64_t shots_missing;        /* shots missing over all gaps */
} survey_figures;

/* A gap in the shooting between two consecutive records (in file order): the
 * field record numbers skip a number, the source point numbers (bytes 17-20)
 * skip a point, or the source moves by a whole multiple (>= 2) of the source
 * interval along the line. */
enum { SURVEY_GAP_RECORD = 1, SURVEY_GAP_POINT = 2, SURVEY_GAP_POSITION = 4 };
typedef struct survey_gap {
  size_t file_before, file_after;        /* input files (0-based) of the two records */
  int32_t record_before, record_after;   /* field record numbers */
  int32_t point_before, point_after;     /* source point numbers, 0 when not given */
  double x_before_m, y_before_m;         /* sources of the two records */
  double x_after_m, y_after_m;
  double distance_m;                     /* along the line between the two sources */
  int64_t missing;                       /* shots missing: the largest count of the three */
  unsigned flags;                        /* SURVEY_GAP_*: which numbers show the gap */
} survey_gap;

/* A measured interval rounded to a round figure (a multiple of 10^e, 5 10^(e-1),
 * 2.5 10^(e-1) or 10^(e-1), e = floor(log10 v), the first that fits) when it is
 * within 0.5 % of one; otherwise v rounded to the precision q (> 0). */
double survey_round_interval(double v, double q);

typedef struct survey survey;

/* A new inference for geometry source `src` (borrowed; a layout source makes
 * the trace pass unnecessary) and line `spec` (copied, nodes included). */
int survey_new(survey **out, const geometry_source *src, const survey_line_spec *spec,
               tz_err *err);
void survey_free(survey *s);                 /* NULL is a no-op */
/* 1 when survey_finish() needs the traces (no layout), else 0. */
int survey_wants_traces(const survey *s);
/* Adds one trace of input file `file` (0-based, in order) with its header as read
 * and its geometry. A record ends where the file or the field record changes. */
int survey_add(survey *s, size_t file, const segy_trace_header *h, const geometry_trace *g,
               tz_err *err);
/* The figures and the processing line (*line owns a new line: bins_line_free()).
 * Sets the shooting direction of a header or table source (geometry_source_set_
 * direction), so that offsets are signed the SEG-Y way from then on. No
 * receiver interval and no bin size given is TZ_E_FORMAT. */
int survey_finish(survey *s, geometry_source *src, bins_line **line, survey_figures *fig,
                  tz_err *err);
/* The gaps found by survey_finish() (borrowed; valid until survey_free()). A
 * layout's skipped shot points are not listed here (the layout says them). */
const survey_gap *survey_gaps(const survey *s, size_t *n);
/* The position along `line` (bins_loc.along_m) of a station centre chosen so
 * that the records' receivers sit at station centres, in [-(1/2 + 1e-6),
 * 1/2 - 1e-6) intervals; 0 when there are no records (a layout). */
double survey_station_anchor(const survey *s, const bins_line *line, double interval_m);

#endif
