/* cvs.c -- `tzero cvs`: constant-velocity stacks of a CMP range, panel after panel. */
#include <cjson/cJSON.h>
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

#include "cli.h"
#include "jobopts.h"
#include "tzero/job.h"
#include "tzero/segy.h"
#include "tzero/semblance.h"
#include "tzero/stack.h"
#include "tzero/table.h"
#include "tzero/velocity.h"

static void help(void)
{
  printf("usage: tzero cvs --job FILE --cmps RANGE --velocities LIST --out FILE.sgy [OPTIONS]\n"
         "\n"
         "Stacks the CMP range of the line described by a job file once for each\n"
         "constant velocity, with the job's exact NMO, stretch and top mutes and\n"
         "live-fold normalisation (the `tzero stack` flow with a constant velocity\n"
         "table), and writes the stacks panel after panel into one SEG-Y file.\n"
         "\n"
         "options:\n"
         "  --job FILE            job file (JSON; its velocity file is not used)\n"
         "  --cmps RANGE          CMP range FIRST-LAST (or a single CMP)\n"
         "  --velocities LIST     stacking velocities, m/s: 1800 | 1600,1800,2000 |\n"
         "                        1500-3000:100 (commas combine items)\n"
         "  --out FILE.sgy        output: per velocity one trace per CMP of the range;\n"
         "                        CMP in bytes 21-24, panel number (from 1) in 9-12,\n"
         "                        the velocity in m/s in bytes 37-40, fold in 33-34\n"
         "  --stretch-limit PCT   override the job's stretch mute limit, %%\n"
         "  --threads N           worker threads (default: the job's, 0 = all cores)\n"
         CLI_EDITS_HELP
         "  --json                print a summary as JSON\n"
         "  --quiet               print nothing but errors\n"
         "  -h, --help            this text\n"
         "\n"
         "Each panel is a full data pass over the CMP range; keep ranges short.\n"
         "\n%s", CLI_CAUTION);
}

