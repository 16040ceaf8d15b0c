/* qc_provenance.c -- the QC report's "provenance": SHA-256 digests of what the run read.
 *
 * So that a table revised in place, or a shot file rewritten with new headers,
 * can be told apart from the one a section was made with: the job file, the
 * velocity table (the digest of the bytes the table reader parsed), every
 * statics table the job adds and, per shot file, its textual and binary file
 * header (the first 3600 bytes: SEG-Y rev 1, section 3). Small files are
 * digested whole here (they are a few kilobytes); the shot files only for their
 * headers, so the data pass is untouched. SHA-256 is FIPS 180-4, by
 * libcrypto's EVP interface (digest.h).
 *
 * Not here: the rest of the report (qc.c).
 */
#include "tzero/qc.h"

#include <cjson/cJSON.h>
#include <errno.h>
#include <fcntl.h>
#include <stdio.h>
#include <unistd.h>

#include "tzero/digest.h"
#include "tzero/fileio.h"
#include "qc/qc_int.h"

#define QC_FILE_HEADER_BYTES 3600   /* textual (3200) + binary (400) header */

/* {"path": P, "sha256": H} with H null when the file cannot be read now. */
static cJSON *file_digest(const char *path)
{
  cJSON *o = cJSON_CreateObject();
  char hex[DIGEST_HEX_LEN + 1];
  tz_err e;
  tz_err_init(&e);
  cJSON_AddStringToObject(o, "path", path ? path : "");
  if (path && path[0] && digest_file(path, hex, &e) == TZ_OK)
    cJSON_AddStringToObject(o, "sha256", hex);
  else
    cJSON_AddNullToObject(o, "sha256");
  return o;
}

/* The digest of a file's first QC_FILE_HEADER_BYTES bytes (fewer when shorter:
 * "header_bytes" says how many). */
static cJSON *header_digest(const char *path)
{
  cJSON *o = cJSON_CreateObject();
  cJSON_AddStringToObject(o, "path", path);
  unsigned char buf[QC_FILE_HEADER_BYTES];
  size_t n = 0;
  int fd = -1;
  tz_err e;
  tz_err_init(&e);
  if (fileio_open_input(path, &fd, &e) == TZ_OK) {
    while (n < sizeof buf) {
      ssize_t r = read(fd, buf + n, sizeof buf - n);
      if (r < 0 && errno == EINTR)
        continue;
      if (r <= 0)
        break;
      n += (size_t)r;
    }
    close(fd);
  }
  char hex[DIGEST_HEX_LEN + 1];
  if (fd >= 0 && digest_buffer(buf, n, hex, &e) == TZ_OK) {
    cJSON_AddNumberToObject(o, "header_bytes", (double)n);
    cJSON_AddStringToObject(o, "header_sha256", hex);
  } else {
    cJSON_AddNumberToObject(o, "header_bytes", 0);
    cJSON_AddNullToObject(o, "header_sha256");
  }
  return o;
}

void qc_add_provenance(cJSON *r, const qc_build_args *a)
{
  const job_spec *j = a->job;
  cJSON *pv = cJSON_AddObjectToObject(r, "provenance");
  cJSON_AddStringToObject(pv, "digest", "SHA-256");
  cJSON_AddItemToObject(pv, "job", j && j->path && j->path[0] ? file_digest(j->path)
                                                               : cJSON_CreateNull());
  if (a->velocity && velocity_table_sha256(a->velocity)[0]) {
    cJSON *v = cJSON_CreateObject();
    cJSON_AddStringToObject(v, "path", j && j->velocity ? j->velocity
                                                        : velocity_table_source(a->velocity));
    cJSON_AddStringToObject(v, "sha256", velocity_table_sha256(a->velocity));
    cJSON_AddItemToObject(pv, "velocity", v);
  } else {
    cJSON_AddNullToObject(pv, "velocity");
  }
  cJSON *st = cJSON_AddArrayToObject(pv, "statics_tables");
  for (size_t i = 0; j && j->statics.present && i < j->statics.ntables; i++)
    cJSON_AddItemToArray(st, file_digest(j->statics.tables[i]));
  cJSON *sh = cJSON_AddArrayToObject(pv, "shot_headers");
  for (size_t i = 0; a->plan && i < stack_plan_ninputs(a->plan); i++)
    cJSON_AddItemToArray(sh, header_digest(stack_plan_input(a->plan, i)->path));
}
