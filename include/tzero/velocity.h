/* velocity.h -- stacking-velocity tables: read, validate, write, sample at a CMP, Dix.
 *
 * A table holds, for each control CMP, a list of knots (two-way zero-offset time,
 * RMS/stacking velocity, optional eta). Sampling rules (docs/velocity-table.md):
 * linear in time between knots and constant outside them; linear in CMP number
 * between control CMPs at equal time and constant outside them.
 * Times are seconds in this API; the file stores milliseconds.
 * Tables are read-only once built: one table may be shared by many threads.
 */
#ifndef TZERO_VELOCITY_H
#define TZERO_VELOCITY_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include "tzero/error.h"

/* Named caps on what a file may size (checked before allocation grows). */
#define VELOCITY_MAX_KNOTS 10000000 /* rows in one table */
/* Anellipticity accepted in the eta column: -0.5 < eta <= VELOCITY_MAX_ETA
 * (eta <= -0.5 makes the fourth-order denominator vanish). */
#define VELOCITY_MAX_ETA 1.0
/* Velocities must lie in [VELOCITY_MIN_MPS, VELOCITY_MAX_MPS] and times in
 * [0, VELOCITY_MAX_TIME_MS]: far beyond any seismic velocity or record length, but
 * inside single precision, so sampled values never overflow or vanish. */
#define VELOCITY_MIN_MPS 1.0
#define VELOCITY_MAX_MPS 1.0e5
#define VELOCITY_MAX_TIME_MS 1.0e7
/* Control CMP numbers lie in [-VELOCITY_MAX_CMP, VELOCITY_MAX_CMP], the range a
 * job allows for CMP numbers, so that differences of CMP numbers in the
 * interpolation between control CMPs cannot overflow. */
#define VELOCITY_MAX_CMP 1000000000

typedef struct velocity_table velocity_table;

/* Reads a table file (format of docs/velocity-table.md). On success *out
 * owns a new table: release it with velocity_table_free(). On failure *out is left
 * untouched and err names the file and line (TZ_E_FORMAT for an invalid table,
 * TZ_E_NOINPUT for a missing file). */
int velocity_table_load(velocity_table **out, const char *path, tz_err *err);
/* Same, from text in memory; `name` is used in messages. The text is not retained. */
int velocity_table_parse(velocity_table **out, const char *name, const char *text,
                         size_t len, tz_err *err);
/* A table that is v_mps everywhere (constant-velocity stacks, trial velocities).
 * v_mps must be finite and > 0 (else TZ_E_ARG). *out owns the table. */
int velocity_table_constant(velocity_table **out, double v_mps, tz_err *err);

/* Building a table in code (e.g. from semblance picks). `with_eta` != 0 gives the
 * table an eta column. *out owns an empty table. */
int velocity_table_new(velocity_table **out, int with_eta, tz_err *err);
/* Appends one knot, with the same rules as the file: rows grouped by CMP, time
 * strictly increasing within a CMP, velocity > 0, a CMP group never reappears.
 * `eta` is ignored when the table has no eta column. TZ_E_ARG on a rule broken. */
int velocity_table_add(velocity_table *t, int64_t cmp, double time_s, double velocity_mps,
                       double eta, tz_err *err);

void velocity_table_free(velocity_table *t);    /* NULL is a no-op */

/* Analysis CMPs that gave no pick for lack of fold (tzero semblance --min-fold).
 * The writer lists them in a comment before the header,
 * "# no pick for lack of fold (fewer than N live traces ...): CMP 1-3, 9",
 * and the reader takes them back from it, so the stack's QC report can count
 * them among its velocity warnings. */
#define VELOCITY_LOW_FOLD_NOTE "no pick for lack of fold"
#define VELOCITY_MAX_LOW_FOLD 100000u
int velocity_table_set_low_fold(velocity_table *t, const int64_t *cmps, size_t n,
                                size_t min_fold, tz_err *err);
/* The list (borrowed) and its length; 0 when none. */
size_t velocity_table_low_fold(const velocity_table *t, const int64_t **cmps);

/* Lateral smoothing (velocity_smooth.c): a new table with the same control CMPs
 * and knot times, each knot's velocity (and eta) the mean over the control CMPs
 * within half_width_cmps CMP numbers of its own of their functions at its time.
 * 0 copies the table. *out owns it; the low-fold list is not copied. */
int velocity_table_smooth_cmps(const velocity_table *in, int64_t half_width_cmps,
                               velocity_table **out, tz_err *err);

/* Writes the table in the file format (header line, then rows in table order).
 * velocity_table_write() goes through a temporary file renamed into place. */
int velocity_table_write(const velocity_table *t, const char *path, tz_err *err);
int velocity_table_write_stream(const velocity_table *t, FILE *fp, const char *name,
                                tz_err *err);

/* Queries. Control CMPs are in table order, which is file order (not sorted). */
size_t velocity_table_ncmps(const velocity_table *t);
int64_t velocity_table_cmp(const velocity_table *t, size_t i);        /* i < ncmps */
size_t velocity_table_nknots(const velocity_table *t, size_t i);      /* knots of CMP i */
/* Knot k of control CMP i; any output pointer may be NULL. eta is 0 without a column. */
void velocity_table_knot(const velocity_table *t, size_t i, size_t k, double *time_s,
                         double *velocity_mps, double *eta);
int velocity_table_has_eta(const velocity_table *t);
/* 1-based file line of knot k of CMP i (0 for tables built in code). */
int64_t velocity_table_knot_line(const velocity_table *t, size_t i, size_t k);
/* The path or name the table came from ("" if built in code); borrowed. */
const char *velocity_table_source(const velocity_table *t);
/* SHA-256 (64 hex characters) of the table's bytes as read, "" for a table not
 * read from text (velocity_table_constant); borrowed. */
