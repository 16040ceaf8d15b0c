/* fit.h -- x^2-t^2 least-squares velocity fit of reflection picks (Green 1938). */
#ifndef TZERO_FIT_H
#define TZERO_FIT_H

#include <stddef.h>
#include "tzero/error.h"

#define FIT_MAX_PICKS 1000000u   /* cap on rows read from a picks table */

/* Straight line t^2 = a + b x^2 fitted by ordinary least squares (Green
 * 1938; Sheriff's Encyclopedic Dictionary, X2-T2 analysis), then t0 = sqrt(a), v = 1/sqrt(b). Goodness of fit: R^2 of the linear
 * fit in the x^2-t^2 domain, and the RMS of the time residuals
 * t_pick - sqrt(t0^2 + x^2/v^2) in milliseconds. */
typedef struct fit_result {
  size_t n;                  /* picks used */
  double intercept_s2;       /* a = t0^2, s^2 */
  double slope_s2_per_m2;    /* b = 1/v^2, s^2/m^2 */
  double t0_s;
  double velocity_mps;
  double r_squared;          /* 1 for a perfect line; 1 also when all t^2 are equal and fitted */
  double rms_residual_ms;
  double max_abs_residual_ms;
} fit_result;

/* Fits n picks (offset in metres, any sign; two-way time in seconds).
 * residual_ms (n values, may be NULL) receives t_pick - t_fit in ms.
 * Errors (TZ_E_ARG): fewer than 2 picks, all picks at the same |offset|, a
 * non-positive slope (no real velocity) or a negative intercept (no real t0). */
int fit_x2t2(const double *offset_m, const double *time_s, size_t n, fit_result *r,
             double *residual_ms, tz_err *err);

/* Reads a picks table: a header row naming the columns `offset_m` and
 * `time_ms` (any order; other columns ignored), then one row per pick.
 * On success *offset_m and *time_s own new arrays of *n values (free()).
 * Errors name the file and line (TZ_E_FORMAT), or TZ_E_NOINPUT. */
int fit_read_picks(const char *path, double **offset_m, double **time_s, size_t *n,
                   tz_err *err);

#endif
