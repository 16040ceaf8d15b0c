/* condition.c -- `tzero condition SECTION.sgy --steps STEPS.json --out OUT.sgy`.
 *
 * Thin: parse options, load the steps file (job.h), condition and write the section
 * (flow.h: flow_condition_section), print a summary or --json. The steps are in
 * src/signal/poststack.c.
 */
#include <getopt.h>
#include <stdio.h>
#include <string.h>
#include <sysexits.h>
#include <cjson/cJSON.h>

#include "cli.h"
#include "jobopts.h"
#include "tzero/deliver.h"
#include "tzero/flow.h"
#include "tzero/job.h"
#include "tzero/poststack.h"

static void help(void)
{
  printf("usage: tzero condition SECTION.sgy --steps STEPS.json --out OUT.sgy [OPTIONS]\n"
         "\n"
         "Post-stack conditioning of a stacked or migrated section (tzero's own or any\n"
         "post-stack SEG-Y whose traces share one time axis): the steps of STEPS.json in\n"
         "order, each trace in line (file) order. STEPS.json is a JSON array of steps, as\n"
         "a job's \"poststack\" (docs/poststack.md), or {\"poststack\": [...]}:\n"
         "  {\"step\": \"bandpass\", \"windows\": [{\"from_ms\": 0, \"to_ms\": 800,\n"
         "     \"corners_hz\": [8, 12, 60, 80]}, ...]}   time-variant zero-phase band-pass,\n"
         "                         adjacent windows cross-faded linearly over their overlap\n"
         "  {\"step\": \"fx_prediction\", \"window_traces\": 20, \"window_ms\": 200,\n"
         "     \"operator_traces\": 4, \"prewhitening_pct\": 1, \"min_hz\": 0, \"max_hz\": 80}\n"
         "                         f-x prediction filtering (Canales 1984): random noise down\n"
         "  {\"step\": \"balance\", \"from_ms\": 200, \"to_ms\": 1200, \"target_rms\": 1}\n"
         "                         each trace scaled to that RMS amplitude in the window\n"
         "  {\"step\": \"agc\", \"window_ms\": 500, \"measure\": \"rms\"}   automatic gain control\n"
         "Every trace header is kept as read (fold, CMP and ensemble numbers untouched);\n"
         "dead traces (trace kind 2 or 3) are left as they are. The textual header keeps\n"
         "the input's lines and lists the steps.\n"
         "\n"
         "options:\n"
         "  --steps FILE           the steps (JSON; required)\n"
         "  --out FILE             conditioned section (SEG-Y rev 1; required; may be the\n"
         "                         input: it is read whole first)\n"
         "  --json                 print a JSON summary instead of the line\n"
         "  --quiet                print nothing on success\n"
         "  -h, --help             this text\n"
         "\n"
         "The output appears only when complete. Exit status: 0 success, 64 bad option,\n"
         "65 bad section or steps file (an unknown step, band-pass windows that overlap\n"
         "wrongly or leave gaps, corners that do not increase, a corner at or above\n"
         "Nyquist, an f-x operator longer than its window allows: the message names the\n"
         "JSON path), 66 missing input, 71 out of memory, 73 cannot create output, 74\n"
         "I/O error.\n"
         "\n%s", CLI_CAUTION);
}

int cmd_condition(int argc, char **argv)
{
  static const struct option opts[] = {
    { "steps", required_argument, NULL, 's' },
    { "out", required_argument, NULL, 'o' },
    { "json", no_argument, NULL, 'j' },
    { "quiet", no_argument, NULL, 'q' },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  const char *steps = NULL, *out = NULL;
  int json = 0, quiet = 0, c;
  cli_opt_begin();
  while ((c = getopt_long(argc, argv, "h", opts, NULL)) != -1) {
    switch (c) {
    case 's': steps = optarg; break;
    case 'o': out = optarg; break;
    case 'j': json = 1; break;
    case 'q': quiet = 1; break;
    case 'h': help(); return EX_OK;
    default:
      return cli_opt_error("condition", argv, opts);
    }
  }
  if (optind >= argc)
    return cli_usage_error("condition", "give the section to condition");
  if (optind + 1 < argc)
    return cli_usage_error("condition", "unexpected argument '%s'", argv[optind + 1]);
  const char *in = argv[optind];
  if (!steps)
    return cli_usage_error("condition", "--steps STEPS.json is required");
  if (!out)
    return cli_usage_error("condition", "--out FILE is required");
  tz_err e;
  tz_err_init(&e);
  poststack_chain chain;
  flow_condition_info info;
  deliver_run run;
  cli_run_init(&run, argc, argv);
  if (job_load_poststack(&chain, steps, &e) ||
      flow_condition_section(in, &chain, steps, out, &run, &info, &e))
    return cli_report("condition", &e);
  if (json) {
    cJSON *o = cJSON_CreateObject();
    if (o) {
      cJSON_AddStringToObject(o, "format", "tzero-condition/1");
      cJSON_AddStringToObject(o, "input", in);
      cJSON_AddStringToObject(o, "output", out);
      cJSON_AddStringToObject(o, "steps_file", steps);
      cJSON *a = cJSON_AddArrayToObject(o, "steps");
      for (size_t i = 0; a && i < chain.n; i++)
        cJSON_AddItemToArray(a, cJSON_CreateString(poststack_kind_name(chain.step[i].kind)));
      cJSON_AddNumberToObject(o, "traces", (double)info.traces);
      cJSON_AddNumberToObject(o, "dead_traces", (double)info.dead);
      cJSON_AddNumberToObject(o, "samples", (double)info.samples);
      cJSON_AddNumberToObject(o, "interval_us", info.interval_us);
      cJSON_AddNumberToObject(o, "bad_samples", (double)info.bad_samples);
    }
    return cli_print_json(o);
  }
  if (!quiet) {
    printf("conditioned %zu traces (%zu dead left as they were), %zu step%s -> %s\n",
           info.traces, info.dead, info.steps, info.steps == 1 ? "" : "s", out);
    if (info.bad_samples)
      fprintf(stderr, "tzero condition: %lld non-finite input samples were read as 0\n",
              (long long)info.bad_samples);
  }
  return EX_OK;
}
