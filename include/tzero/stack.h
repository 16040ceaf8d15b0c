/* stack.h -- from a resolved job to CMP gathers and a live-fold stacked section.
 *
 * Three steps, each usable on its own:
 *   stack_plan_build()  the header pass: seek-only over every shot file (trace
 *                       headers, never samples): geometry, processing line, CMP of
 *                       every trace, skip reasons, fold and offsets per CMP, the
 *                       sample axis. Cheap, and the same for every rerun of a line.
 *   stack_run()         the data pass: one streaming read of the traces in input
 *                       order, NMO with the CMP's own velocity function (sampled
 *                       once per CMP), top and stretch mutes, live-weighted sum per
 *                       CMP, division by the live weight. Memory is about the size
 *                       of the output section, whatever the number of shots.
 *   stack_collect()     the traces of chosen CMPs (semblance, `tzero nmo`): one
 *                       header scan per shot file, then only those traces are read.
 *
 * Threads: stack_run() partitions CMPs among threads (blocks of 16 consecutive
 * CMPs dealt round-robin); every CMP is summed by one thread, in input order,
 * with the same float operations, so the section is bitwise identical for any
 * thread count.
 *
 * A plan is read-only after it is built and may be shared by threads (each
 * stack_run / stack_collect call owns its own file handles and buffers).
 */
#ifndef TZERO_STACK_H
#define TZERO_STACK_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/condition.h"
#include "tzero/error.h"
#include "tzero/job.h"
#include "tzero/nmo.h"
#include "tzero/segy.h"
#include "tzero/survey.h"
#include "tzero/velocity.h"

#define STACK_MAX_CMPS 2000000          /* CMPs one section may span */
/* CMPs x samples of one section (the data pass keeps 16 bytes of sums per
 * sample, so the cap is 4 GB of memory): checked before anything is allocated. */
#define STACK_MAX_SECTION_SAMPLES (1u << 28)
#define STACK_MAX_GATHER_TRACES 1000000 /* traces stack_collect may return */

/* Why a trace did not go into the stack. Counted, never silent. */
enum stack_skip {
  STACK_SKIP_DEAD = 0,       /* trace kind 2 (dead) or 3 (dummy) */
  STACK_SKIP_AUXILIARY,      /* trace kinds that are not seismic data (time break,
                              * uphole, sweep, timing, water break, gun signature,
                              * vibrator signals, other) */
  STACK_SKIP_OFF_LINE,       /* midpoint farther off the processing line than allowed */
  STACK_SKIP_CMP_RANGE,      /* CMP outside the selected range */
  STACK_SKIP_OFFSET,         /* |offset| outside the offset limits */
  STACK_SKIP_SAMPLE_AXIS,    /* sample interval, count or delay differs from the section */
  STACK_SKIP_UNREADABLE,     /* no geometry for this trace (only from stack_plan_classify:
                              * the header pass stops with the geometry error instead) */
  STACK_SKIP_BAD_FILE,       /* in a shot file skipped as missing or corrupt */
  STACK_SKIP__COUNT
};
const char *stack_skip_name(int reason);   /* "dead", "auxiliary", ... (snake_case) */

/* Progress callback: called from the calling thread between batches. */
typedef void (*stack_progress_fn)(void *ctx, int64_t traces_done, int64_t traces_total);

/* ---- the plan (header pass) ---- */

typedef struct stack_plan stack_plan;

/* One input file as the header pass saw it. */
typedef struct stack_input {
  const char *path;          /* borrowed from the job */
  int64_t bytes;             /* file size (-1 when missing) */
  int64_t traces;            /* traces in the file (0 when unreadable) */
  int bad;                   /* 1 = skipped as missing or corrupt (skip_bad_files) */
  const char *error;         /* why, when bad (formatted tz_err; owned by the plan), else NULL */
} stack_input;

