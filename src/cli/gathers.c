/* gathers.c -- `tzero gathers --job J --through STEP --sort KIND --select LIST --out
 * FILE.sgy`: traces after the job's chain up to a step, sorted into gathers, and
 * test panels over a list of values (--vary). Thin: flow_setup_load_edited per
 * panel, gathers_writer_* (src/flow/gathers.c) on the stack's chain. */
#include <cjson/cJSON.h>
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

#include "cli.h"
#include "jobopts.h"
#include "tzero/fileio.h"
#include "tzero/flow.h"
#include "tzero/gathers.h"

static const char *cmd = "gathers";

static void help(void)
{
  printf("usage: tzero gathers --job FILE --out FILE.sgy [--through STEP] [--sort KIND]\n"
         "                     [--select LIST] [--one-per-cmp] [--vary KEY=V1,V2,...]\n"
         "\n"
         "Writes the job's traces after its processing chain up to and including STEP,\n"
         "sorted into shot, receiver, common-offset or CMP gathers (SEG-Y rev 1). The\n"
         "chain is the stack's own (edits, statics, conditioning, NMO, mutes), so the\n"
         "gathers through `all`, summed per CMP and divided by the live weights, are\n"
         "the stacked section. Each trace keeps its header, with the statics applied\n"
         "(bytes 99-104), its CMP (21-24), trace within the gather (25-28) and signed\n"
         "offset (37-40); the textual header names the step reached.\n"
         "\n"
         "options:\n"
         "  --job FILE             the job file (JSON; required)\n"
         "  --out FILE             output gathers (SEG-Y; required)\n"
         "  --through STEP         edits, statics, conditioning, conditioning[K] (0-based\n"
         "                         as in the job's JSON paths), a conditioning step's\n"
         "                         name (bandpass, agc, ...), nmo (NMO and stretch mute,\n"
         "                         no top mute), mute (the job's mutes too) or all\n"
         "                         (default: all)\n"
         "  --sort KIND            shot, receiver, offset or cmp (default: cmp)\n"
         "  --select LIST          field records, receiver stations or CMPs: 250 |\n"
         "                         200,250 | 200-300 | 200-900:50; for --sort offset,\n"
         "                         |offset| ranges in m: 0-100 | 0-1000:100 (one gather\n"
         "                         per range). Default: every trace\n"
         "  --one-per-cmp          keep the smallest |offset| of each CMP in a gather (a\n"
         "                         near-offset section: --sort offset --select 0-100)\n"
         "  --vary KEY=V1,V2,...   test panels: one panel per value of the job key KEY,\n"
         "                         a JSON path (moveout.stretch_limit_pct,\n"
         "                         conditioning[2].operator_ms, mute.top[1][1]); the\n"
         "                         panel number and value go in trace header bytes\n"
         "                         233-236 and 237-240 and in the textual header\n"
         "                         (docs/gathers.md); tzero picture labels the panels\n"
         "  --weights FILE         also write each sample's live weight (0 muted, 1\n"
         "                         live, between in a taper), trace for trace\n"
         "  --velocity FILE        velocity table overriding the job's\n"
         "  --stretch-limit PCT    stretch mute limit in percent (0 = off)\n"
         "  --interpolation NAME   linear or sinc8\n"
         "  --skip-bad-files       leave out missing or corrupt shot files\n"
         CLI_EDITS_HELP
         "  --json                 print what was written as JSON\n"
         "  --quiet                print nothing on success\n"
         "  -h, --help             this text\n"
         "\n"
         "Exit status: 0 success, 64 bad option, unknown step or --vary key, or no\n"
         "trace selected, 65 bad job or data, 66 missing input, 73 cannot create the\n"
         "output, 74 I/O error.\n"
         "\n%s", CLI_CAUTION);
}

