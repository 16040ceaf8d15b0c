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

#endif
