/* flow.h -- everything a job-driven command needs from a job file, in one call.
 *
 * The whole-flow driver above the processing steps: it loads the job (with the
 * command line's overrides), its velocity table and the stack plan (the header
 * pass of stack.h), so that `tzero stack`, `tzero nmo` and the commands that
 * follow them start from the same resolved job. The steps themselves (header
 * pass, data pass, gathers) are in stack.h; this module only strings them
 * together.
 */
#ifndef TZERO_FLOW_H
#define TZERO_FLOW_H

#include "tzero/error.h"
#include "tzero/job.h"
#include "tzero/stack.h"
#include "tzero/velocity.h"

/* A job resolved into what processing needs: the job (overrides applied), its
 * velocity table and the plan. All three are owned: flow_setup_free(). */
typedef struct flow_setup {
  job_spec *job;
  velocity_table *velocity;        /* NULL when the job names none and it is optional */
  stack_plan *plan;
  double header_pass_s;            /* wall time of the plan build */
} flow_setup;

/* Loads the job file, applies `ov` (may be NULL), loads the velocity table
 * (required when need_velocity: a job without one is then TZ_E_JOB and a
 * table that does not exist TZ_E_NOINPUT, both naming $.velocity; otherwise a
 * table not written yet is left out) and builds the plan. An error of no
 * particular file names the job file. On failure nothing is left to free. */
int flow_setup_load(flow_setup *s, const char *job_path, const job_overrides *ov,
                    int need_velocity, stack_progress_fn progress, void *ctx, tz_err *err);
/* As flow_setup_load with `edit` set in the job document before it is parsed
 * (job_load_edited; NULL: none): one panel of a test panel run. */
int flow_setup_load_edited(flow_setup *s, const char *job_path, const job_edit *edit,
                           const job_overrides *ov, int need_velocity,
                           stack_progress_fn progress, void *ctx, tz_err *err);
void flow_setup_free(flow_setup *s);     /* frees the members; NULL members are fine */

/* The job's post-stack time migration ("migration", docs/migration.md): reads the
 * section just written (job->section), migrates it with the job's migration
 * velocity table (or `velocity`, the job's own table, when it names none) and writes
 * job->migrated under a temporary name. *out (may be NULL) gets what was done for
 * the QC report; its strings are borrowed from the job. A job without
 * output.migrated does nothing. */
struct qc_migration;
struct deliver_steps;
struct deliver_run;
/* The textual header lists `steps` (the sequence up to the section; may be NULL)
 * and the migration (deliver_section_text); `plan` may be NULL. */
int flow_migrate(const job_spec *job, const stack_plan *plan, const velocity_table *velocity,
                 int threads, const struct deliver_steps *steps, const struct deliver_run *run,
                 struct qc_migration *out, tz_err *err);

/* The job's "poststack" chain (docs/poststack.md). flow_poststack_check() binds each
 * stage to the plan's section axis and CMP count, so a corner above Nyquist or a
 * window the section cannot hold is refused (TZ_E_JOB naming $.poststack[i]...)
 * before the data pass. flow_poststack_stack() applies the steps before migration to
 * the stacked section in memory (zero-fold CMPs untouched), before it is written.
 * flow_poststack_apply() applies one stage to any section in memory (ntr x ns,
 * trace-major; live may be NULL). */
int flow_poststack_check(const job_spec *job, const stack_plan *plan, tz_err *err);
int flow_poststack_stack(const job_spec *job, stack_section *sec, tz_err *err);
int flow_poststack_apply(const job_spec *job, int stage, double t_first_s, double dt_s,
                         size_t ns, size_t ntr, float *samples, const unsigned char *live,
                         tz_err *err);

/* `tzero condition`: reads any post-stack section (one time axis for every trace),
 * applies every step of the chain in order (after_migration is ignored: the section
 * is whatever it is), and writes out_path (SEG-Y rev 1, big-endian, the input's IBM
 * or else IEEE samples) with every trace header as read, the input's binary header
 * values (sorting code, ensemble fold, line number, measurement system) and, for a
 * section tzero wrote, its textual header with each step appended to the processing
 * sequence (deliver_section_text_continue, dated by `run`); for another program's
 * section, its textual header's cards followed by the steps. Traces of kind 2 or 3 (dead, dummy) are left
 * as they are. Written under a temporary name, renamed on success; the input is
 * closed before the output is written, so out_path may be in_path. */
#define FLOW_CONDITION_MAX_TRACES 1000000
#define FLOW_CONDITION_MAX_SAMPLES (1ull << 30)
typedef struct flow_condition_info {
  size_t traces, samples, steps;
  uint32_t interval_us;
  size_t dead;                     /* traces left untouched (kind 2 or 3) */
  int64_t bad_samples;             /* non-finite input samples, read as 0 */
} flow_condition_info;
int flow_condition_section(const char *in_path, const poststack_chain *c,
                           const char *steps_path, const char *out_path,
                           const struct deliver_run *run, flow_condition_info *info,
                           tz_err *err);
/* The processing sequence (deliver.h): one "post-stack ..." step per step of the
 * job's chain in `stage` (POSTSTACK_STAGE_BEFORE after the stack's steps,
 * POSTSTACK_STAGE_AFTER after the migration). */
struct deliver_steps;
void flow_poststack_steps(const job_spec *job, int stage, struct deliver_steps *steps);

#endif
