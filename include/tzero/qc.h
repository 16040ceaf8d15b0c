/* qc.h -- the QC report of a stack run ("format": "tzero-qc/1"): build, save, read, summarise.
 *
 * The report is JSON (docs/qc-report.md lists every key): inputs, the resolved
 * job, trace counts with skip reasons, one entry per CMP, fold, mute and
 * velocity statistics, timing and throughput. qc_report_build() makes it from a
 * finished run; qc_report_load() reads a saved one back, and the summary, CMP
 * detail and fold table are produced from the JSON alone, so `tzero report`
 * and `tzero stack` print the same text. The library never prints: text comes
 * back as strings the caller owns.
 */
#ifndef TZERO_QC_H
#define TZERO_QC_H

#include <stddef.h>
#include "tzero/error.h"
#include "tzero/job.h"
#include "tzero/stack.h"
#include "tzero/velocity.h"

#define QC_FORMAT "tzero-qc/1"
#define QC_MAX_BYTES (512u << 20)   /* a report larger than this is refused */
#define QC_MAX_FUNCTIONS 500        /* velocity functions listed in a report */

/* What the post-stack time migration of a run did (the report's "migration" block). */
typedef struct qc_migration {
  const char *method;               /* "phase-shift" or "kirchhoff" */
  const char *velocity;             /* RMS table used */
  const char *path;                 /* migrated section */
  double velocity_pct, aperture_m, max_dip_deg, max_hz;
  double lateral_variation_pct;     /* of the table across the line */
  int one_function;                 /* phase shift used one v(tau) */
  double seconds;
} qc_migration;

typedef struct qc_build_args {
  const job_spec *job;              /* resolved job (parameters) */
  const stack_plan *plan;
  const stack_section *section;
  const velocity_table *velocity;   /* for control CMPs and Dix warnings; may be NULL */
  const char *section_path;         /* where the section was written; may be NULL */
  const char *tool_version;         /* e.g. "0.1.0"; may be NULL */
  double header_pass_s, data_pass_s, write_s, total_s;
  const qc_migration *migration;    /* NULL = the run migrated nothing */
  const char *cmp_keys;             /* reuse key of each CMP of the section (stack_reuse_keys),
                                     * or NULL */
  const char *reused_section;       /* --reuse: the section given, or NULL */
  size_t cmps_carried;              /* CMPs copied from it */
  const char *reuse_note;           /* why nothing could be carried, or NULL */
} qc_build_args;

/* Builds the report. On success *json owns NUL-terminated JSON text (free()). */
int qc_report_build(const qc_build_args *a, char **json, tz_err *err);

/* The gaps in the shooting (survey.h) as a JSON array (the report's
 * geometry.missing_shots.gaps; tzero geometry --json adds the files when `files`,
 * the input paths by file index, is not NULL). The caller owns the array
 * (cJSON_Delete, or add it to an object); NULL when out of memory. */
struct cJSON;
struct cJSON *qc_gaps_json(const survey_gap *g, size_t n, const char *const *files);
/* Writes text to path (adding a final newline if missing) through a temporary
 * file renamed on success. */
int qc_write_text(const char *path, const char *text, tz_err *err);

typedef struct qc_report qc_report;

/* Parses a report; TZ_E_FORMAT (naming the key) when it is not tzero-qc/1.
 * On success *out owns the report: qc_report_free(). */
int qc_report_parse(qc_report **out, const char *text, size_t len, const char *name,
                    tz_err *err);
int qc_report_load(qc_report **out, const char *path, tz_err *err);
void qc_report_free(qc_report *r);          /* NULL is a no-op */
/* The report's line name ("" when unnamed); borrowed from r. */
const char *qc_report_line(const qc_report *r);
/* 1 when text (len bytes) is a JSON object with a "format" key, as reports
 * are and limits files are not. */
int qc_text_is_report(const char *text, size_t len);

/* One line for batch logs: line name, the run's exit status, CMP range, fold
 * min/mean/max and nominal, muted percentage, skipped traces, velocity
 * warnings; with json, the same as one JSON object on one line (no newline).
 * *text owns a string. */
int qc_report_brief(const qc_report *r, int exit_status, int json, char **text, tz_err *err);
/* The human summary (several lines, '\n'-terminated). *text owns a string. */
int qc_report_summary(const qc_report *r, char **text, tz_err *err);
/* One CMP in detail; TZ_E_ARG when the report has no such CMP. */
int qc_report_cmp_detail(const qc_report *r, long cmp, char **text, tz_err *err);
/* The per-CMP table as CSV: cmp,x_m,y_m,fold,offset_min_m,offset_max_m,
 * live_fraction,full_fold_ms (empty when undefined). */
int qc_report_fold_csv(const qc_report *r, char **text, tz_err *err);

#endif
