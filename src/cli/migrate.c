/* migrate.c -- `tzero migrate SECTION.sgy --velocity TABLE.csv --out OUT.sgy`.
 *
 * Thin: parse options, load the section and the table, call migrate_run() once (or
 * once per percentage of a --scan), write, print a summary or --json. The methods are
 * in src/migration/migrate.c.
 */
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>
#include <cjson/cJSON.h>

#include "cli.h"
#include "jobopts.h"
#include "tzero/deliver.h"
#include "tzero/digest.h"
#include "tzero/migrate.h"
#include "tzero/qc.h"
#include "tzero/table.h"

#define MAX_SCAN 64

static void help(void)
{
  printf("usage: tzero migrate SECTION.sgy --velocity TABLE.csv --out OUT.sgy [OPTIONS]\n"
         "\n"
         "Post-stack time migration of a stacked section (tzero's own, or any post-stack\n"
         "SEG-Y whose CMP numbers, bytes 21-24, increase along the line). Dipping events\n"
         "move updip to where they belong and diffractions collapse to their apexes.\n"
         "TABLE is an RMS (stacking) velocity table, cmp,time_ms,velocity_mps.\n"
         "Time migration is not depth imaging: with strong lateral velocity change events\n"
         "stay mispositioned and depth migration by a specialist is needed\n"
         "(docs/migration.md).\n"
         "\n"
         "options:\n"
         "  --velocity FILE        RMS velocity table (required)\n"
         "  --out FILE             migrated section (SEG-Y; required)\n"
         "  --method NAME          phase-shift (default; Gazdag 1978: one velocity\n"
         "                         function v(tau), the table's lateral mean) or kirchhoff\n"
         "                         (Schneider 1978: each output CMP's own velocities)\n"
         "  --velocity-pct P       scale the table's velocities, percent (default 100;\n"
         "                         %g to %g)\n"
         "  --aperture-m M         Kirchhoff: largest distance summed from the output\n"
         "                         CMP, metres (default: the whole line)\n"
         "  --max-dip-deg D        Kirchhoff: steepest dip migrated, degrees (default 80)\n"
         "  --no-antialias         Kirchhoff: no operator anti-aliasing (to see what it\n"
         "                         removes)\n"
         "  --max-hz F             highest frequency kept, Hz (default: Nyquist)\n"
         "  --cmp-interval-m DX    CMP spacing when the headers have no CMP X/Y\n"
         "  --cmps FIRST-LAST      write only these CMPs\n"
         "  --scan P1,P2,...       one panel per velocity percentage (with --cmps): trace\n"
         "                         headers carry the percentage x 100 in bytes 233-236\n"
         "  --threads N            threads (default: the machine's online cores); the\n"
         "                         output is bitwise identical for any N\n"
         "  --report FILE          a JSON report of the run (method, velocity, times)\n"
         "  --json                 print that report instead of the summary\n"
         "  --quiet                print nothing on success\n"
         "  -h, --help             this text\n"
         "\n"
         "Every input trace header is kept. Exit status: 0 success, 64 bad option, 65\n"
         "bad section, table or parameter (several traces per CMP, CMP numbers that do\n"
         "not increase, a table that does not cover the line, a percentage out of range,\n"
         "an aperture smaller than the CMP spacing), 66 missing input, 71 out of memory,\n"
         "73 cannot create output, 74 I/O error.\n"
         "\n%s", MIGRATE_MIN_PCT, MIGRATE_MAX_PCT, CLI_CAUTION);
}

static int parse_range(const char *s, int32_t *a, int32_t *b)
{
  char buf[64];
  const char *dash = strchr(s + 1, '-');
  int64_t x, y;
  if (!dash || (size_t)(dash - s) >= sizeof buf)
    return -1;
  memcpy(buf, s, (size_t)(dash - s));
  buf[dash - s] = '\0';
  if (table_parse_i64(buf, &x) || table_parse_i64(dash + 1, &y) || x > y || x < INT32_MIN ||
      y > INT32_MAX)
    return -1;
  *a = (int32_t)x;
  *b = (int32_t)y;
  return 0;
}