/* What the plan resolved about the processing line. */
typedef struct stack_line_info {
  double origin_x_m, origin_y_m, azimuth_deg, size_m;
  int32_t first_cmp;               /* CMP numbering (bin centred on the origin) */
  int fitted;                      /* 1 = fitted through the midpoints */
  int from_layout;                 /* 1 = from the layout (tzero synth numbering) */
  double fit_rms_off_line_m;       /* when fitted */
  double max_off_line_m;           /* 0 = no limit */
  double largest_off_line_m;       /* largest distance of a trace's midpoint from the line */
  size_t nodes;                    /* crooked line: its nodes (0 = straight) */
} stack_line_info;

/* Builds the plan from a resolved job: opens the geometry source (headers, layout
 * or table), finds or fits the processing line, and scans every shot file's trace
 * headers. A missing or corrupt shot file is an error naming it (and the byte
 * offset) unless job->skip_bad_files, then it is listed as bad. The job is
 * borrowed and must outlive the plan. progress may be NULL. On success *out owns
 * the plan: stack_plan_free(). */
int stack_plan_build(stack_plan **out, const job_spec *job, stack_progress_fn progress,
                     void *ctx, tz_err *err);
void stack_plan_free(stack_plan *p);       /* NULL is a no-op */

const job_spec *stack_plan_job(const stack_plan *p);
/* The section's sample axis (from the first readable shot file). */
nmo_axis stack_plan_axis(const stack_plan *p);
uint32_t stack_plan_interval_us(const stack_plan *p);
/* CMP range of the section: the job's selection if given, else the CMPs with
 * fold > 0. */
int32_t stack_plan_first_cmp(const stack_plan *p);
int32_t stack_plan_last_cmp(const stack_plan *p);
size_t stack_plan_ncmps(const stack_plan *p);
/* Fold and offsets of one CMP from the header pass (before mutes). */
typedef struct stack_cmp_plan {
  int32_t cmp;
  double x_m, y_m;           /* bin centre */
  int64_t fold;              /* traces that will be stacked */
  double offset_min_m, offset_max_m;   /* |offset| range; 0 when fold is 0 */
  int64_t acquired_fold;     /* traces the acquisition put here with every channel live:
                              * from the layout, else the seismic and dead traces recorded */
} stack_cmp_plan;
void stack_plan_cmp(const stack_plan *p, int32_t cmp, stack_cmp_plan *out);
/* Nominal fold N dg / (2 ds) of the acquisition (survey.h): from the layout, else
 * from the headers (channels per record, dead ones included; receiver and
 * source interval); 0 when the intervals are unknown. */
double stack_plan_nominal_fold(const stack_plan *p);
/* Every acquisition figure of the survey inference (the same as `tzero geometry`). */
survey_figures stack_plan_survey(const stack_plan *p);
/* The line's unit of length (geometry.h: GEOMETRY_UNIT_METRES or _FEET) and where
 * it came from ("job", "binary header", "default"). */
int stack_plan_units(const stack_plan *p);
/* The gaps in the shooting the survey inference found (survey.h; borrowed). */
const survey_gap *stack_plan_gaps(const stack_plan *p, size_t *n);
const char *stack_plan_units_source(const stack_plan *p);
/* The full-fold part of the section: the first and last CMP whose acquisition
 * fold (stack_cmp_plan.acquired_fold) reaches the whole nominal fold. Returns 0
 * when no CMP does (a line shorter than its spread). */
int stack_plan_full_fold(const stack_plan *p, int32_t *first, int32_t *last);
stack_line_info stack_plan_line(const stack_plan *p);
size_t stack_plan_ninputs(const stack_plan *p);
const stack_input *stack_plan_input(const stack_plan *p, size_t i);
int64_t stack_plan_traces(const stack_plan *p);            /* all traces read */
int64_t stack_plan_stackable(const stack_plan *p);         /* traces that will be stacked */
int64_t stack_plan_skipped(const stack_plan *p, int reason);
/* The job's NMO parameters and top mute in nmo.h form. */
int stack_plan_nmo(const stack_plan *p, nmo_params *np, nmo_top_mute *mute, tz_err *err);
/* Locates one trace (header as read) the way the plan does: returns 1 and fills
 * *cmp and *offset_abs_m when it would be stacked, 0 and *reason when skipped.
 * Thread-safe on a shared plan. */
