/* compare.c -- `tzero compare A.sgy B.sgy`: two stacks of one line, CMP by CMP. */
#include <cjson/cJSON.h>
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <sysexits.h>

#include "cli.h"
#include "tzero/compare.h"
#include "tzero/fileio.h"

static void help(void)
{
  printf("usage: tzero compare [OPTIONS] A.sgy B.sgy\n"
         "\n"
         "Compares two stacked sections of the same line (for example before and after\n"
         "a velocity revision). Traces are matched by the CMP number in their headers.\n"
         "For each CMP in both: RMS amplitude of A and B, RMS of the difference B - A,\n"
         "energy ratio B/A (dB), and the peak of the normalised cross-correlation with\n"
         "its lag (ms, positive when B is later). Then a summary of the CMP ranges where\n"
         "B is stronger or weaker than A.\n"
         "\n"
         "options:\n"
         "  --time-min MS     start of the comparison window (recorded time, ms)\n"
         "  --time-max MS     end of the window (ms); default: the whole trace\n"
         "  --max-lag MS      cross-correlation lags searched, +-MS (default 20)\n"
         "  --threshold DB    energy ratio beyond +-DB calls B stronger or weaker\n"
         "                    (default 0.5 dB)\n"
         "  --csv FILE        write one row per CMP to FILE\n"
         "  --per-cmp         also print the per-CMP table\n"
         "  --json            print the summary and every CMP as JSON\n"
         "  --quiet           print nothing (exit status and --csv only)\n"
         "  -h, --help        this text\n"
         "\n"
         "Both sections must share one sample axis (sample count, interval, delay).\n"
         "\n%s", CLI_CAUTION);
}

static void add_num(cJSON *o, const char *k, double v)
{
  if (isfinite(v))
    cJSON_AddNumberToObject(o, k, v);
  else
    cJSON_AddNullToObject(o, k);
}

static int print_json(const char *pa, const char *pb, const compare_result *r,
                      const compare_params *p)
{
  cJSON *o = cJSON_CreateObject();
  if (!o)
    return EX_OSERR;
  cJSON_AddStringToObject(o, "a", pa);
  cJSON_AddStringToObject(o, "b", pb);
  cJSON_AddNumberToObject(o, "samples", r->samples);
  cJSON_AddNumberToObject(o, "interval_us", r->interval_us);
  cJSON_AddNumberToObject(o, "delay_ms", r->delay_ms);
  double dt = r->interval_us / 1000.0;
  cJSON_AddNumberToObject(o, "window_start_ms", r->delay_ms + (double)r->window_first * dt);
  cJSON_AddNumberToObject(o, "window_end_ms", r->delay_ms + (double)(r->window_end - 1) * dt);
  cJSON_AddNumberToObject(o, "threshold_db", p->threshold_db);
  cJSON_AddNumberToObject(o, "cmps_compared", (double)r->n);
  cJSON_AddNumberToObject(o, "cmps_only_a", (double)r->only_a);
  cJSON_AddNumberToObject(o, "cmps_only_b", (double)r->only_b);
  cJSON_AddNumberToObject(o, "cmps_b_stronger", (double)r->stronger);
  cJSON_AddNumberToObject(o, "cmps_b_weaker", (double)r->weaker);
  cJSON_AddNumberToObject(o, "cmps_similar", (double)r->similar);
  add_num(o, "energy_ratio_db", r->energy_ratio_db);
  cJSON_AddNumberToObject(o, "mean_rms_difference", r->mean_rms_difference);
  add_num(o, "min_peak_correlation", r->min_peak_correlation);
  cJSON *runs = cJSON_AddArrayToObject(o, "ranges");
  for (size_t i = 0; runs && i < r->nruns; i++) {
    cJSON *x = cJSON_CreateObject();
    if (!x)
      break;
    cJSON_AddNumberToObject(x, "first_cmp", r->runs[i].first_cmp);
    cJSON_AddNumberToObject(x, "last_cmp", r->runs[i].last_cmp);
    cJSON_AddNumberToObject(x, "cmps", (double)r->runs[i].count);
    cJSON_AddStringToObject(x, "b_is", compare_verdict_name(r->runs[i].verdict));
    add_num(x, "mean_energy_ratio_db", r->runs[i].mean_db);
    cJSON_AddItemToArray(runs, x);
  }
  cJSON *cm = cJSON_AddArrayToObject(o, "cmps");
  for (size_t i = 0; cm && i < r->n; i++) {
    const compare_cmp *c = &r->cmps[i];
    cJSON *x = cJSON_CreateObject();
    if (!x)
      break;
    cJSON_AddNumberToObject(x, "cmp", c->cmp);
    cJSON_AddNumberToObject(x, "rms_a", c->rms_a);
    cJSON_AddNumberToObject(x, "rms_b", c->rms_b);
    cJSON_AddNumberToObject(x, "rms_difference", c->rms_difference);
    add_num(x, "relative_difference", c->relative_difference);
    add_num(x, "energy_ratio", c->energy_ratio);
    add_num(x, "energy_ratio_db", c->energy_ratio_db);
    cJSON_AddNumberToObject(x, "peak_correlation", c->peak_correlation);
    cJSON_AddNumberToObject(x, "lag_ms", c->lag_ms);
    cJSON_AddStringToObject(x, "b_is", compare_verdict_name(c->verdict));
    cJSON_AddItemToArray(cm, x);
  }
  return cli_print_json(o);
}

