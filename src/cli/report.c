/* report.c -- `tzero report QC.json`: the summary of a saved QC report, one CMP, or
 * the per-CMP fold table as CSV. All formatting is in the qc module. */
#include <cjson/cJSON.h>
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

#include "cli.h"
#include "tzero/fileio.h"
#include "tzero/limits.h"
#include "tzero/page.h"
#include "tzero/qc.h"

static void help(void)
{
  printf("usage: tzero report [OPTIONS] QC.json\n"
         "       tzero report --check [LIMITS.json] QC.json [QC.json...]\n"
         "       tzero report QC.json --html PAGE.html [--section STACK.sgy]\n"
         "       tzero report --html index.html QC.json QC.json...\n"
         "\n"
         "Prints the summary of a QC report written by `tzero stack` (format\n"
         "tzero-qc/1, docs/qc-report.md): inputs, trace counts and skip reasons,\n"
         "fold (nominal, min, max, mean), mute statistics by offset class,\n"
         "velocity warnings, timing.\n"
         "\n"
         "options:\n"
         "  --cmp N            details of CMP N (position m, fold, offsets m, live\n"
         "                     fraction, full-fold time ms) instead of the summary\n"
         "  --fold-csv FILE    write the per-CMP table (cmp,x_m,y_m,fold,offset_min_m,\n"
         "                     offset_max_m,live_fraction,full_fold_ms) as CSV;\n"
         "                     '-' writes it to stdout\n"
         "  --check            hold each report to the limits of LIMITS.json (the\n"
         "                     first file, when it is not a report) or, without it, to\n"
         "                     the limits recorded in each report (its job's \"limits\");\n"
         "                     for one report one line per limit (limit, measured\n"
         "                     value, held or broken, CMP ranges where a per-CMP\n"
         "                     limit broke), for several one line per report and a\n"
         "                     count (docs/qc-report.md \"Limits\")\n"
         "  --html PAGE.html   write an HTML QC page instead of printing: for one\n"
         "                     report the line's page (summary, fold, live fraction,\n"
         "                     full-fold time, offsets per CMP, mute by offset class,\n"
         "                     velocity functions, skipped traces, warnings linked to\n"
         "                     their CMP or file, a thumbnail of the stacked section,\n"
         "                     parameters, timing); for several reports (or with\n"
         "                     --survey) a survey page: one sortable row per line,\n"
         "                     lines with warnings first, linked to each line's page\n"
         "                     (REPORT.html beside each report, written when missing).\n"
         "                     One self-contained file: open it in any browser\n"
         "  --section FILE     the stacked section for the line page's thumbnail\n"
         "                     (default: the report's section path, then its file\n"
         "                     name beside the report)\n"
         "  --survey           a survey page even for one report\n"
         "  --json             print the report itself (re-formatted JSON); with\n"
         "                     --check, the outcomes as JSON\n"
         "  --quiet            print nothing (with --fold-csv: only write the file)\n"
         "  -h, --help         this text\n"
         "\n"
         "Limits (JSON object; every key optional): min_nominal_fold, min_fold and\n"
         "min_fold_pct (%% of nominal; every CMP of the full-fold part, which comes\n"
         "from the acquisition), max_zero_fold_cmps, max_low_fold_run_cmps (CMPs),\n"
         "max_muted_pct (%%), max_muted_pct_by_offset ([[from_m, to_m, pct], ...]),\n"
         "max_skipped_traces_pct (%%), max_bad_samples, max_velocity_warnings,\n"
         "max_off_line_m (m), and when the report has them max_killed_traces_pct (%%),\n"
         "max_static_ms and max_residual_static_ms (ms).\n"
         "\n"
         "Exit status: 0 success (with --check: every limit held in every report),\n"
         "1 a limit broke (an answer, not an error), 64 bad option, 65 bad limits\n"
         "file or a report of another format or version, 66 unreadable report.\n"
         "\n%s", CLI_CAUTION);
}

/* The limits to use for report r: the file's, else the report's own. */
static int check_one(const limits_set *file_limits, const qc_report *r, limits_result **res,
                     tz_err *e)
{
  limits_set own;
  limits_init(&own);
  int rc = TZ_OK;
  if (!file_limits && (rc = limits_from_report(&own, r, e)))
    return rc;
  rc = limits_check(file_limits ? file_limits : &own, r, res, e);
  limits_clear(&own);
  return rc;
}

