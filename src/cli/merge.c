/* merge.c -- `tzero merge PART_QC.json... --out LINE.sgy --report LINE_qc.json`.
 *
 * Thin: parse options, call merge_parts() (src/flow/merge.c), print one line or
 * --json. All checks and the writing are in the library.
 */
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <sysexits.h>
#include <cjson/cJSON.h>

#include "cli.h"
#include "jobopts.h"
#include "tzero/deliver.h"
#include "tzero/merge.h"

static void help(void)
{
  printf("usage: tzero merge PART_QC.json... --out LINE.sgy [--report LINE_qc.json]\n"
         "\n"
         "Joins the parts of one line stacked by separate runs of\n"
         "  tzero stack --job JOB --cmp-range FIRST-LAST --out PART.sgy --report PART_qc.json\n"
         "into one section and QC report, bitwise identical to a stack of the whole line\n"
         "(the report differs only in timing and date). Each PART is a part's QC report;\n"
         "it names the part's section. Parts may be given in any order. Run it from the\n"
         "folder the parts were stacked in when their reports hold relative paths.\n"
         "\n"
         "Refused (exit 65, naming the part and the reason): parts of different jobs or\n"
         "parameters (apart from the CMP range, outputs and threads), a velocity table\n"
         "or shot file changed since a part was stacked (SHA-256, size, traces), other\n"
         "sample axes, parts that overlap, CMPs of the line that are in no part.\n"
         "\n"
         "options:\n"
         "  --out FILE        the joined section (SEG-Y; required)\n"
         "  --report FILE     the joined QC report (JSON)\n"
         "  --json            print the result as JSON\n"
         "  --quiet           print nothing on success\n"
         "  -h, --help        this text\n"
         "\n"
         "Exit status: 0 joined, 64 bad option, 65 parts that do not join, 66 missing\n"
         "part or shot file, 71 out of memory, 73 cannot create output, 74 I/O error.\n"
         "\n%s", CLI_CAUTION);
}

int cmd_merge(int argc, char **argv)
{
  static const struct option opts[] = {
    { "out", required_argument, NULL, 'o' },
    { "report", required_argument, NULL, 'r' },
    { "json", no_argument, NULL, 'j' },
    { "quiet", no_argument, NULL, 'q' },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  deliver_run run;
  cli_run_init(&run, argc, argv);
  merge_opts mo = { .tool_version = TZERO_VERSION, .run = &run };
  int json = 0, quiet = 0, c;
  cli_opt_begin();
  while ((c = cli_getopt(argc, argv, "h", opts)) != -1) {
    switch (c) {
    case 'o': mo.section = optarg; break;
    case 'r': mo.report = optarg; break;
    case 'j': json = 1; break;
    case 'q': quiet = 1; break;
    case 'h': help(); return EX_OK;
    default:
      return cli_opt_error("merge", argv, opts);
    }
  }
  if (optind >= argc)
    return cli_usage_error("merge", "give the QC reports of the parts to join");
  if (!mo.section)
    return cli_usage_error("merge", "--out FILE is required");
  mo.reports = (const char *const *)(argv + optind);
  mo.nparts = (size_t)(argc - optind);
  merge_result res;
  tz_err e;
  tz_err_init(&e);
  if (merge_parts(&mo, &res, &e))
    return cli_report("merge", &e);
  int rc = EX_OK;
  if (json) {
    cJSON *o = cJSON_CreateObject();
    if (o) {
      cJSON_AddStringToObject(o, "line", res.line ? res.line : "");
      cJSON_AddNumberToObject(o, "parts", (double)res.nparts);
      cJSON_AddNumberToObject(o, "cmp_first", res.first_cmp);
      cJSON_AddNumberToObject(o, "cmp_last", res.last_cmp);
      cJSON_AddNumberToObject(o, "cmps", (double)res.ncmps);
      cJSON_AddNumberToObject(o, "traces_stacked", (double)res.traces_stacked);
      cJSON_AddStringToObject(o, "section", mo.section);
      if (mo.report)
        cJSON_AddStringToObject(o, "report", mo.report);
      else
        cJSON_AddNullToObject(o, "report");
    }
    rc = cli_print_json(o);
  } else if (!quiet) {
    printf("joined %zu parts: CMPs %d-%d (%zu), %lld traces stacked -> %s%s%s\n", res.nparts,
           (int)res.first_cmp, (int)res.last_cmp, res.ncmps, (long long)res.traces_stacked,
           mo.section, mo.report ? ", " : "", mo.report ? mo.report : "");
  }
  merge_result_free(&res);
  return rc;
}
