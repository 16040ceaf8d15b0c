/* statics_refraction.c -- `tzero statics refraction --job FILE --picks PICKS --out
 * TABLE`: delay-time refraction statics from first-break picks. Thin: the job's
 * plan and stations (firstbreak.h), the picks file, the two-segment fit and the
 * delay-time solution (refraction.h), then the table. */
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
#include "tzero/firstbreak.h"
#include "tzero/flow.h"
#include "tzero/refraction.h"

static void help(void)
{
  printf("usage: tzero statics refraction --job FILE --picks PICKS.csv --out TABLE.csv\n"
         "                                --datum-m M [OPTIONS]\n"
         "\n"
         "Delay-time refraction statics. Picks in the refractor's offset range are\n"
         "modelled as source delay + receiver delay + the path along the refractor\n"
         "times its slowness, for all stations at once (LSQR sparse least squares; the\n"
         "refractor velocity in cells of one station interval, smoothed along the\n"
         "line); picks that miss by more than max(--reject-ms, 3 x RMS) are dropped and\n"
         "the system solved again. The offset range is given, or starts at twice the\n"
         "crossover distance of a two-segment (direct wave / head wave) fit of all\n"
         "picks. Weathering thickness h = delay v0 v1 / sqrt(v1^2 - v0^2) with the\n"
         "weathering velocity v0 (given, or the median |x| / t of the picks nearer than\n"
         "half the crossover: the direct wave) and the\n"
         "local refractor velocity v1; static = -(h / v0 + (E - h - datum) / vr) (ms).\n"
         "Picks must be field times (from the shot: a job without statics).\n"
         "\n"
         "Output: the station statics table kind,station,x_m,y_m,elevation_m,\n"
         "static_ms plus delay_ms, weathering_m, refractor_mps and picks (stations of\n"
         "the line with fewer than 3 picks get the delay and velocity interpolated\n"
         "along it from the receiver stations that have them).\n"
         "\n"
         "options:\n"
         "  --job FILE                  the job file (JSON; required)\n"
         "  --picks FILE                first-break picks (tzero firstbreaks; required)\n"
         "  --out FILE                  statics table (CSV; required)\n"
         "  --datum-m M                 flat datum elevation, metres (required)\n"
         "  --replacement-velocity M/S  velocity below the weathering (default: the\n"
         "                              mean refractor velocity found)\n"
         "  --weathering-velocity M/S   weathering velocity (default: from the fit)\n"
         "  --offset-min-m M            refractor offsets from (absolute, metres)\n"
         "  --offset-max-m M            and up to (default: the largest)\n"
         "  --smoothing W               refractor velocity smoothing weight (default 1)\n"
         "  --reject-ms MS              pick rejection after the first solve (default 4;\n"
         "                              0 keeps all)\n"
         "  --station-interval M        station numbering interval (default the receiver\n"
         "                              interval)\n"
         "  --skip-bad-files            leave out missing or corrupt shot files\n"
         "  --json                      print the summary as JSON\n"
         "  --quiet                     print nothing on success\n"
         "  -h, --help                  this text\n"
         "\n%s", CLI_CAUTION);
}

/* A station's own delay needs this many picks; with fewer (a line end, say) it is
 * interpolated along the line from the stations that have them. */
#define MIN_PICKS 3

enum { O_PICKS = 1, O_DATUM, O_VR, O_V0, O_XMIN, O_XMAX, O_SMOOTH, O_REJECT, O_STATION };

/* Delay and refractor velocity at `along` from the receiver stations of the
 * solution, linear between them, held beyond the ends. */
static void interpolate(const refraction_solution *s, double along, double *delay, double *v)
{
  const refraction_station *lo = NULL, *hi = NULL;
  for (size_t i = 0; i < s->nstations; i++) {
    const refraction_station *r = &s->stations[i];
    if (r->kind != REFRACTION_RECEIVER || r->picks < MIN_PICKS)
      continue;
    if (r->along_m <= along && (!lo || r->along_m > lo->along_m))
      lo = r;
    if (r->along_m >= along && (!hi || r->along_m < hi->along_m))
      hi = r;
  }
  if (!lo) lo = hi;
  if (!hi) hi = lo;
  if (!lo) {
    *delay = NAN, *v = NAN;
    return;
  }
  double f = hi->along_m > lo->along_m ? (along - lo->along_m) / (hi->along_m - lo->along_m) : 0;
  *delay = lo->delay_ms + f * (hi->delay_ms - lo->delay_ms);
  *v = lo->refractor_mps + f * (hi->refractor_mps - lo->refractor_mps);
}

