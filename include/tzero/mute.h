/* mute.h -- top, inner (cone) and bottom mutes that vary along the line.
 *
 * A mute of one kind is a set of control CMPs, each with an offset-time
 * polyline (absolute offset m, recorded time ms at the processing datum). At
 * one offset the mute time is linear between the polyline's points and
 * constant beyond its first and last point; between two control CMPs it is
 * linear in CMP number at equal offset, and constant beyond the first and the
 * last control (the rule of the velocity table, docs/job-file.md "Mutes").
 *
 *   top     samples earlier than the time are zeroed
 *   inner   a cone: samples between time_ms and time_end_ms are zeroed (ground
 *           roll and other linear-moveout noise); time_ms <= time_end_ms
 *   bottom  samples later than the time are zeroed
 *
 * A top mute may also follow the first breaks: each trace is muted down to its
 * own pick plus a pad (picks file of `tzero firstbreaks`; a missing pick is
 * interpolated in signed offset between the record's nearest picks on the same
 * side of the source). With a polyline too, the later of the two wins.
 *
 * Usage: the job module builds a mute_set (mute_set_new, mute_set_add,
 * mute_picks_load); anyone then calls mute_eval() per trace. A built set is
 * read-only and may be shared by threads. Nothing here touches samples: the
 * NMO module zeroes them (nmo.h).
 */
#ifndef TZERO_MUTE_H
#define TZERO_MUTE_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"

#define MUTE_MAX_POINTS 256          /* points of one polyline */
#define MUTE_MAX_CONTROLS 100000     /* control CMPs of one kind */

enum mute_kind { MUTE_TOP = 0, MUTE_INNER, MUTE_BOTTOM, MUTE__KINDS };

/* One point of a polyline. time_end_ms is the late edge of the inner cone and
 * is ignored by the other kinds. */
typedef struct mute_point {
  double offset_m, time_ms, time_end_ms;
} mute_point;

typedef struct mute_control {
  int32_t cmp;
  size_t n;                  /* points, offsets strictly increasing */
  mute_point *p;             /* owned by the set */
} mute_control;

/* The controls of one kind, CMPs strictly increasing; n = 0: no mute of the kind. */
typedef struct mute_surface {
  size_t n;
  mute_control *c;           /* owned by the set */
} mute_surface;

typedef struct mute_pick {
  int32_t record, channel;
  double offset_m;           /* signed, as in the picks file */
  double time_ms;
} mute_pick;

typedef struct mute_set {
  mute_surface kind[MUTE__KINDS];
  double taper_ms;           /* raised-cosine ramp on the kept side of every edge */
  double after_first_break_ms;   /* pad after the pick; NAN: the top ignores picks */
  size_t npicks;             /* sorted by record, then signed offset */
  mute_pick *picks;          /* owned */
  int picks_field_times;     /* 1: the picks file holds field times (the trace's
                              * static is added), 0: processing-datum times */
  char *picks_path;          /* owned; NULL without picks */
} mute_set;

/* On success *out owns an empty set (taper_ms 10, no first breaks):
 * mute_set_free(). */
int mute_set_new(mute_set **out, tz_err *err);
void mute_set_free(mute_set *m);                 /* NULL is a no-op */
/* 1 when the set mutes anything (any kind has controls, or the top follows picks). */
int mute_set_active(const mute_set *m);

/* Appends a control of `kind` at `cmp` with n points (copied). Checks, with
 * TZ_E_ARG and a message naming the control and point (the caller prefixes
 * its path): cmp after the previous control's, 1 <= n <= MUTE_MAX_POINTS,
 * offsets >= 0 and strictly increasing, times finite, and for the inner kind
 * time_ms <= time_end_ms (a cone that is not inverted). On failure *which
 * (may be NULL) gets 0 for the CMP order, 1 for the points. */
int mute_set_add(mute_set *m, int kind, int32_t cmp, const mute_point *p, size_t n,
                 int *which, tz_err *err);

/* Reads a mute file (CSV, '#' comments, a header row naming cmp, offset_m,
 * time_ms, and for the inner kind time_end_ms; more columns allowed) into the
 * set's controls of `kind`: rows grouped by cmp in increasing order, offsets
 * increasing within a CMP. TZ_E_FORMAT naming the file and line. */
int mute_file_load(mute_set *m, int kind, const char *path, tz_err *err);

/* Reads the first-break picks (the picks file of `tzero firstbreaks`:
 * record, channel, offset_m, time_ms columns; a first comment line saying
 * "field times" marks picks taken before statics) and sets the pad. */
int mute_picks_load(mute_set *m, const char *path, double pad_ms, tz_err *err);

/* The trace a mute is evaluated for. */
typedef struct mute_trace {
  int32_t cmp;
  int32_t record, channel;   /* field record and channel (first-break picks) */
  double offset_m;           /* signed or absolute: the polylines use |offset| */
  double static_ms;          /* total static the chain applied (moves field-time
                              * picks to the processing datum) */
} mute_trace;

/* Mute times (ms, processing datum) of one trace. A kind the set lacks gives
 * top -INFINITY, inner NAN (both edges), bottom +INFINITY. */
typedef struct mute_times {
  double top_ms;
  double inner_from_ms, inner_to_ms;
  double bottom_ms;
} mute_times;

/* The mute times of trace t. m may be NULL (no mutes). Allocates nothing. */
void mute_eval(const mute_set *m, const mute_trace *t, mute_times *out);

/* One kind's polyline time at (cmp, |offset|); for MUTE_INNER the early edge
 * (end = 0) or the late edge (end = 1). NAN when the kind has no controls. */
double mute_surface_time(const mute_surface *s, int32_t cmp, double offset_m, int end);

/* The first-break pick of a trace at the processing datum (pad not added), or
 * NAN when its record has no pick. */
double mute_first_break_ms(const mute_set *m, const mute_trace *t);

const char *mute_kind_name(int kind);            /* "top", "inner", "bottom" */

#endif
