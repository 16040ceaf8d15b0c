/* velocity.c -- `tzero velocity check|intervals|at`: velocity tables from the shell.
 *
 * check      validate a table; Dix interval velocities per control CMP; warnings
 * intervals  the interval-velocity table as CSV
 * at         the function at one CMP sampled on a regular time axis
 * All the work is in the velocity module; this file parses options and prints.
 */
#include <cjson/cJSON.h>
#include <getopt.h>
#include <math.h>
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

#include "cli.h"
#include "tzero/deliver.h"
#include "tzero/fileio.h"
#include "tzero/flow.h"
#include "tzero/velocity.h"

#define CMD "velocity"
#define MAX_AT_SAMPLES 10000000

static void help(void)
{
  printf("usage: tzero velocity check FILE [--json] [--quiet] [--min-mps V] [--max-mps V]\n"
         "       tzero velocity check [FILE] --job JOB [...]\n"
         "       tzero velocity intervals FILE [--out FILE.csv]\n"
         "       tzero velocity at FILE --cmp N [--dt-ms DT] [--length-ms L]\n"
         "                         [--first-ms T] [--out FILE.csv] [--json]\n"
         "       tzero velocity --job JOB --export FILE.csv [--every N] [--quiet]\n"
         "\n"
         "Velocity tables are CSV with the header cmp,time_ms,velocity_mps (optional\n"
         "fourth column eta); '#' lines are comments; rows grouped by cmp, time strictly\n"
         "increasing within a CMP (docs/velocity-table.md). Between knots the velocity is\n"
         "linear in time and held constant outside them; between control CMPs it is\n"
         "linear in CMP number at equal time and held constant outside them.\n"
         "\n"
         "actions:\n"
         "  check      validate FILE and print, per control CMP, the Dix (1955) interval\n"
         "             velocities and depths; warn where an interval velocity is\n"
         "             imaginary (V_rms^2 t decreases) or outside the plausible range,\n"
         "             and where the RMS function inverts. Exit 65 if FILE is invalid;\n"
         "             warnings alone exit 0.\n"
         "  intervals  write the interval-velocity table (CSV: cmp, time_top_ms,\n"
         "             time_base_ms, rms_velocity_mps, interval_velocity_mps (empty when\n"
         "             imaginary), depth_top_m, depth_base_m, imaginary) to stdout or --out\n"
         "  at         the velocity function at CMP N sampled every DT ms (CSV time_ms,\n"
         "             velocity_mps[,eta])\n"
         "  --export   (with --job) the job's velocities with the section's coordinates:\n"
         "             CSV cmp,shot_point,x_m,y_m,time_ms,rms_mps,interval_mps at the\n"
         "             table's control CMPs and knots, or with --every N at every N-th\n"
         "             CMP of the line (at the nearest control CMP's knot times, sampled\n"
         "             as the stack samples the table); interval velocities by Dix (1955),\n"
         "             empty where V_rms^2 t does not increase\n"
         "\n"
         "options:\n"
         "  --cmp N          CMP number (at)\n"
         "  --dt-ms DT       sample interval in ms (at; default 4)\n"
         "  --length-ms L    length of the sampled axis in ms (at; default: to the last\n"
         "                   knot of any control CMP)\n"
         "  --first-ms T     time of the first sample in ms (at; default 0)\n"
         "  --min-mps V      plausible interval velocity minimum, m/s (check; default %g)\n"
         "  --max-mps V      plausible interval velocity maximum, m/s (check; default %g)\n"
         "  --out FILE       write CSV to FILE (written whole, or not at all)\n"
         "  --job JOB        the job whose line and velocity table --export uses; with\n"
         "                   check, also warn of control CMPs outside the line's CMPs\n"
         "                   (from the job's header pass; FILE defaults to the job's table)\n"
         "  --export FILE    write the velocity export to FILE (CSV)\n"
         "  --every N        export every N-th CMP instead of the control CMPs\n"
         "  --json           print a JSON summary instead of text (check, at)\n"
         "  --quiet          check: print warnings only\n"
         "  -h, --help       this text\n"
         "\n"
         "Exit status: 0 ok, 64 bad command line, 65 invalid table, 66 missing file,\n"
         "73 cannot create output.\n"
         "\n%s",
         VELOCITY_PLAUSIBLE_MIN_MPS, VELOCITY_PLAUSIBLE_MAX_MPS, CLI_CAUTION);
}