int cmd_gathers(int argc, char **argv)
{
  enum { O_THROUGH = 1, O_SORT, O_SELECT, O_ONE, O_VARY, O_WEIGHTS };
  static const struct option opts[] = {
    { "job", required_argument, NULL, 'J' },
    { "out", required_argument, NULL, 'o' },
    { "through", required_argument, NULL, O_THROUGH },
    { "sort", required_argument, NULL, O_SORT },
    { "select", required_argument, NULL, O_SELECT },
    { "one-per-cmp", no_argument, NULL, O_ONE },
    { "vary", required_argument, NULL, O_VARY },
    { "weights", required_argument, NULL, O_WEIGHTS },
    { "json", no_argument, NULL, 'j' },
    { "quiet", no_argument, NULL, 'q' },
    { "help", no_argument, NULL, 'h' },
    JOBOPTS_LONG,
    { NULL, 0, NULL, 0 },
  };
  const char *jobpath = NULL, *out = NULL, *through = "all", *sortname = "cmp", *select = NULL;
  const char *weights = NULL;
  int json = 0, quiet = 0, one = 0, c;
  cli_vary vary;
  memset(&vary, 0, sizeof vary);
  job_overrides ov;
  job_overrides_init(&ov);
  cli_opt_begin();
  while ((c = getopt_long(argc, argv, "h", opts, NULL)) != -1) {
    int k = cli_job_option(cmd, c, optarg, &ov);
    if (k < 0)
      return EX_USAGE;
    if (k > 0)
      continue;
    switch (c) {
    case 'J': jobpath = optarg; break;
    case 'o': out = optarg; break;
    case O_THROUGH: through = optarg; break;
    case O_SORT: sortname = optarg; break;
    case O_SELECT: select = optarg; break;
    case O_ONE: one = 1; break;
    case O_VARY:
      if (cli_vary_parse(cmd, optarg, &vary))
        return EX_USAGE;
      break;
    case O_WEIGHTS: weights = optarg; break;
    case 'j': json = 1; break;
    case 'q': quiet = 1; break;
    case 'h': help(); return EX_OK;
    default:
      return cli_opt_error(cmd, argv, opts);
    }
  }
  if (optind < argc)
    return cli_unexpected_arg(cmd, argv[optind], jobpath);
  if (!jobpath || !out)
    return cli_usage_error(cmd, "--job and --out are required");
  if (cli_vary_check(cmd, &vary, &ov))
    return EX_USAGE;
  gathers_request rq;
  memset(&rq, 0, sizeof rq);
  if ((rq.sort = gathers_sort_parse(sortname)) < 0)
    return cli_usage_error(cmd, "--sort: expected shot, receiver, offset or cmp, got '%s'",
                           sortname);
  if (one && rq.sort != GATHERS_SORT_OFFSET && rq.sort != GATHERS_SORT_CMP)
    return cli_usage_error(cmd, "--one-per-cmp goes with --sort offset or --sort cmp");
  if (weights && fileio_same_output(weights, out))
    return cli_usage_error(cmd, "--weights and --out name the same file");
  rq.one_per_cmp = one;
  tz_err e;
  tz_err_init(&e);
  if (gathers_select_parse(rq.sort, select, &rq.select, &e))
    return cli_usage_error(cmd, "%s", e.msg);

  size_t npanels = vary.n ? vary.n : 1;
  gathers_panels panels = { .key = vary.key, .n = vary.n, .values = vary.values };
  int64_t counts[CLI_VARY_MAX] = { 0 };
  gathers_writer *w = NULL;
  flow_setup su;
  memset(&su, 0, sizeof su);
  int rc = TZ_OK;
  size_t i = 0;
  for (i = 0; i < npanels && !rc; i++) {
    job_edit ed = { vary.key, vary.n ? vary.values[i] : NULL };
    cli_progress pg;
    cli_progress_init(&pg, "header pass", quiet || json);
    rc = flow_setup_load_edited(&su, jobpath, vary.n ? &ed : NULL, &ov, 0, cli_progress_show,
                                &pg, &e);
    cli_progress_end(&pg);
    if (rc)
      break;
    if (i == 0) {
      if (!(rc = gathers_step_parse(through, su.job, &rq.step, &e)) &&
          !(rc = job_check_output(su.job, out, "--out", 1, &e)) &&
          !(rc = !weights ? TZ_OK : job_check_output(su.job, weights, "--weights", 1, &e)) &&
          !(rc = fileio_probe(out, &e)))
        rc = gathers_writer_open(&w, su.plan, &rq, vary.n ? &panels : NULL, out, weights,
                                 su.job->sample_format, &e);
      if (rc)
        break;
    }
    if (rq.step.through >= STACK_STEP_NMO && !su.velocity) {
      rc = tz_fail(&e, TZ_E_JOB, "$.velocity: --through %s needs a velocity table (give it "
                   "in the job or with --velocity)", through);
      break;
    }
    if ((rc = gathers_writer_add(w, su.plan, su.velocity, i, &counts[i], &e)))
      break;
    flow_setup_free(&su);
  }
  if (!rc) {
    rc = gathers_writer_finish(w, &e);
    w = NULL;
  }
  if (rc) {
    gathers_writer_abort(w);
    tz_err_path(&e, jobpath);
    rc = cli_report(cmd, &e);
    if (vary.n && i < npanels)
      fprintf(stderr, "tzero %s: (panel %zu: %s = %s)\n", cmd, i + 1, vary.key,
              vary.values[i]);
    flow_setup_free(&su);
    gathers_select_free(&rq.select);
    return rc;
  }
  int64_t total = 0;
  for (size_t k = 0; k < npanels; k++)
    total += counts[k];
  if (json) {
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "output", out);
    cJSON_AddStringToObject(o, "step", rq.step.label);
    cJSON_AddStringToObject(o, "sort", gathers_sort_name(rq.sort));
    cJSON_AddNumberToObject(o, "traces", (double)total);
    if (weights)
      cJSON_AddStringToObject(o, "weights", weights);
    if (vary.n) {
      cJSON_AddStringToObject(o, "varied", vary.key);
      cJSON *a = cJSON_AddArrayToObject(o, "panels");
      for (size_t k = 0; k < vary.n; k++) {
        cJSON *x = cJSON_CreateObject();
        cJSON_AddNumberToObject(x, "panel", (double)(k + 1));
        cJSON_AddStringToObject(x, "value", vary.values[k]);
        cJSON_AddNumberToObject(x, "traces", (double)counts[k]);
        cJSON_AddItemToArray(a, x);
      }
    }
    cli_print_json(o);
  } else if (!quiet) {
    printf("%s: %lld traces through %s, %s gathers", out, (long long)total, rq.step.label,
           gathers_sort_name(rq.sort));
    if (vary.n)
      printf(", %zu panels of %s", vary.n, vary.key);
    printf("\n");
  }
  gathers_select_free(&rq.select);
  return EX_OK;
}
