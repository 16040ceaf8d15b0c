/* stack_int.h -- the stack plan's insides, shared by stack_plan.c, stack_run.c and
 * stack_collect.c. Private: never included by the front end. */
#ifndef TZERO_STACK_INT_H
#define TZERO_STACK_INT_H

#include "tzero/bins.h"
#include "tzero/geometry.h"
#include "tzero/stack.h"
#include "tzero/survey.h"
#include "tzero/edits.h"
#include "tzero/statics.h"
#include "tzero/mute.h"

/* A shot file's field records: runs of consecutive traces with the same field
 * record number (bytes 9-12), at most STACK_MAX_RECORD_TRACES each (a longer run
 * is cut into pieces of that size). start[k] is the first trace of record k;
 * record k ends where record k + 1 starts (the last at the file's end). n = 0
 * for a file skipped whole (bad, or another sample axis). */
typedef struct stack_records {
  int64_t *start;
  size_t n;
  int32_t *cmp_lo, *cmp_hi;   /* per record: the least and greatest CMP of its traces
                               * stacked in the plan's range (lo > hi: none); lets a
                               * run that restacks some CMPs skip the other records */
} stack_records;

#define STACK_MAX_RECORD_TRACES 100000

/* Along-line points (stack_points.c): a cell of half a bin with the sums of the
 * positions and values that fell in it. */
typedef struct stack_pt_cell {
  int64_t key;
  double s, v, n;     /* sums of position and value, count */
} stack_pt_cell;

typedef struct stack_pt_list {
  stack_pt_cell *c;
  size_t n, cap, merged;   /* c[0 .. merged) sorted and unique */
} stack_pt_list;

/* One shot file's points, gathered by the header-pass thread that reads it. */
typedef struct stack_points_file {
  stack_pt_list src, surf;
  int32_t last_record;
  int have_last;
} stack_points_file;

struct stack_plan {
  const job_spec *job;            /* borrowed */
  geometry_units units;           /* the job's and the shot files' unit of length */
  survey_gap *gaps;               /* gaps in the shooting (owned copy of survey_gaps) */
  size_t ngaps;
  segy_header_map map;
  int has_map;
  geometry_source *geo;           /* owned */
  bins_line *line;                /* owned */
  stack_line_info line_info;

  nmo_axis axis;
  uint32_t interval_us;
  int16_t delay_ms;
  int have_axis;

  int32_t first_cmp, last_cmp;    /* section range */
  size_t ncmps;
  stack_cmp_plan *cmps;           /* ncmps, owned */
  int has_range;                  /* the job restricts the CMP range */
  double line_offset_max_m;       /* largest |offset| stacked on the whole line, whatever
                                   * the CMP range (mute statistics classes) */
  double nominal_fold;
  survey_figures survey;          /* the acquisition as inferred (survey.h) */
  int has_full_fold;              /* CMPs full_fold_first..last reach the nominal fold */
  int32_t full_fold_first, full_fold_last;
  int32_t *spans;                 /* CMP span of each record (header pass), owned */
  size_t nspans, cap_spans;

  size_t ninputs;
  stack_input *inputs;            /* owned */
  stack_records *records;         /* ninputs, owned: field records of each input */
  /* stations (stack_stations.c): numbered when the job has statics or station edits */
  int has_stations;
  double st_ox, st_oy, st_sin, st_cos, st_interval;
  double st_anchor_m;             /* along-line position of a station centre (0 on a
                                   * layout): survey_station_anchor() */
  stack_station *stations[2];     /* per kind, sorted by number; owned */
  size_t nstations[2];
  /* floating datum (statics.floating_datum_smooth_m > 0): per CMP of the plan's
   * range, the elevation F of the smoothed datum and 2 (F - D) / v_r in ms, the
   * static added before NMO and taken off the stacked trace; NULL when flat */
  double *fd_elev_m, *fd_ms;
  int32_t fd_first;               /* CMP of fd_*[0]: the whole line's span of stations,
                                   * whatever the CMP range of this run */
  size_t fd_n;
  /* along-line points (stack_points.c): source positions with their field
   * shot-point numbers, station positions with their surface elevations */
  double *sp_s, *sp_v, *el_s, *el_v;
  size_t nsp, nel;
  stack_pt_list pt_src, pt_surf;  /* while the header pass runs: the cells so far */
  int64_t max_record;             /* most traces in one record */
  int64_t traces, stackable;
  int64_t skipped[STACK_SKIP__COUNT];
};