int stack_plan_classify(const stack_plan *p, const segy_trace_header *h, int64_t trace,
                        int32_t *cmp, double *offset_abs_m, double *offset_signed_m,
                        int *reason);

/* ---- stations and their statics (docs/statics.md) ---- */

/* One source or receiver station as the plan found it. Stations are numbered
 * round(s / interval) from their distance s along the processing line (for a
 * layout, from the layout's station 0, so they are the layout's station
 * numbers; halves round up); interval = statics.station_interval_m, default
 * the receiver interval of the geometry. */
typedef struct stack_station {
  int kind;                  /* enum statics_kind */
  int32_t station;
  double x_m, y_m, elevation_m;  /* as first seen */
  double depth_m;            /* sources: mean source depth (bytes 49-52), else 0 */
  double uphole_ms;          /* sources: mean uphole time (bytes 95-96); NAN when none */
  double weathering_m;       /* weathering thickness used (uphole statics), NAN when none */
  double elevation_ms;       /* the elevation term (0 when statics.elevation is false) */
  double table_ms;           /* the sum of the station statics tables */
  double static_ms;          /* elevation_ms + table_ms */
  int64_t traces;            /* traces using the station */
} stack_station;

/* The plan's stations of one kind, sorted by number (NULL, 0 when the job has
 * no statics and no station edits). Borrowed from the plan. */
const stack_station *stack_plan_stations(const stack_plan *p, int kind, size_t *n);
/* The floating datum at a CMP of the plan's range: its elevation and the static
 * 2 (F - D) / v_r (ms) applied before NMO and removed from the stacked trace.
 * Returns 0 (and nothing) with a flat datum or outside the range. */
int stack_plan_floating(const stack_plan *p, int32_t cmp, double *elevation_m, double *ms);
/* At a CMP (of the line, whatever the run's range): the field shot-point number
 * interpolated along the line between the source points' numbers (bytes 17-20,
 * or the layout's), extrapolated beyond the end sources, and the surface
 * elevation (m) interpolated between the source and receiver stations, held at
 * the end values beyond them. Returns a bit set: 1 = *shot_point filled, 2 =
 * *elevation_m filled (0 when the inputs give neither). */
int stack_plan_cmp_surface(const stack_plan *p, int32_t cmp, double *shot_point,
                           double *elevation_m);
/* The station interval in use (0 when stations are not numbered). */
double stack_plan_station_interval(const stack_plan *p);

/* ---- mutes on pictures (stack_mutes.c) ---- */

/* The job's mutes of traces `traces[0..n-1]` (0-based) of the SEG-Y file `path`,
 * for drawing them over the traces: each trace is located as the stack locates
 * it (CMP, offset, field record and channel from its header and the plan's
 * geometry) and its mute times evaluated (mute_eval). out gets 4 values per
 * trace (ms): top, inner cone start, inner cone end, bottom; NAN where a kind
 * is absent or the stack would not use the trace. The times are on the file's
 * own time axis: when the job applies statics and the trace header says no
 * static was applied (bytes 103-104 zero), the file holds field times and the
 * trace's static is taken off the processing-datum times. */
#define STACK_MUTE_LINES 4
int stack_mute_lines(const stack_plan *p, const mute_set *m, const char *path,
                     const int64_t *traces, size_t n, double *out, tz_err *err);

/* ---- the data pass ---- */

