/* merge.h -- one line stacked in parts (`tzero stack --cmp-range`) joined into one section.
 *
 * Each part is named by its QC report, which names its section and records the
 * resolved job. merge_parts() checks that the parts belong together (the same
 * job file and parameters apart from the CMP range, the output paths and the
 * thread count; the same velocity table by SHA-256; the same shot files by size
 * and trace count; the same sample axis), that they cover the line's CMPs
 * without overlap or gap, then rebuilds the line's plan (the header pass) and
 * writes the joined section and report with the same code as `tzero stack`.
 * Every CMP of a stack depends on its own traces only, so the joined section is
 * bitwise identical to a run over the whole line, and the joined report equal to
 * its report except for timing and the creation date (and the section's textual
 * header gives the date of the merge).
 */
#ifndef TZERO_MERGE_H
#define TZERO_MERGE_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"

struct deliver_run;

#define MERGE_MAX_PARTS 100000u     /* parts one merge accepts */

typedef struct merge_opts {
  const char *const *reports;     /* the parts' QC reports, any order; borrowed */
  size_t nparts;
  const char *section;            /* joined section (required) */
  const char *report;             /* joined QC report (NULL = none) */
  const char *tool_version;       /* recorded in the report; may be NULL */
  const struct deliver_run *run;  /* version and date for the textual header (deliver.h);
                                   * may be NULL */
} merge_opts;

typedef struct merge_result {
  int32_t first_cmp, last_cmp;    /* the joined section's CMP range */
  size_t ncmps;
  size_t nparts;
  int64_t traces_stacked;
  char *line;                     /* line name (owned: merge_result_free) */
} merge_result;

/* Joins the parts. A set of parts that does not belong together, overlaps or
 * leaves CMPs out is TZ_E_FORMAT with the reason and the part's report named;
 * a part that cannot be read TZ_E_NOINPUT. Nothing is written on failure. */
int merge_parts(const merge_opts *o, merge_result *res, tz_err *err);
void merge_result_free(merge_result *r);    /* frees the members */

#endif