struct opts {
  const char *action, *file, *out;
  long long cmp;
  int have_cmp, json, quiet;
  double dt_ms, length_ms, first_ms, min_mps, max_mps;
};

/* Dix intervals of control CMP i into a buffer the caller frees. */
static int intervals_of(const velocity_table *t, size_t i, velocity_interval **iv,
                        tz_err *err)
{
  size_t n = velocity_table_nknots(t, i);
  double *ts = malloc(n * sizeof *ts), *vs = malloc(n * sizeof *vs);
  *iv = malloc(n * sizeof **iv);
  int rc = TZ_OK;
  if (!ts || !vs || !*iv)
    rc = tz_fail(err, TZ_E_NOMEM, "intervals");
  for (size_t k = 0; !rc && k < n; k++)
    velocity_table_knot(t, i, k, &ts[k], &vs[k], NULL);
  if (!rc)
    rc = velocity_dix(ts, vs, n, *iv, err);
  free(ts);
  free(vs);
  if (rc) {
    free(*iv);
    *iv = NULL;
  }
  return rc;
}

static void fmt_num(char *buf, size_t cap, double v, const char *fmt)
{
  if (isnan(v))
    buf[0] = '\0';
  else
    snprintf(buf, cap, fmt, v);
}

static int write_intervals(const velocity_table *t, FILE *fp, tz_err *err)
{
  fprintf(fp, "cmp,time_top_ms,time_base_ms,rms_velocity_mps,interval_velocity_mps,"
              "depth_top_m,depth_base_m,imaginary\n");
  for (size_t i = 0; i < velocity_table_ncmps(t); i++) {
    velocity_interval *iv;
    int rc = intervals_of(t, i, &iv, err);
    if (rc)
      return rc;
    for (size_t k = 0; k < velocity_table_nknots(t, i); k++) {
      char vi[32], zt[32], zb[32];
      fmt_num(vi, sizeof vi, iv[k].v_int_mps, "%.2f");
      fmt_num(zt, sizeof zt, iv[k].z_top_m, "%.2f");
      fmt_num(zb, sizeof zb, iv[k].z_base_m, "%.2f");
      fprintf(fp, "%lld,%.6g,%.6g,%.2f,%s,%s,%s,%d\n", (long long)velocity_table_cmp(t, i),
              iv[k].t_top_s * 1e3, iv[k].t_base_s * 1e3, iv[k].v_rms_base_mps, vi, zt, zb,
              iv[k].imaginary);
    }
    free(iv);
  }
  return ferror(fp) ? tz_fail_os(err, TZ_E_IO, errno ? errno : EIO, "write failed") : TZ_OK;
}

/* Runs `fn` into --out (atomically) or stdout. */
static int emit(const char *out, int (*fn)(const velocity_table *, FILE *, tz_err *, void *),
                const velocity_table *t, void *ctx, tz_err *err)
{
  if (!out)
    return fn(t, stdout, err, ctx);
  fileio_out *o;
  int rc = fileio_create(&o, out, err);
  if (rc)
    return rc;
  rc = fn(t, fileio_stream(o), err, ctx);
  if (rc) {
    tz_err_path(err, out);
    fileio_abort(o);
    return rc;
  }
  return fileio_commit(o, err);
}

static int intervals_fn(const velocity_table *t, FILE *fp, tz_err *err, void *ctx)
{
  (void)ctx;
  return write_intervals(t, fp, err);
}