typedef struct stack_run_opts {
  const velocity_table *velocity;  /* borrowed, required */
  nmo_params nmo;                  /* stack_run_opts_init() takes them from the job */
  nmo_top_mute mute;               /* the job's top mute when it is one polyline */
  const mute_set *mutes;           /* every mute of the job (mute.h): when not NULL it
                                    * replaces `mute` (init: the job's, NULL when it
                                    * has none); borrowed */
  const condition_chain *conditioning; /* applied to each trace before NMO (docs/
                                    * conditioning.md); init: the job's chain, or NULL
                                    * when it has no steps; borrowed */
  int threads;                     /* 0 = the machine's online cores */
  int32_t first_cmp, last_cmp;     /* sub-range of the plan's range (init: the whole) */
  double offset_class_m;           /* width of the mute-statistics offset classes
                                    * (init: section's max offset / 8, >= 1 m) */
  stack_progress_fn progress;      /* may be NULL */
  void *progress_ctx;
  const unsigned char *restack;    /* NULL (init): every CMP is stacked; else one flag per
                                    * CMP of the range, 1 = stacked, 0 = carried from a
                                    * reused section (stack_reuse_*): its traces are not
                                    * read (unless a record-wide step needs the whole
                                    * record), counted or stacked, and its row is left 0 */
  int records_in_range;            /* 1: records holding no trace of the range are not
                                    * read at all (their traces are then missing from the
                                    * section's trace counts); 0 (init): every header is
                                    * read, so the counts of the parts of a line add up */
} stack_run_opts;

int stack_run_opts_init(stack_run_opts *o, const stack_plan *p, const velocity_table *v,
                        tz_err *err);

#define STACK_MUTE_CLASSES 16

/* Per-CMP results. */
typedef struct stack_cmp_result {
  int32_t cmp;
  double x_m, y_m;
  int32_t fold;                  /* traces stacked */
  double offset_min_m, offset_max_m;
  double live_fraction;          /* live samples / (fold * ns); 0 when fold is 0 */
  double full_fold_ms;           /* earliest time from which every trace of the CMP is
                                  * live (mutes no longer reduce the fold); NAN when
                                  * the fold is never reached or is 0 */
  int64_t muted_top, muted_inner, muted_bottom;   /* samples zeroed by each mute
                                  * (of fold * ns) */
} stack_cmp_result;

typedef struct stack_mute_class {
  double offset_from_m, offset_to_m;
  int64_t traces;
  int64_t samples;               /* traces * ns */
  int64_t muted_stretch, muted_top, muted_end, muted_inner, muted_bottom;
} stack_mute_class;

#define STACK_MAX_KILL_LIST 100000   /* automatic kills listed one by one */

/* One trace an automatic edit killed. */
typedef struct stack_killed_trace {
  int32_t input;             /* index of the shot file in the job */
  int64_t trace;             /* 0-based trace within it */
  int32_t field_record, channel;
  int reason;                /* enum edits_reason */
} stack_killed_trace;

/* Sorts by input, then trace (the order a serial run finds them). */
void stack_killed_sort(stack_killed_trace *v, size_t n);

typedef struct stack_section {
  nmo_axis axis;
  uint32_t interval_us;
  int32_t first_cmp;
  size_t ncmps;
  float *samples;                /* ncmps * axis.ns, CMP-major; owned */
  stack_cmp_result *cmps;        /* ncmps; owned */
  int64_t traces_read;           /* every trace of every readable input */
  int64_t traces_stacked;
  int64_t skipped[STACK_SKIP__COUNT];
  int64_t bad_samples;           /* NaN, infinite or out-of-range input samples, read as 0 */
  /* edits (traces of the section's CMP range) */
  int64_t killed[EDITS_KILL__COUNT];   /* removed by edits, by reason (edits_reason_name) */
  int64_t reversed;              /* stacked with their polarity reversed */
  size_t nkill_entries, nreverse_entries;
  int64_t *kill_hits, *reverse_hits;   /* traces each entry selected (the run's CMPs); owned */
  stack_killed_trace *auto_killed;     /* the automatic kills, by input and trace; owned */
  size_t nauto_killed;
  int64_t auto_killed_unlisted;        /* beyond STACK_MAX_KILL_LIST, counted only */
  /* statics applied (stacked traces) */
  int64_t static_traces;
  double static_min_ms, static_max_ms, static_rms_ms;
  int64_t bytes_read;            /* input bytes of the files read */
  /* mute statistics over all stacked traces */
  int64_t samples_total, muted_stretch, muted_top, muted_end, muted_inner, muted_bottom;
  size_t nclasses;
  stack_mute_class classes[STACK_MUTE_CLASSES];
  double offset_class_m;
  int threads;                   /* threads used */
  double elapsed_s;              /* wall time of the data pass */
} stack_section;