int cmd_cvs(int argc, char **argv)
{
  enum { O_JOB = 256, O_CMPS, O_VELS, O_OUT, O_STRETCH, O_THREADS, O_JSON, O_QUIET };
  static const struct option lo[] = {
    { "job", required_argument, NULL, O_JOB },
    { "cmps", required_argument, NULL, O_CMPS },
    { "velocities", required_argument, NULL, O_VELS },
    { "out", required_argument, NULL, O_OUT },
    { "stretch-limit", required_argument, NULL, O_STRETCH },
    { "threads", required_argument, NULL, O_THREADS },
    { "edits", required_argument, NULL, JOBOPT_EDITS },
    { "json", no_argument, NULL, O_JSON },
    { "quiet", no_argument, NULL, O_QUIET },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  const char *cmd = "cvs", *jobpath = NULL, *cmptext = NULL, *veltext = NULL, *out = NULL;
  double stretch = NAN;
  long long threads = -1;
  int json = 0, quiet = 0, c;
  const char *edits = NULL;
  cli_opt_begin();
  while ((c = cli_getopt(argc, argv, "h", lo)) != -1) {
    int bad = 0;
    switch (c) {
    case O_JOB: jobpath = optarg; break;
    case JOBOPT_EDITS: edits = optarg; break;
    case O_CMPS: cmptext = optarg; break;
    case O_VELS: veltext = optarg; break;
    case O_OUT: out = optarg; break;
    case O_STRETCH: bad = cli_parse_f64(cmd, "--stretch-limit", optarg, &stretch); break;
    case O_THREADS: bad = cli_parse_i64(cmd, "--threads", optarg, &threads); break;
    case O_JSON: json = 1; break;
    case O_QUIET: quiet = 1; break;
    case 'h': help(); return EX_OK;
    default:
      return cli_opt_error(cmd, argv, lo);
    }
    if (bad)
      return bad;
  }
  if (optind < argc)
    return cli_unexpected_arg(cmd, argv[optind], jobpath);
  if (!jobpath || !cmptext || !veltext || !out)
    return cli_usage_error(cmd, "--job, --cmps, --velocities and --out are required");
  if (threads < -1 || threads > JOB_MAX_THREADS)
    return cli_usage_error(cmd, "--threads %lld: expected 0 to %d", threads, JOB_MAX_THREADS);

  tz_err err;
  tz_err_init(&err);
  int32_t *cmps = NULL;
  double *vels = NULL;
  size_t ncmp = 0, nvel = 0;
  if (table_parse_ranges(cmptext, "CMP", STACK_MAX_CMPS, &cmps, &ncmp, &err) ||
      semblance_parse_velocities(veltext, &vels, &nvel, &err)) {
    free(cmps);
    return cli_usage_error(cmd, "%s", err.msg);
  }
  int32_t first = cmps[0], last = cmps[ncmp - 1];
  free(cmps);
  if ((size_t)(last - first) + 1 != ncmp) {
    free(vels);
    return cli_usage_error(cmd, "--cmps '%s': expected one range FIRST-LAST without gaps",
                           cmptext);
  }

  job_spec *job = NULL;
  stack_plan *plan = NULL;
  segy_writer *w = NULL;
  stack_section *sec = NULL;
  velocity_table *vt = NULL;
  int64_t traces_per_panel = 0;
  int rc = job_load(&job, jobpath, &err);
  if (!rc) {
    job_overrides ov;
    job_overrides_init(&ov);
    ov.stretch_limit_pct = stretch;
    ov.threads = (int)threads;
    ov.edits = edits;
    rc = job_apply_overrides(job, &ov, &err);
  }
  if (!rc)
    rc = job_check_output(job, out, "--out", 0, &err);
  if (!rc)
    rc = stack_plan_build(&plan, job, NULL, NULL, &err);
  if (rc)
    goto done;
  if (first < stack_plan_first_cmp(plan) || last > stack_plan_last_cmp(plan)) {
    rc = tz_fail(&err, TZ_E_ARG, "--cmps %d-%d: outside the line's CMPs %d-%d", first, last,
                 stack_plan_first_cmp(plan), stack_plan_last_cmp(plan));
    goto done;
  }
  nmo_axis ax = stack_plan_axis(plan);
  if ((double)nvel * (double)ncmp * ax.ns > STACK_MAX_SECTION_SAMPLES) {
    rc = tz_fail(&err, TZ_E_ARG, "%zu velocities x %zu CMPs x %zu samples: more than %u "
                 "samples of panels (fewer velocities or a shorter CMP range)", nvel, ncmp,
                 (size_t)ax.ns, STACK_MAX_SECTION_SAMPLES);
    goto done;
  }
  segy_writer_opts wo = {
    .revision = 1, .format_code = job->sample_format == JOB_FORMAT_IBM ? 1 : 5,
    .samples = (uint32_t)ax.ns, .interval_us = stack_plan_interval_us(plan),
    .sorting_code = 4, .ensemble_fold = (int16_t)lround(stack_plan_nominal_fold(plan)),
    .traces_per_ensemble = (int16_t)(ncmp > INT16_MAX ? INT16_MAX : ncmp),
    .text = "tzero constant-velocity stacks, one panel per velocity\n"
            "bytes 21-24: CMP; bytes 9-12: panel number from 1\n"
            "bytes 37-40: stacking velocity in m/s; bytes 33-34: fold",
  };
  if ((rc = segy_writer_open(&w, out, &wo, &err)))
    goto done;
  for (size_t p = 0; p < nvel; p++) {
    stack_run_opts so;
    if ((rc = velocity_table_constant(&vt, vels[p], &err)) ||
        (rc = stack_run_opts_init(&so, plan, vt, &err)))
      goto done;
    so.first_cmp = first;
    so.last_cmp = last;
    so.records_in_range = 1;   /* only the records under the range are read */
    if ((rc = stack_run(plan, &so, &sec, &err)))
      goto done;
    for (size_t i = 0; i < sec->ncmps; i++) {
      const stack_cmp_result *cr = &sec->cmps[i];
      segy_trace_header h;
      memset(&h, 0, sizeof h);
      h.field_record = (int32_t)(p + 1);
      h.cmp = cr->cmp;
      h.cmp_trace = 1;
      h.kind = cr->fold > 0 ? SEGY_KIND_SEISMIC : SEGY_KIND_DEAD;
      h.stacked_traces = (int16_t)(cr->fold > INT16_MAX ? INT16_MAX : cr->fold);
      h.offset = floor(vels[p] + 0.5);
      h.delay_ms = (int16_t)lround(ax.t_first_s * 1000.0);
      h.coord_units = 1;
      h.cmp_x = cr->x_m;
      h.cmp_y = cr->y_m;
      if ((rc = segy_trace_write(w, &h, sec->samples + i * sec->axis.ns, &err)))
        goto done;
    }
    traces_per_panel = (int64_t)sec->ncmps;
    stack_section_free(sec);
    sec = NULL;
    velocity_table_free(vt);
    vt = NULL;
  }
  rc = segy_writer_finish(w, &err);
  w = NULL;
  if (rc)
    goto done;
  if (json) {
    cJSON *o = cJSON_CreateObject();
    if (o) {
      cJSON_AddStringToObject(o, "job", jobpath);
      cJSON_AddStringToObject(o, "output", out);
      cJSON_AddNumberToObject(o, "first_cmp", first);
      cJSON_AddNumberToObject(o, "last_cmp", last);
      cJSON_AddNumberToObject(o, "traces_per_panel", (double)traces_per_panel);
      cJSON_AddItemToObject(o, "velocities_mps", cJSON_CreateDoubleArray(vels, (int)nvel));
      cli_print_json(o);
    }
  } else if (!quiet) {
    printf("%s: %zu panels of CMPs %d-%d (%lld traces each), %g to %g m/s\n", out, nvel,
           first, last, (long long)traces_per_panel, vels[0], vels[nvel - 1]);
  }
done:;
  if (rc)
    tz_err_path(&err, jobpath);   /* an error of no particular file belongs to the job */
  int ex = rc ? cli_report(cmd, &err) : EX_OK;
  segy_writer_abort(w);
  stack_section_free(sec);
  velocity_table_free(vt);
  stack_plan_free(plan);
  job_free(job);
  free(vels);
  return ex;
}
