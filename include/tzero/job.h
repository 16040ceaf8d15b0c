/* job.h -- the job file: one line's processing described in JSON, checked and resolved.
 *
 * job_load() reads the JSON of docs/job-file.md, rejects
 * unknown keys (suggesting the nearest known one), checks every value (messages
 * name the JSON path, e.g. "$.moveout.stretch_limit_pct: expected a number
 * between 0 and 1000"), expands the shot patterns with glob(3) relative to the
 * job file's folder and fills every default. The result is a plain value
 * (job_spec); processing modules never see JSON. job_apply_overrides() applies
 * command-line options on top, and job_to_json() gives the resolved job back
 * as JSON text for the QC report.
 *
 * Paths inside a job_spec are already resolved: relative paths in the file are
 * taken from the job file's folder; paths given as overrides are used as given.
 */
#ifndef TZERO_JOB_H
#define TZERO_JOB_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/condition.h"
#include "tzero/edits.h"
#include "tzero/error.h"
#include "tzero/limits.h"
#include "tzero/mute.h"
#include "tzero/poststack.h"

#define JOB_MAX_BYTES (16u << 20)    /* a job file larger than this is refused */
#define JOB_MAX_SHOTS 1000000u       /* expanded shot files */
#define JOB_MAX_MUTE_POINTS 256u     /* top-mute polyline points (NMO_MUTE_MAX_POINTS) */
#define JOB_MAX_THREADS 256

enum job_geometry_source { JOB_GEOMETRY_HEADERS = 0, JOB_GEOMETRY_LAYOUT, JOB_GEOMETRY_TABLE,
                           JOB_GEOMETRY_SPS };
enum job_interp { JOB_INTERP_LINEAR = 0, JOB_INTERP_SINC8 };
enum job_sample_format { JOB_FORMAT_IEEE = 5, JOB_FORMAT_IBM = 1 };

/* Processing line and bins ("bins" object). A field flagged has_* = 0 was not
 * given: the line is then fitted through the midpoints and the bin size is
 * half the receiver interval (common practice). */
typedef struct job_bins {
  int has_size;       double size_m;
  int has_origin;     double origin_x_m, origin_y_m;
  int has_azimuth;    double azimuth_deg;     /* clockwise from north (+y) */
  int64_t first_cmp;                          /* CMP number of the origin's bin (default 1) */
  double max_distance_m;  /* a midpoint farther than this from the line is off the line;
                           * 0 = no limit (default) */
  char *crooked_file;     /* "crooked": FILE: node file (x_m,y_m), resolved; NULL = none */
  double crooked_smoothing_m; /* "crooked": {"smoothing_m": M}: automatic crooked line;
                               * 0 = none */
} job_bins;

/* How a kind of mute was given in the job (docs/job-file.md, "Mutes"). */
enum job_mute_form { JOB_MUTE_NONE = 0, JOB_MUTE_POLYLINE, JOB_MUTE_CONTROLS, JOB_MUTE_FILE };

typedef struct job_mute_point {
  double offset_m;    /* absolute offset */
  double time_ms;     /* recorded time before correction */
} job_mute_point;

#define JOB_MAX_STATICS_TABLES 16

/* "statics" object. present = 0: no statics (every static is 0). */
typedef struct job_statics {
  int present;
  double datum_m;                  /* flat datum elevation (required) */
  double replacement_velocity_mps; /* required, > 0 */
  int elevation;                   /* 1: elevation statics from the station elevations
                                    * (default 1 when the object is given) */
  double weathering_velocity_mps;  /* 0 = not given; needed by uphole */
  int uphole;                      /* 1: uphole times (95-96) and source depth (49-52)
                                    * for the source term and the weathering thickness */
  size_t ntables;                  /* station statics tables, added to the elevation term */
  char *tables[JOB_MAX_STATICS_TABLES];
  double floating_datum_smooth_m;  /* 0 = flat datum */
  double station_interval_m;       /* 0 = the receiver interval of the geometry */
} job_statics;