/* The CPUs this process may run on: online CPUs, fewer when the affinity mask
 * (taskset, a container's CPU set) allows fewer; at least 1. Thread counts are
 * capped at it. */
long stack_usable_cpus(void);

/* Opens shot file i of the plan with the plan's header map. */
int stack_open_input(const stack_plan *p, size_t i, segy_file **f, tz_err *err);
/* 1 when the file's sample axis matches the section's. */
int stack_file_axis_ok(const stack_plan *p, const segy_info *info);
/* The reason a trace kind is not stacked, or -1 when the kind is data. */
int stack_kind_reason(int kind);
/* The conditioning plan of chain `c` on the section axis: *out = NULL when c is NULL
 * or empty. A chain that does not fit the axis (a corner at Nyquist, say) is
 * TZ_E_JOB with the JSON path ("$.conditioning[1] (bandpass): ..."). Single-threaded
 * (FFTW planner). *out owns the plan: condition_plan_free(). */
int stack_condition_plan(condition_plan **out, const condition_chain *c, const nmo_axis *ax,
                         const velocity_table *v, tz_err *err);

/* As stack_plan_classify, but without the CMP-range test (a trace outside the
 * range is still part of its record for record-wide steps: a part run and a
 * full run must condition the same record the same way), and with the trace's
 * geometry in *g (may be NULL). */
int stack_locate(const stack_plan *p, const segy_trace_header *h, int64_t trace, int32_t *cmp,
                 double *offset_abs_m, double *offset_signed_m, geometry_trace *g, int *reason);
/* 1 when cmp lies in the plan's CMP range (always, without a range). */
int stack_plan_in_range(const stack_plan *p, int32_t cmp);
/* Record k of input i: traces [*a, *a + *n). */
void stack_record_span(const stack_plan *p, size_t i, size_t k, int64_t *a, int64_t *n);

/* ---- stations (stack_stations.c) ---- */

/* Numbers the stations and computes their statics: the station frame from the
 * line (or layout), a header pass over every input collecting source and
 * receiver stations, then the elevation term and the job's tables. Called by
 * stack_plan_build() when the job has statics or station edits. */
int stack_stations_build(stack_plan *p, tz_err *err);
void stack_stations_free(stack_plan *p);

/* ---- along-line points (stack_points.c) ---- */

/* Header pass over every input: source field shot-point numbers and station
 * surface elevations by position along the line (the whole line, whatever the
 * CMP range). Called by stack_plan_build(). */
/* The header pass gathers them: stack_points_begin() (the layout's shot points),
 * per file stack_points_file_reset(), stack_points_trace() for each trace the
 * stack would use (whatever the CMP range), stack_points_take() in file order
 * (files skipped whole are not taken), then stack_points_finish(). */
int stack_points_begin(stack_plan *p, tz_err *err);
void stack_points_file_reset(stack_points_file *f);
int stack_points_trace(const stack_plan *p, stack_points_file *f, const segy_trace_header *h,
                       const geometry_trace *g, tz_err *err);
int stack_points_take(stack_plan *p, const stack_points_file *f, tz_err *err);
void stack_points_file_free(stack_points_file *f);
int stack_points_finish(stack_plan *p, tz_err *err);
void stack_points_free(stack_plan *p);
/* The floating-datum static of a CMP (0 with a flat datum); CMPs beyond the
 * plan's range take the nearest end's. */
double stack_floating_ms(const stack_plan *p, int32_t cmp);
/* Station number of the point (x, y); only when p->has_stations. */
int32_t stack_station_of(const stack_plan *p, double x, double y);
/* The same rule for any plan, with stations or not: the distance along the
 * station frame (the layout's station 0 and azimuth, else the processing line's
 * origin and azimuth) and the station of a point at a given interval. */
double stack_station_along(const stack_plan *p, double x, double y);
int32_t stack_station_at(const stack_plan *p, double interval_m, double x, double y);
/* The station of (kind, number), or NULL. */
const stack_station *stack_station_find(const stack_plan *p, int kind, int32_t station);

/* ---- the pre-NMO chain, record by record (stack_chain.c) ----
 *
 * For each record, in input order: edits (kill, reverse), statics (sub-sample
 * time shift), conditioning (condition_apply_record). The same code serves the
 * stack, nmo, semblance and cvs, so what a gather shows is what the stack sums. */

