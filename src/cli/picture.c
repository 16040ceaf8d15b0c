/* picture.c -- `tzero picture`: a section, gather or semblance panel, or a fold chart, as PNG,
 * SVG or PDF. */
#include <cjson/cJSON.h>
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

#include "cli.h"
#include "tzero/fileio.h"
#include "tzero/firstbreak.h"
#include "tzero/flow.h"
#include "tzero/picture.h"
#include "tzero/table.h"

static const char *cmd = "picture";

static void help(void)
{
  printf("usage: tzero picture SECTION.sgy --out FILE.png|.svg|.pdf [OPTIONS]\n"
         "       tzero picture --fold QC.json --out FILE.png|.svg|.pdf [--width W --height H]\n"
         "       tzero picture --spectrum A.csv[,B.csv...] [--labels A,B] --out FILE\n"
         "       tzero picture --fk-record N SHOT.sgy --out FILE [--spacing M] [--fan V,...]\n"
         "       tzero picture --statics QC.json --out FILE.png|.svg|.pdf\n"
         "       tzero picture --velocity-field TABLE.csv [--job JOB] --out FILE\n"
         "\n"
         "Draws a SEG-Y panel (a stacked section, CMP gathers, semblance panels) as a\n"
         "picture: time in ms increasing downward, traces left to right, labelled\n"
         "by CMP number (bytes 21-24) when those increase trace to trace, else by\n"
         "offset in m, or trial velocity in m/s for semblance panels (bytes 37-40)\n"
         "when those vary, else by trace number. The title line gives the file, the\n"
         "CMP and time ranges; the line below it the clip and colour legend; a\n"
         "colour bar on the right gives amplitude values. Test panels (tzero gathers\n"
         "--vary) are separated and each labelled with its KEY = VALUE.\n"
         "With --fold, draws the fold per CMP from the QC report of tzero stack,\n"
         "with the nominal fold dashed and the live fraction after the mutes below.\n"
         "\n"
         "options:\n"
         "  --out FILE              picture to write (required); its extension .png,\n"
         "                          .svg or .pdf chooses the format\n"
         "  --format NAME           png, svg or pdf, whatever the extension\n"
         "  --cmps A-B              only traces with CMP A to B (inclusive); A alone: one\n"
         "                          CMP (a gather)\n"
         "  --time-ms T0-T1         only samples from T0 to T1 ms (recording time)\n"
         "  --clip-percentile P     amplitude mapped to the extreme colour: the P-th\n"
         "                          percentile of |amplitude| over the panel, 0 < P <= 100\n"
         "                          (default 99; 100 for --colour-map semblance)\n"
         "  --clip A                a fixed clip amplitude instead (same units as the data)\n"
         "  --colour-map NAME       diverging (default: red positive, white zero, blue\n"
         "                          negative), grey (black positive, white negative) or\n"
         "                          semblance (sequential, navy at 0 to red at the clip)\n"
         "  --style NAME            density, wiggle (variable area), both, or auto\n"
         "                          (default: density, plus wiggles when traces are at\n"
         "                          least 6 px apart, except with the semblance map)\n"
         "  --width W, --height H   picture size in pixels (PDF: 0.75 pt per px),\n"
         "                          %u..%u by %u..%u (default:\n"
         "                          1-12 px per trace, 600-4000 px of plot width, 600-1000\n"
         "                          px of time; fold chart 3 px per CMP, 480 px high)\n"
         "  --title TEXT            replace the title line\n"
         "  --fold QC.json          draw the fold chart of a QC report (tzero-qc/1)\n"
         "  --picks PICKS.csv       mark first-break picks (tzero firstbreaks) with green\n"
         "                          dots on the traces they belong to (matched by field\n"
         "                          record, bytes 9-12, and channel, bytes 13-16)\n"
         "  --job FILE --show-mutes draw the job's mutes over the traces: top (orange),\n"
         "                          inner cone (purple, its end dashed), bottom (teal),\n"
         "                          each trace located as tzero stack locates it; on\n"
         "                          field records (no static in bytes 103-104) the\n"
         "                          lines are moved back to field time by the static\n"
         "  --spectrum A.csv,...    draw spectra written by tzero spectrum (dB against\n"
         "                          frequency, up to 8 curves); --labels names them\n"
         "  --fk-record N           draw the f-k amplitude spectrum of field record N\n"
         "                          (bytes 9-12) of the SEG-Y file: wavenumber in\n"
         "                          cycles/m across, frequency in Hz up\n"
         "  --spacing M             trace spacing of the f-k grid, m (default: the median\n"
         "                          step between the record's signed offsets)\n"
         "  --fan V,...             dashed lines f = V |k| at these velocities, m/s\n"
         "  --max-hz F, --min-db D  frequency and level ranges of a spectrum picture\n"
         "                          (defaults: Nyquist; -80 dB, -60 dB for f-k)\n"
         "  --statics QC.json       draw the statics chart of a QC report: elevations with\n"
         "                          the datum, source and receiver statics (ms) by station\n"
         "  --velocity-field TABLE.csv  draw the table's velocity field: RMS (left) and\n"
         "                          Dix interval (right) velocity, CMP by time, one colour\n"
         "                          scale, a dot at every control point; --job FILE gives\n"
         "                          the line's CMPs (else the table's), --cmps and\n"
         "                          --time-ms narrow it\n"
         "  --json                  print what was drawn (size, plot area, clip) as JSON\n"
         "  --quiet                 print nothing but errors\n"
         "  -h, --help              this text\n"
         "\n"
         "Pixels sample the panel by nearest neighbour (docs/pictures.md gives the\n"
         "exact rule and colour maps): a picture narrower than the number of traces\n"
         "skips traces, so zoom with --cmps for detail.\n"
         "\n%s",
         PICTURE_MIN_WIDTH, PICTURE_MAX_SIDE, PICTURE_MIN_HEIGHT, PICTURE_MAX_SIDE, CLI_CAUTION);
}