static int print_outcomes(const limits_result *res, int json, tz_err *e)
{
  char *t = NULL;
  int rc = json ? limits_result_json(res, &t, e) : limits_result_text(res, &t, e);
  if (!rc)
    fputs(t, stdout);
  if (!rc && json)
    fputc('\n', stdout);
  free(t);
  return rc;
}

/* `--check`: exit 0 all held, 1 any broken; errors keep their own status (the
 * first one wins) after every report has been looked at. */
static int run_check(int nfiles, char **files, int json, int quiet)
{
  tz_err e;
  tz_err_init(&e);
  limits_set lim;
  limits_init(&lim);
  const limits_set *use = NULL;
  char *text = NULL;
  size_t len = 0;
  /* the first file is the limits file unless it is a report */
  if (fileio_read_all(files[0], QC_MAX_BYTES, &text, &len, &e) == TZ_OK &&
      !qc_text_is_report(text, len)) {
    if (nfiles < 2) {
      free(text);
      return cli_usage_error("report", "--check %s: a QC report is required after the limits "
                             "file", files[0]);
    }
    if (len > LIMITS_MAX_BYTES) {
      free(text);
      tz_err_path(&e, files[0]);
      tz_fail(&e, TZ_E_FORMAT, "a limits file of %zu bytes: more than %u", len, LIMITS_MAX_BYTES);
      return cli_report("report", &e);
    }
    int rc = limits_parse(&lim, text, len, files[0], "$", &e);
    free(text);
    if (rc)
      return cli_report("report", &e);
    use = &lim;
    files++;
    nfiles--;
  } else {
    free(text);
    tz_err_init(&e);
  }
  int ex = EX_OK, broken_reports = 0, held_reports = 0, bad_reports = 0;
  cJSON *all = json && nfiles > 1 ? cJSON_CreateArray() : NULL;
  for (int i = 0; i < nfiles; i++) {
    qc_report *r = NULL;
    limits_result *res = NULL;
    tz_err_init(&e);
    int rc = qc_report_load(&r, files[i], &e);
    if (!rc)
      rc = check_one(use, r, &res, &e);
    if (rc) {
      int x = cli_report("report", &e);
      if (ex == EX_OK || ex == 1)
        ex = x;
      bad_reports++;
      if (nfiles > 1 && !quiet && !json)
        printf("%s  %s  not checked (%s)\n", files[i], r ? qc_report_line(r) : "-",
               tz_strstatus(e.status));
    } else {
      if (res->broken)
        broken_reports++;
      else
        held_reports++;
      if (res->broken && ex == EX_OK)
        ex = 1;
      if (quiet) {
      } else if (nfiles == 1) {
        if ((rc = print_outcomes(res, json, &e)))
          ex = cli_report("report", &e);
      } else if (json) {
        char *t = NULL;
        cJSON *o = cJSON_CreateObject();
        cJSON_AddStringToObject(o, "report", files[i]);
        cJSON_AddStringToObject(o, "line", qc_report_line(r));
        cJSON_AddBoolToObject(o, "held", res->broken == 0);
        if (!limits_result_json(res, &t, &e))
          cJSON_AddItemToObject(o, "limits", cJSON_Parse(t));
        free(t);
        cJSON_AddItemToArray(all, o);
      } else {
        char *t = NULL;
        if (!limits_result_brief(res, &t, &e))
          printf("%s  %s  %s%s\n", files[i], qc_report_line(r)[0] ? qc_report_line(r) : "-",
                 res->broken ? "broken: " : "held", res->broken ? t : "");
        free(t);
      }
    }
    limits_result_free(res);
    qc_report_free(r);
  }
  if (all)
    cli_print_json(all);
  else if (nfiles > 1 && !quiet && !json)
    printf("%d reports: %d held, %d broken%s\n", nfiles, held_reports, broken_reports,
           bad_reports ? (bad_reports == 1 ? ", 1 not checked" : ", some not checked") : "");
  limits_clear(&lim);
  return ex;
}

