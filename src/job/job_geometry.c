/* job_geometry.c -- the job's geometry exchange files, crooked-line and unit keys.
 *
 * "geometry": {"sps": {"source": FILE, "receiver": FILE, "relation": FILE}} names
 * the three files of SEG's SPS format, revision 2.1 (sps.h); paths are taken from
 * the job file's folder and must exist.
 *
 * "bins": {"crooked": FILE} names a crooked line's node file (CSV x_m,y_m, as
 * `tzero geometry --crooked` reads); "bins": {"crooked": {"smoothing_m": M}} asks
 * for an automatic crooked line through the midpoints (bins.h).
 *
 * "units": "metres" or "feet": the unit of every length and velocity of the line
 * (geometry.h, geometry_units).
 *
 * Not here: reading the files (sps.c), the rest of the job (job.c).
 */
#include <stdlib.h>
#include <string.h>

#include "job/job_int.h"
#include "util/json_doc.h"

int job_sps_parse(job_spec *j, const cJSON *v, const char *dir, tz_err *err)
{
  static const char *const keys[] = { "source", "receiver", "relation", NULL };
  if (!cJSON_IsObject(v))
    return tz_fail(err, TZ_E_JOB, "$.geometry.sps: expected an object {\"source\": FILE, "
                   "\"receiver\": FILE, \"relation\": FILE}, got %s", json_doc_kind_name(v));
  int rc = json_doc_check_keys(v, "$.geometry.sps", keys, TZ_E_JOB, err);
  for (int k = 0; !rc && k < 3; k++) {
    char jp[64];
    snprintf(jp, sizeof jp, "$.geometry.sps.%s", keys[k]);
    const cJSON *e = cJSON_GetObjectItemCaseSensitive(v, keys[k]);
    const char *s;
    if (!e) {
      rc = tz_fail(err, TZ_E_JOB, "$.geometry.sps: missing key \"%s\" (the SPS %s file)",
                   keys[k], keys[k]);
      break;
    }
    if ((rc = json_doc_string(e, jp, &s, TZ_E_JOB, err)))
      break;
    free(j->sps[k]);
    if (!(j->sps[k] = job_path_resolve(dir, s))) {
      rc = tz_fail(err, TZ_E_NOMEM, "job path");
      break;
    }
    rc = job_need_file(j->sps[k], jp, err);
  }
  if (!rc) {
    j->geometry = JOB_GEOMETRY_SPS;
    free(j->geometry_file);
    j->geometry_file = NULL;
  }
  return rc;
}

int job_sps_to_json(const job_spec *j, cJSON *geometry)
{
  cJSON *o = cJSON_AddObjectToObject(geometry, "sps");
  if (!o)
    return -1;
  static const char *const keys[] = { "source", "receiver", "relation" };
  for (int k = 0; k < 3; k++)
    if (!cJSON_AddStringToObject(o, keys[k], j->sps[k] ? j->sps[k] : ""))
      return -1;
  return 0;
}

int job_crooked_parse(job_spec *j, const cJSON *v, const char *dir, tz_err *err)
{
  job_bins *b = &j->bins;
  if (b->has_origin || b->has_azimuth)
    return tz_fail(err, TZ_E_JOB, "$.bins.crooked: a crooked line replaces origin_x_m, "
                   "origin_y_m and azimuth_deg (give one or the other)");
  if (cJSON_IsString(v)) {
    free(b->crooked_file);
    if (!(b->crooked_file = job_path_resolve(dir, v->valuestring)))
      return tz_fail(err, TZ_E_NOMEM, "job path");
    return job_need_file(b->crooked_file, "$.bins.crooked", err);
  }
  static const char *const keys[] = { "smoothing_m", NULL };
  if (!cJSON_IsObject(v))
    return tz_fail(err, TZ_E_JOB, "$.bins.crooked: expected a node file (\"nodes.csv\") or "
                   "{\"smoothing_m\": M}, got %s", json_doc_kind_name(v));
  int rc = json_doc_check_keys(v, "$.bins.crooked", keys, TZ_E_JOB, err);
  if (rc)
    return rc;
  const cJSON *e = cJSON_GetObjectItemCaseSensitive(v, "smoothing_m");
  if (!e)
    return tz_fail(err, TZ_E_JOB, "$.bins.crooked: missing key \"smoothing_m\" (the length "
                   "of the running mean along the line, metres)");
  return json_doc_number(e, "$.bins.crooked.smoothing_m", 1e-3, 1e6, &b->crooked_smoothing_m,
                         TZ_E_JOB, err);
}

int job_crooked_to_json(const job_spec *j, cJSON *bins)
{
  if (j->bins.crooked_file)
    return cJSON_AddStringToObject(bins, "crooked", j->bins.crooked_file) ? 0 : -1;
  if (j->bins.crooked_smoothing_m > 0) {
    cJSON *o = cJSON_AddObjectToObject(bins, "crooked");
    return o && cJSON_AddNumberToObject(o, "smoothing_m", j->bins.crooked_smoothing_m) ? 0 : -1;
  }
  return 0;
}

int job_units_parse(job_spec *j, const cJSON *v, tz_err *err)
{
  static const char *const names[] = { "metres", "feet", NULL };
  static const int values[] = { 1, 2 };
  return json_doc_choice(v, "$.units", names, values, &j->units, TZ_E_JOB, err);
}