/* "A-B" or "A" (when single is allowed); the separator is a '-' after the first
 * character so that a leading minus sign stays a sign. */
static int parse_range(const char *opt, const char *s, int single, int integer, double *a,
                       double *b)
{
  char buf[128];
  if (strlen(s) >= sizeof buf)
    return cli_usage_error(cmd, "%s: range too long", opt);
  snprintf(buf, sizeof buf, "%s", s);
  char *dash = buf[0] ? strchr(buf + 1, '-') : NULL;
  if (dash)
    *dash = '\0';
  int bad;
  if (integer) {
    int64_t x = 0, y = 0;
    bad = table_parse_i64(buf, &x) || (dash && table_parse_i64(dash + 1, &y));
    *a = (double)x;
    *b = dash ? (double)y : (double)x;
  } else {
    bad = table_parse_f64(buf, a) || (dash && table_parse_f64(dash + 1, b));
    if (!dash)
      *b = *a;
  }
  if (bad || (!dash && !single))
    return cli_usage_error(cmd, "%s: expected %s, got '%s'", opt,
                           single ? "A-B or A" : "T0-T1", s);
  if (*b < *a || (!integer && *b == *a))
    return cli_usage_error(cmd, "%s: empty range '%s' (the end must follow the start)", opt, s);
  return 0;
}

static int pick(const char *opt, const char *s, const char *const *names, int *out)
{
  for (int i = 0; names[i]; i++)
    if (!strcmp(s, names[i])) {
      *out = i;
      return 0;
    }
  return cli_usage_error(cmd, "%s: unknown value '%s'", opt, s);
}

static int parse_px(const char *opt, const char *s, uint32_t *out)
{
  long long v;
  int bad = cli_parse_i64(cmd, opt, s, &v);
  if (bad)
    return bad;
  if (v < 1 || v > PICTURE_MAX_SIDE)
    return cli_usage_error(cmd, "%s: %lld px outside 1..%u", opt, v, PICTURE_MAX_SIDE);
  *out = (uint32_t)v;
  return 0;
}

static const char *base_name(const char *p)
{
  const char *s = strrchr(p, '/');
  return s ? s + 1 : p;
}

