/* job_int.h -- helpers shared by the job module's files (job.c, job_mute.c).
 * Private: never included by the front end. */
#ifndef TZERO_JOB_INT_H
#define TZERO_JOB_INT_H

#include <cjson/cJSON.h>
#include "tzero/job.h"

/* dir + "/" + rel, unless rel is absolute or dir is empty. The caller owns the
 * result (free()); NULL when out of memory. */
char *job_path_resolve(const char *dir, const char *rel);
/* TZ_E_NOINPUT naming `jpath` when `path` is not a readable regular file. */
int job_need_file(const char *path, const char *jpath, tz_err *err);

/* The "mute" object (job_mute.c): fills j->mutes, j->mute_form, j->mute_files and
 * the single-polyline top (j->mute_top). Paths relative to dir. */
int job_mute_parse(job_spec *j, const cJSON *v, const char *dir, tz_err *err);
/* The resolved mutes into the "mute" object o of job_to_json(); 0 or -1 (memory). */
int job_mute_to_json(const job_spec *j, cJSON *o);

/* "geometry": {"sps": {...}} (job_geometry.c): fills j->sps and sets
 * j->geometry; v is the "sps" value. */
int job_sps_parse(job_spec *j, const cJSON *v, const char *dir, tz_err *err);
/* Adds "sps" to the resolved "geometry" object; 0 or -1 (memory). */
int job_sps_to_json(const job_spec *j, cJSON *geometry);

/* "bins": {"crooked": FILE | {"smoothing_m": M}} (job_geometry.c); v is the
 * "crooked" value. Refused with a given origin and azimuth. */
int job_crooked_parse(job_spec *j, const cJSON *v, const char *dir, tz_err *err);
/* Adds "crooked" to the resolved "bins" object when given; 0 or -1 (memory). */
int job_crooked_to_json(const job_spec *j, cJSON *bins);

/* "units": "metres" | "feet" (job_geometry.c). */
int job_units_parse(job_spec *j, const cJSON *v, tz_err *err);

#endif
