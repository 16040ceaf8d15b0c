/* semblance.c -- `tzero semblance`: velocity scans at chosen CMPs, automatic picks,
 * a velocity table for `tzero stack`, panels and a JSON summary. */
#include <cjson/cJSON.h>
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>
#include <unistd.h>

#include "cli.h"
#include "jobopts.h"
#include "tzero/fileio.h"
#include "tzero/geometry.h"
#include "tzero/job.h"
#include "tzero/segy.h"
#include "tzero/semblance.h"
#include "tzero/stack.h"
#include "tzero/table.h"
#include "tzero/velocity.h"

static void help(void)
{
  printf("usage: tzero semblance --job FILE --cmps LIST [OPTIONS]\n"
         "\n"
         "Semblance velocity scans (Neidell and Taner 1971) at the chosen CMPs of the\n"
         "line described by a job file, with the job's exact NMO, interpolation,\n"
         "stretch mute and top mute (those of `tzero stack`). Picks each panel\n"
         "automatically and writes a velocity table that `tzero stack` accepts.\n"
         "\n"
         "selection:\n"
         "  --job FILE               job file (JSON; its velocity file is not needed)\n"
         "  --cmps LIST              analysis CMPs: 250 | 200,250,300 | 200-300 |\n"
         "                           200-900:50 (commas combine items)\n"
         "  --supergather K          add the K neighbouring CMPs either side (default 0)\n"
         "  --smooth-cmps N          smooth the table between analysis CMPs: each knot's\n"
         "                           velocity becomes the mean of the picked functions\n"
         "                           of the analysis CMPs within N CMPs of its own, at\n"
         "                           its time (default 0: as picked; --json and the\n"
         "                           text keep the picks as made)\n"
         "scan:\n"
         "  --velocity-min V         first trial velocity, m/s (default 1400)\n"
         "  --velocity-max V         last trial velocity, m/s (default 4500)\n"
         "  --velocity-step V        trial velocity step, m/s (default 20)\n"
         "  --window MS              semblance window length, ms (default: 1.5 periods\n"
         "                           of each supergather's dominant frequency, the peak\n"
         "                           of its mean amplitude spectrum; 4-120 ms)\n"
         "  --min-live F             semblance is 0 where fewer than F x the traces\n"
         "                           (and fewer than 2) are live after the mutes\n"
         "                           (fraction 0..1, default 0.25)\n"
         "  --min-fold N             no pick where fewer than N traces are live after\n"
         "                           the mutes at the pick time, counting the\n"
         "                           supergather (default 6; 0 = no floor); such CMPs\n"
         "                           are named on stderr and in the table's comment\n"
         "  --stretch-limit PCT      override the job's stretch mute limit, %%\n"
         "  --threads N              worker threads (default: the job's, 0 = all cores)\n"
         "picking:\n"
         "  --time-min MS            earliest pick, ms (default 0)\n"
         "  --time-max MS            latest pick, ms (default: end of trace)\n"
         "  --min-semblance S        weakest maximum picked, 0..1 (default 0.3)\n"
         "  --min-power R            weakest stack power picked, as a fraction of the\n"
         "                           panel's largest (default 0.001)\n"
         "  --min-separation MS      least time between picks, ms (default 60)\n"
         "  --interval-min V         lowest Dix interval velocity between picks, m/s\n"
         "                           (default 300)\n"
         "  --interval-max V         highest Dix interval velocity, m/s (default 7000)\n"
         "  --allow-inversions       let velocity decrease with time\n"
         "outputs:\n"
         "  --out FILE.csv           velocity table (cmp,time_ms,velocity_mps) of the picks\n"
         "  --panels FILE.sgy        semblance panels: per CMP one trace per trial\n"
         "                           velocity (CMP in bytes 21-24, trial velocity in m/s\n"
         "                           in bytes 37-40, its index in 25-28)\n"
         CLI_EDITS_HELP
         "  --json                   print the picks with their semblance as JSON\n"
         "  --quiet                  print nothing but errors\n"
         "  -h, --help               this text\n"
         "\n"
         "Picks are local maxima of semblance x stack power, chained by dynamic\n"
         "programming for the largest summed semblance under the separation,\n"
         "monotonic-velocity and interval-velocity rules. Review weak picks (low\n"
         "semblance) before stacking.\n"
         "\n%s", CLI_CAUTION);
}

