/* statics.c -- `tzero statics VERB ...`: station statics tables.
 *
 * A table of verbs, each a function of its own (argc/argv start at the verb):
 * `elevation` is here; further verbs (refraction, residual) add a row to
 * `verbs[]` and a cmd_statics_VERB declared in cli.h, in a file of their own.
 * Thin: options, flow_setup_load (whose plan numbers the stations and computes
 * their statics), statics_table_write, print.
 */
#include <cjson/cJSON.h>
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

#include "cli.h"
#include "jobopts.h"
#include "tzero/fileio.h"
#include "tzero/flow.h"
#include "tzero/statics.h"

static void elevation_usage(FILE *fp)
{
  fprintf(fp,
          "usage: tzero statics elevation --job FILE --out TABLE.csv [--json] [--quiet]\n"
          "\n"
          "Writes the elevation static of every source and receiver station of the\n"
          "job's line as a station statics table (kind,station,x_m,y_m,elevation_m,\n"
          "static_ms; docs/statics.md) and prints a summary. The job's \"statics\"\n"
          "object gives the flat datum (datum_m, metres) and the replacement velocity\n"
          "(replacement_velocity_mps, m/s); with \"uphole\": true and\n"
          "weathering_velocity_mps, the uphole times and source depths give the\n"
          "weathering thickness. static_ms = -(E - D) / v_r in milliseconds (negative\n"
          "moves data earlier). Stations are numbered from their position along the\n"
          "processing line (statics.station_interval_m, default the receiver interval).\n"
          "\n"
          "  --job FILE        job file (docs/job-file.md)\n"
          "  --out TABLE.csv   station statics table to write\n"
          "  --json            print the summary as JSON\n"
          "  --quiet           print nothing on success\n"
          "  -h, --help        this text\n"
          "\n%s", CLI_CAUTION);
}

typedef struct range { double lo, hi; } range;

static void widen(range *r, double v)
{
  if (v < r->lo)
    r->lo = v;
  if (v > r->hi)
    r->hi = v;
}

