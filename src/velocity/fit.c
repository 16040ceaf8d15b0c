/* fit.c -- x^2-t^2 velocity analysis of reflection picks.
 *
 * Because t^2 = t0^2 + x^2/v^2 is a straight line in X = x^2, Y = t^2, an
 * ordinary least-squares line through the picks gives t0 and v (Green 1938;
 * Sheriff's Encyclopedic Dictionary, "X2-T2 analysis"; Green 1938). The sums are taken about
 * the means (two passes), which keeps the slope accurate when x^2 is ~1e6 m^2
 * and t^2 ~1 s^2. The method is exact only for a constant-velocity overburden;
 * with layering the slope near the origin approximates the RMS velocity.
 *
 * Not here: picking the times (that is the interpreter's job or semblance.c).
 */
#include "tzero/fit.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/table.h"

int fit_x2t2(const double *offset_m, const double *time_s, size_t n, fit_result *r,
             double *residual_ms, tz_err *err)
{
  if (n < 2)
    return tz_fail(err, TZ_E_ARG, "need at least 2 picks for a line, got %zu", n);
  double mx = 0, my = 0;
  for (size_t i = 0; i < n; i++) {
    mx += offset_m[i] * offset_m[i];
    my += time_s[i] * time_s[i];
  }
  mx /= (double)n;
  my /= (double)n;
  double sxx = 0, sxy = 0, syy = 0;
  for (size_t i = 0; i < n; i++) {
    double dx = offset_m[i] * offset_m[i] - mx, dy = time_s[i] * time_s[i] - my;
    sxx += dx * dx;
    sxy += dx * dy;
    syy += dy * dy;
  }
  if (!(sxx > 0))
    return tz_fail(err, TZ_E_ARG, "all picks have the same offset: the slope is undefined");
  double b = sxy / sxx, a = my - b * mx;
  if (!(b > 0))
    return tz_fail(err, TZ_E_ARG,
                   "fitted slope %.6g s^2/m^2 is not positive: time does not increase "
                   "with offset, so no real velocity fits", b);
  if (a < 0)
    return tz_fail(err, TZ_E_ARG,
                   "fitted intercept %.6g s^2 is negative: no real zero-offset time", a);
  memset(r, 0, sizeof *r);
  r->n = n;
  r->intercept_s2 = a;
  r->slope_s2_per_m2 = b;
  r->t0_s = sqrt(a);
  r->velocity_mps = 1.0 / sqrt(b);
  /* R^2 = 1 - SSres/SStot with SSres = syy - b sxy for the least-squares line. */
  double ssres = syy - b * sxy;
  if (ssres < 0)
    ssres = 0;
  r->r_squared = syy > 0 ? 1.0 - ssres / syy : 1.0;
  double ss = 0, mabs = 0;
  for (size_t i = 0; i < n; i++) {
    double tf = sqrt(a + b * offset_m[i] * offset_m[i]);
    double res = (time_s[i] - tf) * 1000.0;
    if (residual_ms)
      residual_ms[i] = res;
    ss += res * res;
    if (fabs(res) > mabs)
      mabs = fabs(res);
  }
  r->rms_residual_ms = sqrt(ss / (double)n);
  r->max_abs_residual_ms = mabs;
  return TZ_OK;
}

static int column_index(const table_reader *t, size_t nf, const char *name)
{
  for (size_t i = 0; i < nf; i++)
    if (!strcmp(table_field(t, i), name))
      return (int)i;
  return -1;
}

int fit_read_picks(const char *path, double **offset_m, double **time_s, size_t *n,
                   tz_err *err)
{
  table_reader *t = NULL;
  double *xo = NULL, *to = NULL;
  size_t cnt = 0, cap = 0, nf;
  int rc = table_open(&t, path, err);
  if (rc)
    return rc;
  rc = table_next(t, &nf, err);
  if (rc)
    goto done;
  if (nf == 0) {
    tz_err_path(err, path);
    rc = tz_fail(err, TZ_E_FORMAT, "empty picks table: expected a header row "
                 "'offset_m,time_ms' and one row per pick");
    goto done;
  }
  int cx = column_index(t, nf, "offset_m"), ct = column_index(t, nf, "time_ms");
  if (cx < 0 || ct < 0) {
    tz_err_path(err, path);
    rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t),
                      "header row must name the columns offset_m and time_ms, got '%s%s%s'",
                      table_field(t, 0), nf > 1 ? "," : "", nf > 1 ? table_field(t, 1) : "");
    goto done;
  }
  for (;;) {
    rc = table_next(t, &nf, err);
    if (rc)
      goto done;
    if (nf == 0)
      break;
    if (cnt == FIT_MAX_PICKS) {
      tz_err_path(err, path);
      rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t), "more than %u picks",
                        FIT_MAX_PICKS);
      goto done;
    }
    if (cnt == cap) {
      size_t nc = cap ? cap * 2 : 64;
      double *nx = realloc(xo, nc * sizeof *nx);
      if (!nx) {
        rc = tz_fail(err, TZ_E_NOMEM, "picks");
        goto done;
      }
      xo = nx;
      double *nt = realloc(to, nc * sizeof *nt);
      if (!nt) {
        rc = tz_fail(err, TZ_E_NOMEM, "picks");
        goto done;
      }
      to = nt;
      cap = nc;
    }
    double x, tm;
    if ((size_t)cx >= nf || (size_t)ct >= nf) {
      tz_err_path(err, path);
      rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t), "row has %zu fields, expected %d",
                        nf, (cx > ct ? cx : ct) + 1);
      goto done;
    }
    rc = table_field_f64(t, (size_t)cx, "offset_m", &x, err);
    if (!rc)
      rc = table_field_f64(t, (size_t)ct, "time_ms", &tm, err);
    if (rc)
      goto done;
    if (tm < 0) {
      tz_err_path(err, path);
      rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t),
                        "column time_ms: two-way time %g ms is negative", tm);
      goto done;
    }
    xo[cnt] = x;
    to[cnt] = tm / 1000.0;
    cnt++;
  }
  *offset_m = xo;
  *time_s = to;
  *n = cnt;
  xo = to = NULL;
done:
  free(xo);
  free(to);
  table_close(t);
  return rc;
}
