/* fit.c -- `tzero fit PICKS.csv`: x^2-t^2 least-squares fit of reflection picks. */
#include <cjson/cJSON.h>
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <sysexits.h>

#include "cli.h"
#include "tzero/fit.h"

static void help(void)
{
  printf("usage: tzero fit [OPTIONS] PICKS.csv\n"
         "\n"
         "Fits reflection picks in the x^2-t^2 domain by least squares,\n"
         "t^2 = t0^2 + x^2/v^2 (Green 1938), and prints the zero-offset time t0,\n"
         "the velocity v, the residual of every pick and the goodness of fit.\n"
         "\n"
         "PICKS.csv has a header row naming the columns offset_m (source-receiver\n"
         "offset, metres, either sign) and time_ms (two-way time, milliseconds);\n"
         "'#' lines are comments.\n"
         "\n"
         "options:\n"
         "  --json        print the result as JSON (t0_ms, velocity_mps, r_squared,\n"
         "                rms_residual_ms, residuals with offset_m/time_ms/fitted_ms)\n"
         "  --quiet       print only t0 (ms) and velocity (m/s) on one line\n"
         "  -h, --help    this text\n"
         "\n"
         "R^2 is that of the straight line in the x^2-t^2 domain; residuals are\n"
         "times, t_pick - sqrt(t0^2 + x^2/v^2), in ms. The fit is exact only for a\n"
         "constant-velocity overburden; over layers it approximates the RMS velocity.\n"
         "\n%s", CLI_CAUTION);
}

static int print_json(const char *path, const fit_result *r, const double *x,
                      const double *t, const double *res)
{
  cJSON *o = cJSON_CreateObject();
  cJSON *arr = NULL;
  if (!o)
    return EX_OSERR;
  cJSON_AddStringToObject(o, "picks_file", path);
  cJSON_AddNumberToObject(o, "picks", (double)r->n);
  cJSON_AddNumberToObject(o, "t0_ms", r->t0_s * 1000.0);
  cJSON_AddNumberToObject(o, "velocity_mps", r->velocity_mps);
  cJSON_AddNumberToObject(o, "intercept_s2", r->intercept_s2);
  cJSON_AddNumberToObject(o, "slope_s2_per_m2", r->slope_s2_per_m2);
  cJSON_AddNumberToObject(o, "r_squared", r->r_squared);
  cJSON_AddNumberToObject(o, "rms_residual_ms", r->rms_residual_ms);
  cJSON_AddNumberToObject(o, "max_abs_residual_ms", r->max_abs_residual_ms);
  arr = cJSON_AddArrayToObject(o, "residuals");
  for (size_t i = 0; arr && i < r->n; i++) {
    cJSON *p = cJSON_CreateObject();
    if (!p)
      break;
    cJSON_AddNumberToObject(p, "offset_m", x[i]);
    cJSON_AddNumberToObject(p, "time_ms", t[i] * 1000.0);
    cJSON_AddNumberToObject(p, "fitted_ms", t[i] * 1000.0 - res[i]);
    cJSON_AddNumberToObject(p, "residual_ms", res[i]);
    cJSON_AddItemToArray(arr, p);
  }
  return cli_print_json(o);
}

int cmd_fit(int argc, char **argv)
{
  static const struct option opts[] = {
    { "json", no_argument, NULL, 'j' },
    { "quiet", no_argument, NULL, 'q' },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  int json = 0, quiet = 0, c;
  cli_opt_begin();
  while ((c = cli_getopt(argc, argv, "h", opts)) != -1) {
    switch (c) {
    case 'j': json = 1; break;
    case 'q': quiet = 1; break;
    case 'h': help(); return EX_OK;
    default:
      return cli_opt_error("fit", argv, opts);
    }
  }
  if (argc - optind != 1)
    return cli_usage_error("fit", "expected one picks file, got %d", argc - optind);
  const char *path = argv[optind];
  tz_err err;
  tz_err_init(&err);
  double *x = NULL, *t = NULL, *res = NULL;
  size_t n = 0;
  fit_result r;
  int rc = fit_read_picks(path, &x, &t, &n, &err);
  if (!rc && !(res = malloc((n ? n : 1) * sizeof *res)))
    rc = tz_fail(&err, TZ_E_NOMEM, "residuals");
  if (!rc) {
    rc = fit_x2t2(x, t, n, &r, res, &err);
    if (rc) {
      /* A fit that cannot be made is a fault of the data in the file. */
      err.status = TZ_E_FORMAT;
      tz_err_path(&err, path);
    }
  }
  int ex;
  if (rc) {
    ex = cli_report("fit", &err);
  } else if (json) {
    ex = print_json(path, &r, x, t, res);
  } else if (quiet) {
    printf("%.3f %.2f\n", r.t0_s * 1000.0, r.velocity_mps);
    ex = EX_OK;
  } else {
    printf("picks: %zu (%s)\n", r.n, path);
    printf("t0: %.3f ms\n", r.t0_s * 1000.0);
    printf("velocity: %.2f m/s\n", r.velocity_mps);
    printf("line: t^2 = %.9g s^2 + %.9g s^2/m^2 * x^2\n", r.intercept_s2,
           r.slope_s2_per_m2);
    printf("R^2: %.6f\n", r.r_squared);
    printf("RMS residual: %.3f ms (largest %.3f ms)\n", r.rms_residual_ms,
           r.max_abs_residual_ms);
    printf("\n%12s %12s %12s %12s\n", "offset_m", "time_ms", "fitted_ms", "residual_ms");
    for (size_t i = 0; i < n; i++) {
      double rr = fabs(res[i]) < 5e-4 ? 0.0 : res[i];   /* no "-0.000" */
      printf("%12.2f %12.3f %12.3f %12.3f\n", x[i], t[i] * 1000.0, t[i] * 1000.0 - res[i],
             rr);
    }
    ex = EX_OK;
  }
  free(x);
  free(t);
  free(res);
  return ex;
}