static int cmp_dbl(const void *a, const void *b)
{
  double x = *(const double *)a, y = *(const double *)b;
  return (x > y) - (x < y);
}

/* The weathering velocity from the direct wave, which leaves the source at
 * time 0: the median of |x| / t over the picks nearer than half the crossover
 * distance (at least 10 of them), else the slope of the fit's direct segment. */
static double direct_velocity(const double *x, const double *t, size_t n, double xlim,
                              double fallback)
{
  double *v = malloc((n ? n : 1) * sizeof *v);
  size_t m = 0;
  for (size_t i = 0; v && i < n; i++)
    if (x[i] > 0.0 && x[i] <= xlim && t[i] > 0.0)
      v[m++] = 1000.0 * x[i] / t[i];
  double r = fallback;
  if (m >= 10) {
    qsort(v, m, sizeof *v, cmp_dbl);
    r = m % 2 ? v[m / 2] : 0.5 * (v[m / 2 - 1] + v[m / 2]);
  }
  free(v);
  return r;
}

typedef struct row {
  const firstbreak_station *st;
  double delay, v1, h, statics;
  size_t picks;
  double rms;
} row;

static int cmp_rms(const void *a, const void *b)
{
  const row *p = *(const row *const *)a, *q = *(const row *const *)b;
  double x = isnan(p->rms) ? -1 : p->rms, y = isnan(q->rms) ? -1 : q->rms;
  return (x < y) - (x > y);
}