#define SEMBLANCE_CLI_BATCH 256   /* CMPs whose gathers are held at once */

struct opts {
  const char *edits;
  const char *job, *cmps, *out, *panels;
  long long supergather;
  long long smooth_cmps;   /* --smooth-cmps N: the table smoothed over N CMPs either side */
  long long min_fold;
  long long threads;
  double stretch;
  int json, quiet;
  int window_given;        /* --window: one window for every CMP */
  semblance_params sp;
  semblance_pick_params pp;
};

/* Results of one analysis CMP. */
struct cmp_result {
  int32_t cmp;
  int32_t first, last;     /* CMPs of the supergather */
  size_t ntraces;
  size_t max_live;         /* most traces live at any pick time and trial velocity */
  int low_fold;            /* 1: no pick for lack of fold (max_live < --min-fold) */
  double window_ms;        /* semblance window used */
  double dominant_hz;      /* the supergather's dominant frequency (0 with --window) */
  semblance_pick *picks;
  size_t npicks;
};

enum {
  O_JOB = 256, O_CMPS, O_SUPER, O_VMIN, O_VMAX, O_VSTEP, O_WIN, O_STRETCH, O_THREADS, O_TMIN,
  O_TMAX, O_MINS, O_MINP, O_MINLIVE, O_SEP, O_IMIN, O_IMAX, O_INV, O_OUT, O_PANELS, O_JSON, O_QUIET,
  O_MINFOLD, O_SMOOTH
};

