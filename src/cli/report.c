/* report.c -- `tzero report QC.json`: the summary of a saved QC report, one CMP, or
 * the per-CMP fold table as CSV. All formatting is in the qc module. */
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

#include "cli.h"
#include "tzero/fileio.h"
#include "tzero/qc.h"

static void help(void)
{
  printf("usage: tzero report [OPTIONS] QC.json\n"
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
         "  --json             print the report itself (re-formatted JSON)\n"
         "  --quiet            print nothing (with --fold-csv: only write the file)\n"
         "  -h, --help         this text\n"
         "\n%s", CLI_CAUTION);
}

int cmd_report(int argc, char **argv)
{
  static const struct option opts[] = {
    { "cmp", required_argument, NULL, 'c' },
    { "fold-csv", required_argument, NULL, 'f' },
    { "json", no_argument, NULL, 'j' },
    { "quiet", no_argument, NULL, 'q' },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  long long cmp = 0;
  int has_cmp = 0, json = 0, quiet = 0, c;
  const char *csv = NULL;
  optind = 1;
  opterr = 0;
  while ((c = getopt_long(argc, argv, "h", opts, NULL)) != -1) {
    switch (c) {
    case 'c':
      if (cli_parse_i64("report", "--cmp", optarg, &cmp))
        return EX_USAGE;
      has_cmp = 1;
      break;
    case 'f': csv = optarg; break;
    case 'j': json = 1; break;
    case 'q': quiet = 1; break;
    case 'h': help(); return EX_OK;
    default:
      return cli_usage_error("report", "unknown or incomplete option '%s'", argv[optind - 1]);
    }
  }
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
