/* deliver_velocity.c -- velocities with coordinates: the stacking velocities of a
 * line at its CMP positions, with Dix interval velocities, for an interpreter's
 * depth conversion or a velocity model.
 *
 * Coordinates and shot points are the section's (the bin centre and the field
 * shot point interpolated along the line, rounded as the section's trace header
 * stores them, scalar -100); velocities between control CMPs are sampled as the
 * stack samples them (velocity_at). Interval velocities by Dix (1955),
 * "Seismic velocities from surface measurements", Geophysics 20(1), 68-86:
 * V_int,n^2 = (V_n^2 t_n - V_n-1^2 t_n-1) / (t_n - t_n-1) (velocity_dix).
 *
 * Not here: the table itself (velocity.c), `tzero velocity intervals` (per
 * control CMP, without coordinates).
 */
#include "tzero/deliver.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/fileio.h"

#define MAX_EXPORT_ROWS 50000000   /* rows one export writes */

/* One CMP: its rows from n (time, RMS) knots. */
static int rows_at(FILE *fp, const stack_plan *p, int32_t cmp, const double *ts,
                   const double *vs, size_t n, velocity_interval *iv, int64_t *rows,
                   int64_t *imag, tz_err *err)
{
  int rc = velocity_dix(ts, vs, n, iv, err);
  if (rc)
    return rc;
  stack_cmp_plan cp;
  stack_plan_cmp(p, cmp, &cp);
  double sp = cmp, elev = 0;
  if (!(stack_plan_cmp_surface(p, cmp, &sp, &elev) & 1) || !(fabs(sp) * 100 < 2147483647.0))
    sp = cmp;
  sp = nearbyint(sp * 100) / 100;
  double x = nearbyint(cp.x_m * 100) / 100, y = nearbyint(cp.y_m * 100) / 100;
  for (size_t k = 0; k < n; k++) {
    char vint[32] = "";
    if (iv[k].imaginary)
      (*imag)++;
    else
      snprintf(vint, sizeof vint, "%.2f", iv[k].v_int_mps);
    if (fprintf(fp, "%d,%.2f,%.2f,%.2f,%.3f,%.2f,%s\n", (int)cmp, sp, x, y, ts[k] * 1000,
                vs[k], vint) < 0)
      return TZ_E_IO;                /* the caller adds the OS reason */
    (*rows)++;
  }
  return TZ_OK;
}

int deliver_velocity_export(const stack_plan *p, const velocity_table *v, int64_t every,
                            const char *path, int64_t *nrows, int64_t *imaginary, tz_err *err)
{
  size_t nc = velocity_table_ncmps(v), all = 0, maxk = 0;
  for (size_t i = 0; i < nc; i++) {
    size_t k = velocity_table_nknots(v, i);
    all += k;
    if (k > maxk)
      maxk = k;
  }
  if (!nc || !all)
    return tz_fail(err, TZ_E_ARG, "the velocity table has no control CMPs");
  int32_t first = stack_plan_first_cmp(p), last = stack_plan_last_cmp(p);
  if (every < 0)
    return tz_fail(err, TZ_E_ARG, "every %lld CMPs: must be > 0", (long long)every);
  if (every > 0 && (double)((last - first) / every + 1) * (double)maxk > MAX_EXPORT_ROWS)
    return tz_fail(err, TZ_E_ARG, "every %lld CMPs over CMPs %d-%d at up to %zu times is "
                   "more than %d rows", (long long)every, (int)first, (int)last, maxk,
                   MAX_EXPORT_ROWS);
  size_t cap = maxk;
  double *ts = malloc(cap * sizeof *ts), *vs = malloc(cap * sizeof *vs);
  velocity_interval *iv = malloc(cap * sizeof *iv);
  fileio_out *out = NULL;
  int rc = TZ_OK;
  int64_t rows = 0, imag = 0;
  if (!ts || !vs || !iv) {
    rc = tz_fail(err, TZ_E_NOMEM, "%zu velocity knots", cap);
    goto done;
  }
  if ((rc = fileio_create(&out, path, err)))
    goto done;
  FILE *fp = fileio_stream(out);
  if (fputs("cmp,shot_point,x_m,y_m,time_ms,rms_mps,interval_mps\n", fp) == EOF) {
    rc = fileio_fail(out, -1, err);
    goto done;
  }
  if (every == 0) {
    for (size_t i = 0; i < nc && !rc; i++) {
      size_t n = velocity_table_nknots(v, i);
      for (size_t k = 0; k < n; k++)
        velocity_table_knot(v, i, k, &ts[k], &vs[k], NULL);
      int64_t c = velocity_table_cmp(v, i);
      if (c < INT32_MIN || c > INT32_MAX) {
        rc = tz_fail(err, TZ_E_ARG, "control CMP %lld is beyond the section's numbering",
                     (long long)c);
        break;
      }
      rc = rows_at(fp, p, (int32_t)c, ts, vs, n, iv, &rows, &imag, err);
    }
  } else {
    /* at the knot times of the nearest control CMP (the lower of two as near): the
     * same number of layers as the picks, without the slivers a union of every
     * control's times would make; the velocity at each time is the stack's */
    size_t i = 0;
    for (int64_t c = first; c <= last && !rc; c += every) {
      while (i + 1 < nc && velocity_table_cmp(v, i + 1) - c < c - velocity_table_cmp(v, i))
        i++;
      size_t n = velocity_table_nknots(v, i);
      for (size_t k = 0; k < n; k++) {
        velocity_table_knot(v, i, k, &ts[k], NULL, NULL);
        vs[k] = velocity_at(v, c, ts[k], NULL);
      }
      rc = rows_at(fp, p, (int32_t)c, ts, vs, n, iv, &rows, &imag, err);
    }
  }
  if (rc) {
    if (rc == TZ_E_IO && err->status == TZ_OK)
      rc = fileio_fail(out, -1, err);
    goto done;
  }
  rc = fileio_commit(out, err);
  out = NULL;
  if (!rc && nrows)
    *nrows = rows;
  if (!rc && imaginary)
    *imaginary = imag;
done:
  fileio_abort(out);
  free(ts);
  free(vs);
  free(iv);
  return rc;
}