static int statics_elevation(int argc, char **argv)
{
  const char *cmd = "statics elevation";
  enum { O_JOB = 1, O_OUT, O_JSON, O_QUIET };
  static const struct option lo[] = {
    { "job", required_argument, NULL, O_JOB },
    { "out", required_argument, NULL, O_OUT },
    { "json", no_argument, NULL, O_JSON },
    { "quiet", no_argument, NULL, O_QUIET },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  const char *job = NULL, *out = NULL;
  int json = 0, quiet = 0, c;
  cli_opt_begin();
  while ((c = cli_getopt(argc, argv, "h", lo)) != -1) {
    switch (c) {
    case O_JOB: job = optarg; break;
    case O_OUT: out = optarg; break;
    case O_JSON: json = 1; break;
    case O_QUIET: quiet = 1; break;
    case 'h': elevation_usage(stdout); return EX_OK;
    default: return cli_opt_error(cmd, argv, lo);
    }
  }
  if (optind < argc)
    return cli_usage_error(cmd, "unexpected argument '%s'", argv[optind]);
  if (!job || !out)
    return cli_usage_error(cmd, "--job and --out are required");
  tz_err e;
  tz_err_init(&e);
  flow_setup su;
  int rc = flow_setup_load(&su, job, NULL, 0, NULL, NULL, &e);
  if (rc)
    return cli_report(cmd, &e);
  const job_statics *js = &su.job->statics;
  statics_row *rows = NULL;
  size_t ns = 0, nr = 0;
  const stack_station *src = NULL, *rcv = NULL;
  if (!js->present) {
    tz_err_path(&e, job);
    rc = tz_fail(&e, TZ_E_JOB, "$.statics: the job gives no datum and replacement velocity "
                 "(\"statics\": {\"datum_m\": ..., \"replacement_velocity_mps\": ...})");
  }
  if (!rc)
    rc = job_check_output(su.job, out, "--out", 1, &e);
  if (!rc) {
    src = stack_plan_stations(su.plan, STATICS_SOURCE, &ns);
    rcv = stack_plan_stations(su.plan, STATICS_RECEIVER, &nr);
    if (!(rows = calloc(ns + nr + 1, sizeof *rows)))
      rc = tz_fail(&e, TZ_E_NOMEM, "station table");
  }
  range el = { INFINITY, -INFINITY }, st = { INFINITY, -INFINITY };
  for (size_t i = 0; !rc && i < ns + nr; i++) {
    const stack_station *s = i < ns ? &src[i] : &rcv[i - ns];
    statics_row *r = &rows[i];
    r->kind = s->kind;
    r->station = s->station;
    r->x_m = s->x_m;
    r->y_m = s->y_m;
    r->elevation_m = s->elevation_m;
    r->static_ms = s->elevation_ms;
    widen(&el, s->elevation_m);
    widen(&st, s->elevation_ms);
  }
  if (!rc) {
    char note[300];
    snprintf(note, sizeof note,
             "elevation statics (tzero statics elevation), job %s\n"
             "datum %g m, replacement velocity %g m/s%s; static_ms is added to the time axis",
             job, js->datum_m, js->replacement_velocity_mps,
             js->uphole ? ", uphole weathering thickness" : "");
    rc = statics_table_write(out, rows, ns + nr, note, &e);
  }
  free(rows);
  if (rc) {
    flow_setup_free(&su);
    return cli_report(cmd, &e);
  }
  if (json) {
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "table", out);
    cJSON_AddNumberToObject(o, "datum_m", js->datum_m);
    cJSON_AddNumberToObject(o, "replacement_velocity_mps", js->replacement_velocity_mps);
    cJSON_AddNumberToObject(o, "station_interval_m", stack_plan_station_interval(su.plan));
    cJSON_AddNumberToObject(o, "source_stations", (double)ns);
    cJSON_AddNumberToObject(o, "receiver_stations", (double)nr);
    cJSON_AddNumberToObject(o, "elevation_min_m", el.lo);
    cJSON_AddNumberToObject(o, "elevation_max_m", el.hi);
    cJSON_AddNumberToObject(o, "static_min_ms", st.lo);
    cJSON_AddNumberToObject(o, "static_max_ms", st.hi);
    rc = cli_print_json(o);
  } else if (!quiet) {
    printf("stations    %zu source, %zu receiver (interval %g m)\n", ns, nr,
           stack_plan_station_interval(su.plan));
    printf("elevations  %.2f to %.2f m; datum %g m, replacement velocity %g m/s\n", el.lo,
           el.hi, js->datum_m, js->replacement_velocity_mps);
    printf("statics     %.3f to %.3f ms\n", st.lo, st.hi);
    printf("table       %s\n", out);
  }
  flow_setup_free(&su);
  return rc ? rc : EX_OK;
}

/* The verbs of `tzero statics`. */
static const struct {
  const char *name;
  int (*run)(int argc, char **argv);
  const char *summary;
} verbs[] = {
  { "elevation", statics_elevation, "elevation statics of every station to a flat datum" },
  { "refraction", cmd_statics_refraction,
    "delay-time refraction statics from first-break picks" },
  { "residual", cmd_statics_residual,
    "surface-consistent residual statics from the NMO-corrected line" },
};
#define NVERBS (sizeof verbs / sizeof verbs[0])

static void usage(FILE *fp)
{
  fprintf(fp, "usage: tzero statics VERB [OPTIONS]   (tzero statics VERB --help)\n\n"
              "Station statics tables (docs/statics.md). Verbs:\n");
  for (size_t i = 0; i < NVERBS; i++)
    fprintf(fp, "  %-11s %s\n", verbs[i].name, verbs[i].summary);
  fprintf(fp, "\n%s", CLI_CAUTION);
}

int cmd_statics(int argc, char **argv)
{
  if (argc < 2)
    return cli_usage_error("statics", "a verb is required (%s)", verbs[0].name);
  if (!strcmp(argv[1], "-h") || !strcmp(argv[1], "--help")) {
    usage(stdout);
    return EX_OK;
  }
  for (size_t i = 0; i < NVERBS; i++)
    if (!strcmp(argv[1], verbs[i].name))
      return verbs[i].run(argc - 1, argv + 1);
  return cli_usage_error("statics", "unknown verb '%s'", argv[1]);
}
