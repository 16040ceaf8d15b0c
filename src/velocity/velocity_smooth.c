/* velocity_smooth.c -- lateral smoothing of a velocity table between its control CMPs.
 *
 * Automatic picks scatter from one analysis CMP to the next (noise, a weak event
 * picked at one CMP and missed at the next). Smoothing over N CMPs replaces, at
 * each control CMP and each of its own knot times, the velocity by the mean of
 * the functions of every control CMP within N CMP numbers of it, each function
 * read at that time as the stack reads it (linear between knots, held outside).
 * Knot times and control CMPs stay as they were (the low-fold list is not
 * copied: the caller sets it), so the smoothed table reads like the one picked. A mean of functions that never
 * decrease never decreases, so the picker's monotonic rule survives.
 *
 * Not here: the picks themselves (semblance.c), reading and writing (velocity.c).
 */
#include "tzero/velocity.h"

#include <math.h>
#include <stdlib.h>

int velocity_table_smooth_cmps(const velocity_table *in, int64_t half_width_cmps,
                               velocity_table **out, tz_err *err)
{
  *out = NULL;
  if (half_width_cmps < 0)
    return tz_fail(err, TZ_E_ARG, "smoothing over %lld CMPs: expected 0 or more",
                   (long long)half_width_cmps);
  int eta = velocity_table_has_eta(in);
  velocity_table *t = NULL;
  int rc = velocity_table_new(&t, eta, err);
  size_t nc = velocity_table_ncmps(in);
  for (size_t i = 0; !rc && i < nc; i++) {
    int64_t ci = velocity_table_cmp(in, i);
    for (size_t k = 0; !rc && k < velocity_table_nknots(in, i); k++) {
      double ts, vs, es;
      velocity_table_knot(in, i, k, &ts, &vs, &es);
      double sv = 0, se = 0;
      size_t m = 0;
      for (size_t j = 0; j < nc; j++) {   /* fixed order: the same sum every run */
        int64_t cj = velocity_table_cmp(in, j);
        if (llabs(cj - ci) > half_width_cmps)
          continue;
        double e = 0;
        sv += velocity_at(in, cj, ts, &e);
        se += e;
        m++;
      }
      rc = velocity_table_add(t, ci, ts, m ? sv / (double)m : vs, m ? se / (double)m : es, err);
    }
  }
  if (rc) {
    velocity_table_free(t);
    return rc;
  }
  *out = t;
  return TZ_OK;
}
