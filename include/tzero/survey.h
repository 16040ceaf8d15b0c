/* survey.h -- what the acquisition was and which processing line follows from it,
 * inferred once for every command (`tzero geometry`, the stack plan, ...).
 *
 * From a header pass (one survey_add() per trace, in file order) or from a
 * layout, survey_finish() gives the acquisition figures:
 *   receiver interval dg  median of the per-record medians of the distance
 *                         between consecutive channels, rounded to the
 *                         coordinates' precision (headers: cm, tables: mm);
 *   source interval ds    median distance between the sources of consecutive
 *                         records (moves under 5 mm are repeats, not moves),
 *                         rounded the same way;
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
} survey_figures;

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

#endif