static int parse_scan(const char *s, double *pct, size_t *n)
{
  char buf[512];
  snprintf(buf, sizeof buf, "%s", s);
  *n = 0;
  for (char *save = NULL, *tok = strtok_r(buf, ",", &save); tok; tok = strtok_r(NULL, ",", &save)) {
    if (*n >= MAX_SCAN || table_parse_f64(tok, &pct[*n]))
      return -1;
    (*n)++;
  }
  return *n ? 0 : -1;
}

typedef struct run_args {
  const char *input, *velocity, *out, *report;
  int json, quiet;
  double scan[MAX_SCAN];
  size_t nscan;
  double cmp_interval_m;
  const deliver_run *run;
} run_args;

static cJSON *report_json(const run_args *a, const migrate_params *p, const migrate_info *info,
                          const migrate_section *s, const char *vsha, double seconds,
                          size_t ntraces)
{
  cJSON *o = cJSON_CreateObject();
  if (!o)
    return NULL;
  cJSON_AddStringToObject(o, "format", "tzero-migration/1");
  cJSON_AddStringToObject(o, "input", a->input);
  cJSON_AddStringToObject(o, "output", a->out);
  cJSON_AddStringToObject(o, "method", migrate_method_name(p->method));
  cJSON *vo = cJSON_AddObjectToObject(o, "velocity");
  cJSON_AddStringToObject(vo, "file", a->velocity);
  cJSON_AddStringToObject(vo, "sha256", vsha);
  if (a->nscan) {
    cJSON *sc = cJSON_AddArrayToObject(vo, "scan_pct");
    for (size_t i = 0; i < a->nscan; i++)
      cJSON_AddItemToArray(sc, cJSON_CreateNumber(a->scan[i]));
  } else {
    cJSON_AddNumberToObject(vo, "pct", p->velocity_pct);
  }
  cJSON_AddNumberToObject(vo, "lateral_variation_pct", round(info->lateral_variation_pct * 100) / 100);
  cJSON_AddBoolToObject(vo, "one_function", info->one_function);
  cJSON_AddNumberToObject(vo, "imaginary_intervals", (double)info->imaginary_intervals);
  if (p->method == MIGRATE_KIRCHHOFF) {
    if (p->aperture_m > 0)
      cJSON_AddNumberToObject(o, "aperture_m", p->aperture_m);
    else
      cJSON_AddNullToObject(o, "aperture_m");
    cJSON_AddNumberToObject(o, "max_dip_deg", p->max_dip_deg);
    cJSON_AddBoolToObject(o, "antialias", p->antialias);
  }
  if (p->max_hz > 0)
    cJSON_AddNumberToObject(o, "max_hz", p->max_hz);
  else
    cJSON_AddNullToObject(o, "max_hz");
  cJSON_AddNumberToObject(o, "cmp_interval_m", s->cmp_interval_m);
  cJSON_AddStringToObject(o, "cmp_interval_from", s->interval_from_headers ? "headers" : "option");
  cJSON_AddNumberToObject(o, "traces_in", (double)s->ntraces);
  cJSON_AddNumberToObject(o, "traces_out", (double)ntraces);
  cJSON_AddNumberToObject(o, "samples", (double)s->ns);
  cJSON_AddNumberToObject(o, "interval_us", s->interval_us);
  cJSON_AddNumberToObject(o, "seconds", round(seconds * 1e4) / 1e4);
  return o;
}