static int parse(int argc, char **argv, struct opts *o)
{
  static const struct option lo[] = {
    { "job", required_argument, NULL, O_JOB },
    { "cmps", required_argument, NULL, O_CMPS },
    { "supergather", required_argument, NULL, O_SUPER },
    { "smooth-cmps", required_argument, NULL, O_SMOOTH },
    { "velocity-min", required_argument, NULL, O_VMIN },
    { "velocity-max", required_argument, NULL, O_VMAX },
    { "velocity-step", required_argument, NULL, O_VSTEP },
    { "window", required_argument, NULL, O_WIN },
    { "stretch-limit", required_argument, NULL, O_STRETCH },
    { "threads", required_argument, NULL, O_THREADS },
    { "time-min", required_argument, NULL, O_TMIN },
    { "time-max", required_argument, NULL, O_TMAX },
    { "min-semblance", required_argument, NULL, O_MINS },
    { "min-live", required_argument, NULL, O_MINLIVE },
    { "min-fold", required_argument, NULL, O_MINFOLD },
    { "min-power", required_argument, NULL, O_MINP },
    { "min-separation", required_argument, NULL, O_SEP },
    { "interval-min", required_argument, NULL, O_IMIN },
    { "interval-max", required_argument, NULL, O_IMAX },
    { "allow-inversions", no_argument, NULL, O_INV },
    { "out", required_argument, NULL, O_OUT },
    { "panels", required_argument, NULL, O_PANELS },
    { "edits", required_argument, NULL, JOBOPT_EDITS },
    { "json", no_argument, NULL, O_JSON },
    { "quiet", no_argument, NULL, O_QUIET },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  const char *cmd = "semblance";
  int c;
  cli_opt_begin();
  while ((c = cli_getopt(argc, argv, "h", lo)) != -1) {
    int bad = 0;
    switch (c) {
    case O_JOB: o->job = optarg; break;
    case JOBOPT_EDITS: o->edits = optarg; break;
    case O_CMPS: o->cmps = optarg; break;
    case O_SUPER: bad = cli_parse_i64(cmd, "--supergather", optarg, &o->supergather); break;
    case O_SMOOTH: bad = cli_parse_i64(cmd, "--smooth-cmps", optarg, &o->smooth_cmps); break;
    case O_VMIN: bad = cli_parse_f64(cmd, "--velocity-min", optarg, &o->sp.velocity_min_mps); break;
    case O_VMAX: bad = cli_parse_f64(cmd, "--velocity-max", optarg, &o->sp.velocity_max_mps); break;
    case O_VSTEP: bad = cli_parse_f64(cmd, "--velocity-step", optarg, &o->sp.velocity_step_mps); break;
    case O_WIN:
      bad = cli_parse_f64(cmd, "--window", optarg, &o->sp.window_ms);
      o->window_given = 1;
      break;
    case O_STRETCH: bad = cli_parse_f64(cmd, "--stretch-limit", optarg, &o->stretch); break;
    case O_THREADS: bad = cli_parse_i64(cmd, "--threads", optarg, &o->threads); break;
    case O_TMIN: bad = cli_parse_f64(cmd, "--time-min", optarg, &o->pp.time_min_ms); break;
    case O_TMAX: bad = cli_parse_f64(cmd, "--time-max", optarg, &o->pp.time_max_ms); break;
    case O_MINS: bad = cli_parse_f64(cmd, "--min-semblance", optarg, &o->pp.min_semblance); break;
    case O_MINFOLD: bad = cli_parse_i64(cmd, "--min-fold", optarg, &o->min_fold); break;
    case O_MINLIVE: bad = cli_parse_f64(cmd, "--min-live", optarg, &o->sp.min_live_fraction); break;
    case O_MINP: bad = cli_parse_f64(cmd, "--min-power", optarg, &o->pp.min_relative_power); break;
    case O_SEP: bad = cli_parse_f64(cmd, "--min-separation", optarg, &o->pp.min_separation_ms); break;
    case O_IMIN: bad = cli_parse_f64(cmd, "--interval-min", optarg, &o->pp.interval_min_mps); break;
    case O_IMAX: bad = cli_parse_f64(cmd, "--interval-max", optarg, &o->pp.interval_max_mps); break;
    case O_INV: o->pp.allow_inversions = 1; break;
    case O_OUT: o->out = optarg; break;
    case O_PANELS: o->panels = optarg; break;
    case O_JSON: o->json = 1; break;
    case O_QUIET: o->quiet = 1; break;
    case 'h': help(); return -1;
    default:
      return cli_opt_error(cmd, argv, lo);
    }
    if (bad)
      return bad;
  }
  if (optind < argc)
    return cli_unexpected_arg(cmd, argv[optind], o->job);
  if (!o->job || !o->cmps)
    return cli_usage_error(cmd, "--job and --cmps are required");
  if (o->supergather < 0 || o->supergather > 1000)
    return cli_usage_error(cmd, "--supergather %lld: expected 0 to 1000 CMPs", o->supergather);
  if (o->smooth_cmps < 0 || o->smooth_cmps > 1000000)
    return cli_usage_error(cmd, "--smooth-cmps %lld: expected 0 to 1000000 CMPs", o->smooth_cmps);
  if (o->min_fold < 0 || o->min_fold > (long long)SEMBLANCE_MAX_MIN_FOLD)
    return cli_usage_error(cmd, "--min-fold %lld: expected 0 to %u live traces", o->min_fold,
                           SEMBLANCE_MAX_MIN_FOLD);
  o->sp.min_fold = (size_t)o->min_fold;
  if (o->threads < -1 || o->threads > JOB_MAX_THREADS)
    return cli_usage_error(cmd, "--threads %lld: expected 0 to %d", o->threads, JOB_MAX_THREADS);
  if (!isnan(o->stretch) && !(o->stretch >= 0 && o->stretch <= 1000))
    return cli_usage_error(cmd, "--stretch-limit %g: expected 0 to 1000 %%", o->stretch);
  if (o->pp.time_max_ms > 0 && o->pp.time_max_ms <= o->pp.time_min_ms)
    return cli_usage_error(cmd, "--time-max %g ms must be later than --time-min %g ms",
                           o->pp.time_max_ms, o->pp.time_min_ms);
  tz_err e;
  tz_err_init(&e);
  size_t nv;
  if (semblance_params_check(&o->sp, &nv, &e))
    return cli_usage_error(cmd, "%s", e.msg);
  return 0;
}

static const stack_gather *find_gather(const stack_gathers *gs, int32_t c)
{
  for (size_t i = 0; i < gs->n; i++)
    if (gs->g[i].cmp == c)
      return &gs->g[i];
  return NULL;
}

static int write_panel(segy_writer *w, const stack_gathers *gs, const struct cmp_result *r,
                       const semblance_params *sp, size_t nvel, const float *panel,
                       tz_err *err)
{
  const stack_gather *g = find_gather(gs, r->cmp);
  for (size_t k = 0; k < nvel; k++) {
    segy_trace_header h;
    memset(&h, 0, sizeof h);
    h.line_seq = h.file_seq = 0;
    h.cmp = r->cmp;
    h.cmp_trace = (int32_t)(k + 1);
    h.kind = SEGY_KIND_SEISMIC;
    h.stacked_traces = (int16_t)(r->ntraces > INT16_MAX ? INT16_MAX : r->ntraces);
    h.offset = floor(sp->velocity_min_mps + (double)k * sp->velocity_step_mps + 0.5);
    h.delay_ms = (int16_t)lround(gs->axis.t_first_s * 1000.0);
    h.coord_units = 1;
    if (g) {
      h.cmp_x = g->x_m;
      h.cmp_y = g->y_m;
    }
    int rc = segy_trace_write(w, &h, panel + k * gs->axis.ns, err);
    if (rc)
      return rc;
  }
  return TZ_OK;
}

static cJSON *picks_json(const struct cmp_result *r)
{
  cJSON *o = cJSON_CreateObject();
  if (!o)
    return NULL;
  cJSON_AddNumberToObject(o, "cmp", r->cmp);
  cJSON_AddNumberToObject(o, "supergather_first_cmp", r->first);
  cJSON_AddNumberToObject(o, "supergather_last_cmp", r->last);
  cJSON_AddNumberToObject(o, "traces", (double)r->ntraces);
  cJSON_AddNumberToObject(o, "max_live_traces", (double)r->max_live);
  cJSON_AddBoolToObject(o, "low_fold", r->low_fold);
  cJSON_AddNumberToObject(o, "window_ms", round(r->window_ms * 1000.0) / 1000.0);
  if (r->dominant_hz > 0)
    cJSON_AddNumberToObject(o, "dominant_hz", round(r->dominant_hz * 100.0) / 100.0);
  else
    cJSON_AddNullToObject(o, "dominant_hz");
  cJSON *a = cJSON_AddArrayToObject(o, "picks");
  for (size_t i = 0; a && i < r->npicks; i++) {
    cJSON *p = cJSON_CreateObject();
    if (!p)
      break;
    cJSON_AddNumberToObject(p, "time_ms", r->picks[i].time_s * 1000.0);
    cJSON_AddNumberToObject(p, "velocity_mps", r->picks[i].velocity_mps);
    cJSON_AddNumberToObject(p, "semblance", r->picks[i].semblance);
    if (isfinite(r->picks[i].interval_mps))
      cJSON_AddNumberToObject(p, "interval_velocity_mps", r->picks[i].interval_mps);
    else
      cJSON_AddNullToObject(p, "interval_velocity_mps");
    cJSON_AddItemToArray(a, p);
  }
  return o;
}

static int print_json(const struct opts *o, const struct cmp_result *res, size_t n,
                      size_t nvel)
{
  cJSON *root = cJSON_CreateObject();
  if (!root)
    return EX_OSERR;
  cJSON_AddStringToObject(root, "job", o->job);
  cJSON *par = cJSON_AddObjectToObject(root, "parameters");
  if (par) {
    cJSON_AddNumberToObject(par, "velocity_min_mps", o->sp.velocity_min_mps);
    cJSON_AddNumberToObject(par, "velocity_max_mps", o->sp.velocity_max_mps);
    cJSON_AddNumberToObject(par, "velocity_step_mps", o->sp.velocity_step_mps);
    cJSON_AddNumberToObject(par, "trial_velocities", (double)nvel);
    if (o->window_given)
      cJSON_AddNumberToObject(par, "window_ms", o->sp.window_ms);
    else
      cJSON_AddNullToObject(par, "window_ms");   /* per CMP: cmps[].window_ms */
    cJSON_AddStringToObject(par, "window", o->window_given ? "given" : "dominant_period");
    cJSON_AddNumberToObject(par, "min_live_fraction", o->sp.min_live_fraction);
    cJSON_AddNumberToObject(par, "min_fold", (double)o->sp.min_fold);
    cJSON_AddNumberToObject(par, "stretch_limit_pct", o->sp.nmo.stretch_limit_pct);
    cJSON_AddNumberToObject(par, "supergather", (double)o->supergather);
    cJSON_AddNumberToObject(par, "smooth_cmps", (double)o->smooth_cmps);
    cJSON_AddNumberToObject(par, "min_semblance", o->pp.min_semblance);
    cJSON_AddNumberToObject(par, "min_relative_power", o->pp.min_relative_power);
    cJSON_AddNumberToObject(par, "min_separation_ms", o->pp.min_separation_ms);
    cJSON_AddNumberToObject(par, "interval_min_mps", o->pp.interval_min_mps);
    cJSON_AddNumberToObject(par, "interval_max_mps", o->pp.interval_max_mps);
    cJSON_AddBoolToObject(par, "allow_inversions", o->pp.allow_inversions);
  }
  if (o->out)
    cJSON_AddStringToObject(root, "velocity_table", o->out);
  if (o->panels)
    cJSON_AddStringToObject(root, "panels", o->panels);
  cJSON *arr = cJSON_AddArrayToObject(root, "cmps");
  for (size_t i = 0; arr && i < n; i++) {
    cJSON *x = picks_json(&res[i]);
    if (x)
      cJSON_AddItemToArray(arr, x);
  }
  return cli_print_json(root);
}

static void print_text(const struct cmp_result *res, size_t n)
{
  for (size_t i = 0; i < n; i++) {
    const struct cmp_result *r = &res[i];
    printf("CMP %d (CMPs %d-%d, %zu traces): %zu picks", r->cmp, r->first, r->last,
           r->ntraces, r->npicks);
    if (r->dominant_hz > 0)
      printf(", window %.1f ms (1.5 periods of %.1f Hz)\n", r->window_ms, r->dominant_hz);
    else
      printf(", window %.1f ms\n", r->window_ms);
    for (size_t k = 0; k < r->npicks; k++)
      printf("  %9.1f ms %8.1f m/s  semblance %.3f  interval %8.1f m/s\n",
             r->picks[k].time_s * 1000.0, r->picks[k].velocity_mps, r->picks[k].semblance,
             r->picks[k].interval_mps);
  }
}

static int add_low(int64_t **low, size_t *n, int32_t cmp, tz_err *err)
{
  int64_t *v = realloc(*low, (*n + 1) * sizeof *v);
  if (!v)
    return tz_fail(err, TZ_E_NOMEM, "low-fold CMP list");
  v[(*n)++] = cmp;
  *low = v;
  return TZ_OK;
}

/* One message for every CMP that gave no pick for lack of fold, with the
 * supergather that would reach --min-fold at the thinnest of them. */
static void warn_low_fold(const struct cmp_result *res, size_t n, size_t min_fold,
                          long long supergather)
{
  size_t least = (size_t)-1, count = 0;
  fprintf(stderr, "tzero semblance: no pick for lack of fold at CMP");
  for (size_t i = 0; i < n; i++)
    if (res[i].low_fold) {
      if (res[i].max_live)
        fprintf(stderr, "%s %d (%zu live)", count ? "," : "", res[i].cmp, res[i].max_live);
      else
        fprintf(stderr, "%s %d (no live trace)", count ? "," : "", res[i].cmp);
      if (res[i].max_live < least)
        least = res[i].max_live;
      count++;
    }
  /* traces per CMP of the thinnest gather, and the half-width that gathers
   * min_fold of them */
  double per = (double)(least ? least : 1) / (double)(2 * supergather + 1);
  long long k = (long long)ceil(((double)min_fold / (per > 0 ? per : 1) - 1) / 2);
  if (k <= supergather)
    k = supergather + 1;
  fprintf(stderr, ": fewer than %zu traces live after the mutes at any pick time "
          "(--min-fold %zu); they are left out of the velocity table and listed in its "
          "comment. Add neighbouring CMPs with --supergather %lld, or pick them by hand\n",
          min_fold, min_fold, k);
}

int cmd_semblance(int argc, char **argv)
{
  struct opts o;
  memset(&o, 0, sizeof o);
  semblance_params_init(&o.sp);
  semblance_pick_params_init(&o.pp);
  o.threads = -1;
  o.stretch = NAN;
  o.min_fold = 6;   /* live traces at the pick time (common practice: a handful of
                     * traces cannot tell moveout from noise) */
  int prc = parse(argc, argv, &o);
  if (prc)
    return prc < 0 ? EX_OK : prc;

  tz_err err;
  tz_err_init(&err);
  job_spec *job = NULL;
  stack_plan *plan = NULL;
  stack_gathers *gs = NULL;
  int32_t *cmps = NULL, *need = NULL;
  struct cmp_result *res = NULL;
  float *panel = NULL, *power = NULL;
  segy_writer *pw = NULL;
  velocity_table *vt = NULL, *cond_vt = NULL;
  nmo_top_mute mute;
  size_t ncmp = 0, nvel = 0, nres = 0, nlow = 0;
  int64_t *low = NULL;
  int rc;

  if ((rc = table_parse_ranges(o.cmps, "CMP", STACK_MAX_CMPS, &cmps, &ncmp, &err)))
    goto done;
  if ((rc = job_load(&job, o.job, &err)))
    goto done;
  job_overrides ov;
  job_overrides_init(&ov);
  ov.stretch_limit_pct = o.stretch;
  ov.threads = (int)o.threads;
  ov.edits = o.edits;
  if ((rc = job_apply_overrides(job, &ov, &err)) ||
      (rc = job_check_output(job, o.out, "--out", 0, &err)) ||
      (rc = job_check_output(job, o.panels, "--panels", 0, &err)) ||
      (o.out && (rc = fileio_probe(o.out, &err))))
    goto done;
  if (o.out && o.panels && fileio_same_output(o.out, o.panels)) {
    /* one file by two spellings: the panels would replace the table */
    tz_err_path(&err, o.panels);
    rc = tz_fail(&err, TZ_E_CREATE, "--panels and --out are the same file");
    goto done;
  }
  if ((rc = stack_plan_build(&plan, job, NULL, NULL, &err)))
    goto done;
  if ((rc = stack_plan_nmo(plan, &o.sp.nmo, &mute, &err)))
    goto done;
  if (stack_plan_units(plan) == GEOMETRY_UNIT_FEET) {
    /* The default scan and bounds are in m/s: on a line in feet they are taken in
     * ft/s (rounded to 10 ft/s, the step to 1 ft/s); values given are kept. */
    semblance_params d;
    semblance_pick_params dp;
    semblance_params_init(&d);
    semblance_pick_params_init(&dp);
    double *v[] = { &o.sp.velocity_min_mps, &o.sp.velocity_max_mps, &o.sp.velocity_step_mps,
                    &o.pp.interval_min_mps, &o.pp.interval_max_mps };
    const double dv[] = { d.velocity_min_mps, d.velocity_max_mps, d.velocity_step_mps,
                          dp.interval_min_mps, dp.interval_max_mps };
    for (size_t i = 0; i < sizeof v / sizeof v[0]; i++)
      if (*v[i] == dv[i])
        *v[i] = i == 2 ? round(dv[i] / GEOMETRY_FOOT_M) : 10 * round(dv[i] / GEOMETRY_FOOT_M / 10);
  }
  o.sp.mute = &mute;
  o.sp.threads = job->threads;
  if (o.sp.threads <= 0) {
    long nc = sysconf(_SC_NPROCESSORS_ONLN);
    o.sp.threads = nc > 0 ? (int)(nc > SEMBLANCE_MAX_THREADS ? SEMBLANCE_MAX_THREADS : nc) : 1;
  }
  if ((rc = semblance_params_check(&o.sp, &nvel, &err)))
    goto done;

  /* Analysis CMPs go in batches so that memory holds the gathers of at most
   * SEMBLANCE_CLI_BATCH CMPs; each batch is one stack_collect() pass. */
  int32_t k = (int32_t)o.supergather;
  size_t per = (size_t)(2 * k + 1), batch = SEMBLANCE_CLI_BATCH / per ? SEMBLANCE_CLI_BATCH / per : 1;
  if (!(need = malloc(batch * per * sizeof *need))) {
    rc = tz_fail(&err, TZ_E_NOMEM, "CMP list");
    goto done;
  }
  nmo_axis ax = stack_plan_axis(plan);
  if ((double)nvel * ax.ns > SEMBLANCE_MAX_PANEL_SAMPLES) {
    rc = tz_fail(&err, TZ_E_ARG, "%zu trial velocities x %zu samples: a panel of more than %u "
                 "samples (choose a larger --velocity-step or a narrower velocity range)",
                 nvel, ax.ns, SEMBLANCE_MAX_PANEL_SAMPLES);
    goto done;
  }
  res = calloc(ncmp, sizeof *res);
  panel = malloc(nvel * ax.ns * sizeof *panel);
  power = malloc(nvel * ax.ns * sizeof *power);
  if (!res || !panel || !power) {
    rc = tz_fail(&err, TZ_E_NOMEM, "semblance panel of %zu x %zu samples", nvel, ax.ns);
    goto done;
  }
  if (o.panels) {
    segy_writer_opts wo = {
      .revision = 1, .format_code = 5, .samples = (uint32_t)ax.ns,
      .interval_us = stack_plan_interval_us(plan), .sorting_code = 2,
      .traces_per_ensemble = (int16_t)(nvel > INT16_MAX ? INT16_MAX : nvel),
      .text = "tzero semblance panels (Neidell and Taner 1971 semblance, 0 to 1)\n"
              "one ensemble per analysis CMP, one trace per trial velocity\n"
              "bytes 21-24: analysis CMP; bytes 25-28: trial velocity index from 1\n"
              "bytes 37-40: trial velocity in m/s; bytes 33-34: traces in the scan",
    };
    if ((rc = segy_writer_open(&pw, o.panels, &wo, &err)))
      goto done;
  }
  /* The job's conditioning runs on the gathers as it does in the stack. A
   * spherical-divergence step that takes V_rms from the table uses the job's
   * table when it exists already (a revision pass); a first pass has none, and
   * the step must then give velocity_mps. */
  if (condition_chain_needs_velocity(&job->conditioning) && job->velocity) {
    tz_err ve;
    tz_err_init(&ve);
    if (velocity_table_load(&cond_vt, job->velocity, &ve) && ve.status != TZ_E_NOINPUT) {
      err = ve;
      rc = ve.status;
      goto done;
    }
  }
  if ((rc = velocity_table_new(&vt, 0, &err)))
    goto done;
  size_t with_picks = 0;
  for (size_t i = 0; i < ncmp; i++) {
    if (i % batch == 0) {
      size_t nneed = 0;
      for (size_t b = i; b < ncmp && b < i + batch; b++)
        for (int32_t d = -k; d <= k; d++)
          need[nneed++] = cmps[b] + d;
      stack_gathers_free(gs);
      gs = NULL;
      if ((rc = stack_collect(plan, need, nneed, &job->conditioning, cond_vt, &gs, &err)))
        goto done;
    }
    struct cmp_result *r = &res[nres++];
    float *samples;
    double *offsets;
    r->cmp = cmps[i];
    r->first = cmps[i] - k;
    r->last = cmps[i] + k;
    if ((rc = semblance_supergather(gs, r->first, r->last, &samples, &offsets, &r->ntraces,
                                    &err)))
      goto done;
    if (r->ntraces == 0) {
      memset(panel, 0, nvel * ax.ns * sizeof *panel);
    } else {
      double *mutes = NULL;
      rc = semblance_supergather_mutes(gs, r->first, r->last, job->mutes, &mutes, &err);
      semblance_gather sg = { .ntraces = r->ntraces, .axis = ax, .samples = samples,
                              .offset_m = offsets, .mute_ms = mutes,
                              .mute_taper_ms = job->mute_taper_ms };
      semblance_params sp = o.sp;
      if (!rc && !o.window_given && !(rc = semblance_dominant_hz(&sg, &r->dominant_hz, &err)))
        sp.window_ms = semblance_window_for_hz(r->dominant_hz, ax.dt_s);
      r->window_ms = sp.window_ms;
      if (!rc)
        rc = semblance_panel_live(&sg, &sp, panel, power, &r->max_live, &err);
      if (!rc)
        rc = semblance_autopick(panel, power, nvel, &ax, &sp, &o.pp, &r->picks,
                                &r->npicks, &err);
      free(mutes);
    }
    free(samples);
    free(offsets);
    if (rc)
      goto done;
    for (size_t q = 0; q < r->npicks; q++)
      if ((rc = velocity_table_add(vt, r->cmp, r->picks[q].time_s, r->picks[q].velocity_mps,
                                   0, &err)))
        goto done;
    with_picks += r->npicks > 0;
    r->low_fold = !r->npicks && r->max_live < o.sp.min_fold;
    if (r->low_fold && (rc = add_low(&low, &nlow, r->cmp, &err)))
      goto done;
    if (!o.quiet && !r->npicks && !r->low_fold)
      fprintf(stderr, "tzero semblance: CMP %d: %s; it is left out of the velocity table\n",
              r->cmp, r->ntraces ? "no pick met the picking rules" : "no live traces");
    if (pw && (rc = write_panel(pw, gs, r, &o.sp, nvel, panel, &err)))
      goto done;
  }
  if (o.smooth_cmps > 0 && with_picks) {
    velocity_table *sm = NULL;
    if ((rc = velocity_table_smooth_cmps(vt, o.smooth_cmps, &sm, &err)))
      goto done;
    velocity_table_free(vt);
    vt = sm;
  }
  if (nlow) {
    if (!o.quiet)
      warn_low_fold(res, nres, o.sp.min_fold, o.supergather);
    if ((rc = velocity_table_set_low_fold(vt, low, nlow, o.sp.min_fold, &err)))
      goto done;
  }
  if (o.out && !with_picks) {
    rc = tz_fail(&err, TZ_E_FORMAT,
                 "no CMP gave a pick, so there is no velocity table to write (try a lower "
                 "--min-semblance or a wider velocity range)");
    goto done;
  }
  if (pw) {
    rc = segy_writer_finish(pw, &err);
    pw = NULL;
    if (rc)
      goto done;
  }
  if (o.out && (rc = velocity_table_write(vt, o.out, &err)))
    goto done;
  if (o.json)
    rc = print_json(&o, res, nres, nvel) == EX_OK ? TZ_OK : tz_fail(&err, TZ_E_NOMEM, "JSON");
  else if (!o.quiet)
    print_text(res, nres);

done:;
  int ex = rc ? cli_report("semblance", &err) : EX_OK;
  segy_writer_abort(pw);
  for (size_t i = 0; res && i < nres; i++)
    free(res[i].picks);
  free(res);
  free(panel);
  free(power);
  free(need);
  free(cmps);
  free(low);
  velocity_table_free(vt);
  velocity_table_free(cond_vt);
  stack_gathers_free(gs);
  stack_plan_free(plan);
  job_free(job);
  return ex;
}
