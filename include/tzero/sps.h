/* sps.h -- survey points and their relations from SPS exchange files (revision 2.1).
 *
 * The SEG's published exchange format for land and marine geometry: SEG Technical
 * Standards Committee, "SPS format, revision 2.1" (2006). Three fixed-column text
 * files: source points (S records), receiver points (R records) and relations
 * (X records) naming, for each field record, the source point and the receiver
 * points that its channels recorded. Columns (1-based, as the standard gives them):
 *
 *   point record (S, R)           relation record (X)
 *   1      record identifier      1      record identifier X
 *   2-11   line name              2-7    field tape number
 *   12-21  point number           8-15   field record number
 *   24     point index            16     field record increment
 *   25-26  point code             17     instrument code
 *   27-30  static correction, ms  18-27  source line name
 *   31-34  point depth            28-37  source point number
 *   35-38  seismic datum          38     source point index
 *   39-40  uphole time, ms        39-43  from channel
 *   41-46  water depth            44-48  to channel
 *   47-55  map grid easting       49     channel increment
 *   56-65  map grid northing      50-59  receiver line name
 *   66-71  surface elevation      60-69  from receiver point
 *   72-80  day of year and time   70-79  to receiver point
 *                                 80     receiver point index
 *
 * Header records (H in column 1) and blank lines are skipped. A blank point or
 * receiver index is 1, a blank channel increment is 1. Numbers are read as
 * written (a field without a decimal point is a whole number: common practice;
 * the Fortran rule of implied decimals is not applied). The channels of a
 * relation record go, in order, to the receiver points of its receiver line and
 * index that lie from its from-receiver to its to-receiver in the R file; when
 * their count differs from the channel count, to evenly spaced point numbers
 * from the from-receiver to the to-receiver, each of which must exist.
 *
 * The result is a geometry table keyed by field record and channel (geometry.h),
 * with the depth of the source from its point depth and elevations from the surface
 * elevations. Records that match nothing are kept for listing: source and
 * receiver points no relation names, relation records whose source or receivers
 * are not in the point files. A malformed record is TZ_E_FORMAT naming the file,
 * the line and the column.
 */
#ifndef TZERO_SPS_H
#define TZERO_SPS_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"
#include "tzero/geometry.h"

#define SPS_MAX_RECORDS 20000000      /* records per file */
#define SPS_MAX_LINE_BYTES 4096       /* a longer line is not an SPS record */

typedef struct sps_set sps_set;

/* Reads the three files. On success *out owns a new set: release it with sps_free(). */
int sps_load(sps_set **out, const char *source_path, const char *receiver_path,
             const char *relation_path, tz_err *err);
/* The same from texts in memory (names are used in messages). */
int sps_parse(sps_set **out, const char *const names[3], const char *const texts[3],
              const size_t lens[3], tz_err *err);
void sps_free(sps_set *s);                 /* NULL is a no-op */

typedef struct sps_summary {
  size_t source_points, receiver_points, relations;
  size_t sources_used, receivers_used;     /* named by a matched relation record */
  size_t relations_matched;                /* source and every receiver found */
  size_t traces;                           /* field record and channel pairs */
} sps_summary;
void sps_get_summary(const sps_set *s, sps_summary *out);

/* One record that matched nothing. */
enum sps_record_kind { SPS_SOURCE = 0, SPS_RECEIVER = 1, SPS_RELATION = 2 };
typedef struct sps_unmatched {
  int kind;                  /* enum sps_record_kind: which file */
  int64_t line;              /* 1-based line in that file */
  char what[200];            /* what it is and why it did not match */
} sps_unmatched;
size_t sps_unmatched_count(const sps_set *s);
const sps_unmatched *sps_unmatched_get(const sps_set *s, size_t i);   /* borrowed */
const char *sps_file_name(const sps_set *s, int kind);                 /* borrowed */

/* The geometry of every matched relation record as a geometry table: on
 * success *out owns a new table (geometry_table_free, or give it to
 * geometry_source_table). Two relation records giving one field record and
 * channel are TZ_E_FORMAT naming both lines of the relation file. */
int sps_to_table(const sps_set *s, geometry_table **out, tz_err *err);
/* sps_to_table() made into a geometry source (*out owns it: geometry_source_free). */
int sps_geometry_source(const sps_set *s, geometry_source **out, tz_err *err);
/* Reads the three files and makes the source in one call (the set is not kept). */
int sps_load_source(geometry_source **out, const char *const paths[3], tz_err *err);

#endif