/* `--html`: the line page of one report, or the survey page of several. */
static int run_html(const char *html, const char *section, int many, int n, char **files,
                    int quiet)
{
  tz_err e;
  tz_err_init(&e);
  for (int i = 0; i < n; i++)
    if (fileio_check_not_input(html, files[i], "--html", &e))
      return cli_report("report", &e);
  if (section && (many || fileio_check_not_input(html, section, "--html", &e)))
    return many ? cli_usage_error("report", "--section goes with the page of one line")
                  : cli_report("report", &e);
  int rc;
  size_t written = 0;
  if (many) {
    char *text = NULL;
    rc = page_survey((const char *const *)files, (size_t)n, html, &text, &written, &e);
    if (!rc)
      rc = qc_write_text(html, text, &e);
    free(text);
  } else {
    page_line_opts o = { .report_path = files[0], .section_path = section, .page_path = html };
    rc = page_line_write(&o, &e);
  }
  if (rc)
    return cli_report("report", &e);
  if (!quiet) {
    if (many)
      printf("wrote %s: survey page of %d lines (%zu line pages written beside their reports)\n",
             html, n, written);
    else
      printf("wrote %s: QC page of %s\n", html, files[0]);
  }
  return EX_OK;
}

int cmd_report(int argc, char **argv)
{
  static const struct option opts[] = {
    { "cmp", required_argument, NULL, 'c' },
    { "fold-csv", required_argument, NULL, 'f' },
    { "json", no_argument, NULL, 'j' },
    { "check", no_argument, NULL, 'k' },
    { "html", required_argument, NULL, 'H' },
    { "section", required_argument, NULL, 'S' },
    { "survey", no_argument, NULL, 'V' },
    { "quiet", no_argument, NULL, 'q' },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  long long cmp = 0;
  int has_cmp = 0, json = 0, quiet = 0, check = 0, as_survey = 0, c;
  const char *csv = NULL, *html = NULL, *section = NULL;
  cli_opt_begin();
  while ((c = cli_getopt(argc, argv, "h", opts)) != -1) {
    switch (c) {
    case 'c':
      if (cli_parse_i64("report", "--cmp", optarg, &cmp))
        return EX_USAGE;
      has_cmp = 1;
      break;
    case 'f': csv = optarg; break;
    case 'j': json = 1; break;
    case 'k': check = 1; break;
    case 'H': html = optarg; break;
    case 'S': section = optarg; break;
    case 'V': as_survey = 1; break;
    case 'q': quiet = 1; break;
    case 'h': help(); return EX_OK;
    default:
      return cli_opt_error("report", argv, opts);
    }
  }
  if (check) {
    if (optind >= argc)
      return cli_usage_error("report", "--check: a QC report file is required");
    if (has_cmp || csv)
      return cli_usage_error("report", "--check does not combine with --cmp or --fold-csv");
    return run_check(argc - optind, argv + optind, json, quiet);
  }
  if (html) {
    if (optind >= argc)
      return cli_usage_error("report", "--html: a QC report file is required");
    if (check || has_cmp || csv || json)
      return cli_usage_error("report", "--html does not combine with --check, --cmp, --fold-csv "
                             "or --json");
    return run_html(html, section, as_survey || argc - optind > 1, argc - optind, argv + optind,
                    quiet);
  }
  if (section || as_survey)
    return cli_usage_error("report", "%s goes with --html", section ? "--section" : "--survey");
  if (optind + 1 != argc)
    return cli_usage_error("report", optind >= argc ? "a QC report file is required"
                                                    : "exactly one QC report file expected");
  const char *path = argv[optind];
  tz_err e;
  tz_err_init(&e);
  qc_report *r = NULL;
  char *text = NULL;
  int rc = qc_report_load(&r, path, &e);
  if (rc)
    return cli_report("report", &e);
  if (csv) {
    if ((rc = qc_report_fold_csv(r, &text, &e)))
      goto done;
    if (!strcmp(csv, "-")) {
      fputs(text, stdout);
    } else if ((rc = fileio_check_not_input(csv, path, "--fold-csv", &e))) {
      goto done;
    } else if ((rc = qc_write_text(csv, text, &e))) {
      goto done;
    }
    free(text);
    text = NULL;
    if (!strcmp(csv, "-"))
      goto done;
  }
  if (quiet)
    goto done;
  if (json) {
    char *raw = NULL;
    size_t len = 0;
    if ((rc = fileio_read_all(path, QC_MAX_BYTES, &raw, &len, &e)))
      goto done;
    fputs(raw, stdout);
    free(raw);
    goto done;
  }
  rc = has_cmp ? qc_report_cmp_detail(r, (long)cmp, &text, &e) : qc_report_summary(r, &text, &e);
  if (!rc)
    fputs(text, stdout);
done:
  free(text);
  qc_report_free(r);
  return rc ? cli_report("report", &e) : EX_OK;
}
