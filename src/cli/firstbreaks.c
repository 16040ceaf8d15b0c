/* firstbreaks.c -- `tzero firstbreaks --job FILE --out PICKS`: first-arrival
 * picks of every live trace of a line, for refraction statics. Thin:
 * flow_setup_load, firstbreak_run, firstbreak_write_picks. */
#include <cjson/cJSON.h>
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

#include "cli.h"
#include "jobopts.h"
#include "tzero/fileio.h"
#include "tzero/firstbreak.h"
#include "tzero/flow.h"

static void help(void)
{
  printf("usage: tzero firstbreaks --job FILE --out PICKS.csv [OPTIONS]\n"
         "\n"
         "Picks the first arrival on every live trace of the job's line. Each field\n"
         "record is read whole and goes through the job's edits and statics; the pick\n"
         "is the maximum of the energy ratio (window after / window before each sample)\n"
         "inside a search window about a linear-moveout guide, moved to the first strong\n"
         "peak or trough after it (or the zero crossing before that), with sub-sample\n"
         "interpolation. Quality is the signal energy fraction at the pick (0 to 1).\n"
         "Picks farther than --outlier-ms from the trend of their record's neighbours are\n"
         "rejected. Without a guide, one is estimated from unguided picks (median time\n"
         "in offset bins).\n"
         "\n"
         "Output (CSV): record,channel,source_station,receiver_station,offset_m,\n"
         "time_ms,quality; stations are numbered along the processing line by the\n"
         "station interval; times are in ms at the processing datum when the job\n"
         "applies statics, else from the shot.\n"
         "\n"
         "options:\n"
         "  --job FILE               the job file (JSON; required)\n"
         "  --out FILE               picks file (CSV; required)\n"
         "  --guide FILE             guide table: offset_m,time_ms (absolute offset, m; ms)\n"
         "  --guide-velocity M/S     a straight guide t = intercept + |offset| / velocity\n"
         "  --guide-intercept-ms MS  its intercept (default 0)\n"
         "  --search-ms MS           half-width of the search window about the guide (40)\n"
         "  --window-ms MS           energy-ratio window (16)\n"
         "  --refine MODE            peak (default), zero (crossing before the peak) or onset\n"
         "  --outlier-ms MS          rejection distance from the record trend (6; 0 = off)\n"
         "  --station-interval M     station numbering interval (m; default the receiver\n"
         "                           interval of the geometry)\n"
         "  --threads N              worker threads (0 = all cores)\n"
         "  --skip-bad-files         leave out missing or corrupt shot files\n"
         "  --json                   print a summary as JSON\n"
         "  --quiet                  print nothing on success\n"
         "  -h, --help               this text\n"
         "\n%s", CLI_CAUTION);
}

enum { O_GUIDE = 1, O_GVEL, O_GINT, O_SEARCH, O_WINDOW, O_REFINE, O_OUTLIER, O_STATION };

