/* limits.h -- QC limits of a survey or line, and the gate that holds a QC report to them.
 *
 * A limits file is a JSON object (docs/qc-report.md "Limits"): minimum fold
 * (absolute and as a percentage of the nominal fold of the acquisition), zero-
 * and low-fold CMPs, muting overall and by offset, skipped traces, bad samples,
 * velocity warnings, the largest midpoint distance off the processing line, and,
 * when the report holds those stages, killed traces and statics. limits_parse()
 * checks it with messages naming the JSON path (and the nearest known key for a
 * misspelt one); limits_check() measures a tzero-qc/1 report against it and
 * gives one outcome per limit, with the CMP ranges where a per-CMP limit broke.
 * Nothing here prints or exits.
 */
#ifndef TZERO_LIMITS_H
#define TZERO_LIMITS_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"

#define LIMITS_MAX_BYTES (1u << 20)   /* a limits file larger than this is refused */
#define LIMITS_MAX_BANDS 64u          /* entries of max_muted_pct_by_offset */

/* The scalar limits, in the order they are checked and printed. */
enum limits_key {
  LIMITS_MIN_NOMINAL_FOLD = 0,
  LIMITS_MIN_FOLD,
  LIMITS_MIN_FOLD_PCT,
  LIMITS_MAX_ZERO_FOLD_CMPS,
  LIMITS_MAX_LOW_FOLD_RUN_CMPS,
  LIMITS_MAX_MUTED_PCT,
  LIMITS_MAX_SKIPPED_TRACES_PCT,
  LIMITS_MAX_BAD_SAMPLES,
  LIMITS_MAX_VELOCITY_WARNINGS,
  LIMITS_MAX_OFF_LINE_M,
  LIMITS_MAX_KILLED_TRACES_PCT,
  LIMITS_MAX_STATIC_MS,
  LIMITS_MAX_RESIDUAL_STATIC_MS,
  LIMITS__COUNT
};

/* One entry of max_muted_pct_by_offset: [offset_from_m, offset_to_m, pct]. */
typedef struct limits_band {
  double offset_from_m, offset_to_m;   /* absolute offsets; to = INFINITY when open */
  double pct;
} limits_band;

/* A parsed limits file: a plain value (embed it, limits_init, limits_clear). */
typedef struct limits_set {
  double value[LIMITS__COUNT];   /* NAN = not given */
  size_t nbands;
  limits_band *bands;            /* owned; NULL when nbands = 0 */
  int given;                     /* 1 when the file held at least one limit */
} limits_set;

void limits_init(limits_set *l);
void limits_clear(limits_set *l);            /* frees the bands, back to limits_init */
const char *limits_key_name(int key);        /* "min_fold", ... */

/* Parses the JSON text of a limits object. `jpath` is the JSON path of the
 * object in messages ("$" for a file, "$.limits" inside a job); `name` the
 * file. Errors: TZ_E_FORMAT (not JSON, with line and byte), TZ_E_JOB (unknown
 * or repeated key with a suggestion, wrong type, negative or out-of-range
 * value: the message names the path). On failure *l is left empty. */
int limits_parse(limits_set *l, const char *text, size_t len, const char *name,
                 const char *jpath, tz_err *err);
/* limits_parse of a file (TZ_E_NOINPUT when it cannot be read). */
int limits_load(limits_set *l, const char *path, tz_err *err);
/* The limits as a JSON object (the keys of the file; limits_parse reads it
 * back). On success *out owns NUL-terminated text (free()). */
int limits_to_json(const limits_set *l, char **out, tz_err *err);
int limits_copy(limits_set *dst, const limits_set *src, tz_err *err);

/* ---- the gate ---- */

typedef struct limits_range {
  int32_t first, last;           /* CMPs, inclusive */
} limits_range;

typedef struct limits_outcome {
  const char *name;              /* the key (static string) */
  double limit;
  double value;                  /* measured; NAN when it does not apply or is undefined */
  int applies;                   /* 0: the report has no such stage (never broken) */
  int held;                      /* 1 held (or does not apply), 0 broken */
  double offset_from_m, offset_to_m;   /* by-offset entries; NAN for the others */
  size_t nranges;                /* per-CMP limits: CMP ranges where it broke */
  limits_range *ranges;          /* owned by the result */
  const char *note;              /* why it does not apply, or NULL (static string) */
} limits_outcome;

typedef struct limits_result {
  size_t n;
  limits_outcome *o;             /* owned */
  size_t broken;                 /* outcomes with held = 0 */
} limits_result;

struct qc_report;

/* Measures report `r` against `l`: one outcome per given limit (by-offset
 * entries one each), in enum order. The full-fold part is the CMP range of
 * the report's fold.full_fold_cmp_first..last (from the acquisition layout).
 * TZ_E_FORMAT naming the key when the report lacks a figure a given limit
 * needs; TZ_E_JOB when the limits cannot be judged (max_low_fold_run_cmps
 * without min_fold or min_fold_pct). On success *out owns the result. */
int limits_check(const limits_set *l, const struct qc_report *r, limits_result **out,
                 tz_err *err);
void limits_result_free(limits_result *res);   /* NULL is a no-op */

/* The limits recorded in a report (its "limits" object, written when the job
 * had limits). TZ_E_FORMAT when the report records none or they are invalid. */
int limits_from_report(limits_set *l, const struct qc_report *r, tz_err *err);

/* One line per outcome ("min_fold_pct  limit 99  value 95.8  broken  CMP 412-440"),
 * '\n'-terminated. *text owns the string. */
int limits_result_text(const limits_result *res, char **text, tz_err *err);
/* The broken limits in one phrase: "min_fold_pct (CMP 412-440), max_muted_pct";
 * "" when all held. *text owns the string. */
int limits_result_brief(const limits_result *res, char **text, tz_err *err);
/* The outcomes as a JSON array of {name, limit, value, held, cmp_ranges, ...}.
 * *text owns the string. */
int limits_result_json(const limits_result *res, char **text, tz_err *err);

#endif