static int write_csv(const char *path, const compare_result *r, tz_err *err)
{
  fileio_out *o;
  int rc = fileio_create(&o, path, err);
  if (rc)
    return rc;
  FILE *fp = fileio_stream(o);
  fprintf(fp, "cmp,rms_a,rms_b,rms_difference,relative_difference,energy_ratio,"
              "energy_ratio_db,peak_correlation,lag_ms,b_is\n");
  for (size_t i = 0; i < r->n; i++) {
    const compare_cmp *c = &r->cmps[i];
    fprintf(fp, "%d,%.9g,%.9g,%.9g,%.9g,%.9g,%.6f,%.6f,%.3f,%s\n", c->cmp, c->rms_a, c->rms_b,
            c->rms_difference, c->relative_difference, c->energy_ratio, c->energy_ratio_db,
            c->peak_correlation, c->lag_ms, compare_verdict_name(c->verdict));
  }
  return fileio_commit(o, err);
}

static void print_text(const char *pa, const char *pb, const compare_result *r,
                       const compare_params *p, int per_cmp)
{
  double dt = r->interval_us / 1000.0;
  printf("A: %s\nB: %s\n", pa, pb);
  printf("sample axis: %u samples at %u us from %d ms; window %g-%g ms\n", r->samples,
         r->interval_us, r->delay_ms, r->delay_ms + (double)r->window_first * dt,
         r->delay_ms + (double)(r->window_end - 1) * dt);
  printf("CMPs compared: %zu (only in A: %zu, only in B: %zu)\n", r->n, r->only_a, r->only_b);
  printf("energy ratio B/A over all compared CMPs: %+.2f dB\n", r->energy_ratio_db);
  printf("mean RMS difference: %.6g; lowest peak correlation: %.4f\n", r->mean_rms_difference,
         r->min_peak_correlation);
  printf("B stronger at %zu CMPs, weaker at %zu, similar at %zu (threshold %g dB)\n",
         r->stronger, r->weaker, r->similar, p->threshold_db);
  for (size_t i = 0; i < r->nruns; i++)
    printf("  CMP %d-%d: B %s (%zu CMPs, mean %+.2f dB)\n", r->runs[i].first_cmp,
           r->runs[i].last_cmp, compare_verdict_name(r->runs[i].verdict), r->runs[i].count,
           r->runs[i].mean_db);
  if (!per_cmp)
    return;
  printf("\n%8s %12s %12s %12s %10s %9s %8s %s\n", "cmp", "rms_a", "rms_b", "rms_diff",
         "ratio_db", "peak_corr", "lag_ms", "b_is");
  for (size_t i = 0; i < r->n; i++) {
    const compare_cmp *c = &r->cmps[i];
    printf("%8d %12.6g %12.6g %12.6g %+10.2f %9.4f %8.2f %s\n", c->cmp, c->rms_a, c->rms_b,
           c->rms_difference, c->energy_ratio_db, c->peak_correlation, c->lag_ms,
           compare_verdict_name(c->verdict));
  }
}

int cmd_compare(int argc, char **argv)
{
  enum { O_TMIN = 256, O_TMAX, O_LAG, O_THR, O_CSV, O_PER, O_JSON, O_QUIET };
  static const struct option opts[] = {
    { "time-min", required_argument, NULL, O_TMIN },
    { "time-max", required_argument, NULL, O_TMAX },
    { "max-lag", required_argument, NULL, O_LAG },
    { "threshold", required_argument, NULL, O_THR },
    { "csv", required_argument, NULL, O_CSV },
    { "per-cmp", no_argument, NULL, O_PER },
    { "json", no_argument, NULL, O_JSON },
    { "quiet", no_argument, NULL, O_QUIET },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  compare_params p;
  compare_params_default(&p);
  const char *csv = NULL;
  int json = 0, quiet = 0, per = 0, c;
  optind = 1;
  opterr = 0;
  while ((c = getopt_long(argc, argv, "h", opts, NULL)) != -1) {
    int bad = 0;
    switch (c) {
    case O_TMIN: bad = cli_parse_f64("compare", "--time-min", optarg, &p.time_min_ms); break;
    case O_TMAX: bad = cli_parse_f64("compare", "--time-max", optarg, &p.time_max_ms); break;
    case O_LAG: bad = cli_parse_f64("compare", "--max-lag", optarg, &p.max_lag_ms); break;
    case O_THR: bad = cli_parse_f64("compare", "--threshold", optarg, &p.threshold_db); break;
    case O_CSV: csv = optarg; break;
    case O_PER: per = 1; break;
    case O_JSON: json = 1; break;
    case O_QUIET: quiet = 1; break;
    case 'h': help(); return EX_OK;
    default:
      return cli_usage_error("compare", "unknown or incomplete option '%s'", argv[optind - 1]);
    }
    if (bad)
      return bad;
  }
  if (argc - optind != 2)
    return cli_usage_error("compare", "expected two sections A.sgy B.sgy, got %d",
                           argc - optind);
  if (p.max_lag_ms < 0 || p.threshold_db < 0)
    return cli_usage_error("compare", "--max-lag and --threshold must be >= 0");
  if (p.time_max_ms <= p.time_min_ms)
    return cli_usage_error("compare", "--time-max %g ms must be later than --time-min %g ms",
                           p.time_max_ms, p.time_min_ms);
  const char *pa = argv[optind], *pb = argv[optind + 1];
  tz_err err;
  tz_err_init(&err);
  compare_result *r = NULL;
  int rc = fileio_check_not_input(csv, pa, "--csv", &err);
  if (!rc)
    rc = fileio_check_not_input(csv, pb, "--csv", &err);
  if (!rc)
    rc = compare_sections(pa, pb, &p, &r, &err);
  if (!rc && csv)
    rc = write_csv(csv, r, &err);
  if (rc) {
    compare_result_free(r);
    return cli_report("compare", &err);
  }
  int ex = EX_OK;
  if (json)
    ex = print_json(pa, pb, r, &p);
  else if (!quiet)
    print_text(pa, pb, r, &p, per);
  compare_result_free(r);
  return ex;
}
