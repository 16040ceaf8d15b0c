/* stack_int.h -- the stack plan's insides, shared by stack_plan.c, stack_run.c and
 * stack_collect.c. Private: never included by the front end. */
#ifndef TZERO_STACK_INT_H
#define TZERO_STACK_INT_H

#include "tzero/bins.h"
#include "tzero/geometry.h"
#include "tzero/stack.h"
#include "tzero/survey.h"

struct stack_plan {
  const job_spec *job;            /* borrowed */
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

  size_t ninputs;
  stack_input *inputs;            /* owned */
  int64_t traces, stackable;
  int64_t skipped[STACK_SKIP__COUNT];
};

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

#endif
