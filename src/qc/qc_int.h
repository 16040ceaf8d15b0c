/* qc_int.h -- the QC report's parsed tree, for the other QC modules (limits.c).
 * Private to the library; never included by the front end. */
#ifndef TZERO_QC_INT_H
#define TZERO_QC_INT_H

#include <cjson/cJSON.h>
#include "tzero/qc.h"

/* The report's JSON tree and the name it was read under; borrowed from r. */
const cJSON *qc_report_root(const qc_report *r);
const char *qc_report_name(const qc_report *r);

/* Dotted paths into a report tree ("fold.nominal"): the item, or NULL; a
 * number (NAN when absent or not a number); a string (dflt when absent). */
const cJSON *qc_json_at(const cJSON *o, const char *path);
double qc_json_num(const cJSON *o, const char *path);
const char *qc_json_str(const cJSON *o, const char *path, const char *dflt);

/* "provenance" (qc_provenance.c): SHA-256 digests of the job file, the velocity
 * table, each statics table and each shot file's file header. */
void qc_add_provenance(cJSON *r, const qc_build_args *a);

#endif
