/* picture_velocity.c -- `tzero picture --velocity-field TABLE.csv`: the RMS and
 * interval velocity field of a table, CMP by time, with its control points. */
#include <math.h>
#include <stdio.h>
#include <sysexits.h>

#include "cli.h"
#include "tzero/fileio.h"
#include "tzero/flow.h"
#include "tzero/picture.h"
#include "tzero/velocity.h"

static const char *cmd = "picture";

int cli_picture_velocity(const char *table, const char *job, const picture_select *sel,
                         const char *out, int format, const char *title, uint32_t w, uint32_t h,
                         int quiet)
{
  tz_err err;
  tz_err_init(&err);
  velocity_table *own = NULL;
  flow_setup su = { 0 };
  const velocity_table *t = NULL;
  int64_t first, last;
  int rc = fileio_check_not_input(out, table, "--out", &err);
  if (!rc && job) {   /* the line's CMPs from the job's header pass */
    job_overrides ov;
    job_overrides_init(&ov);
    ov.velocity = table;
    if (!(rc = flow_setup_load(&su, job, &ov, 1, NULL, NULL, &err))) {
      t = su.velocity;
      first = stack_plan_first_cmp(su.plan);
      last = stack_plan_last_cmp(su.plan);
    }
  } else if (!rc && !(rc = velocity_table_load(&own, table, &err))) {
    t = own;   /* the table's own control range */
    first = velocity_table_cmp(own, 0);
    last = velocity_table_cmp(own, velocity_table_ncmps(own) - 1);
    if (last - first < 10) {   /* room either side of a lone function */
      first -= 5;
      last += 5;
    }
  }
  if (rc)
    goto done;
  if (sel->have_cmps) {
    first = sel->cmp_first;
    last = sel->cmp_last;
  }
  double tmax = 0;   /* default: a tenth below the latest knot */
  for (size_t i = 0; i < velocity_table_ncmps(t); i++) {
    double ts;
    velocity_table_knot(t, i, velocity_table_nknots(t, i) - 1, &ts, NULL, NULL);
    tmax = fmax(tmax, ts);
  }
  tmax = sel->have_time ? sel->time_last_ms * 1e-3 : (tmax > 0 ? tmax * 1.1 : 1.0);
  picture_velocity_field vf = { .table = t, .cmp_first = first, .cmp_last = last,
                                .time_max_s = tmax };
  char tt[PICTURE_MAX_TITLE + 1];
  snprintf(tt, sizeof tt, "Velocity field %s, CMP %lld-%lld, 0-%g ms", table, (long long)first,
           (long long)last, tmax * 1e3);
  picture_ctx *c = NULL;
  rc = picture_draw_velocity_field(&vf, title ? title : tt, w, h,
                                   format, &c, &err);
  if (!rc)
    rc = picture_ctx_write(c, out, &err);
  picture_ctx_free(c);
  if (!rc && !quiet)
    printf("wrote %s: velocity field of %zu control CMPs, CMP %lld-%lld, 0-%g ms\n", out,
           velocity_table_ncmps(t), (long long)first, (long long)last, tmax * 1e3);
done:
  velocity_table_free(own);
  if (job)
    flow_setup_free(&su);
  return rc ? cli_report(cmd, &err) : EX_OK;
}