typedef struct job_spec {
  char *path;                 /* the job file as given ("" when built in memory) */
  char *name;                 /* line name for headers and reports ("" = none) */

  size_t nshots;              /* expanded, sorted shot files */
  char **shots;
  size_t npatterns;           /* the patterns as written (for the report) */
  char **patterns;

  int geometry;               /* enum job_geometry_source */
  char *geometry_file;        /* layout or table path; NULL for headers and SPS */
  int units;                  /* "units": 0 = not given (the files' binary headers say,
                               * else metres), 1 = "metres", 2 = "feet" (geometry.h) */
  char *sps[3];               /* JOB_GEOMETRY_SPS: source, receiver and relation files
                               * (SPS revision 2.1, sps.h) */
  char *header_map;           /* optional SEG-Y header map file (segy.h); NULL = standard */
  uint32_t interval_us;       /* "interval_us": sample interval replacing the files'
                               * (segy_open_opts.interval_us); 0 = from the files */

  job_bins bins;

  char *velocity;             /* velocity table path */

  /* "moveout" */
  double stretch_limit_pct;   /* default 50 */
  int interpolation;          /* enum job_interp, default linear */
  int fourth_order;           /* 1 = use the table's eta column when present (default 1) */
  double stretch_taper_ms;    /* taper after the stretch-mute edge, default 10; 0 = hard edge */

  /* "mute" */
  size_t nmute;
  job_mute_point *mute_top;   /* sorted by offset; NULL/0 = no top mute */
  double mute_taper_ms;       /* taper after the top-mute time, default 10; 0 = hard edge */
  mute_set *mutes;            /* every mute (top, inner, bottom; mute.h), owned; NULL when
                               * the job has no "mute" object */
  int mute_form[MUTE__KINDS]; /* enum job_mute_form: how each kind was given */
  char *mute_files[MUTE__KINDS];   /* "top_file" ... resolved; NULL unless given */

  /* "selection" */
  int has_cmp_range;
  int64_t cmp_first, cmp_last;
  double offset_min_m;        /* absolute offset limits, default 0 and +inf */
  double offset_max_m;

  /* "output" */
  char *section;              /* stacked SEG-Y path (required unless given as override) */
  char *report;               /* QC report path; NULL = none */
  char *html;                 /* QC page path; NULL = beside the report (REPORT.html) */
  int no_html;                /* "html": false: no page */
  int sample_format;          /* enum job_sample_format, default IEEE (5) */

  /* "conditioning": ordered steps applied to every trace after binning and before
   * NMO (docs/conditioning.md); n = 0 = none (default). Parameters are checked
   * here; Nyquist and the AGC window against the sample interval when the stack
   * makes its plan. */
  condition_chain conditioning;

  /* "limits": QC limits (docs/qc-report.md), inline or from a file; recorded in
   * the QC report and applied by `tzero stack --check`. limits.given = 0: none. */
  limits_set limits;
  char *limits_file;          /* the limits file when "limits" named one, else NULL */

  /* "edits": kill, reverse, automatic kills (docs/statics.md); empty = none */
  edits_spec edits;

  /* "statics": field statics to a datum (docs/statics.md) */
  job_statics statics;
  /* "migration" (docs/migration.md): post-stack time migration of the section, written
   * to output.migrated by tzero stack */
  struct {
    int given;                /* 1 = the job has a "migration" object */
    int method;               /* 0 phase shift, 1 Kirchhoff (migrate.h's enum) */
    char *velocity;           /* RMS table; NULL = the job's velocity table */
    double velocity_pct;      /* default 100 */
    double aperture_m;        /* Kirchhoff; 0 = the whole line (default) */
    double max_dip_deg;       /* Kirchhoff; default 80 */
    double max_hz;            /* 0 = Nyquist (default) */
    int after_stack;          /* reserved: 1 */
  } migration;
  char *migrated;             /* "output.migrated": migrated section path; NULL = none */

  /* What the interpreter receives (docs/deliverables.md): strings for the textual
   * header and the history, and two more outputs. NULL = not given. */
  char *client, *contractor;  /* "client", "contractor" */
  char *crs;                  /* "crs": the coordinates' reference system as the user
                               * states it (e.g. "EPSG:32633"); never transformed */
  int polarity;               /* "polarity": SEG-Y rev 1 code of bytes 3257-3258, 1 =
                               * "negative" (a pressure increase or upward case motion
                               * is recorded as a negative number), 2 = "positive";
                               * 0 = not given */
  char *navigation;           /* "output.navigation": CMP navigation CSV */
  char *history;              /* "output.history": processing history (markdown) */
  /* "poststack" (docs/poststack.md): conditioning of the stacked section before it is
   * written and migrated; steps with "after_migration" run on the migrated section.
   * n = 0 = none (default). Nyquist and window lengths are checked against the
   * section's axis before the data pass (stack_plan). */
  poststack_chain poststack;

  int threads;                /* 0 = the machine's online cores */
  int skip_bad_files;         /* 0 = a missing or corrupt shot file stops the run */
} job_spec;

/* Reads, checks and resolves `path`. On success *out owns a new job: release it
 * with job_free(). Errors: TZ_E_NOINPUT (job file, geometry file, header map or
 * a shot pattern that matches nothing; the velocity table need not exist yet,
 * since `tzero semblance` writes it: flow_setup_load checks it), TZ_E_FORMAT (not JSON: line and byte of
 * the fault), TZ_E_JOB (valid JSON, invalid job: the message names the path). */
int job_load(job_spec **out, const char *path, tz_err *err);
/* As job_load from text in memory; relative paths are taken from `dir`
 * (NULL = the current folder); `name` is used in messages. */