static int run(const run_args *a, migrate_params *p)
{
  tz_err e;
  tz_err_init(&e);
  migrate_section *s = NULL;
  velocity_table *v = NULL;
  float *all = NULL, *one = NULL;
  char *text = NULL;
  cJSON *rep = NULL;
  migrate_info info;
  memset(&info, 0, sizeof info);
  int rc = migrate_section_load(&s, a->input, a->cmp_interval_m, &e);
  if (!rc)
    rc = velocity_table_load(&v, a->velocity, &e);
  size_t npanels = a->nscan ? a->nscan : 1, per = 0, total = 0;
  double seconds = 0;
  for (size_t k = 0; !rc && k < npanels; k++) {
    if (a->nscan)
      p->velocity_pct = a->scan[k];
    size_t n = 0;
    if ((rc = migrate_run(s, v, p, &one, &n, &info, &e)))
      break;
    seconds += info.seconds;
    if (!all && !(all = malloc(npanels * n * s->ns * sizeof *all))) {
      rc = tz_fail(&e, TZ_E_NOMEM, "%zu migrated panels", npanels);
      break;
    }
    memcpy(all + k * n * s->ns, one, n * s->ns * sizeof *all);
    free(one);
    one = NULL;
    per = n;
    total += n;
  }
  if (!rc) {
    if (!(text = malloc(DELIVER_TEXT_BYTES))) {
      rc = tz_fail(&e, TZ_E_NOMEM, "text");
    } else {
      /* a tzero section carries its textual header on, the migration appended to
       * its processing sequence (deliver.h); any other gets the migration's own */
      char step[DELIVER_STEP_BYTES];
      deliver_migration_step(step, sizeof step, p->method == MIGRATE_KIRCHHOFF, a->velocity,
                             p->velocity_pct, p->aperture_m, p->max_dip_deg, p->max_hz);
      if (a->nscan || !deliver_section_text_continue(s->text, "time-migrated section", step,
                                                     a->run, text, DELIVER_TEXT_BYTES))
        migrate_describe(s, p, a->velocity, a->input, a->scan, a->nscan, text, DELIVER_TEXT_BYTES);
      rc = migrate_write(s, p, all, total, a->nscan ? a->scan : NULL, per, text, a->out, &e);
    }
  }
  if (!rc) {
    if (p->method == MIGRATE_PHASE_SHIFT && info.lateral_variation_pct > 2 && !a->quiet)
      fprintf(stderr, "tzero migrate: the velocities vary by up to %.1f %% along the line; "
              "phase shift used one function (their lateral mean): --method kirchhoff "
              "honours the variation\n", info.lateral_variation_pct);
    if (info.imaginary_intervals && !a->quiet)
      fprintf(stderr, "tzero migrate: %zu Dix intervals had no real interval velocity "
              "(V_rms^2 t not increasing); the velocity above was kept\n",
              info.imaginary_intervals);
    rep = report_json(a, p, &info, s, velocity_table_sha256(v), seconds, total);
    if (!rep)
      rc = tz_fail(&e, TZ_E_NOMEM, "report");
  }
  if (!rc && a->report) {
    char *js = cJSON_Print(rep);
    rc = js ? qc_write_text(a->report, js, &e) : tz_fail(&e, TZ_E_NOMEM, "report");
    free(js);
  }
  int status = EX_OK;
  if (rc) {
    status = cli_report("migrate", &e);
  } else if (a->json) {
    status = cli_print_json(rep);
    rep = NULL;
  } else if (!a->quiet) {
    printf("migrated %zu traces (%s, velocity %s%s, CMP interval %.3f m) in %.2f s -> %s\n",
           total, migrate_method_name(p->method), a->velocity,
           a->nscan ? ", scan" : "", s->cmp_interval_m, seconds, a->out);
  }
  cJSON_Delete(rep);
  free(text);
  free(all);
  free(one);
  velocity_table_free(v);
  migrate_section_free(s);
  return status;
}