/* Stacks the plan's traces (or the CMP sub-range of opts). On success *out owns
 * the section: stack_section_free(). Reading errors stop the run naming the file,
 * trace and byte offset. */
int stack_run(const stack_plan *p, const stack_run_opts *o, stack_section **out, tz_err *err);
void stack_section_free(stack_section *s);   /* NULL is a no-op */

/* The trace header of the section's trace c (0-based): what stack_section_write
 * writes (below) and the navigation file lists. */
void stack_section_header(const stack_section *s, const stack_plan *p, size_t c,
                          segy_trace_header *out);
/* Writes the section as SEG-Y rev 1 (docs/tzero-stack.1): one trace per CMP in
 * CMP order; CMP number (21-24), CMP X/Y (181-188) with coordinate scalar
 * (71-72), fold (33-34), trace kind 1 (2 for zero fold), offset 0, the field
 * shot point at the CMP (197-200, scalar -100 in 201-202; the CMP number with
 * scalar 1 when the inputs carry no shot points), the surface elevation at the
 * CMP (41-48) and, with statics, the datum (53-60), elevation scalar (69-70)
 * -100 (stack_plan_cmp_surface; docs/section.md); binary header sorting code 4,
 * ensemble fold = nominal fold, impulse polarity code `polarity` (3257-3258).
 * format_code 5 or 1. `text`: cards 1-38 (deliver_section_text).
 * Written under a temporary name, renamed on success. */
int stack_section_write(const stack_section *s, const stack_plan *p, const char *path,
                        int format_code, const char *text, int16_t polarity, tz_err *err);
/* The finest time scalar (-100, -10 or 1) for which every time of bytes 95-114
 * of h fits its 16-bit slot (SEG-Y rev 1 (2002), bytes 215-216). */
int16_t stack_time_scalar(const segy_trace_header *h);

/* ---- reruns that restack only what changed (stack_reuse.c) ----
 *
 * A CMP's reuse key is the SHA-256 digest of everything that makes its stacked
 * trace: the job but its velocity table (with the bytes of every file it
 * names and the size and modification time of every shot file) and the CMP's
 * velocity function as the NMO samples it. A CMP whose key is unchanged from
 * the run that wrote a reused section is carried: its trace copied, its
 * traces not read. The section is then the one a full run writes, bit for bit. */

typedef struct stack_reuse stack_reuse;

/* The reuse key of each CMP of o's range: *keys owns ncmps * (DIGEST_HEX_LEN + 1)
 * characters, key i (NUL-terminated hex) at *keys + i * (DIGEST_HEX_LEN + 1). */
int stack_reuse_keys(const stack_plan *p, const stack_run_opts *o, char **keys, tz_err *err);
/* Compares keys with the report of a reused section. A missing section or
 * report is no error: *out = NULL (every CMP restacked) and `why` says what
 * was missing; so does a report without keys (*out made, nothing carried). A
 * section that is not of this line (other sample axis, a carried CMP without
 * its trace) or an unreadable one is TZ_E_FORMAT naming the file. */
int stack_reuse_open(stack_reuse **out, const stack_plan *p, const stack_run_opts *o,
                     const char *keys, const char *section, const char *report, char *why,
                     size_t whycap, tz_err *err);