/* What the chain knows about one trace of a record (filled by the reader). */
typedef struct stack_tinfo {
  int read;                  /* samples were read */
  int stackable;             /* data with geometry, on the line, within offset limits */
  int counted;               /* the run produces this trace's CMP: its edits are counted
                              * (so the counts of the parts of a line add up) */
  int32_t cmp;               /* when stackable */
  double off_abs, off_signed;
  geometry_trace g;          /* when stackable */
  int killed;                /* set by the chain: 0, or 1 + enum edits_reason */
  int reversed;              /* set by the chain: polarity reversed */
  double static_ms;          /* set by the chain: total static applied (processing datum) */
  double static_src_ms, static_rcv_ms;   /* its source and receiver terms */
  size_t live_lo, live_hi;   /* set by the chain: samples holding recorded data
                              * after the shift (others were shifted in: not live) */
} stack_tinfo;

typedef struct stack_chain stack_chain;
typedef struct stack_chain_ws stack_chain_ws;

/* How often each edit entry selected a trace (for "selects nothing" warnings),
 * summed over the records a workspace processed. */
typedef struct stack_chain_counts {
  size_t nkill, nreverse;
  int64_t *kill_hits, *reverse_hits;
  stack_killed_trace *auto_killed;   /* the run's automatic kills (counted traces) */
  size_t nauto, cap_auto;
  int64_t auto_unlisted;             /* beyond STACK_MAX_KILL_LIST in this workspace */
} stack_chain_counts;
const stack_chain_counts *stack_chain_ws_counts(const stack_chain_ws *ws);

/* Builds the chain of the plan's job with conditioning chain `c` (NULL = none)
 * and velocity table v (for a table-based spherical gain; may be NULL when the
 * chain needs none). Single-threaded (FFTW planner). *out owns the chain. */
int stack_chain_new(stack_chain **out, const stack_plan *p, const condition_chain *c,
                    const velocity_table *v, tz_err *err);
/* As stack_chain_new, with the statics left out when statics is 0 (a chain that
 * stops after the edits). */
int stack_chain_new_upto(stack_chain **out, const stack_plan *p, const condition_chain *c,
                         const velocity_table *v, int statics, tz_err *err);
void stack_chain_free(stack_chain *ch);
/* 1 when a run must read every stackable trace of a record it uses (record-wide
 * steps: automatic kills, record-wide conditioning). */
int stack_chain_whole_records(const stack_chain *ch);
/* Per-thread scratch for records of up to max_traces traces. */
int stack_chain_ws_new(stack_chain_ws **out, const stack_chain *ch, size_t max_traces,
                       tz_err *err);
void stack_chain_ws_free(stack_chain_ws *ws);
/* Runs the chain on one record: traces [a, a + n) of input `file`, samples
 * n x ns trace-major, ti[k] for trace a + k. Only traces with read && stackable
 * are processed; errors name the file and trace. */
int stack_chain_record(const stack_chain *ch, stack_chain_ws *ws, size_t file, int64_t a,
                       size_t n, float *samples, stack_tinfo *ti, tz_err *err);

/* The total static the chain applies to a trace (source + receiver station statics +
 * the floating-datum term of its CMP), with its source and receiver terms; the
 * plan must have stations (p->has_stations). */
double stack_trace_static_ms(const stack_plan *p, const geometry_trace *g, int32_t cmp,
                             double *src_ms, double *rcv_ms);


/* NMO of one trace after the chain: as nmo_apply, but samples outside
 * [live_lo, live_hi) (shifted in by a static) are not live: an input time
 * before live_lo is muted like a top mute (the later of it and the top mute at
 * this offset, with the mute's taper), and the trace ends at live_hi. The mutes
 * are those of `ms` evaluated for trace `mt` (mute_eval: top, inner cone and
 * bottom, the inner and bottom by nmo_band_mute) when ms is not NULL, else the
 * single top polyline `mute` (may be NULL). `scratch` holds the combined top
 * mute. */
int stack_nmo_trace(nmo_workspace *ws, const nmo_params *np, const nmo_top_mute *mute,
                    const mute_set *ms, const mute_trace *mt,
                    const nmo_axis *ax, double offset_m, const float *in, const float *vel,
                    const float *eta, size_t live_lo, size_t live_hi, float *out, float *w,
                    nmo_trace_info *info, nmo_top_mute *scratch, tz_err *err);

#endif