/* What a picture covers, for the summary. */
struct extent {
  size_t traces;                 /* traces (panel) or CMPs in the report (fold) */
  double cmp_first, cmp_last;
  double time_first_ms, time_last_ms; /* panel only */
};

static void print_summary(const char *out, int format, const picture_info *in, int json,
                          const char *what, const struct extent *x)
{
  uint32_t width = in->width, height = in->height;
  static const char *const styles[] = { "auto", "density", "wiggle", "both" };
  if (json) {
    cJSON *o = cJSON_CreateObject();
    if (!o)
      return;
    cJSON_AddStringToObject(o, "path", out);
    cJSON_AddStringToObject(o, "picture", what);
    cJSON_AddStringToObject(o, "format", picture_format_name(format));
    cJSON_AddNumberToObject(o, "width_px", width);
    cJSON_AddNumberToObject(o, "height_px", height);
    cJSON *pa = cJSON_AddObjectToObject(o, "plot_area_px");
    cJSON_AddNumberToObject(pa, "x", in->plot_x);
    cJSON_AddNumberToObject(pa, "y", in->plot_y);
    cJSON_AddNumberToObject(pa, "width", in->plot_w);
    cJSON_AddNumberToObject(pa, "height", in->plot_h);
    cJSON_AddNumberToObject(o, "cmp_first", x->cmp_first);
    cJSON_AddNumberToObject(o, "cmp_last", x->cmp_last);
    if (!strcmp(what, "fold")) {
      cJSON_AddNumberToObject(o, "cmps", (double)x->traces);
      cJSON_AddNumberToObject(o, "fold_axis_max", in->clip);
    } else {
      cJSON_AddNumberToObject(o, "traces", (double)x->traces);
      cJSON_AddNumberToObject(o, "time_first_ms", x->time_first_ms);
      cJSON_AddNumberToObject(o, "time_last_ms", x->time_last_ms);
      cJSON_AddNumberToObject(o, "clip", in->clip);
      if (in->clip_percentile > 0)
        cJSON_AddNumberToObject(o, "clip_percentile", in->clip_percentile);
      cJSON_AddStringToObject(o, "style", styles[in->style & 3]);
    }
    cli_print_json(o);
    return;
  }
  if (!strcmp(what, "fold"))
    printf("wrote %s (%u x %u px): fold chart of %zu CMPs, %.0f-%.0f\n", out, width,
           height, x->traces, x->cmp_first, x->cmp_last);
  else
    printf("wrote %s (%u x %u px): %zu traces, CMP %.0f-%.0f, %g-%g ms, %s, clip %.6g%s\n", out,
           width, height, x->traces, x->cmp_first, x->cmp_last, x->time_first_ms,
           x->time_last_ms, styles[in->style & 3], in->clip,
           in->clip_percentile > 0 ? " (percentile)" : "");
}

static int run_fold(const char *qc, const char *out, int format, const char *title, uint32_t w,
                    uint32_t h, int json, int quiet)
{
  tz_err err;
  tz_err_init(&err);
  picture_fold f = { 0 };
  picture_ctx *ctx = NULL;
  picture_info in;
  char t[PICTURE_MAX_TITLE + 1];
  int rc = fileio_check_not_input(out, qc, "--out", &err);
  if (!rc)
    rc = picture_fold_load(&f, qc, &err);
  if (!rc) {
    if (!title) {
      snprintf(t, sizeof t, "Fold and live fraction, %s, CMP %lld-%lld", base_name(qc),
               (long long)f.rows[0].cmp, (long long)f.rows[f.n - 1].cmp);
      title = t;
    }
    rc = picture_draw_fold(&f, title, w, h, format, &ctx, &in, &err);
  }
  struct extent x = { f.n, f.n ? (double)f.rows[0].cmp : 0, f.n ? (double)f.rows[f.n - 1].cmp : 0,
                      0, 0 };
  if (!rc)
    rc = picture_ctx_write(ctx, out, &err);
  picture_fold_free(&f);
  if (rc) {
    picture_ctx_free(ctx);
    return cli_report(cmd, &err);
  }
  if (!quiet)
    print_summary(out, format, &in, json, "fold", &x);
  picture_ctx_free(ctx);
  return EX_OK;
}

