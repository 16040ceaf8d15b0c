/* statics.h -- field (elevation) statics, station numbers and station statics tables.
 *
 * Sign rule (docs/statics.md): a static is the time added to the trace's time
 * axis; a negative static moves the data earlier. A trace's total static is its
 * source station's static plus its receiver station's. Times are in
 * milliseconds, as doubles; header slots (bytes 99-104) get them through the
 * time scalar of bytes 215-216.
 *
 * Station numbers come from the position along the processing line: the
 * station of a point at distance s along the line from its origin is
 * round(s / interval) (statics_station_number); the same rule numbers every
 * run of the same line, so a table written by one run applies to the next.
 *
 * Station statics table (CSV, table.h): header row with at least the columns
 * kind,station,x_m,y_m,elevation_m,static_ms (any order, more allowed); kind
 * is "source" or "receiver". Read by statics_table_load(), written by
 * statics_table_write(); errors name the file and line.
 */
#ifndef TZERO_STATICS_H
#define TZERO_STATICS_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"

#define STATICS_MAX_ROWS 10000000       /* rows of one station table */
#define STATICS_MAX_MS 10000.0          /* |static| a table or a formula may give, ms */

enum statics_kind { STATICS_SOURCE = 0, STATICS_RECEIVER = 1 };
const char *statics_kind_name(int kind);  /* "source" / "receiver" */

/* ---- formulas (docs/statics.md; common practice, Sheriff and Geldart 1995) ---- */

/* Elevation static of a station at elevation E to datum D through the
 * replacement velocity v_r: -(E - D) / v_r, in ms. */
double statics_elevation_ms(double elevation_m, double datum_m, double v_r_mps);
/* With a weathering layer of thickness h and velocity v_w under the station:
 * -(h / v_w + (E - h - D) / v_r), in ms. */
double statics_weathered_ms(double elevation_m, double thickness_m, double v_w_mps,
                            double datum_m, double v_r_mps);
/* Source term of a source at depth d below the surface E in a layer of
 * weathering thickness h: the time from the source to the datum, negated:
 * -((h - d) / v_w + (E - h - D) / v_r) when d < h, else -((E - d - D) / v_r). */
double statics_buried_source_ms(double elevation_m, double depth_m, double thickness_m,
                                double v_w_mps, double datum_m, double v_r_mps);
/* Weathering thickness under a shot hole from its uphole time t_up (ms) and
 * depth d, with t_up = h / v_w + (d - h) / v_r for a source below the
 * weathering base: h = (t_up - d / v_r) / (1 / v_w - 1 / v_r), kept within
 * [0, d] (a source inside the weathering gives h = d: the layer is at least
 * that thick). Needs v_w < v_r. */
double statics_uphole_thickness_m(double uphole_ms, double depth_m, double v_w_mps,
                                  double v_r_mps);

/* ---- station numbers ---- */

/* round(s / interval): the station of a point at distance s_m along the
 * processing line (interval > 0). */
int32_t statics_station_number(double s_m, double interval_m);

/* ---- station statics tables ---- */

typedef struct statics_row {
  int kind;                  /* enum statics_kind */
  int32_t station;
  double x_m, y_m, elevation_m;
  double static_ms;
  int64_t line;              /* line of the table it came from (0 when made in memory) */
} statics_row;

typedef struct statics_table statics_table;

/* Reads a table: TZ_E_NOINPUT when missing; TZ_E_FORMAT naming the file and line
 * for a missing column, a number that is not one, an unknown kind, a static
 * beyond STATICS_MAX_MS, or a station given twice for the same kind. On
 * success *out owns the table: statics_table_free(). */
int statics_table_load(statics_table **out, const char *path, tz_err *err);
void statics_table_free(statics_table *t);         /* NULL is a no-op */
const char *statics_table_path(const statics_table *t);
size_t statics_table_rows(const statics_table *t);
const statics_row *statics_table_row(const statics_table *t, size_t i);  /* sorted by kind, station */
/* The row of (kind, station), or NULL. */
const statics_row *statics_table_find(const statics_table *t, int kind, int32_t station);

/* Writes rows (any order; written sources first, each kind by station) under a
 * temporary name renamed on success. `comment` (may be NULL) becomes '#' lines
 * above the header row. */
int statics_table_write(const char *path, const statics_row *rows, size_t n,
                        const char *comment, tz_err *err);

#endif