/* Per CMP of the range: 1 restack, 0 carried (stack_run_opts.restack); NULL for r NULL. */
const unsigned char *stack_reuse_restack(const stack_reuse *r);
size_t stack_reuse_carried(const stack_reuse *r);
/* Copies the carried CMPs into the section stack_run made with o.restack =
 * stack_reuse_restack(r): samples from the reused section, fold, live fraction
 * and full-fold time from its report. */
int stack_reuse_apply(const stack_reuse *r, stack_section *s, tz_err *err);
void stack_reuse_free(stack_reuse *r);     /* NULL is a no-op */

/* ---- gathers of chosen CMPs ---- */

typedef struct stack_gather {
  int32_t cmp;
  double x_m, y_m;               /* bin centre */
  size_t ntraces;                /* sorted by |offset|, then input order */
  double *offset_m;              /* |offset| per trace */
  double *offset_signed_m;       /* SEG-Y signed offset per trace */
  double *static_ms;             /* total static applied per trace (ms); also in the
                                  * headers' bytes 99-104 fields (source, receiver, total) */
  size_t *live_lo, *live_hi;     /* per trace: samples [lo, hi) hold recorded data; the
                                  * rest was shifted in by the static (zero, not live) */
  segy_trace_header *headers;    /* as read, per trace */
  float *samples;                /* ntraces * axis.ns */
} stack_gather;

typedef struct stack_gathers {
  nmo_axis axis;
  uint32_t interval_us;
  size_t n;                      /* as requested (sorted, duplicates removed) */
  stack_gather *g;
} stack_gathers;

/* Collects the traces of `cmps` (any order; duplicates ignored) after the
 * pre-NMO chain the stack applies (edits and statics of the plan's job, then
 * conditioning chain `c`, NULL = none; `v` supplies V_rms for a spherical
 * gain that takes it from the velocity table: such a step with v = NULL is
 * TZ_E_JOB naming $.conditioning). Each record holding a wanted trace goes
 * through the chain as the stack's data pass does it (whole, when the chain
 * has record-wide steps), so a gather holds exactly what the stack sums before
 * NMO. CMPs without traces give empty gathers. Single-threaded (FFTW planner).
 * On success *out owns the gathers: stack_gathers_free(). */
int stack_collect(const stack_plan *p, const int32_t *cmps, size_t ncmps,
                  const condition_chain *c, const velocity_table *v, stack_gathers **out,
                  tz_err *err);
void stack_gathers_free(stack_gathers *g);   /* NULL is a no-op */

/* Writes the gathers (as stack_collect made them) NMO-corrected (velocities, NMO
 * parameters and mutes from o; o's conditioning, CMP range, threads and progress
 * are not used: the gathers are already conditioned) as SEG-Y rev 1
 * CMP gathers:
 * CMPs in order, traces by |offset|, each trace's own header kept, with CMP
 * number (21-24), trace number within the CMP (25-28), signed offset (37-40)
 * and CMP X/Y (181-188) set; binary header sorting code 2 (CMP ensemble),
 * ensemble fold = nominal fold. Empty gathers are left out; when every gather
 * is empty nothing is written (TZ_E_ARG). *ntraces (may be NULL) gets the
 * traces written. Written under a temporary name, renamed on success. */
int stack_write_nmo_gathers(const stack_plan *p, const stack_gathers *g, const stack_run_opts *o,
                            const char *path, int format_code, int64_t *ntraces, tz_err *err);

/* The traces of the field records in ranges rg[0 .. nrg-1] ([first, last],
 * inclusive; bytes 9-12) after the pre-NMO chain (edits, statics, conditioning
 * chain c, as stack_collect() applies it), before NMO, in (field record, channel)
 * order; only traces the stack would use. TZ_E_ARG when there are none. On
 * success *out owns its arrays: stack_record_traces_free(). */