const char *velocity_table_sha256(const velocity_table *t);

/* Samples the function of `cmp` onto the regular axis t_i = t_first_s + i dt_s,
 * i = 0..ns-1, writing vel_mps[i] (and eta[i] when eta is not NULL; 0 without an
 * eta column). Follows the rules at the top of this file exactly. Cost is one
 * walk over the knots of the (at most two) bracketing control CMPs plus O(ns);
 * call it once per CMP and reuse the arrays for every trace of that CMP.
 * Preconditions: dt_s > 0; arrays hold ns values. Thread-safe on a shared table. */
void velocity_sample(const velocity_table *t, int64_t cmp, double t_first_s, double dt_s,
                     size_t ns, float *vel_mps, float *eta);
/* The velocity (and eta when not NULL) of `cmp` at one time. */
double velocity_at(const velocity_table *t, int64_t cmp, double time_s, double *eta);

/* ---- Dix (1955) conversion ---- */

/* One interval between consecutive knots of an RMS function. Interval k spans
 * (t_top_s, t_base_s] with t_top_s = time of knot k-1 (0 for k = 0). For k = 0 the
 * interval velocity is the first RMS velocity (the layer from the surface). */
typedef struct velocity_interval {
  double t_top_s, t_base_s;   /* two-way zero-offset times */
  double v_rms_top_mps;       /* RMS velocity at the top (0 for k = 0 from t = 0) */
  double v_rms_base_mps;
  double v_int_sq;            /* Dix V_int^2 in m^2/s^2; <= 0 means imaginary */
  double v_int_mps;           /* sqrt(v_int_sq), or NAN when imaginary (flagged) */
  double z_top_m, z_base_m;   /* depth from time; NAN at and below an imaginary interval */
  int imaginary;              /* 1 when v_int_sq <= 0: no real interval velocity */
} velocity_interval;

/* Dix interval velocities for n knots (t_s strictly increasing, t_s[0] >= 0,
 * v_rms > 0). Fills out[0..n-1]. An imaginary interval is not an error: it is
 * flagged (imaginary = 1, v_int_mps = NAN) and depths below it are NAN.
 * TZ_E_ARG for non-increasing times or non-positive velocities. A knot at t = 0
 * gives a zero-thickness first interval with v_int = v_rms[0]. */
int velocity_dix(const double *t_s, const double *v_rms_mps, size_t n,
                 velocity_interval *out, tz_err *err);
/* Inverse: RMS velocities at the base of each interval from interval velocities,
 * V_rms,n^2 = (1/t_n) sum_k v_k^2 (t_k - t_{k-1}) with t_{-1} = 0 (Taner and
 * Koehler 1969). t_s strictly increasing, t_s[0] > 0 (or a
 * zero first time, whose RMS is v_int[0]). */
int velocity_rms_from_interval(const double *t_s, const double *v_int_mps, size_t n,
                               double *v_rms_mps, tz_err *err);
/* Depth at two-way time t_s from the intervals of velocity_dix() (interval velocity
 * constant inside each interval; below the last knot the last interval velocity
 * continues). NAN when an imaginary interval lies above t_s. */
double velocity_depth(const velocity_interval *iv, size_t n, double t_s);

/* ---- Checks: warnings as data, never printed ---- */

typedef enum {
  VELOCITY_WARN_IMAGINARY = 1, /* Dix V_int^2 <= 0: V_rms^2 t does not increase */
  VELOCITY_WARN_LOW,           /* interval velocity below the plausible minimum */
  VELOCITY_WARN_HIGH,          /* interval velocity above the plausible maximum */
  VELOCITY_WARN_INVERSION,     /* RMS velocity decreases with time at this knot */
  VELOCITY_WARN_OUTSIDE        /* a control CMP outside the line's CMP range */
} velocity_warning_kind;

typedef struct velocity_warning {
  int kind;                    /* velocity_warning_kind */
  int64_t cmp;                 /* control CMP */
  int64_t line;                /* file line of the knot at the interval base (0 if none) */
  double t_top_s, t_base_s;    /* the interval concerned */
  double value;                /* V_int (m/s), V_int^2 (imaginary), or the RMS drop (m/s) */
  char msg[200];               /* one line, no trailing newline */
} velocity_warning;

/* Plausible interval velocities (common practice: dry near-surface soil is rarely
 * below 300 m/s; few rocks exceed 7000 m/s). */
#define VELOCITY_PLAUSIBLE_MIN_MPS 300.0
#define VELOCITY_PLAUSIBLE_MAX_MPS 7000.0

/* Runs Dix on every control CMP and collects warnings. On success *out owns an
 * array of *n warnings (free() it; NULL when *n is 0). min/max <= 0 take the
 * defaults above. */
int velocity_check(const velocity_table *t, double min_mps, double max_mps,
                   velocity_warning **out, size_t *n, tz_err *err);
const char *velocity_warning_name(int kind);   /* "imaginary", "low", ... never NULL */
/* Appends to *out (n warnings; realloc'd, the caller frees it) one
 * VELOCITY_WARN_OUTSIDE warning ("outside_line") per control CMP outside
 * [first_cmp, last_cmp], the line's CMPs: a typo (200 -> 2000) would otherwise
 * pass, the line's CMPs taking the nearest control CMPs' function instead. A
 * table of one control CMP (one function held along the whole line) gives none. */
int velocity_check_cmp_range(const velocity_table *t, int64_t first_cmp, int64_t last_cmp,
                             velocity_warning **out, size_t *n, tz_err *err);

#endif
