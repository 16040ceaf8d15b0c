/* flow.c -- a job file resolved into what processing needs (flow.h): the job
 * with its overrides, the velocity table and the stack plan.
 *
 * Not here: the header pass itself (stack_plan.c), the data pass (stack_run.c).
 */
#include "tzero/flow.h"

#include <errno.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>

void flow_setup_free(flow_setup *s)
{
  if (!s)
    return;
  stack_plan_free(s->plan);
  velocity_table_free(s->velocity);
  job_free(s->job);
  memset(s, 0, sizeof *s);
}

static double mono_s(void)
{
  struct timespec ts;
  clock_gettime(CLOCK_MONOTONIC, &ts);
  return (double)ts.tv_sec + ts.tv_nsec * 1e-9;
}

int flow_setup_load(flow_setup *s, const char *job_path, const job_overrides *ov,
                     int need_velocity, stack_progress_fn progress, void *ctx, tz_err *err)
{
  return flow_setup_load_edited(s, job_path, NULL, ov, need_velocity, progress, ctx, err);
}

int flow_setup_load_edited(flow_setup *s, const char *job_path, const job_edit *edit,
                           const job_overrides *ov, int need_velocity,
                           stack_progress_fn progress, void *ctx, tz_err *err)
{
  memset(s, 0, sizeof *s);
  double t0 = mono_s();
  int rc = job_load_edited(&s->job, job_path, edit, err);
  if (!rc && ov)
    rc = job_apply_overrides(s->job, ov, err);
  if (!rc && !s->job->velocity && need_velocity) {
    rc = tz_fail(err, TZ_E_JOB, "$.velocity: no velocity table (give it in the job or with "
                 "--velocity)");
    tz_err_path(err, job_path);
  }
  if (!rc && s->job->velocity) {
    /* job_load does not require the file (semblance creates it); here it is read. */
    struct stat st;
    if (stat(s->job->velocity, &st) != 0) {
      int e = errno;
      if (need_velocity) {
        rc = tz_fail_os(err, TZ_E_NOINPUT, e, "$.velocity: cannot open '%s' (a velocity "
                        "table is needed here; tzero semblance writes one)", s->job->velocity);
        tz_err_path(err, job_path);
      }
    } else {
      rc = velocity_table_load(&s->velocity, s->job->velocity, err);
    }
  }
  if (!rc)
    rc = stack_plan_build(&s->plan, s->job, progress, ctx, err);
  if (rc) {
    tz_err_path(err, job_path);   /* errors of no particular file belong to the job */
    flow_setup_free(s);
    return rc;
  }
  s->header_pass_s = mono_s() - t0;
  tz_err_init(err);   /* successful loads may have noted a path; start clean */
  return TZ_OK;
}