static void add_warnings_json(cJSON *o, const velocity_warning *w, size_t nw)
{
  cJSON *arr = cJSON_AddArrayToObject(o, "warnings");
  for (size_t i = 0; arr && i < nw; i++) {
    cJSON *x = cJSON_CreateObject();
    if (!x)
      return;
    cJSON_AddStringToObject(x, "kind", velocity_warning_name(w[i].kind));
    cJSON_AddNumberToObject(x, "cmp", (double)w[i].cmp);
    cJSON_AddNumberToObject(x, "line", (double)w[i].line);
    cJSON_AddNumberToObject(x, "time_top_ms", w[i].t_top_s * 1e3);
    cJSON_AddNumberToObject(x, "time_base_ms", w[i].t_base_s * 1e3);
    cJSON_AddNumberToObject(x, "value", w[i].value);
    cJSON_AddStringToObject(x, "message", w[i].msg);
    cJSON_AddItemToArray(arr, x);
  }
}

static int do_check(const struct opts *op, const velocity_table *t, const stack_plan *line,
                    tz_err *err)
{
  velocity_warning *w = NULL;
  size_t nw = 0;
  int rc = velocity_check(t, op->min_mps, op->max_mps, &w, &nw, err);
  if (!rc && line)   /* --job: control CMPs off the line's CMPs */
    rc = velocity_check_cmp_range(t, stack_plan_first_cmp(line), stack_plan_last_cmp(line), &w,
                                  &nw, err);
  if (rc) {
    free(w);
    return cli_report(CMD, err);
  }
  size_t nk = 0, nc = velocity_table_ncmps(t);
  for (size_t i = 0; i < nc; i++)
    nk += velocity_table_nknots(t, i);
  int ex = EX_OK;
  if (op->json) {
    cJSON *o = cJSON_CreateObject();
    if (o) {
      cJSON_AddStringToObject(o, "file", op->file);
      cJSON_AddBoolToObject(o, "valid", 1);
      cJSON_AddNumberToObject(o, "control_cmps", (double)nc);
      cJSON_AddNumberToObject(o, "knots", (double)nk);
      cJSON_AddBoolToObject(o, "has_eta", velocity_table_has_eta(t));
      cJSON *cmps = cJSON_AddArrayToObject(o, "cmps");
      for (size_t i = 0; cmps && i < nc; i++) {
        velocity_interval *iv;
        if (intervals_of(t, i, &iv, err)) {
          cJSON_Delete(o);
          free(w);
          return cli_report(CMD, err);
        }
        cJSON *c = cJSON_CreateObject();
        cJSON *ivs = c ? cJSON_AddArrayToObject(c, "intervals") : NULL;
        if (c)
          cJSON_AddNumberToObject(c, "cmp", (double)velocity_table_cmp(t, i));
        for (size_t k = 0; ivs && k < velocity_table_nknots(t, i); k++) {
          cJSON *x = cJSON_CreateObject();
          if (!x)
            break;
          cJSON_AddNumberToObject(x, "time_top_ms", iv[k].t_top_s * 1e3);
          cJSON_AddNumberToObject(x, "time_base_ms", iv[k].t_base_s * 1e3);
          cJSON_AddNumberToObject(x, "rms_velocity_mps", iv[k].v_rms_base_mps);
          if (iv[k].imaginary)
            cJSON_AddNullToObject(x, "interval_velocity_mps");
          else
            cJSON_AddNumberToObject(x, "interval_velocity_mps", iv[k].v_int_mps);
          if (isnan(iv[k].z_base_m))
            cJSON_AddNullToObject(x, "depth_base_m");
          else
            cJSON_AddNumberToObject(x, "depth_base_m", iv[k].z_base_m);
          cJSON_AddBoolToObject(x, "imaginary", iv[k].imaginary);
          cJSON_AddItemToArray(ivs, x);
        }
        if (c)
          cJSON_AddItemToArray(cmps, c);
        free(iv);
      }
      add_warnings_json(o, w, nw);
    }
    ex = cli_print_json(o);
  } else {
    if (!op->quiet) {
      printf("%s: valid velocity table, %zu control CMPs, %zu knots%s\n", op->file, nc, nk,
             velocity_table_has_eta(t) ? ", with eta" : "");
      for (size_t i = 0; i < nc; i++) {
        velocity_interval *iv;
        if (intervals_of(t, i, &iv, err)) {
          free(w);
          return cli_report(CMD, err);
        }
        printf("\ncmp %lld\n%10s %10s %10s %12s %10s\n", (long long)velocity_table_cmp(t, i),
               "top_ms", "base_ms", "rms_mps", "interval_mps", "depth_m");
        for (size_t k = 0; k < velocity_table_nknots(t, i); k++) {
          char vi[32], zb[32];
          fmt_num(vi, sizeof vi, iv[k].v_int_mps, "%.1f");
          fmt_num(zb, sizeof zb, iv[k].z_base_m, "%.1f");
          printf("%10.1f %10.1f %10.1f %12s %10s\n", iv[k].t_top_s * 1e3,
                 iv[k].t_base_s * 1e3, iv[k].v_rms_base_mps,
                 iv[k].imaginary ? "imaginary" : vi, zb[0] ? zb : "-");
        }
        free(iv);
      }
      printf("\n%zu warning%s\n", nw, nw == 1 ? "" : "s");
    }
    for (size_t i = 0; i < nw; i++)
      printf("warning: %s: line %lld: %s\n", op->file, (long long)w[i].line, w[i].msg);
  }
  free(w);
  return ex;
}