static int run_statics(const char *qc, const char *out, int format, const char *title,
                       uint32_t w, uint32_t h, int json, int quiet)
{
  tz_err err;
  tz_err_init(&err);
  picture_statics s = { 0 };
  picture_ctx *ctx = NULL;
  picture_info in;
  char t[PICTURE_MAX_TITLE + 1];
  int rc = fileio_check_not_input(out, qc, "--out", &err);
  if (!rc)
    rc = picture_statics_load(&s, qc, &err);
  if (!rc) {
    if (!title) {
      snprintf(t, sizeof t, "Statics along the line, %s, datum %g m", base_name(qc), s.datum_m);
      title = t;
    }
    rc = picture_draw_statics(&s, title, w, h, format, &ctx, &in, &err);
  }
  if (!rc)
    rc = picture_ctx_write(ctx, out, &err);
  size_t ns = s.n[0], nr = s.n[1];
  picture_statics_free(&s);
  picture_ctx_free(ctx);
  if (rc)
    return cli_report(cmd, &err);
  if (quiet)
    return EX_OK;
  if (json) {
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "path", out);
    cJSON_AddStringToObject(o, "picture", "statics");
    cJSON_AddStringToObject(o, "format", picture_format_name(format));
    cJSON_AddNumberToObject(o, "width_px", in.width);
    cJSON_AddNumberToObject(o, "height_px", in.height);
    cJSON_AddNumberToObject(o, "source_stations", (double)ns);
    cJSON_AddNumberToObject(o, "receiver_stations", (double)nr);
    return cli_print_json(o);
  }
  printf("wrote %s (%u x %u px): statics chart of %zu source and %zu receiver stations\n", out,
         in.width, in.height, ns, nr);
  return EX_OK;
}

static int cmp_key(const void *a, const void *b)
{
  const firstbreak_file_pick *p = a, *q = b;
  if (p->record != q->record)
    return p->record < q->record ? -1 : 1;
  return (p->channel > q->channel) - (p->channel < q->channel);
}

/* The pick time of every trace of the panel (matched by field record and
 * channel), NAN where the picks file has none. *out owns the array. */
static int pick_marks(const char *path, const picture_loaded *l, double **out, tz_err *err)
{
  firstbreak_file_pick *pk = NULL;
  size_t n = 0;
  int rc = firstbreak_picks_load(path, NULL, &pk, &n, err);
  if (rc)
    return rc;
  double *m = malloc((l->ntraces ? l->ntraces : 1) * sizeof *m);
  if (!m) {
    free(pk);
    return tz_fail(err, TZ_E_NOMEM, "%zu marks", l->ntraces);
  }
  qsort(pk, n, sizeof *pk, cmp_key);
  for (size_t i = 0; i < l->ntraces; i++) {
    firstbreak_file_pick key = { .record = l->field_record[i], .channel = l->channel[i] };
    const firstbreak_file_pick *q = n ? bsearch(&key, pk, n, sizeof *pk, cmp_key) : NULL;
    m[i] = q ? q->time_ms : NAN;
  }
  free(pk);
  *out = m;
  return TZ_OK;
}

/* The mute times of the job of every trace of the panel (stack_mute_lines); *out owns
 * the STACK_MUTE_LINES values per trace. */
static int mute_lines(const char *jobpath, const char *path, const picture_loaded *l,
                      double **out, tz_err *err)
{
  flow_setup su;
  int rc = flow_setup_load(&su, jobpath, NULL, 0, NULL, NULL, err);
  if (rc)
    return rc;
  double *v = malloc((l->ntraces ? l->ntraces : 1) * STACK_MUTE_LINES * sizeof *v);
  if (!v)
    rc = tz_fail(err, TZ_E_NOMEM, "%zu traces", l->ntraces);
  else
    rc = stack_mute_lines(su.plan, su.job->mutes, path, l->trace, l->ntraces, v, err);
  flow_setup_free(&su);
  if (rc)
    free(v);
  else
    *out = v;
  return rc;
}

/* What a SEG-Y file drawn as one panel holds, from its trace headers. */
enum { PANEL_SECTION, PANEL_CVS, PANEL_GATHERS, PANEL_RECORD, PANEL_TRACES };

