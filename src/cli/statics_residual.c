/* statics_residual.c -- `tzero statics residual --job FILE --out TABLE`:
 * surface-consistent residual statics of the job's line. Thin: flow_setup_load,
 * residual_run, then the table and the report. */
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
#include "tzero/residual.h"

static void help(void)
{
  printf("usage: tzero statics residual --job FILE --out TABLE.csv [OPTIONS]\n"
         "\n"
         "Surface-consistent residual statics. The job's line is read once through its\n"
         "edits, statics and conditioning and NMO-corrected with its velocities; each\n"
         "iteration shifts every trace by its current source + receiver static, cross-\n"
         "correlates it with a pilot (the stack of its CMP and the CMPs beside it, less\n"
         "the trace itself) in the window, picks the lag of the largest correlation\n"
         "within the maximum shift, and decomposes the lags into source, receiver and CMP\n"
         "(structure) terms, with --moveout-term also a residual-moveout term M x^2, by\n"
         "Gauss-Seidel least squares (Taner, Koehler and Alhilali 1974; Wiggins, Larner\n"
         "and Wisecup 1976), station terms damped towards 0. The mean and the linear\n"
         "trend of the source and of the receiver terms are removed (the data cannot\n"
         "tell them from structure) and every update is limited to the maximum shift.\n"
         "The stack power in the window is reported before and after each iteration;\n"
         "an update that lowers it is undone and the iterations stop there.\n"
         "\n"
         "Output: the station statics table kind,station,x_m,y_m,elevation_m,static_ms\n"
         "of the residual statics alone: add it to the job's statics.tables.\n"
         "\n"
         "options:\n"
         "  --job FILE            the job file (JSON; required)\n"
         "  --out FILE            residual statics table (CSV; required)\n"
         "  --window-ms A,B       correlation window in NMO-corrected time, ms (default\n"
         "                        from 100 ms to 100 ms before the trace end)\n"
         "  --max-shift-ms MS     largest lag and largest update (default 10)\n"
         "  --iterations N        pick-and-decompose rounds (default 3)\n"
         "  --pilot-cmps N        CMPs on each side in the pilot (default 2)\n"
         "  --min-correlation R   leave out lags of lower normalised correlation (0.3)\n"
         "  --keep-trend          remove only the mean, not the linear trend\n"
         "  --moveout-term        add a residual-moveout term M x^2 (long offsets whose\n"
         "                        moveout the velocities do not flatten)\n"
         "  --moveout-cmps N      CMPs sharing one moveout coefficient (default 100)\n"
         "  --station-interval M  station numbering interval (default the receiver interval)\n"
         "  --velocity FILE       velocity table overriding the job's\n"
         "  --threads N           worker threads for the iterations (0 = all cores; the\n"
         "                        same table for any count)\n"
         "  --skip-bad-files      leave out missing or corrupt shot files\n"
         "  --json                print the summary as JSON\n"
         "  --quiet               print nothing on success\n"
         "  -h, --help            this text\n"
         "\n%s", CLI_CAUTION);
}

enum { O_WINDOW = 1, O_SHIFT, O_ITER, O_PILOT, O_MINC, O_TREND, O_STATION, O_NOMO, O_MOCMPS };

static void show_iteration(void *ctx, int it, const residual_iteration *ri)
{
  const int *quiet = ctx;
  if (*quiet)
    return;
  double gain = ri->power_before > 0.0 ? 100.0 * (ri->power_after / ri->power_before - 1.0) : 0;
  printf("iteration %d: stack power %.6g -> %.6g (%+.1f %%); %zu lags, RMS %.2f ms; "
         "decomposition misfit %.2f ms; trace statics changed by %.2f ms RMS%s\n", it,
         ri->power_before, ri->power_after, gain, ri->picks, ri->pick_rms_ms, ri->fit_rms_ms,
         ri->update_rms_ms,
         ri->reverted ? " (the stack got worse: update undone, iterations stopped)" : "");
  fflush(stdout);
}