typedef struct stack_record_traces {
  size_t n, ns;
  nmo_axis axis;
  uint32_t interval_us;
  segy_trace_header *headers;    /* n, as read */
  float *samples;                /* n * ns */
} stack_record_traces;
int stack_collect_records(const stack_plan *p, const int64_t (*rg)[2], size_t nrg,
                          const condition_chain *c, const velocity_table *v,
                          stack_record_traces *out, tz_err *err);
void stack_record_traces_free(stack_record_traces *r);   /* NULL is a no-op */


/* ---- traces as they leave the chain (stack_visit.c) ---- */

/* How far along the stack's chain a visited trace has gone. */
enum stack_step {
  STACK_STEP_EDITS = 0,      /* kills and polarity reversals (listed and automatic) */
  STACK_STEP_STATICS,        /* + the statics (sub-sample time shift) */
  STACK_STEP_CONDITIONING,   /* + the first conditioning_steps steps of the conditioning */
  STACK_STEP_NMO,            /* + the whole conditioning and NMO with the stretch mute
                              * (no top mute) */
  STACK_STEP_MUTE,           /* + the job's mutes: the traces the stack sums */
  STACK_STEP_ALL             /* everything before the stacker (today the same as MUTE) */
};

/* One trace as stack_visit() sees it. */
typedef struct stack_visit_trace {
  size_t input;              /* shot file index in the job */
  int64_t trace;             /* 0-based trace within it */
  const segy_trace_header *header;   /* as read; when statics applied, bytes 99-104
                              * (source, receiver, total static) hold them */
  int32_t cmp;
  double x_m, y_m;           /* the CMP's bin centre */
  double offset_m, offset_signed_m;
  int32_t field_record, channel;
  int32_t source_station, receiver_station;  /* the plan's station numbers (statics or
                              * station edits), else positions along the line at the
                              * receiver interval; 0 when that is unknown */
  double static_ms;          /* total static applied (0 before the statics step) */
  size_t live_lo, live_hi;   /* samples holding recorded data after the statics */
  const float *samples;      /* ns samples after the step; NULL when offered to `want` */
  const float *weight;       /* ns live weights as the stacker counts them (0 muted, 1
                              * live, between inside a taper; before NMO 1 on
                              * [live_lo, live_hi)); NULL when offered to `want` */
} stack_visit_trace;

/* `want` sees each trace the stack would use (header and geometry only) and
 * returns 1 to have it processed; `emit` gets each wanted trace that survived
 * the edits, after the step, in input order; a non-zero return stops the visit
 * with that status. Both are borrowed for the call. */
typedef int (*stack_visit_want_fn)(void *ctx, const stack_visit_trace *t);
typedef int (*stack_visit_emit_fn)(void *ctx, const stack_visit_trace *t, tz_err *err);

typedef struct stack_visit_opts {
  int through;                       /* enum stack_step */
  size_t conditioning_steps;         /* STACK_STEP_CONDITIONING: how many steps */
  const condition_chain *conditioning; /* the chain (NULL = none); borrowed */
  const velocity_table *velocity;    /* NMO, and a spherical gain from the table */
  const nmo_params *nmo;             /* from STACK_STEP_NMO on (stack_run_opts.nmo) */
  const nmo_top_mute *mute;          /* from STACK_STEP_MUTE on (stack_run_opts.mute) */
  const mute_set *mutes;             /* from STACK_STEP_MUTE on (stack_run_opts.mutes) */
  stack_visit_want_fn want;
  stack_visit_emit_fn emit;
  void *ctx;
} stack_visit_opts;

/* Runs the stack's chain (stack_chain_record, then stack_nmo_trace) on the
 * traces `want` chooses, up to o->through, reading each record that holds one
 * (whole when the chain has record-wide steps). Traces outside the plan's CMP
 * range and killed traces are never emitted. Single-threaded (FFTW planner). */
int stack_visit(const stack_plan *p, const stack_visit_opts *o, tz_err *err);

#endif
