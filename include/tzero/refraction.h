/* refraction.h -- delay-time refraction statics: two-layer formulas, the
 * two-segment (direct wave / head wave) fit and the all-stations delay-time
 * solution by sparse least squares.
 *
 * Formulas (Sheriff and Geldart 1995, Exploration Seismology, 2nd ed., the
 * refraction chapter; Gardner 1939 and Barry 1967 for the delay-time method):
 * critical angle i_c = asin(v0 / v1); head-wave time t = x / v1 + t_i with
 * intercept t_i = 2 h cos(i_c) / v0; station delay delta = h cos(i_c) / v0, so
 * that for a gently varying refractor t = delta_source + delta_receiver + x / v1;
 * crossover distance x_c = 2 h sqrt((v1 + v0) / (v1 - v0)); thickness from a
 * delay h = delta v0 v1 / sqrt(v1^2 - v0^2).
 *
 * Units: metres, m/s and milliseconds. A refraction_solution is a plain value
 * once made and may be shared read-only.
 */
#ifndef TZERO_REFRACTION_H
#define TZERO_REFRACTION_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"

#define REFRACTION_MAX_PICKS 50000000u     /* picks one solution may use */
#define REFRACTION_MAX_STATIONS 1000000u   /* distinct stations */
#define REFRACTION_MAX_CELLS 1000000u      /* refractor velocity cells along the line */

/* ---- two-layer formulas (flat layers, v1 > v0 > 0, h >= 0) ---- */
double refraction_critical_angle_deg(double v0_mps, double v1_mps);
double refraction_intercept_ms(double h_m, double v0_mps, double v1_mps);
double refraction_delay_ms(double h_m, double v0_mps, double v1_mps);
double refraction_crossover_m(double h_m, double v0_mps, double v1_mps);
double refraction_thickness_m(double delay_ms, double v0_mps, double v1_mps);
/* Static (ms) from the surface at elevation_m down through h_m of weathering at
 * v0 and on to datum_m through the replacement medium at vr:
 * -(h / v0 + (E - h - D) / vr). A datum above the weathering base gives a
 * positive replacement term, as the formula says. */
double refraction_datum_static_ms(double elevation_m, double h_m, double v0_mps,
                                  double datum_m, double vr_mps);

/* ---- two-segment fit of first arrivals against absolute offset ----
 * t = a0 + x s0 for x below the break (direct wave), t = t_i + x s1 above it
 * (head wave), each fitted by least squares; the break is the one that
 * minimises the total squared misfit (at least min_points on each side); the
 * crossover is where the two lines meet. */
typedef struct refraction_two_segments {
  size_t n_direct, n_head;       /* points on each side of the break */
  double direct_mps;             /* 1 / s0 (NAN when n_direct < 2) */
  double direct_intercept_ms;    /* a0 */
  double refractor_mps;          /* 1 / s1 */
  double intercept_ms;           /* t_i */
  double crossover_m;            /* intersection; NAN when there is no direct segment */
  double break_offset_m;         /* first offset of the head-wave segment */
  double rms_ms;                 /* misfit of both lines */
} refraction_two_segments;

/* offset_m are absolute offsets; n >= 2 * min_points (min_points >= 2).
 * TZ_E_ARG when there are too few points or the slopes are not a slow direct
 * segment over a faster refractor. */
int refraction_fit_two_segments(const double *offset_m, const double *time_ms, size_t n,
                                size_t min_points, refraction_two_segments *out, tz_err *err);

/* ---- delay-time solution ---- */

/* One first-arrival pick: where its source and receiver are (station numbers
 * and along-line positions) and its time. */
typedef struct refraction_pick {
  int32_t source_station, receiver_station;
  double source_along_m, receiver_along_m;
  double time_ms;
  double weight;                 /* > 0 (quality); 1 for equal weights */
} refraction_pick;

typedef struct refraction_params {
  double cell_m;                 /* refractor velocity cell length along the line (> 0;
                                  * usually the station interval) */
  double smoothing;              /* weight of the first-difference rows tying the
                                  * slowness of neighbouring cells (default 1; 0 = none) */
  double reject_ms;              /* after a first solve, picks whose residual exceeds
                                  * max(reject_ms, 3 x RMS) are dropped and the system
                                  * solved again (default 4; 0 = keep all) */
  int separate_sources;          /* 1: every source station its own delay, tied to the
                                  * receivers beside it; 0 (default): a source shares the
                                  * delay of the receiver station of its number when it
                                  * stands within a quarter cell of it (else it has its
                                  * own, tied to the receivers beside it) */
} refraction_params;

void refraction_params_init(refraction_params *p);

enum refraction_kind { REFRACTION_SOURCE = 0, REFRACTION_RECEIVER = 1 };

typedef struct refraction_station {
  int kind;                      /* enum refraction_kind */
  int32_t station;
  double along_m;
  double delay_ms;
  double refractor_mps;          /* smoothed refractor velocity under the station */
  size_t picks;                  /* picks that used this station (after rejection) */
  double residual_rms_ms;        /* RMS residual of those picks (NAN when none) */
} refraction_station;

typedef struct refraction_solution {
  size_t nstations;              /* sources first (by station), then receivers */
  refraction_station *stations;  /* owned */
  size_t ncells;
  double cell_m, first_cell_m;   /* cell c spans [first + c cell, first + (c+1) cell) */
  double *cell_mps;              /* refractor velocity per cell (owned) */
  size_t picks_used, picks_rejected;
  double residual_rms_ms;        /* over the picks used */
  double *residual_ms;           /* per input pick (NAN for rejected ones); owned */
  size_t iterations;             /* LSQR iterations of the last solve */
} refraction_solution;

/* Solves t = delay(source) + delay(receiver) + sum over cells of length x
 * slowness for every station and cell at once (LSQR with column scaling), the
 * refractor path running between the two positions along the line. Every pick
 * should be in the refractor's offset range. TZ_E_ARG for non-finite values or
 * no picks; a station whose delays the picks cannot separate gets the
 * minimum-norm split. On success *out owns the solution:
 * refraction_solution_free(). */
int refraction_solve(const refraction_params *p, const refraction_pick *picks, size_t n,
                     refraction_solution **out, tz_err *err);
void refraction_solution_free(refraction_solution *s);   /* NULL is a no-op */
/* The station of a kind, or NULL. */
const refraction_station *refraction_find(const refraction_solution *s, int kind,
                                          int32_t station);

#endif