int cmd_firstbreaks(int argc, char **argv)
{
  static const struct option opts[] = {
    { "job", required_argument, NULL, 'J' },
    { "out", required_argument, NULL, 'o' },
    { "guide", required_argument, NULL, O_GUIDE },
    { "guide-velocity", required_argument, NULL, O_GVEL },
    { "guide-intercept-ms", required_argument, NULL, O_GINT },
    { "search-ms", required_argument, NULL, O_SEARCH },
    { "window-ms", required_argument, NULL, O_WINDOW },
    { "refine", required_argument, NULL, O_REFINE },
    { "outlier-ms", required_argument, NULL, O_OUTLIER },
    { "station-interval", required_argument, NULL, O_STATION },
    { "json", no_argument, NULL, 'j' },
    { "quiet", no_argument, NULL, 'q' },
    { "help", no_argument, NULL, 'h' },
    JOBOPTS_LONG,
    { NULL, 0, NULL, 0 },
  };
  const char *jobpath = NULL, *out = NULL, *guide_file = NULL;
  double gvel = 0.0, gint = 0.0;
  int json = 0, quiet = 0, c;
  job_overrides ov;
  job_overrides_init(&ov);
  firstbreak_line_opts fo;
  firstbreak_line_opts_init(&fo);
  cli_opt_begin();
  while ((c = cli_getopt(argc, argv, "h", opts)) != -1) {
    int k = cli_job_option("firstbreaks", c, optarg, &ov);
    if (k < 0)
      return EX_USAGE;
    if (k > 0)
      continue;
    switch (c) {
    case 'J': jobpath = optarg; break;
    case 'o': out = optarg; break;
    case O_GUIDE: guide_file = optarg; break;
    case O_GVEL:
      if (cli_parse_f64("firstbreaks", "--guide-velocity", optarg, &gvel)) return EX_USAGE;
      break;
    case O_GINT:
      if (cli_parse_f64("firstbreaks", "--guide-intercept-ms", optarg, &gint)) return EX_USAGE;
      break;
    case O_SEARCH:
      if (cli_parse_f64("firstbreaks", "--search-ms", optarg, &fo.params.search_ms))
        return EX_USAGE;
      break;
    case O_WINDOW:
      if (cli_parse_f64("firstbreaks", "--window-ms", optarg, &fo.params.window_ms))
        return EX_USAGE;
      break;
    case O_OUTLIER:
      if (cli_parse_f64("firstbreaks", "--outlier-ms", optarg, &fo.params.outlier_ms))
        return EX_USAGE;
      break;
    case O_STATION:
      if (cli_parse_f64("firstbreaks", "--station-interval", optarg, &fo.station_interval_m))
        return EX_USAGE;
      if (!(fo.station_interval_m > 0.0))
        return cli_usage_error("firstbreaks", "--station-interval: expected metres > 0");
      break;
    case O_REFINE:
      if (!strcmp(optarg, "peak")) fo.params.refine = FIRSTBREAK_REFINE_PEAK;
      else if (!strcmp(optarg, "zero")) fo.params.refine = FIRSTBREAK_REFINE_ZERO;
      else if (!strcmp(optarg, "onset")) fo.params.refine = FIRSTBREAK_REFINE_NONE;
      else
        return cli_usage_error("firstbreaks", "--refine: expected peak, zero or onset, got '%s'",
                               optarg);
      break;
    case 'j': json = 1; break;
    case 'q': quiet = 1; break;
    case 'h': help(); return EX_OK;
    default:
      return cli_opt_error("firstbreaks", argv, opts);
    }
  }
  if (optind < argc)
    return cli_usage_error("firstbreaks", "unexpected argument '%s'", argv[optind]);
  if (!jobpath || !out)
    return cli_usage_error("firstbreaks", "--job and --out are required");
  if (guide_file && gvel > 0.0)
    return cli_usage_error("firstbreaks", "give --guide or --guide-velocity, not both");
  tz_err e;
  tz_err_init(&e);
  if (firstbreak_params_check(&fo.params, &e))
    return cli_usage_error("firstbreaks", "%s", e.msg);
  if (gvel < 0.0 || (gvel == 0.0 && gint != 0.0))
    return cli_usage_error("firstbreaks", "--guide-velocity: expected m/s > 0");

  firstbreak_guide guide;
  if (guide_file) {
    if (firstbreak_guide_load(&guide, guide_file, &e))
      return cli_report("firstbreaks", &e);
    fo.guide = &guide;
  }
  flow_setup su;
  firstbreak_line *L = NULL;
  cli_progress pg;
  cli_progress_init(&pg, "header pass", quiet || json);
  int rc = flow_setup_load(&su, jobpath, &ov, 0, cli_progress_show, &pg, &e);
  cli_progress_end(&pg);
  if (rc)
    return cli_report("firstbreaks", &e);
  fo.threads = su.job->threads;
  if (gvel > 0.0) {
    double xmax = 0.0;
    for (int32_t k = stack_plan_first_cmp(su.plan); k <= stack_plan_last_cmp(su.plan); k++) {
      stack_cmp_plan cp;
      stack_plan_cmp(su.plan, k, &cp);
      if (cp.offset_max_m > xmax)
        xmax = cp.offset_max_m;
    }
    if ((rc = firstbreak_guide_linear(&guide, gvel, gint, xmax > 0.0 ? xmax : 1000.0, &e)))
      goto fail;
    fo.guide = &guide;
  }
  if ((rc = job_check_output(su.job, out, "--out", 1, &e)) || (rc = fileio_probe(out, &e)))
    goto fail;
  cli_progress_init(&pg, "picking", quiet || json);
  fo.progress = cli_progress_show;
  fo.progress_ctx = &pg;
  rc = firstbreak_run(su.plan, &fo, &L, &e);
  cli_progress_end(&pg);
  int datum = 0;                     /* did the job's statics move any trace? */
  for (size_t i = 0; L && i < L->n && !datum; i++)
    datum = L->t[i].static_ms != 0.0;
  if (rc || (rc = firstbreak_write_picks(L, out, datum, &e)))
    goto fail;
  double rate = L->elapsed_s > 0.0 ? (double)L->n / L->elapsed_s * 60.0 : 0.0;
  if (json) {
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "output", out);
    cJSON_AddNumberToObject(o, "records", (double)L->records);
    cJSON_AddNumberToObject(o, "traces", (double)L->n);
    cJSON_AddNumberToObject(o, "picked", (double)L->picked);
    cJSON_AddNumberToObject(o, "rejected", (double)L->rejected);
    cJSON_AddNumberToObject(o, "unpicked", (double)L->unpicked);
    cJSON_AddNumberToObject(o, "station_interval_m", L->station_interval_m);
    cJSON *g = cJSON_AddObjectToObject(o, "guide");
    cJSON_AddBoolToObject(g, "estimated", L->guide_estimated);
    cJSON *pts = cJSON_AddArrayToObject(g, "points");
    for (size_t i = 0; i < L->guide.n; i++) {
      cJSON *pt = cJSON_CreateObject();
      cJSON_AddNumberToObject(pt, "offset_m", L->guide.offset_m[i]);
      cJSON_AddNumberToObject(pt, "time_ms", L->guide.time_ms[i]);
      cJSON_AddItemToArray(pts, pt);
    }
    cJSON_AddNumberToObject(o, "threads", L->threads);
    cJSON_AddNumberToObject(o, "elapsed_s", L->elapsed_s);
    cJSON_AddNumberToObject(o, "traces_per_minute", rate);
    cli_print_json(o);
  } else if (!quiet) {
    printf("%s: %zu picks on %zu traces of %zu records (%zu rejected off their record's "
           "trend, %zu without a pick); guide %s; %.0f traces/min on %d threads\n",
           out, L->picked, L->n, L->records, L->rejected, L->unpicked,
           L->guide_estimated ? "estimated from the data" : "given", rate, L->threads);
  }
  firstbreak_line_free(L);
  flow_setup_free(&su);
  return EX_OK;
fail:
  tz_err_path(&e, jobpath);
  rc = cli_report("firstbreaks", &e);
  firstbreak_line_free(L);
  flow_setup_free(&su);
  return rc;
}