int cmd_statics_residual(int argc, char **argv)
{
  static const struct option opts[] = {
    { "job", required_argument, NULL, 'J' },
    { "out", required_argument, NULL, 'o' },
    { "window-ms", required_argument, NULL, O_WINDOW },
    { "max-shift-ms", required_argument, NULL, O_SHIFT },
    { "iterations", required_argument, NULL, O_ITER },
    { "pilot-cmps", required_argument, NULL, O_PILOT },
    { "min-correlation", required_argument, NULL, O_MINC },
    { "keep-trend", no_argument, NULL, O_TREND },
    { "moveout-term", no_argument, NULL, O_NOMO },
    { "moveout-cmps", required_argument, NULL, O_MOCMPS },
    { "station-interval", required_argument, NULL, O_STATION },
    { "json", no_argument, NULL, 'j' },
    { "quiet", no_argument, NULL, 'q' },
    { "help", no_argument, NULL, 'h' },
    JOBOPTS_LONG,
    { NULL, 0, NULL, 0 },
  };
  const char *cmd = "statics residual";
  const char *jobpath = NULL, *out = NULL;
  double wa = NAN, wb = NAN;
  long long n;
  int json = 0, quiet = 0, c;
  residual_line_opts ro;
  residual_line_opts_init(&ro);
  job_overrides ov;
  job_overrides_init(&ov);
  optind = 1;
  opterr = 0;
  while ((c = cli_getopt(argc, argv, "h", opts)) != -1) {
    int k = cli_job_option(cmd, c, optarg, &ov);
    if (k < 0)
      return EX_USAGE;
    if (k > 0)
      continue;
    switch (c) {
    case 'J': jobpath = optarg; break;
    case 'o': out = optarg; break;
    case O_WINDOW: {
      char a[64], b[64];
      const char *comma = strchr(optarg, ',');
      size_t la = comma ? (size_t)(comma - optarg) : 0;
      if (!comma || la >= sizeof a || strlen(comma + 1) >= sizeof b)
        return cli_usage_error(cmd, "--window-ms: expected START,END in ms, got '%s'", optarg);
      memcpy(a, optarg, la);
      a[la] = 0;
      strcpy(b, comma + 1);
      if (cli_parse_f64(cmd, "--window-ms", a, &wa) || cli_parse_f64(cmd, "--window-ms", b, &wb))
        return EX_USAGE;
      if (!(wb > wa) || wa < 0.0)
        return cli_usage_error(cmd, "--window-ms: expected 0 <= START < END, got '%s'", optarg);
      break;
    }
    case O_SHIFT:
      if (cli_parse_f64(cmd, "--max-shift-ms", optarg, &ro.params.max_shift_ms))
        return EX_USAGE;
      if (!(ro.params.max_shift_ms > 0.0) || ro.params.max_shift_ms > 1000.0)
        return cli_usage_error(cmd, "--max-shift-ms: expected 0 < MS <= 1000");
      break;
    case O_ITER:
      if (cli_parse_i64(cmd, "--iterations", optarg, &n))
        return EX_USAGE;
      if (n < 1 || n > RESIDUAL_MAX_ITERATIONS)
        return cli_usage_error(cmd, "--iterations: expected 1 to %d", RESIDUAL_MAX_ITERATIONS);
      ro.params.iterations = (int)n;
      break;
    case O_PILOT:
      if (cli_parse_i64(cmd, "--pilot-cmps", optarg, &n))
        return EX_USAGE;
      if (n < 0 || n > 1000)
        return cli_usage_error(cmd, "--pilot-cmps: expected 0 to 1000");
      ro.params.pilot_half_width = (int)n;
      break;
    case O_MINC:
      if (cli_parse_f64(cmd, "--min-correlation", optarg, &ro.params.min_correlation))
        return EX_USAGE;
      if (!(ro.params.min_correlation >= 0.0 && ro.params.min_correlation < 1.0))
        return cli_usage_error(cmd, "--min-correlation: expected 0 <= R < 1");
      break;
    case O_TREND: ro.params.remove_trend = 0; break;
    case O_NOMO: ro.params.moveout_term = 1; break;
    case O_MOCMPS:
      if (cli_parse_i64(cmd, "--moveout-cmps", optarg, &n))
        return EX_USAGE;
      if (n < 1 || n > 1000000)
        return cli_usage_error(cmd, "--moveout-cmps: expected 1 to 1000000");
      ro.params.moveout_cmps = (int)n;
      break;
    case O_STATION:
      if (cli_parse_f64(cmd, "--station-interval", optarg, &ro.station_interval_m))
        return EX_USAGE;
      if (!(ro.station_interval_m > 0.0))
        return cli_usage_error(cmd, "--station-interval: expected metres > 0");
      break;
    case 'j': json = 1; break;
    case 'q': quiet = 1; break;
    case 'h': help(); return EX_OK;
    default:
      return cli_usage_error(cmd, "unknown or incomplete option '%s'", argv[optind - 1]);
    }
  }
  if (optind < argc)
    return cli_usage_error(cmd, "unexpected argument '%s'", argv[optind]);
  if (!jobpath || !out)
    return cli_usage_error(cmd, "--job and --out are required");

  tz_err e;
  tz_err_init(&e);
  flow_setup su;
  cli_progress pg;
  cli_progress_init(&pg, "header pass", quiet || json);
  int rc = flow_setup_load(&su, jobpath, &ov, 1, cli_progress_show, &pg, &e);
  cli_progress_end(&pg);
  if (rc)
    return cli_report(cmd, &e);
  residual_line *L = NULL;
  if ((rc = job_check_output(su.job, out, "--out", 1, &e)) || (rc = fileio_probe(out, &e)))
    goto fail;
  nmo_axis ax = stack_plan_axis(su.plan);
  if (isnan(wa)) {
    double t0 = ax.t_first_s * 1000.0, t1 = t0 + (double)(ax.ns - 1) * ax.dt_s * 1000.0;
    wa = t0 + 100.0, wb = t1 - 100.0;
    if (!(wb > wa + 10.0))
      wa = t0, wb = t1;
  }
  ro.window_start_ms = wa, ro.window_end_ms = wb;
  ro.velocity = su.velocity;
  ro.params.threads = su.job->threads;
  int quiet_it = quiet || json;
  ro.iteration = show_iteration;
  ro.iteration_ctx = &quiet_it;
  cli_progress_init(&pg, "reading the line", quiet || json);
  ro.progress = cli_progress_show;
  ro.progress_ctx = &pg;
  rc = residual_run(su.plan, &ro, &L, &e);
  cli_progress_end(&pg);
  if (rc)
    goto fail;
  const firstbreak_stations *S = L->stations;
  fileio_out *fo;
  if ((rc = fileio_create(&fo, out, &e)))
    goto fail;
  FILE *f = fileio_stream(fo);
  fprintf(f, "# surface-consistent residual statics (ms): window %.10g to %.10g ms, "
             "%d iterations, maximum shift %.10g ms; add to the job's other statics\n",
          wa, wb, L->result.iterations, ro.params.max_shift_ms);
  fprintf(f, "kind,station,x_m,y_m,elevation_m,static_ms\n");
  double smin = INFINITY, smax = -INFINITY;
  for (size_t i = 0; i < S->n; i++) {
    const firstbreak_station *s = &S->s[i];
    double v = i < L->nsources ? L->result.source_ms[i] : L->result.receiver_ms[i - L->nsources];
    smin = fmin(smin, v), smax = fmax(smax, v);
    fprintf(f, "%s,%d,%.3f,%.3f,%.3f,%.4f\n", s->kind ? "receiver" : "source", (int)s->station,
            s->x_m, s->y_m, s->elevation_m, v);
  }
  if ((rc = fileio_commit(fo, &e)))
    goto fail;
  const residual_result *R = &L->result;
  if (json) {
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "output", out);
    cJSON_AddNumberToObject(o, "traces", (double)L->traces);
    cJSON_AddNumberToObject(o, "sources", (double)L->nsources);
    cJSON_AddNumberToObject(o, "receivers", (double)L->nreceivers);
    cJSON_AddNumberToObject(o, "window_start_ms", wa);
    cJSON_AddNumberToObject(o, "window_end_ms", wb);
    cJSON_AddNumberToObject(o, "max_shift_ms", ro.params.max_shift_ms);
    cJSON_AddNumberToObject(o, "static_min_ms", smin);
    cJSON_AddNumberToObject(o, "static_max_ms", smax);
    cJSON_AddNumberToObject(o, "read_s", L->read_s);
    cJSON_AddNumberToObject(o, "solve_s", L->solve_s);
    cJSON *a = cJSON_AddArrayToObject(o, "iterations");
    for (int i = 0; i < R->iterations; i++) {
      cJSON *x = cJSON_CreateObject();
      cJSON_AddNumberToObject(x, "stack_power_before", R->it[i].power_before);
      cJSON_AddNumberToObject(x, "stack_power_after", R->it[i].power_after);
      cJSON_AddNumberToObject(x, "lags", (double)R->it[i].picks);
      cJSON_AddNumberToObject(x, "lag_rms_ms", R->it[i].pick_rms_ms);
      cJSON_AddNumberToObject(x, "misfit_rms_ms", R->it[i].fit_rms_ms);
      cJSON_AddNumberToObject(x, "update_rms_ms", R->it[i].update_rms_ms);
      cJSON_AddBoolToObject(x, "reverted", R->it[i].reverted);
      cJSON_AddItemToArray(a, x);
    }
    cli_print_json(o);
  } else if (!quiet) {
    printf("%s: %zu sources and %zu receivers from %zu traces; residual statics %.2f to "
           "%.2f ms (window %g to %g ms)\n", out, L->nsources, L->nreceivers, L->traces, smin,
           smax, wa, wb);
  }
  residual_line_free(L);
  flow_setup_free(&su);
  return EX_OK;
fail:
  tz_err_path(&e, jobpath);
  rc = cli_report(cmd, &e);
  residual_line_free(L);
  flow_setup_free(&su);
  return rc;
}
