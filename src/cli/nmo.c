/* nmo.c -- `tzero nmo --job FILE --cmps LIST --out FILE.sgy`: NMO-corrected CMP gathers
 * for checking velocities by eye or in other software. Thin: flow_setup_load,
 * stack_collect, stack_write_nmo_gathers. */
#include <cjson/cJSON.h>
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <sysexits.h>

#include "cli.h"
#include "jobopts.h"
#include "tzero/fileio.h"
#include "tzero/flow.h"
#include "tzero/stack.h"
#include "tzero/table.h"

static void help(void)
{
  printf("usage: tzero nmo --job FILE --cmps LIST --out FILE.sgy [OPTIONS]\n"
         "\n"
         "Writes the chosen CMP gathers NMO-corrected with the job's velocities, top\n"
         "and stretch mutes (exact hyperbolic moveout, the same correction as\n"
         "`tzero stack`): CMPs in increasing order, traces by absolute offset, each\n"
         "trace's own header kept with the CMP number (bytes 21-24), trace within the\n"
         "CMP (25-28), signed offset (37-40) and CMP X/Y (181-188). SEG-Y rev 1,\n"
         "sorting code 2 (CMP gathers). Flat events mean the velocities fit.\n"
         "\n"
         "options:\n"
         "  --job FILE             the job file (JSON; required)\n"
         "  --cmps LIST            CMP numbers: 250 | 200,250,300 | 200-300 | 200-900:50\n"
         "                         (ranges with a step; items separated by commas)\n"
         "  --out FILE             output gathers (SEG-Y; required)\n"
         "  --velocity FILE        velocity table overriding the job's\n"
         "  --stretch-limit PCT    stretch mute limit in percent (0 = off)\n"
         "  --interpolation NAME   linear or sinc8\n"
         "  --skip-bad-files       leave out missing or corrupt shot files\n"
         CLI_EDITS_HELP
         "  --json                 print what was written as JSON\n"
         "  --quiet                print nothing on success\n"
         "  -h, --help             this text\n"
         "\n%s", CLI_CAUTION);
}

int cmd_nmo(int argc, char **argv)
{
  static const struct option opts[] = {
    { "job", required_argument, NULL, 'J' },
    { "cmps", required_argument, NULL, 'c' },
    { "out", required_argument, NULL, 'o' },
    { "json", no_argument, NULL, 'j' },
    { "quiet", no_argument, NULL, 'q' },
    { "help", no_argument, NULL, 'h' },
    JOBOPTS_LONG,
    { NULL, 0, NULL, 0 },
  };
  const char *jobpath = NULL, *list = NULL, *out = NULL;
  int json = 0, quiet = 0, c;
  job_overrides ov;
  job_overrides_init(&ov);
  cli_opt_begin();
  while ((c = cli_getopt(argc, argv, "h", opts)) != -1) {
    int k = cli_job_option("nmo", c, optarg, &ov);
    if (k < 0)
      return EX_USAGE;
    if (k > 0)
      continue;
    switch (c) {
    case 'J': jobpath = optarg; break;
    case 'c': list = optarg; break;
    case 'o': out = optarg; break;
    case 'j': json = 1; break;
    case 'q': quiet = 1; break;
    case 'h': help(); return EX_OK;
    default:
      return cli_opt_error("nmo", argv, opts);
    }
  }
  if (optind < argc)
    return cli_unexpected_arg("nmo", argv[optind], jobpath);
  if (!jobpath || !list || !out)
    return cli_usage_error("nmo", "--job, --cmps and --out are required");
  tz_err e;
  tz_err_init(&e);
  int32_t *cmps = NULL;
  size_t ncmps = 0;
  if (table_parse_ranges(list, "CMP", STACK_MAX_CMPS, &cmps, &ncmps, &e))
    return cli_usage_error("nmo", "--cmps: %s", e.msg);

  flow_setup su;
  stack_gathers *g = NULL;
  cli_progress pg;
  cli_progress_init(&pg, "header pass", quiet || json);
  int rc = flow_setup_load(&su, jobpath, &ov, 1, cli_progress_show, &pg, &e);
  cli_progress_end(&pg);
  if (rc) {
    free(cmps);
    return cli_report("nmo", &e);
  }
  stack_run_opts ro;
  int64_t written = 0;
  if (!(rc = job_check_output(su.job, out, "--out", 1, &e)) && !(rc = fileio_probe(out, &e)) &&
      !(rc = stack_run_opts_init(&ro, su.plan, su.velocity, &e)) &&
      !(rc = stack_collect(su.plan, cmps, ncmps, ro.conditioning, su.velocity, &g, &e)))
    rc = stack_write_nmo_gathers(su.plan, g, &ro, out, su.job->sample_format, &written, &e);
  if (!rc && json) {
    cJSON *o = cJSON_CreateObject(), *a = cJSON_AddArrayToObject(o, "gathers");
    cJSON_AddStringToObject(o, "output", out);
    cJSON_AddNumberToObject(o, "traces", (double)written);
    for (size_t i = 0; i < g->n; i++) {
      cJSON *x = cJSON_CreateObject();
      cJSON_AddNumberToObject(x, "cmp", g->g[i].cmp);
      cJSON_AddNumberToObject(x, "traces", (double)g->g[i].ntraces);
      cJSON_AddNumberToObject(x, "x_m", g->g[i].x_m);
      cJSON_AddNumberToObject(x, "y_m", g->g[i].y_m);
      cJSON_AddItemToArray(a, x);
    }
    cli_print_json(o);
  } else if (!rc && !quiet) {
    size_t empty = 0;
    for (size_t i = 0; i < g->n; i++)
      empty += g->g[i].ntraces == 0;
    printf("%s: %lld traces in %zu CMP gathers", out, (long long)written, g->n - empty);
    if (empty)
      printf(" (%zu requested CMPs have no traces and were left out)", empty);
    printf("\n");
  }
  if (rc) {
    tz_err_path(&e, jobpath);   /* an error of no particular file belongs to the job */
    rc = cli_report("nmo", &e);
  }
  stack_gathers_free(g);
  flow_setup_free(&su);
  free(cmps);
  return rc;
}