static int channels_vary(const picture_loaded *l)
{
  for (size_t i = 1; i < l->ntraces; i++)
    if (l->channel[i] != l->channel[0])
      return 1;
  return 0;
}

/* Groups of consecutive traces with the same key (field record or CMP):
 * *starts (owned, free()) lists the first trace of each. -1 when out of memory. */
static int group_runs(const picture_loaded *l, int by_record, size_t **starts, size_t *n)
{
  *n = 0;
  *starts = malloc(l->ntraces * sizeof **starts);
  if (!*starts)
    return -1;
  for (size_t i = 0; i < l->ntraces; i++)
    if (i == 0 || (by_record ? l->field_record[i] != l->field_record[i - 1]
                             : l->cmp[i] != l->cmp[i - 1]))
      (*starts)[(*n)++] = i;
  return 0;
}

/* Sorts the file into a kind: a section (CMPs increasing trace to trace, not a
 * single field record); constant-velocity panels (tzero cvs: panel number in
 * bytes 9-12, one velocity in 37-40 and increasing CMPs within each panel);
 * one shot record (one field record number, channels varying); gathers side
 * by side (runs of one CMP: NMO gathers, semblance panels); or plain traces. */
static int panel_kind(const picture_loaded *l, size_t **starts, size_t *ngroups)
{
  *starts = NULL;
  *ngroups = 0;
  int one_record = l->ntraces > 1 && l->field_record[0] > 0 && channels_vary(l);
  for (size_t i = 1; one_record && i < l->ntraces; i++)
    one_record = l->field_record[i] == l->field_record[0];
  if (one_record)
    return PANEL_RECORD;
  if (l->cmps_increase || l->ntraces == 1)
    return PANEL_SECTION;
  if (group_runs(l, 1, starts, ngroups))
    return -1;
  /* panels of one CMP range each (the same length and first CMP) */
  int cvs = *ngroups > 1 && (*starts)[1] >= 2;
  for (size_t g = 0; cvs && g < *ngroups; g++) {
    size_t a = (*starts)[g], b = g + 1 < *ngroups ? (*starts)[g + 1] : l->ntraces;
    cvs = b - a == (*starts)[1] && l->cmp[a] == l->cmp[0];
    for (size_t i = a + 1; cvs && i < b; i++)
      cvs = l->offset[i] == l->offset[a] && l->cmp[i] > l->cmp[i - 1];
  }
  if (cvs)
    return PANEL_CVS;
  free(*starts);
  if (group_runs(l, 0, starts, ngroups))
    return -1;
  if (*ngroups > 1 && *ngroups < l->ntraces)
    return PANEL_GATHERS;
  free(*starts);
  *starts = NULL;
  *ngroups = 0;
  return PANEL_TRACES;
}

/* The horizontal axis and the title's description of the panel. */
static void describe_panel(const picture_loaded *l, int kind, int semblance, const size_t *starts,
                           size_t ngroups, picture_panel *p, char *what, size_t cap)
{
  int offsets_vary = 0;
  for (size_t i = 1; i < l->ntraces; i++)
    offsets_vary |= l->offset[i] != l->offset[0];
  size_t n = l->ntraces;
  switch (kind) {
  case PANEL_RECORD:
    p->xvalue = offsets_vary ? l->offset : NULL;
    p->xlabel = offsets_vary ? "Offset (m)" : "Channel";
    snprintf(what, cap, "record %d, %zu channels", (int)l->field_record[0], n);
    break;
  case PANEL_CVS:
    p->xvalue = l->offset;
    p->xlabel = "Velocity";   /* each panel labelled "V m/s" */
    p->group_labels = 1;
    p->group_unit = "m/s";
    snprintf(what, cap, "%zu constant-velocity panels %g-%g m/s, CMP %.0f-%.0f", ngroups,
             l->offset[0], l->offset[starts[ngroups - 1]], l->cmp[0], l->cmp[starts[1] - 1]);
    break;
  case PANEL_GATHERS:
    p->xvalue = offsets_vary ? l->offset : NULL;
    p->xlabel = semblance ? "Velocity (m/s)" : "Offset (m)";
    snprintf(what, cap, "%zu %s, CMP %.0f-%.0f", ngroups,
             semblance ? "semblance panels" : "gathers", l->cmp[0], l->cmp[starts[ngroups - 1]]);
    break;
  case PANEL_SECTION:
    p->xvalue = l->cmp;
    p->xlabel = "CMP";
    if (n == 1)
      snprintf(what, cap, "CMP %.0f", l->cmp[0]);
    else
      snprintf(what, cap, "CMP %.0f-%.0f", l->cmp[0], l->cmp[n - 1]);
    break;
  default:
    if (offsets_vary) { /* a gather, or trial velocities of a semblance panel */
      p->xvalue = l->offset;
      p->xlabel = semblance ? "Velocity (m/s)" : "Offset (m)";
    }
    if (l->cmp[0] == l->cmp[n - 1])
      snprintf(what, cap, "CMP %.0f, %zu %s", l->cmp[0], n,
               semblance && offsets_vary ? "trial velocities" : "traces");
    else
      snprintf(what, cap, "%zu traces", n);
  }
}