int job_parse(job_spec **out, const char *text, size_t len, const char *name,
              const char *dir, tz_err *err);
void job_free(job_spec *j);                          /* NULL is a no-op */

/* One value set in the job document before it is parsed (test panels, `--vary`):
 * `key` is a JSON path into the job ("moveout.stretch_limit_pct",
 * "conditioning[2].operator_ms", "mute.top[1][1]"; a leading "$." is allowed),
 * `value` is JSON text (a number, true, [1, 2] ...) or, when it is not JSON, a
 * string. Object members missing on the way are created, so every key the job
 * parser knows can be set; array elements must exist. */
typedef struct job_edit {
  const char *key;
  const char *value;
} job_edit;

/* As job_load with `edit` applied to the document first (NULL: job_load). A key
 * the job does not have (a member the parser does not know, an element beyond
 * an array's end, a step through a value that is not an object or array) is
 * TZ_E_ARG naming the path, with the nearest known key when there is one; the
 * edited job is then checked as any job (TZ_E_JOB naming the path). */
int job_load_edited(job_spec **out, const char *path, const job_edit *edit, tz_err *err);

/* Reads an edits file for --edits: a JSON object with the keys of the job's
 * "edits" object (kill, reverse, auto). Messages name the file and the JSON
 * path ($.kill[0].channels). On success *out owns its lists (edits_spec_free). */
int job_load_edits(edits_spec *out, const char *path, tz_err *err);

/* Reads a steps file for `tzero condition --steps`: a JSON array of post-stack steps
 * (as a job's "poststack"; messages name "$[1].windows[0]...") or an object
 * {"poststack": [...]} ("$.poststack[1]..."). TZ_E_NOINPUT, or TZ_E_FORMAT (not
 * JSON, or a bad step naming its JSON path), with the file's path. */
int job_load_poststack(poststack_chain *out, const char *path, tz_err *err);

/* Command-line overrides; NULL / negative / NaN means "not given". */
typedef struct job_overrides {
  const char *velocity;
  const char *section;
  const char *report;
  double stretch_limit_pct;   /* NaN = not given */
  int interpolation;          /* -1 = not given */
  int threads;                /* -1 = not given */
  int skip_bad_files;         /* -1 = not given */
  const char *edits;          /* an edits file replacing the job's "edits" (job_load_edits) */
  int has_cmp_range;          /* 0 = not given */
  int64_t cmp_first, cmp_last;
} job_overrides;

void job_overrides_init(job_overrides *o);
/* Applies and re-checks the overridden values (missing velocity file etc.). */
int job_apply_overrides(job_spec *j, const job_overrides *o, tz_err *err);

/* Every file the job reads, in a fixed order (job file, velocity table, geometry
 * file, header map, limits file, then the shot files): fn(ctx, path, kind) for
 * each; a non-zero return stops the walk and is returned. Dependency lists
 * (tzero stack --depfile) and the output-over-input checks use this one list. */
enum job_input_kind { JOB_INPUT_JOB = 0, JOB_INPUT_VELOCITY, JOB_INPUT_GEOMETRY,
                      JOB_INPUT_HEADER_MAP, JOB_INPUT_LIMITS, JOB_INPUT_SHOT,
                      JOB_INPUT_TABLE };
typedef int (*job_input_fn)(void *ctx, const char *path, int kind);
int job_foreach_input(const job_spec *j, job_input_fn fn, void *ctx);

/* Writes a make(1) dependency file: "TARGET...: INPUT..." with every input of
 * job_foreach_input(), then an empty rule per input (so a deleted input does not
 * stop make), as compilers write with -MD -MP. Spaces, '#' and '$' in paths are
 * escaped for make. Written under a temporary name, renamed on success. */
int job_write_depfile(const job_spec *j, const char *const *targets, size_t ntargets,
                      const char *path, tz_err *err);

/* TZ_E_CREATE when writing `out` would replace one of the job's inputs (the job
 * file, a shot file, the geometry file, the header map and, when `reads_velocity`,
 * the velocity table): outputs are renamed into place, so the input would be
 * lost. `what` names the output in the message ("--out"). An output that does
 * not exist yet is always fine. Semblance may write the job's velocity table. */
int job_check_output(const job_spec *j, const char *out, const char *what, int reads_velocity,
                     tz_err *err);
/* job_check_output for the job's section and report, and that the two differ. */
int job_check_outputs(const job_spec *j, tz_err *err);

/* The resolved job as JSON text (same keys as the file, all defaults filled,
 * shot list expanded). On success *out owns a NUL-terminated string (free()). */
int job_to_json(const job_spec *j, char **out, tz_err *err);

const char *job_interp_name(int interp);     /* "linear" / "sinc8" */

#endif
