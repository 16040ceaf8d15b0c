/* picture_spectrum.c -- `tzero picture --spectrum` and `--fk-record`: pictures of
 * amplitude spectra (CSV of tzero spectrum) and of one record's f-k spectrum. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

#include "cli.h"
#include "tzero/fileio.h"
#include "tzero/spectrum.h"

static const char *cmd = "picture";

/* Splits a comma list in place into at most max items; returns the count or -1. */
static int split(char *s, char **item, int max)
{
  int n = 0;
  for (char *p = s; p; n++) {
    if (n >= max)
      return -1;
    item[n] = p;
    p = strchr(p, ',');
    if (p)
      *p++ = '\0';
  }
  return n;
}

int cli_picture_spectrum(const cli_spectrum_pic *a, const char *in_path, const char *out,
                         int format, const char *title, uint32_t w, uint32_t h, int quiet)
{
  double max_hz = 0, min_db = a->fk_record ? -60 : -80, spacing = 0;
  double fan[SPECTRUM_MAX_CURVES];
  long long rec = 0;
  int nfan = 0;
  if (a->max_hz && cli_parse_f64(cmd, "--max-hz", a->max_hz, &max_hz))
    return EX_USAGE;
  if (a->min_db && cli_parse_f64(cmd, "--min-db", a->min_db, &min_db))
    return EX_USAGE;
  if (!(min_db < 0 && min_db >= -200))
    return cli_usage_error(cmd, "--min-db: expected a level below 0 dB (down to -200)");
  if (a->spacing && (cli_parse_f64(cmd, "--spacing", a->spacing, &spacing) || !(spacing > 0)))
    return cli_usage_error(cmd, "--spacing: expected a trace spacing in metres > 0");
  if (a->fan) {
    char buf[256], *item[SPECTRUM_MAX_CURVES];
    snprintf(buf, sizeof buf, "%s", a->fan);
    if ((nfan = split(buf, item, SPECTRUM_MAX_CURVES)) < 0)
      return cli_usage_error(cmd, "--fan: at most %d velocities", SPECTRUM_MAX_CURVES);
    for (int i = 0; i < nfan; i++)
      if (cli_parse_f64(cmd, "--fan", item[i], &fan[i]) || !(fan[i] > 0))
        return cli_usage_error(cmd, "--fan: expected velocities in m/s > 0, got '%s'", a->fan);
  }
  tz_err err;
  tz_err_init(&err);
  picture_ctx *ctx = NULL;
  int rc;
  if (a->fk_record) {
    if (!in_path)
      return cli_usage_error(cmd, "--fk-record N draws a record of one SEG-Y shot file: name it");
    if (cli_parse_i64(cmd, "--fk-record", a->fk_record, &rec))
      return EX_USAGE;
    spectrum_fk fk;
    rc = fileio_check_not_input(out, in_path, "--out", &err);
    if (!rc && !(rc = spectrum_fk_of_record(in_path, rec, spacing, NULL, &fk, &err))) {
      rc = spectrum_draw_fk(&fk, title, max_hz, min_db, fan, (size_t)nfan, w, h, format, &ctx,
                            &err);
      if (!rc && !quiet)
        printf("wrote %s: f-k spectrum of record %lld (%lld traces at %.4g m)\n", out, rec,
               (long long)fk.traces, fk.spacing_m);
      spectrum_fk_free(&fk);
    }
  } else {
    if (in_path)
      return cli_usage_error(cmd, "--spectrum draws CSV files of tzero spectrum; no SEG-Y file "
                             "goes with it");
    char files[4096], labs[1024], *f[SPECTRUM_MAX_CURVES], *l[SPECTRUM_MAX_CURVES];
    snprintf(files, sizeof files, "%s", a->spectra);
    int n = split(files, f, SPECTRUM_MAX_CURVES), nl = 0;
    if (n < 0)
      return cli_usage_error(cmd, "--spectrum: at most %d files", SPECTRUM_MAX_CURVES);
    if (a->labels) {
      snprintf(labs, sizeof labs, "%s", a->labels);
      if ((nl = split(labs, l, SPECTRUM_MAX_CURVES)) != n)
        return cli_usage_error(cmd, "--labels: %d labels for %d spectra", nl, n);
    }
    spectrum_curve cv[SPECTRUM_MAX_CURVES];
    memset(cv, 0, sizeof cv);
    rc = TZ_OK;
    for (int i = 0; i < n && !rc; i++)
      if (!(rc = fileio_check_not_input(out, f[i], "--out", &err)))
        rc = spectrum_curve_load(&cv[i], f[i], &err);
    if (!rc)
      rc = spectrum_draw(cv, (size_t)n, a->labels ? (const char *const *)l : NULL, title, max_hz,
                         min_db, w, h, format, &ctx, &err);
    for (int i = 0; i < n; i++)
      spectrum_curve_free(&cv[i]);
    if (!rc && !quiet)
      printf("wrote %s: %d spectr%s\n", out, n, n == 1 ? "um" : "a");
  }
  if (!rc)
    rc = picture_ctx_write(ctx, out, &err);
  picture_ctx_free(ctx);
  return rc ? cli_report(cmd, &err) : EX_OK;
}
