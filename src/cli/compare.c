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
#include "tzero/page.h"
#include "tzero/qc.h"
#include "tzero/stack.h"
#include "tzero/table.h"

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
         "  --check           exit 1 when any compared CMP outside --cmps changed by\n"
         "                    more than --max-change-db (|energy ratio B/A| in dB), or\n"
         "                    a CMP is in one section only; prints the changed ranges\n"
         "  --max-change-db D the largest change allowed by --check, dB (required)\n"
         "  --cmps RANGE      CMPs the revision meant to change, left out of --check:\n"
         "                    200-300 | 200-300,410-440 (commas combine items)\n"
         "  --csv FILE        write one row per CMP to FILE\n"
         "  --html PAGE.html  write a comparison page: the energy ratio B/A per CMP (dB)\n"
         "                    with the threshold, the peak correlation and its lag (ms),\n"
         "                    and thumbnails of both sections on the same CMP axis; one\n"
         "                    self-contained file for any browser\n"
         "  --per-cmp         also print the per-CMP table\n"
         "  --json            print the summary and every CMP as JSON\n"
         "  --quiet           print nothing (exit status and --csv only)\n"
         "  -h, --help        this text\n"
         "\n"
         "Both sections must share one sample axis (sample count, interval, delay).\n"
         "Exit status: 0 success (with --check: no change beyond the limit), 1 a\n"
         "change beyond --max-change-db outside --cmps (an answer, not an error), 64\n"
         "bad option, 65 bad or mismatched sections, 66 unreadable section.\n"
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

static int in_list(const int32_t *v, size_t n, int32_t c)
{
  for (size_t i = 0; i < n; i++)
    if (v[i] == c)
      return 1;
  return 0;
}

/* --check: the compared CMPs outside the allowed list whose energy ratio moved by
 * more than max_db. Prints one line (ranges of changed CMPs); returns 1 when any
 * changed, else 0. */
static int check_changes(const compare_result *r, double max_db, const int32_t *allow,
                         size_t nallow, const char *cmps_text, int quiet)
{
  size_t changed = 0;
  double worst = 0;
  int32_t run0 = 0, run1 = 0;
  int open = 0;
  char buf[4096];
  size_t n = 0;
  buf[0] = '\0';
  for (size_t i = 0; i <= r->n; i++) {
    int hit = 0;
    if (i < r->n) {
      const compare_cmp *c = &r->cmps[i];
      double db = fabs(c->energy_ratio_db);
      hit = !in_list(allow, nallow, c->cmp) && (db > max_db || isnan(c->energy_ratio_db));
      if (hit) {
        changed++;
        if (!(db <= worst))
          worst = db;
        if (open && c->cmp == run1 + 1) {
          run1 = c->cmp;
          continue;
        }
      }
    }
    if (open && n < sizeof buf - 32)
      n += (size_t)snprintf(buf + n, sizeof buf - n, run0 == run1 ? "%s%d" : "%s%d-%d",
                            n ? ", " : "CMP ", run0, run1);
    open = hit;
    if (hit)
      run0 = run1 = r->cmps[i].cmp;
  }
  int broken = changed > 0 || r->only_a > 0 || r->only_b > 0;
  if (!quiet) {
    printf("check: %s: ", broken ? "broken" : "held");
    const char *where = cmps_text ? " outside " : "";
    if (changed)
      printf("%zu CMP%s%s%s changed by more than %g dB (largest %.3f dB): %s", changed,
             changed == 1 ? "" : "s", where, cmps_text ? cmps_text : "", max_db, worst, buf);
    else
      printf("no CMP%s%s changed by more than %g dB", where, cmps_text ? cmps_text : "", max_db);
    if (r->only_a || r->only_b)
      printf("; %zu CMPs only in A, %zu only in B", r->only_a, r->only_b);
    printf("\n");
  }
  return broken;
}