int cmd_statics_refraction(int argc, char **argv)
{
  static const struct option opts[] = {
    { "job", required_argument, NULL, 'J' },
    { "picks", required_argument, NULL, O_PICKS },
    { "out", required_argument, NULL, 'o' },
    { "datum-m", required_argument, NULL, O_DATUM },
    { "replacement-velocity", required_argument, NULL, O_VR },
    { "weathering-velocity", required_argument, NULL, O_V0 },
    { "offset-min-m", required_argument, NULL, O_XMIN },
    { "offset-max-m", required_argument, NULL, O_XMAX },
    { "smoothing", required_argument, NULL, O_SMOOTH },
    { "reject-ms", required_argument, NULL, O_REJECT },
    { "station-interval", required_argument, NULL, O_STATION },
    { "json", no_argument, NULL, 'j' },
    { "quiet", no_argument, NULL, 'q' },
    { "help", no_argument, NULL, 'h' },
    JOBOPTS_LONG,
    { NULL, 0, NULL, 0 },
  };
  const char *cmd = "statics refraction";
  const char *jobpath = NULL, *pickpath = NULL, *out = NULL;
  double datum = NAN, vr = 0.0, v0 = 0.0, xmin = -1.0, xmax = -1.0, interval = 0.0;
  int json = 0, quiet = 0, c, v0_estimated = 0;
  refraction_params rp;
  refraction_params_init(&rp);
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
    double *dst = NULL;
    const char *name = NULL;
    switch (c) {
    case 'J': jobpath = optarg; break;
    case O_PICKS: pickpath = optarg; break;
    case 'o': out = optarg; break;
    case O_DATUM: dst = &datum, name = "--datum-m"; break;
    case O_VR: dst = &vr, name = "--replacement-velocity"; break;
    case O_V0: dst = &v0, name = "--weathering-velocity"; break;
    case O_XMIN: dst = &xmin, name = "--offset-min-m"; break;
    case O_XMAX: dst = &xmax, name = "--offset-max-m"; break;
    case O_SMOOTH: dst = &rp.smoothing, name = "--smoothing"; break;
    case O_REJECT: dst = &rp.reject_ms, name = "--reject-ms"; break;
    case O_STATION: dst = &interval, name = "--station-interval"; break;
    case 'j': json = 1; break;
    case 'q': quiet = 1; break;
    case 'h': help(); return EX_OK;
    default:
      return cli_usage_error(cmd, "unknown or incomplete option '%s'", argv[optind - 1]);
    }
    if (dst && cli_parse_f64(cmd, name, optarg, dst))
      return EX_USAGE;
    if (dst && dst != &datum && *dst < 0.0)
      return cli_usage_error(cmd, "%s: expected a value >= 0", name);
  }
  if (optind < argc)
    return cli_usage_error(cmd, "unexpected argument '%s'", argv[optind]);
  if (!jobpath || !pickpath || !out)
    return cli_usage_error(cmd, "--job, --picks and --out are required");
  if (isnan(datum))
    return cli_usage_error(cmd, "--datum-m is required (the flat datum elevation)");
  if (xmin >= 0.0 && xmax >= 0.0 && !(xmax > xmin))
    return cli_usage_error(cmd, "--offset-max-m must exceed --offset-min-m");
  if ((v0 > 0.0 && vr > 0.0 && !(vr > v0)))
    return cli_usage_error(cmd, "--replacement-velocity must exceed --weathering-velocity");

  tz_err e;
  tz_err_init(&e);
  flow_setup su;
  cli_progress pg;
  cli_progress_init(&pg, "header pass", quiet || json);
  int rc = flow_setup_load(&su, jobpath, &ov, 0, cli_progress_show, &pg, &e);
  cli_progress_end(&pg);
  if (rc)
    return cli_report(cmd, &e);
  firstbreak_stations *st = NULL;
  firstbreak_file_pick *fp = NULL;
  refraction_pick *rpk = NULL;
  refraction_solution *sol = NULL;
  row *rows = NULL;
  row **order = NULL;
  double *xs = NULL, *ts = NULL;
  size_t np = 0, nuse = 0;
  refraction_two_segments fit;
  int have_fit = 0;
  if ((rc = job_check_output(su.job, out, "--out", 1, &e)) ||
      (rc = fileio_check_not_input(out, pickpath, "--out", &e)) || (rc = fileio_probe(out, &e)))
    goto fail;
  if ((rc = firstbreak_stations_scan(su.plan, interval, &st, &e)))
    goto fail;
  if ((rc = firstbreak_picks_load(pickpath, st, &fp, &np, &e)))
    goto fail_file;
  if (np == 0) {
    rc = tz_fail(&e, TZ_E_FORMAT, "no picks");
    tz_err_path(&e, pickpath);
    goto fail_file;
  }
  xs = malloc(np * sizeof *xs);
  ts = malloc(np * sizeof *ts);
  rpk = malloc(np * sizeof *rpk);
  if (!xs || !ts || !rpk) {
    rc = tz_fail(&e, TZ_E_NOMEM, "%zu picks", np);
    goto fail;
  }
  for (size_t i = 0; i < np; i++)
    xs[i] = fabs(fp[i].offset_m), ts[i] = fp[i].time_ms;
  tz_err fe;
  tz_err_init(&fe);
  have_fit = refraction_fit_two_segments(xs, ts, np, 3, &fit, &fe) == TZ_OK;
  if (xmin < 0.0) {
    if (!have_fit) {
      rc = tz_fail(&e, TZ_E_FORMAT, "no crossover to choose the refractor's offsets by (%s); "
                   "give --offset-min-m", fe.msg);
      tz_err_path(&e, pickpath);
      goto fail_file;
    }
    xmin = 2.0 * fit.crossover_m;
  }
  if (xmax < 0.0)
    xmax = INFINITY;
  if (!(v0 > 0.0)) {
    if (!have_fit || !(fit.direct_mps > 0.0)) {
      rc = tz_fail(&e, TZ_E_FORMAT, "no direct-wave slope to estimate the weathering velocity "
                   "by; give --weathering-velocity");
      tz_err_path(&e, pickpath);
      goto fail_file;
    }
    v0 = direct_velocity(xs, ts, np, 0.5 * fit.crossover_m, fit.direct_mps);
    v0_estimated = 1;
  }
  for (size_t i = 0; i < np; i++) {
    if (xs[i] < xmin || xs[i] > xmax)
      continue;
    const firstbreak_station *s = firstbreak_stations_find(st, 0, fp[i].source_station);
    const firstbreak_station *r = firstbreak_stations_find(st, 1, fp[i].receiver_station);
    rpk[nuse++] = (refraction_pick){ fp[i].source_station, fp[i].receiver_station, s->along_m,
                                     r->along_m, fp[i].time_ms,
                                     fp[i].quality > 0.05 ? fp[i].quality : 0.05 };
  }
  if (nuse == 0) {
    rc = tz_fail(&e, TZ_E_FORMAT, "no picks in the refractor's offset range %.1f to %.1f m",
                 xmin, xmax);
    tz_err_path(&e, pickpath);
    goto fail_file;
  }
  rp.cell_m = st->interval_m;
  if ((rc = refraction_solve(&rp, rpk, nuse, &sol, &e)))
    goto fail;
  if (!(vr > 0.0)) {
    double sum = 0.0;
    size_t n = 0;
    for (size_t i = 0; i < sol->nstations; i++)
      if (sol->stations[i].kind == REFRACTION_RECEIVER && isfinite(sol->stations[i].refractor_mps))
        sum += sol->stations[i].refractor_mps, n++;
    vr = n ? sum / (double)n : 0.0;
  }
  rows = calloc(st->n, sizeof *rows);
  order = malloc(st->n * sizeof *order);
  if (!rows || !order) {
    rc = tz_fail(&e, TZ_E_NOMEM, "%zu stations", st->n);
    goto fail;
  }
  double smin = INFINITY, smax = -INFINITY;
  for (size_t i = 0; i < st->n; i++) {
    row *w = &rows[i];
    w->st = &st->s[i];
    const refraction_station *rs =
        refraction_find(sol, w->st->kind ? REFRACTION_RECEIVER : REFRACTION_SOURCE,
                        w->st->station);
    if (rs && rs->picks >= MIN_PICKS) {
      w->delay = rs->delay_ms, w->v1 = rs->refractor_mps, w->picks = rs->picks;
      w->rms = rs->residual_rms_ms;
    } else {
      interpolate(sol, w->st->along_m, &w->delay, &w->v1);
      w->rms = NAN;
    }
    if (!(w->v1 > v0))
      w->v1 = vr > v0 ? vr : v0 * 1.01;
    w->h = refraction_thickness_m(w->delay > 0.0 ? w->delay : 0.0, v0, w->v1);
    w->statics = refraction_datum_static_ms(w->st->elevation_m, w->h, v0, datum, vr);
    smin = fmin(smin, w->statics), smax = fmax(smax, w->statics);
    order[i] = w;
  }
  fileio_out *fo;
  if ((rc = fileio_create(&fo, out, &e)))
    goto fail;
  FILE *f = fileio_stream(fo);
  fprintf(f, "# refraction statics (delay-time method): datum %.10g m, weathering %.10g m/s, "
             "replacement %.10g m/s\n", datum, v0, vr);
  fprintf(f, "kind,station,x_m,y_m,elevation_m,static_ms,delay_ms,weathering_m,refractor_mps,"
             "picks\n");
  for (size_t i = 0; i < st->n; i++) {
    const row *w = &rows[i];
    fprintf(f, "%s,%d,%.3f,%.3f,%.3f,%.4f,%.4f,%.3f,%.1f,%zu\n",
            w->st->kind ? "receiver" : "source", (int)w->st->station, w->st->x_m, w->st->y_m,
            w->st->elevation_m, w->statics, w->delay, w->h, w->v1, w->picks);
  }
  if ((rc = fileio_commit(fo, &e)))
    goto fail;
  qsort(order, st->n, sizeof *order, cmp_rms);
  size_t nworst = st->n < 5 ? st->n : 5;
  if (json) {
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "output", out);
    cJSON_AddNumberToObject(o, "stations", (double)st->n);
    cJSON_AddNumberToObject(o, "picks", (double)np);
    cJSON_AddNumberToObject(o, "picks_in_range", (double)nuse);
    cJSON_AddNumberToObject(o, "picks_used", (double)sol->picks_used);
    cJSON_AddNumberToObject(o, "picks_rejected", (double)sol->picks_rejected);
    cJSON_AddNumberToObject(o, "offset_min_m", xmin);
    if (isfinite(xmax))
      cJSON_AddNumberToObject(o, "offset_max_m", xmax);
    if (have_fit) {
      cJSON *g = cJSON_AddObjectToObject(o, "two_segment_fit");
      cJSON_AddNumberToObject(g, "crossover_m", fit.crossover_m);
      cJSON_AddNumberToObject(g, "direct_mps", fit.direct_mps);
      cJSON_AddNumberToObject(g, "refractor_mps", fit.refractor_mps);
      cJSON_AddNumberToObject(g, "intercept_ms", fit.intercept_ms);
      cJSON_AddNumberToObject(g, "rms_ms", fit.rms_ms);
    }
    cJSON_AddNumberToObject(o, "weathering_velocity_mps", v0);
    cJSON_AddBoolToObject(o, "weathering_velocity_estimated", v0_estimated);
    cJSON_AddNumberToObject(o, "replacement_velocity_mps", vr);
    cJSON_AddNumberToObject(o, "datum_m", datum);
    cJSON_AddNumberToObject(o, "residual_rms_ms", sol->residual_rms_ms);
    cJSON_AddNumberToObject(o, "iterations", (double)sol->iterations);
    cJSON_AddNumberToObject(o, "static_min_ms", smin);
    cJSON_AddNumberToObject(o, "static_max_ms", smax);
    cJSON *a = cJSON_AddArrayToObject(o, "worst_stations");
    for (size_t i = 0; i < nworst && !isnan(order[i]->rms); i++) {
      cJSON *x = cJSON_CreateObject();
      cJSON_AddStringToObject(x, "kind", order[i]->st->kind ? "receiver" : "source");
      cJSON_AddNumberToObject(x, "station", order[i]->st->station);
      cJSON_AddNumberToObject(x, "residual_rms_ms", order[i]->rms);
      cJSON_AddNumberToObject(x, "picks", (double)order[i]->picks);
      cJSON_AddItemToArray(a, x);
    }
    cli_print_json(o);
  } else if (!quiet) {
    printf("%s: %zu stations; statics %.2f to %.2f ms (datum %g m, weathering %.0f m/s%s, "
           "replacement %.0f m/s)\n", out, st->n, smin, smax, datum, v0,
           v0_estimated ? " from the direct wave" : "", vr);
    if (have_fit)
      printf("two-segment fit: crossover %.1f m, direct %.0f m/s, refractor %.0f m/s, "
             "intercept %.2f ms\n", fit.crossover_m, fit.direct_mps, fit.refractor_mps,
             fit.intercept_ms);
    printf("picks: %zu read, %zu at offsets from %.1f", np, nuse, xmin);
    if (isfinite(xmax))
      printf(" to %.1f", xmax);
    printf(" m, %zu used, %zu rejected; residual RMS %.3f ms\n", sol->picks_used,
           sol->picks_rejected, sol->residual_rms_ms);
    printf("worst stations:");
    for (size_t i = 0; i < nworst && !isnan(order[i]->rms); i++)
      printf(" %s %d (%.2f ms, %zu picks)%s", order[i]->st->kind ? "receiver" : "source",
             (int)order[i]->st->station, order[i]->rms, order[i]->picks,
             i + 1 < nworst ? "," : "");
    printf("\n");
  }
  rc = EX_OK;
  goto done;
fail_file:
  rc = cli_report(cmd, &e);
  goto done;
fail:
  tz_err_path(&e, jobpath);
  rc = cli_report(cmd, &e);
done:
  free(xs), free(ts), free(rpk), free(fp), free(rows), free(order);
  refraction_solution_free(sol);
  firstbreak_stations_free(st);
  flow_setup_free(&su);
  return rc;
}