struct at_ctx {
  long long cmp;
  double first_s, dt_s;
  size_t ns;
  const float *v, *e;
};

static int at_fn(const velocity_table *t, FILE *fp, tz_err *err, void *vctx)
{
  const struct at_ctx *c = vctx;
  int eta = velocity_table_has_eta(t);
  fprintf(fp, "time_ms,velocity_mps%s\n", eta ? ",eta" : "");
  for (size_t i = 0; i < c->ns; i++) {
    fprintf(fp, "%.6g,%.3f", (c->first_s + (double)i * c->dt_s) * 1e3, c->v[i]);
    if (eta)
      fprintf(fp, ",%.6g", c->e[i]);
    fputc('\n', fp);
  }
  return ferror(fp) ? tz_fail_os(err, TZ_E_IO, errno ? errno : EIO, "write failed") : TZ_OK;
}

static int do_at(const struct opts *op, const velocity_table *t, tz_err *err)
{
  double len = op->length_ms;
  if (len < 0) {   /* default: to the latest knot of any control CMP */
    len = 0;
    for (size_t i = 0; i < velocity_table_ncmps(t); i++) {
      double ts;
      velocity_table_knot(t, i, velocity_table_nknots(t, i) - 1, &ts, NULL, NULL);
      len = ts * 1e3 > len ? ts * 1e3 : len;
    }
    len -= op->first_ms;
    if (len < 0)
      len = 0;
  }
  double nsd = floor(len / op->dt_ms + 1e-9) + 1;
  if (nsd > MAX_AT_SAMPLES)
    return cli_usage_error(CMD, "--length-ms / --dt-ms give %.0f samples; at most %d", nsd,
                           MAX_AT_SAMPLES);
  struct at_ctx c = { op->cmp, op->first_ms * 1e-3, op->dt_ms * 1e-3, (size_t)nsd, NULL,
                      NULL };
  float *v = malloc(c.ns * sizeof *v), *e = malloc(c.ns * sizeof *e);
  if (!v || !e) {
    free(v);
    free(e);
    tz_fail(err, TZ_E_NOMEM, "%zu samples", c.ns);
    return cli_report(CMD, err);
  }
  velocity_sample(t, op->cmp, c.first_s, c.dt_s, c.ns, v, e);
  c.v = v;
  c.e = e;
  int ex = EX_OK;
  if (op->json) {
    cJSON *o = cJSON_CreateObject();
    if (o) {
      cJSON_AddStringToObject(o, "file", op->file);
      cJSON_AddNumberToObject(o, "cmp", (double)op->cmp);
      cJSON_AddNumberToObject(o, "first_time_ms", op->first_ms);
      cJSON_AddNumberToObject(o, "sample_interval_ms", op->dt_ms);
      cJSON_AddNumberToObject(o, "samples", (double)c.ns);
      cJSON *tv = cJSON_AddArrayToObject(o, "velocity_mps");
      cJSON *te = velocity_table_has_eta(t) ? cJSON_AddArrayToObject(o, "eta") : NULL;
      for (size_t i = 0; tv && i < c.ns; i++) {
        cJSON_AddItemToArray(tv, cJSON_CreateNumber(round(v[i] * 1e3) / 1e3));
        if (te)
          cJSON_AddItemToArray(te, cJSON_CreateNumber(e[i]));
      }
    }
    ex = cli_print_json(o);
  } else if (emit(op->out, at_fn, t, &c, err)) {
    ex = cli_report(CMD, err);
  }
  free(v);
  free(e);
  return ex;
}

