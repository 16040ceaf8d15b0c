/* job_poststack.h -- private to src/job/: the "poststack" array (job_poststack.c),
 * shared by job.c and the steps-file loader job_load_poststack() (job.h). */
#ifndef TZERO_JOB_POSTSTACK_H
#define TZERO_JOB_POSTSTACK_H

#include <cjson/cJSON.h>

#include "tzero/error.h"
#include "tzero/poststack.h"

/* Parses the array `v` of steps into *c (initialised here with `root` as its JSON
 * path, "$.poststack" or "$"). TZ_E_JOB naming the value's JSON path. */
int job_parse_poststack(const cJSON *v, const char *root, poststack_chain *c, tz_err *err);

/* The chain as the JSON array a job file would hold, every default filled
 * (NULL when out of memory). */
cJSON *job_poststack_json(const poststack_chain *c);

#endif