int cmd_picture(int argc, char **argv)
{
  enum { O_OUT = 256, O_CMPS, O_TIME, O_PCT, O_CLIP, O_MAP, O_STYLE, O_W, O_H, O_TITLE, O_FOLD,
         O_JSON, O_QUIET, O_FORMAT, O_SPECTRUM, O_LABELS, O_FK, O_SPACING, O_MAXHZ, O_MINDB,
         O_FAN, O_STATICS, O_PICKS, O_JOB, O_SHOW_MUTES, O_VFIELD };
  static const struct option opts[] = {
    { "out", required_argument, NULL, O_OUT },
    { "cmps", required_argument, NULL, O_CMPS },
    { "time-ms", required_argument, NULL, O_TIME },
    { "clip-percentile", required_argument, NULL, O_PCT },
    { "clip", required_argument, NULL, O_CLIP },
    { "colour-map", required_argument, NULL, O_MAP },
    { "style", required_argument, NULL, O_STYLE },
    { "width", required_argument, NULL, O_W },
    { "height", required_argument, NULL, O_H },
    { "title", required_argument, NULL, O_TITLE },
    { "fold", required_argument, NULL, O_FOLD },
    { "statics", required_argument, NULL, O_STATICS },
    { "velocity-field", required_argument, NULL, O_VFIELD },
    { "json", no_argument, NULL, O_JSON },
    { "quiet", no_argument, NULL, O_QUIET },
    { "format", required_argument, NULL, O_FORMAT },
    { "picks", required_argument, NULL, O_PICKS },
    { "job", required_argument, NULL, O_JOB },
    { "show-mutes", no_argument, NULL, O_SHOW_MUTES },
    { "spectrum", required_argument, NULL, O_SPECTRUM },
    { "labels", required_argument, NULL, O_LABELS },
    { "fk-record", required_argument, NULL, O_FK },
    { "spacing", required_argument, NULL, O_SPACING },
    { "max-hz", required_argument, NULL, O_MAXHZ },
    { "min-db", required_argument, NULL, O_MINDB },
    { "fan", required_argument, NULL, O_FAN },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  static const char *const maps[] = { "diverging", "grey", "semblance", NULL };
  static const char *const styles[] = { "auto", "density", "wiggle", "both", NULL };
  const char *out = NULL, *title = NULL, *fold = NULL, *statics = NULL, *picks = NULL;
  const char *jobpath = NULL, *vfield = NULL;
  int show_mutes = 0;
  picture_opts po = { 0 };
  picture_select sel = { 0 };
  cli_spectrum_pic sp = { 0 };
  int json = 0, quiet = 0, format = -1, c;
  cli_opt_begin();
  while ((c = cli_getopt(argc, argv, "h", opts)) != -1) {
    int bad = 0;
    double a, b;
    switch (c) {
    case O_OUT: out = optarg; break;
    case O_CMPS:
      if (!(bad = parse_range("--cmps", optarg, 1, 1, &a, &b))) {
        sel.have_cmps = 1;
        sel.cmp_first = (int64_t)a;
        sel.cmp_last = (int64_t)b;
      }
      break;
    case O_TIME:
      if (!(bad = parse_range("--time-ms", optarg, 0, 0, &a, &b))) {
        sel.have_time = 1;
        sel.time_first_ms = a;
        sel.time_last_ms = b;
      }
      break;
    case O_PCT:
      if (!(bad = cli_parse_f64(cmd, "--clip-percentile", optarg, &po.clip_percentile)) &&
          !(po.clip_percentile > 0 && po.clip_percentile <= 100))
        bad = cli_usage_error(cmd, "--clip-percentile: %s outside (0, 100]", optarg);
      break;
    case O_CLIP:
      if (!(bad = cli_parse_f64(cmd, "--clip", optarg, &po.clip_value)) && !(po.clip_value > 0))
        bad = cli_usage_error(cmd, "--clip: %s must be positive", optarg);
      break;
    case O_MAP: bad = pick("--colour-map", optarg, maps, &po.map); break;
    case O_STYLE: bad = pick("--style", optarg, styles, &po.style); break;
    case O_W: bad = parse_px("--width", optarg, &po.width); break;
    case O_H: bad = parse_px("--height", optarg, &po.height); break;
    case O_TITLE: title = optarg; break;
    case O_FOLD: fold = optarg; break;
    case O_PICKS: picks = optarg; break;
    case O_JOB: jobpath = optarg; break;
    case O_SHOW_MUTES: show_mutes = 1; break;
    case O_VFIELD: vfield = optarg; break;
    case O_SPECTRUM: sp.spectra = optarg; break;
    case O_LABELS: sp.labels = optarg; break;
    case O_FK: sp.fk_record = optarg; break;
    case O_SPACING: sp.spacing = optarg; break;
    case O_MAXHZ: sp.max_hz = optarg; break;
    case O_MINDB: sp.min_db = optarg; break;
    case O_FAN: sp.fan = optarg; break;
    case O_STATICS: statics = optarg; break;
    case O_JSON: json = 1; break;
    case O_QUIET: quiet = 1; break;
    case O_FORMAT:
      if ((format = picture_format_from_name(optarg)) < 0)
        bad = cli_usage_error(cmd, "--format: unknown value '%s' (png, svg or pdf)", optarg);
      break;
    case 'h': help(); return EX_OK;
    default:
      return cli_opt_error(cmd, argv, opts);
    }
    if (bad)
      return bad;
  }
  if (!out)
    return cli_usage_error(cmd, "--out FILE.png is required (or .svg, .pdf)");
  if (format < 0 && (format = picture_format_from_path(out)) < 0) {
    tz_err e; /* an output onto the input is the graver mistake: say that first */
    tz_err_init(&e);
    const char *in = fold ? fold : statics ? statics : optind < argc ? argv[optind] : NULL;
    if (in && fileio_check_not_input(out, in, "--out", &e))
      return cli_report(cmd, &e);
    return cli_usage_error(cmd, "--out %s: name a .png, .svg or .pdf file, or give --format",
                           out);
  }
  if (sp.spectra || sp.fk_record) {
    if (argc - optind > 1)
      return cli_usage_error(cmd, "expected at most one SEG-Y file, got %d", argc - optind);
    return cli_picture_spectrum(&sp, optind < argc ? argv[optind] : NULL, out, format, title,
                                po.width, po.height, quiet);
  }
  if (vfield) {
    if (argc - optind != 0 || fold || statics)
      return cli_usage_error(cmd, "--velocity-field draws a velocity table; no SEG-Y file, "
                             "--fold or --statics goes with it");
    if (show_mutes)
      return cli_usage_error(cmd, "--show-mutes draws over traces, not a velocity field");
    return cli_picture_velocity(vfield, jobpath, &sel, out, format, title, po.width,
                                po.height, quiet);
  }
  if (statics) {
    if (argc - optind != 0 || fold)
      return cli_usage_error(cmd, "--statics draws a QC report; no SEG-Y file or --fold goes "
                             "with it");
    return run_statics(statics, out, format, title, po.width, po.height, json, quiet);
  }
  if (fold) {
    if (argc - optind != 0)
      return cli_usage_error(cmd, "--fold draws a QC report; no SEG-Y file goes with it");
    return run_fold(fold, out, format, title, po.width, po.height, json, quiet);
  }
  if (show_mutes != (jobpath != NULL))
    return cli_usage_error(cmd, "--show-mutes and --job go together (the job's mutes over "
                           "the traces)");
  if (argc - optind != 1)
    return cli_usage_error(cmd, "expected one SEG-Y file, got %d", argc - optind);
  const char *in_path = argv[optind];

  tz_err err;
  tz_err_init(&err);
  picture_loaded l;
  picture_ctx *ctx = NULL;
  picture_info info;
  int rc = fileio_check_not_input(out, in_path, "--out", &err);
  if (!rc)
    rc = picture_load_segy(in_path, &sel, &l, &err);
  if (rc)
    return cli_report(cmd, &err);
  picture_panel p = { .data = l.data, .ntraces = l.ntraces, .nsamples = l.nsamples,
                      .time_first_ms = l.time_first_ms, .interval_ms = l.interval_ms };
  int semblance = po.map == PICTURE_MAP_SEQUENTIAL;
  char t[PICTURE_MAX_TITLE + 1], what[160];
  double t_last = l.time_first_ms + (double)(l.nsamples - 1) * l.interval_ms;
  size_t *starts = NULL, ngroups = 0;
  int kind = panel_kind(&l, &starts, &ngroups);
  if (kind < 0) {
    picture_loaded_free(&l);
    return cli_report(cmd, &(tz_err){ .status = TZ_E_NOMEM, .trace = -1, .byte = -1,
                                      .msg = "trace groups" });
  }
  describe_panel(&l, kind, semblance, starts, ngroups, &p, what, sizeof what);
  if (l.panel && l.npanels) {   /* test panels: each labelled KEY = VALUE (below) */
    p.group_labels = 0;
    if (!p.xvalue) {            /* stacked panels: CMPs restart in each */
      p.xvalue = l.cmp;
      p.xlabel = "CMP";
    }
    size_t k = strlen(what);
    snprintf(what + k, sizeof what - k, ", %zu test panels", l.npanels);
  }
  p.group_starts = starts;
  p.nstarts = ngroups;
  snprintf(t, sizeof t, "%s, %s, %g-%g ms", base_name(in_path), what, l.time_first_ms, t_last);
  p.title = title ? title : t;
  double *marks = NULL;
  if (picks && (rc = pick_marks(picks, &l, &marks, &err))) {
    picture_loaded_free(&l);
    return cli_report(cmd, &err);
  }
  p.marks_ms = marks;
  if (l.panel && l.npanels) {   /* test panels (tzero gathers/stack --vary) */
    p.group = l.panel;
    p.group_label = l.panel_label_ptr;
    p.ngroups = l.npanels;
  }
  double *lines = NULL;
  if (show_mutes && (rc = mute_lines(jobpath, in_path, &l, &lines, &err))) {
    free(marks);
    picture_loaded_free(&l);
    return cli_report(cmd, &err);
  }
  p.lines_ms = lines;
  p.nlines = lines ? STACK_MUTE_LINES : 0;
  rc = picture_draw_panel(&p, &po, format, &ctx, &info, &err);
  free(marks);
  free(lines);
  free(starts);
  if (!rc)
    rc = picture_ctx_write(ctx, out, &err);
  double cmin = l.cmp[0], cmax = l.cmp[0];
  for (size_t i = 1; i < l.ntraces; i++) {
    cmin = l.cmp[i] < cmin ? l.cmp[i] : cmin;
    cmax = l.cmp[i] > cmax ? l.cmp[i] : cmax;
  }
  struct extent x = { l.ntraces, cmin, cmax, l.time_first_ms, t_last };
  picture_loaded_free(&l);
  picture_ctx_free(ctx);
  if (rc)
    return cli_report(cmd, &err);
  if (!quiet)
    print_summary(out, format, &info, json, "panel", &x);
  return EX_OK;
}