/* --job J --export FILE [--every N]: the job's line (header pass) and table. */
static int do_export(const char *job, const char *path, long long every, int quiet)
{
  tz_err err;
  tz_err_init(&err);
  flow_setup su;
  int rc = flow_setup_load(&su, job, NULL, 1, NULL, NULL, &err);
  if (rc)
    return cli_report(CMD, &err);
  int64_t rows = 0, imag = 0;
  if (!(rc = job_check_output(su.job, path, "--export", 1, &err)))
    rc = deliver_velocity_export(su.plan, su.velocity, every, path, &rows, &imag, &err);
  if (rc == TZ_E_ARG)
    tz_err_path(&err, su.job->velocity);
  flow_setup_free(&su);
  if (rc)
    return cli_report(CMD, &err);
  if (!quiet)
    printf("velocity export: %lld rows%s, %lld imaginary interval%s -> %s\n",
           (long long)rows, every ? "" : " at the control CMPs", (long long)imag,
           imag == 1 ? "" : "s", path);
  return EX_OK;
}

int cmd_velocity(int argc, char **argv)
{
  static const struct option lopts[] = {
    { "cmp", required_argument, NULL, 'c' },
    { "dt-ms", required_argument, NULL, 'd' },
    { "length-ms", required_argument, NULL, 'l' },
    { "first-ms", required_argument, NULL, 'f' },
    { "min-mps", required_argument, NULL, 'm' },
    { "max-mps", required_argument, NULL, 'M' },
    { "out", required_argument, NULL, 'o' },
    { "json", no_argument, NULL, 'j' },
    { "quiet", no_argument, NULL, 'q' },
    { "job", required_argument, NULL, 'J' },
    { "export", required_argument, NULL, 'E' },
    { "every", required_argument, NULL, 'N' },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  struct opts op = { .dt_ms = 4, .length_ms = -1, .first_ms = 0 };
  const char *job = NULL, *export = NULL;
  long long every = 0;
  int c;
  cli_opt_begin();
  while ((c = cli_getopt(argc, argv, "ho:q", lopts)) != -1) {
    switch (c) {
    case 'c':
      if (cli_parse_i64(CMD, "--cmp", optarg, &op.cmp))
        return EX_USAGE;
      op.have_cmp = 1;
      break;
    case 'd':
      if (cli_parse_f64(CMD, "--dt-ms", optarg, &op.dt_ms))
        return EX_USAGE;
      if (!(op.dt_ms > 0))
        return cli_usage_error(CMD, "--dt-ms: must be > 0, got %s", optarg);
      break;
    case 'l':
      if (cli_parse_f64(CMD, "--length-ms", optarg, &op.length_ms))
        return EX_USAGE;
      if (op.length_ms < 0)
        return cli_usage_error(CMD, "--length-ms: must be >= 0, got %s", optarg);
      break;
    case 'f':
      if (cli_parse_f64(CMD, "--first-ms", optarg, &op.first_ms))
        return EX_USAGE;
      break;
    case 'm':
      if (cli_parse_f64(CMD, "--min-mps", optarg, &op.min_mps))
        return EX_USAGE;
      if (!(op.min_mps > 0))
        return cli_usage_error(CMD, "--min-mps: must be > 0, got %s", optarg);
      break;
    case 'M':
      if (cli_parse_f64(CMD, "--max-mps", optarg, &op.max_mps))
        return EX_USAGE;
      if (!(op.max_mps > 0))
        return cli_usage_error(CMD, "--max-mps: must be > 0, got %s", optarg);
      break;
    case 'o': op.out = optarg; break;
    case 'j': op.json = 1; break;
    case 'q': op.quiet = 1; break;
    case 'J': job = optarg; break;
    case 'E': export = optarg; break;
    case 'N':
      if (cli_parse_i64(CMD, "--every", optarg, &every))
        return EX_USAGE;
      if (every < 1 || every > 1000000000)
        return cli_usage_error(CMD, "--every: a number of CMPs from 1, got %s", optarg);
      break;
    case 'h': help(); return EX_OK;
    default:
      return cli_opt_error(CMD, argv, lopts);
    }
  }
  int check_job = job && !export && !every && argc - optind >= 1 &&
                  !strcmp(argv[optind], "check");
  if (!check_job && (job || export || every)) {
    if (!job || !export)
      return cli_usage_error(CMD, "--export FILE and --job JOB go together (--every with them)");
    if (optind < argc)
      return cli_unexpected_arg(CMD, argv[optind], job);
    if (op.out || op.have_cmp || op.json)
      return cli_usage_error(CMD, "--export: --out, --cmp and --json do not apply");
    return do_export(job, export, every, op.quiet);
  }
  if (argc - optind < 1)
    return cli_usage_error(CMD, "expected an action: check, intervals or at");
  op.action = argv[optind];
  int is_check = !strcmp(op.action, "check"), is_int = !strcmp(op.action, "intervals");
  int is_at = !strcmp(op.action, "at");
  if (!is_check && !is_int && !is_at)
    return cli_usage_error(CMD, "unknown action '%s' (check, intervals or at)", op.action);
  if (check_job && argc - optind == 1) {
    op.file = NULL;   /* the job's own table */
  } else if (argc - optind != 2) {
    return cli_usage_error(CMD, "%s: expected one velocity table file", op.action);
  } else {
    op.file = argv[optind + 1];
  }
  if (is_at && !op.have_cmp)
    return cli_usage_error(CMD, "at: --cmp N is required");
  if (!is_at && (op.have_cmp || op.length_ms >= 0))
    return cli_usage_error(CMD, "%s: --cmp and --length-ms apply to 'at' only", op.action);
  if (is_check && op.out)
    return cli_usage_error(CMD, "check: --out applies to 'intervals' and 'at'");
  if (op.min_mps > 0 && op.max_mps > 0 && op.min_mps >= op.max_mps)
    return cli_usage_error(CMD, "--min-mps must be below --max-mps");

  tz_err err;
  tz_err_init(&err);
  if (fileio_check_not_input(op.out, op.file, "--out", &err))
    return cli_report(CMD, &err);
  if (check_job) {   /* the line's CMPs from the job's header pass */
    flow_setup su;
    job_overrides ov;
    job_overrides_init(&ov);
    ov.velocity = op.file;
    if (flow_setup_load(&su, job, &ov, 1, NULL, NULL, &err))
      return cli_report(CMD, &err);
    op.file = velocity_table_source(su.velocity);
    int ex = do_check(&op, su.velocity, su.plan, &err);
    flow_setup_free(&su);
    return ex;
  }
  velocity_table *t;
  if (velocity_table_load(&t, op.file, &err))
    return cli_report(CMD, &err);
  int ex;
  if (is_check) {
    ex = do_check(&op, t, NULL, &err);
  } else if (is_int) {
    ex = emit(op.out, intervals_fn, t, NULL, &err) ? cli_report(CMD, &err) : EX_OK;
  } else {
    ex = do_at(&op, t, &err);
  }
  velocity_table_free(t);
  return ex;
}
