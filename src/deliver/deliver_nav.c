/* deliver_nav.c -- the navigation file: one row per trace of the section.
 *
 * Every value is the one the section's trace header stores (stack_section_header,
 * the same function stack_section_write encodes), rounded as the header's scalar
 * rounds it (SEG-Y rev 1 (2002) trace header bytes 69-72 and 201-202: -100 keeps
 * centimetres and hundredths of a shot point), so the file and the headers agree
 * to the last digit written.
 *
 * Not here: the section itself (stack_collect.c).
 */
#include "tzero/deliver.h"

#include <math.h>
#include <stdio.h>

#include "tzero/fileio.h"

/* A value as a header slot with this scalar stores it, back in its units. */
static double stored(double v, int16_t scalar)
{
  if (scalar < 0)
    return nearbyint(v * -(double)scalar) / -(double)scalar;
  if (scalar > 0)
    return nearbyint(v / scalar) * scalar;
  return nearbyint(v);
}

int deliver_navigation_write(const stack_section *s, const stack_plan *p, const char *path,
                             tz_err *err)
{
  fileio_out *out = NULL;
  int rc = fileio_create(&out, path, err);
  if (rc)
    return rc;
  FILE *fp = fileio_stream(out);
  int bad = fputs("cmp,shot_point,x_m,y_m,surface_elevation_m,datum_m,fold\n", fp) == EOF;
  for (size_t c = 0; c < s->ncmps && !bad; c++) {
    segy_trace_header h;
    stack_section_header(s, p, c, &h);
    double sp = h.shotpoint_scalar < 0 ? h.shotpoint / -(double)h.shotpoint_scalar
              : h.shotpoint_scalar > 0 ? (double)h.shotpoint * h.shotpoint_scalar
                                       : (double)h.shotpoint;
    bad = fprintf(fp, "%d,%.2f,%.2f,%.2f,%.2f,%.2f,%d\n", (int)h.cmp, sp,
                  stored(h.cmp_x, h.coord_scalar), stored(h.cmp_y, h.coord_scalar),
                  stored(h.source_elev, h.elev_scalar), stored(h.source_datum, h.elev_scalar),
                  (int)h.stacked_traces) < 0;
  }
  if (bad) {
    rc = fileio_fail(out, -1, err);
    fileio_abort(out);
    return rc;
  }
  return fileio_commit(out, err);
}