int cmd_migrate(int argc, char **argv)
{
  static const struct option opts[] = {
    { "velocity", required_argument, NULL, 'v' },
    { "out", required_argument, NULL, 'o' },
    { "method", required_argument, NULL, 'm' },
    { "velocity-pct", required_argument, NULL, 'p' },
    { "aperture-m", required_argument, NULL, 'a' },
    { "max-dip-deg", required_argument, NULL, 'd' },
    { "no-antialias", no_argument, NULL, 'A' },
    { "max-hz", required_argument, NULL, 'f' },
    { "cmp-interval-m", required_argument, NULL, 'x' },
    { "cmps", required_argument, NULL, 'c' },
    { "scan", required_argument, NULL, 's' },
    { "threads", required_argument, NULL, 't' },
    { "report", required_argument, NULL, 'r' },
    { "json", no_argument, NULL, 'j' },
    { "quiet", no_argument, NULL, 'q' },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  run_args a;
  memset(&a, 0, sizeof a);
  migrate_params p;
  migrate_params_init(&p);
  int c, have_cmps = 0;
  long long ll;
  cli_opt_begin();
  while ((c = cli_getopt(argc, argv, "h", opts)) != -1) {
    switch (c) {
    case 'v': a.velocity = optarg; break;
    case 'o': a.out = optarg; break;
    case 'm':
      if ((p.method = migrate_method_parse(optarg)) < 0)
        return cli_usage_error("migrate", "--method: phase-shift or kirchhoff, not '%s'", optarg);
      break;
    case 'p':
      if (cli_parse_f64("migrate", "--velocity-pct", optarg, &p.velocity_pct))
        return EX_USAGE;
      break;
    case 'a':
      if (cli_parse_f64("migrate", "--aperture-m", optarg, &p.aperture_m))
        return EX_USAGE;
      break;
    case 'd':
      if (cli_parse_f64("migrate", "--max-dip-deg", optarg, &p.max_dip_deg))
        return EX_USAGE;
      break;
    case 'A': p.antialias = 0; break;
    case 'f':
      if (cli_parse_f64("migrate", "--max-hz", optarg, &p.max_hz))
        return EX_USAGE;
      break;
    case 'x':
      if (cli_parse_f64("migrate", "--cmp-interval-m", optarg, &a.cmp_interval_m))
        return EX_USAGE;
      if (!(a.cmp_interval_m > 0))
        return cli_usage_error("migrate", "--cmp-interval-m: a distance above 0 m");
      break;
    case 'c':
      if (parse_range(optarg, &p.first_cmp, &p.last_cmp))
        return cli_usage_error("migrate", "--cmps: expected FIRST-LAST, got '%s'", optarg);
      have_cmps = 1;
      break;
    case 's':
      if (parse_scan(optarg, a.scan, &a.nscan))
        return cli_usage_error("migrate", "--scan: expected percentages P1,P2,... (at most %d), "
                               "got '%s'", MAX_SCAN, optarg);
      break;
    case 't':
      if (cli_parse_i64("migrate", "--threads", optarg, &ll))
        return EX_USAGE;
      if (ll < 0 || ll > 256)
        return cli_usage_error("migrate", "--threads: 0 to 256");
      p.threads = (int)ll;
      break;
    case 'r': a.report = optarg; break;
    case 'j': a.json = 1; break;
    case 'q': a.quiet = 1; break;
    case 'h': help(); return EX_OK;
    default:
      return cli_opt_error("migrate", argv, opts);
    }
  }
  if (optind >= argc)
    return cli_usage_error("migrate", "give the stacked section to migrate");
  if (optind + 1 < argc)
    return cli_usage_error("migrate", "unexpected argument '%s'", argv[optind + 1]);
  a.input = argv[optind];
  if (!a.velocity)
    return cli_usage_error("migrate", "--velocity TABLE.csv is required");
  if (!a.out)
    return cli_usage_error("migrate", "--out FILE is required");
  if (a.nscan && !have_cmps)
    return cli_usage_error("migrate", "--scan needs --cmps FIRST-LAST (the panel's CMPs)");
  deliver_run dr;
  cli_run_init(&dr, argc, argv);
  a.run = &dr;
  return run(&a, &p);
}