int cmd_compare(int argc, char **argv)
{
  enum { O_TMIN = 256, O_TMAX, O_LAG, O_THR, O_CSV, O_PER, O_JSON, O_QUIET, O_CHECK, O_MAXDB,
         O_CMPS, O_HTML };
  static const struct option opts[] = {
    { "time-min", required_argument, NULL, O_TMIN },
    { "time-max", required_argument, NULL, O_TMAX },
    { "max-lag", required_argument, NULL, O_LAG },
    { "threshold", required_argument, NULL, O_THR },
    { "csv", required_argument, NULL, O_CSV },
    { "html", required_argument, NULL, O_HTML },
    { "per-cmp", no_argument, NULL, O_PER },
    { "check", no_argument, NULL, O_CHECK },
    { "max-change-db", required_argument, NULL, O_MAXDB },
    { "cmps", required_argument, NULL, O_CMPS },
    { "json", no_argument, NULL, O_JSON },
    { "quiet", no_argument, NULL, O_QUIET },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  compare_params p;
  compare_params_init(&p);
  const char *csv = NULL, *html = NULL;
  int json = 0, quiet = 0, per = 0, check = 0, c;
  double max_db = NAN;
  const char *cmps_text = NULL;
  cli_opt_begin();
  while ((c = cli_getopt(argc, argv, "h", opts)) != -1) {
    int bad = 0;
    switch (c) {
    case O_TMIN: bad = cli_parse_f64("compare", "--time-min", optarg, &p.time_min_ms); break;
    case O_TMAX: bad = cli_parse_f64("compare", "--time-max", optarg, &p.time_max_ms); break;
    case O_LAG: bad = cli_parse_f64("compare", "--max-lag", optarg, &p.max_lag_ms); break;
    case O_THR: bad = cli_parse_f64("compare", "--threshold", optarg, &p.threshold_db); break;
    case O_CSV: csv = optarg; break;
    case O_HTML: html = optarg; break;
    case O_PER: per = 1; break;
    case O_CHECK: check = 1; break;
    case O_MAXDB: bad = cli_parse_f64("compare", "--max-change-db", optarg, &max_db); break;
    case O_CMPS: cmps_text = optarg; break;
    case O_JSON: json = 1; break;
    case O_QUIET: quiet = 1; break;
    case 'h': help(); return EX_OK;
    default:
      return cli_opt_error("compare", argv, opts);
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
  if (check && !(max_db >= 0))
    return cli_usage_error("compare", "--check needs --max-change-db D (dB, 0 or more)");
  if (!check && (!isnan(max_db) || cmps_text))
    return cli_usage_error("compare", "--max-change-db and --cmps go with --check");
  const char *pa = argv[optind], *pb = argv[optind + 1];
  tz_err err;
  tz_err_init(&err);
  int32_t *allow = NULL;
  size_t nallow = 0;
  if (cmps_text &&
      table_parse_ranges(cmps_text, "CMP", STACK_MAX_CMPS, &allow, &nallow, &err))
    return cli_usage_error("compare", "--cmps '%s': %s", cmps_text, err.msg);
  compare_result *r = NULL;
  int rc = fileio_check_not_input(csv, pa, "--csv", &err);
  if (!rc)
    rc = fileio_check_not_input(csv, pb, "--csv", &err);
  if (!rc)
    rc = fileio_check_not_input(html, pa, "--html", &err);
  if (!rc)
    rc = fileio_check_not_input(html, pb, "--html", &err);
  if (!rc)
    rc = compare_sections(pa, pb, &p, &r, &err);
  if (!rc && csv)
    rc = write_csv(csv, r, &err);
  if (!rc && html) {
    char *text = NULL;
    rc = page_compare(pa, pb, r, p.threshold_db, html, &text, &err);
    if (!rc)
      rc = qc_write_text(html, text, &err);
    free(text);
  }
  if (rc) {
    free(allow);
    compare_result_free(r);
    return cli_report("compare", &err);
  }
  int ex = EX_OK;
  if (json)
    ex = print_json(pa, pb, r, &p);
  else if (!quiet)
    print_text(pa, pb, r, &p, per);
  if (check && check_changes(r, max_db, allow, nallow, cmps_text, quiet || json) && ex == EX_OK)
    ex = 1;
  free(allow);
  compare_result_free(r);
  return ex;
}
