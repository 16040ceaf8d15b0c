/* flow_migrate.c -- the job's post-stack time migration after the stack.
 *
 * Reads the section tzero stack has just written, migrates it as `tzero migrate`
 * would with the job's "migration" parameters, and writes output.migrated with the
 * textual header of the job's deliverables (deliver.h), the migration appended to
 * the processing sequence. The methods are in src/migration/migrate.c.
 */
#include "tzero/flow.h"

#include <stdlib.h>
#include <string.h>

#include "tzero/deliver.h"
#include "tzero/migrate.h"
#include "tzero/poststack.h"
#include "tzero/qc.h"

int flow_migrate(const job_spec *job, const stack_plan *plan, const velocity_table *velocity,
                 int threads, const deliver_steps *steps, const deliver_run *run,
                 qc_migration *out, tz_err *err)
{
  if (!job->migrated)
    return TZ_OK;
  migrate_section *s = NULL;
  velocity_table *own = NULL;
  float *samples = NULL;
  size_t n = 0;
  migrate_info info;
  char text[DELIVER_TEXT_BYTES];
  deliver_steps *all = malloc(sizeof *all);
  if (!all)
    return tz_fail(err, TZ_E_NOMEM, "processing steps");
  if (steps)
    *all = *steps;
  else
    deliver_steps_init(all);
  deliver_steps_migration(all, job);
  flow_poststack_steps(job, POSTSTACK_STAGE_AFTER, all);
  const char *vpath = job->migration.velocity ? job->migration.velocity : job->velocity;
  int rc = migrate_section_load(&s, job->section, 0, err);
  if (!rc && job->migration.velocity) {
    rc = velocity_table_load(&own, job->migration.velocity, err);
    velocity = own;
  }
  if (!rc && !velocity)
    rc = tz_fail(err, TZ_E_JOB, "$.migration.velocity: no velocity table to migrate with");
  migrate_params p;
  migrate_params_init(&p);
  p.method = job->migration.method ? MIGRATE_KIRCHHOFF : MIGRATE_PHASE_SHIFT;
  p.velocity_pct = job->migration.velocity_pct;
  p.aperture_m = job->migration.aperture_m;
  p.max_dip_deg = job->migration.max_dip_deg;
  p.max_hz = job->migration.max_hz;
  p.threads = threads;
  if (!rc && (rc = migrate_run(s, velocity, &p, &samples, &n, &info, err)))
    tz_err_path(err, job->section);
  if (!rc && n == s->ntraces &&
      poststack_chain_count(&job->poststack, POSTSTACK_STAGE_AFTER)) {
    unsigned char *live = malloc(n);   /* trace kinds 2 and 3 (dead, dummy) stay as they are */
    if (!live)
      rc = tz_fail(err, TZ_E_NOMEM, "post-stack conditioning of %zu traces", n);
    for (size_t i = 0; live && i < n; i++)
      live[i] = s->headers[i].kind != SEGY_KIND_DEAD && s->headers[i].kind != SEGY_KIND_DUMMY;
    if (!rc)
      rc = flow_poststack_apply(job, POSTSTACK_STAGE_AFTER, s->t0_s, s->dt_s, s->ns, n, samples,
                                live, err);
    free(live);
  }
  if (!rc) {
    deliver_section_text(job, plan, s->headers[0].cmp, s->headers[s->ntraces - 1].cmp,
                         "time-migrated section", all, run, text, sizeof text);
    rc = migrate_write(s, &p, samples, n, NULL, n, text, job->migrated, err);
  }
  if (!rc && out) {
    memset(out, 0, sizeof *out);
    out->method = migrate_method_name(p.method);
    out->velocity = vpath;
    out->path = job->migrated;
    out->velocity_pct = p.velocity_pct;
    out->aperture_m = p.aperture_m;
    out->max_dip_deg = p.max_dip_deg;
    out->max_hz = p.max_hz;
    out->lateral_variation_pct = info.lateral_variation_pct;
    out->one_function = info.one_function;
    out->seconds = info.seconds;
  }
  free(all);
  free(samples);
  velocity_table_free(own);
  migrate_section_free(s);
  return rc;
}
