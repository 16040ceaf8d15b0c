/* geometry.c -- `tzero geometry`: assign geometry, bin CMPs, report offsets and fold.
 *
 * Two header passes over the shot files (never the samples, except for
 * --write): the first feeds the survey inference (survey.h, the one `tzero
 * stack` makes: intervals, channels per record, nominal fold, shooting
 * direction, fitted line); the second bins every trace and counts fold.
 * Memory grows with the CMP count and the shot count (the per-shot summary),
 * never with the trace count.
 */
#include <cjson/cJSON.h>
#include <errno.h>
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sysexits.h>

#include "cli.h"
#include "tzero/bins.h"
#include "tzero/fileio.h"
#include "tzero/geometry.h"
#include "tzero/job.h"
#include "tzero/qc.h"
#include "tzero/segy.h"
#include "tzero/sps.h"
#include "tzero/survey.h"
#include "tzero/table.h"

static void help(void)
{
  printf("usage: tzero geometry [OPTIONS] SHOT.sgy...\n"
         "       tzero geometry --job JOB.json [OPTIONS]\n"
         "\n"
         "Assigns source and receiver positions to every trace (from the trace\n"
         "headers, a layout, a geometry table or SPS files), computes midpoints and signed\n"
         "offsets, bins the midpoints into CMPs along a processing line, and prints\n"
         "the line, bin size, CMP range, fold statistics and a per-shot summary.\n"
         "\n"
         "options:\n"
         "  --job FILE          take shots, geometry and bins from a job file\n"
         "  --layout FILE       geometry from a layout (docs/layout.md)\n"
         "  --table FILE        geometry from a geometry table (docs/geometry-table.md)\n"
         "  --sps S,R,X         geometry from SPS revision 2.1 source, receiver and\n"
         "                      relation files (SEG, 2006): prints what matched and\n"
         "                      lists the records that matched nothing\n"
         "                      (none of the three: from the trace headers)\n"
         "  --header-map FILE   SEG-Y header map for non-standard header positions\n"
         "  --bin-size M        CMP bin size, metres (default half the receiver\n"
         "                      interval)\n"
         "  --origin-x M, --origin-y M, --azimuth DEG\n"
         "                      processing line origin (metres) and azimuth (degrees\n"
         "                      clockwise from north); without them the line comes\n"
         "                      from the layout, or is fitted through the midpoints\n"
         "  --crooked FILE      crooked line: CSV with columns x_m,y_m (nodes in order)\n"
         "  --crooked-smoothing M\n"
         "                      fit a crooked line through the midpoints: a running\n"
         "                      mean of the midpoints across the line, M metres long\n"
         "  --first-cmp N       CMP number of the origin's bin (default 1)\n"
         "  --max-off-line M    skip traces whose midpoint lies farther from the line,\n"
         "                      metres (default 0 = no limit)\n"
         "  --offset-class M    width of the offset distribution classes, metres\n"
         "                      (default 8 receiver intervals)\n"
         "  --fold-table FILE   write the fold per CMP as CSV\n"
         "  --write DIR         write copies of the shot files with the geometry in the\n"
         "                      standard header positions (and CMP numbers)\n"
         "  --units UNIT        metres or feet: the unit of every length (default: what\n"
         "                      the files' binary header bytes 3255-3256 say, else\n"
         "                      metres); files that say the other unit are an error\n"
         "  --json              print the summary as JSON (cmps, fold, line, shots)\n"
         "  --quiet             print nothing but errors\n"
         "  -h, --help          this text\n"
         "\n%s", CLI_CAUTION);
}

typedef struct shot_sum {
  int file;
  int32_t field_record;
  int64_t traces, live;
  double sx, sy;
  double omin, omax;
  int32_t cmin, cmax;
} shot_sum;

typedef struct run {
  const char *cmd;
  char **files;
  size_t nfiles;
  geometry_source *src;
  segy_open_opts oo;
  segy_header_map map;
  survey *survey;                /* pass 1 */
  /* pass 2 */
  bins_line *line;
  bins_fold *fold;
  shot_sum *shots;
  size_t nshots, capshots;
  int64_t read, binned, dead, auxiliary, off_line;
  const char *write_dir;
  const sps_set *sps;            /* --sps: the exchange files' records */
  geometry_units units;          /* the job's and the files' unit of length */
} run;

static int add_shot(run *r, int file, const geometry_trace *g, tz_err *err)
{
  if (r->nshots == r->capshots) {
    size_t nc = r->capshots ? r->capshots * 2 : 64;
    shot_sum *n = realloc(r->shots, nc * sizeof *n);
    if (!n)
      return tz_fail(err, TZ_E_NOMEM, "shot summary");
    r->shots = n;
    r->capshots = nc;
  }
  shot_sum *s = &r->shots[r->nshots++];
  memset(s, 0, sizeof *s);
  s->file = file;
  s->field_record = g->field_record;
  s->sx = g->source_x;
  s->sy = g->source_y;
  s->omin = INFINITY;
  s->omax = -INFINITY;
  s->cmin = INT32_MAX;
  s->cmax = INT32_MIN;
  return TZ_OK;
}

/* Converts the decoded textual header into card text for the writer. */
static void cards(const segy_info *in, char *out, size_t cap)
{
  size_t n = 0;
  for (int line = 0; line < 38 && n + 80 < cap; line++) {
    const char *c = in->text + line * 80;
    if ((size_t)(line * 80 + 80) > strlen(in->text))
      break;
    int a = 4, b = 80;
    while (b > a && (c[b - 1] == ' ' || c[b - 1] == '\0'))
      b--;
    for (int i = a; i < b && i < a + 76; i++)
      out[n++] = (c[i] >= 32 && c[i] < 127) ? c[i] : ' ';
    out[n++] = '\n';
  }
  out[n] = '\0';
}

/* One header scan over the shot files: which = 1 feeds the survey inference,
 * which = 2 bins every trace (and copies it with --write). */
static int scan_shots(run *r, int which, tz_err *err)
{
  float *buf = NULL;
  size_t bufcap = 0;
  int rc = TZ_OK;
  for (size_t f = 0; f < r->nfiles; f++) {
    segy_file *sf = NULL;
    segy_writer *w = NULL;
    if ((rc = segy_open(&sf, r->files[f], &r->oo, err)))
      return rc;
    const segy_info *info = segy_get_info(sf);
    int64_t n = segy_trace_count(sf);
    if (which == 1 || !survey_wants_traces(r->survey)) {
      if ((rc = geometry_units_file(&r->units, info->measurement_system, r->files[f], err))) {
        segy_close(sf);
        return rc;
      }
    }
    int writing = which == 2 && r->write_dir;
    if (writing) {
      char path[4200], text[38 * 78 + 1];
      const char *base = strrchr(r->files[f], '/');
      base = base ? base + 1 : r->files[f];
      snprintf(path, sizeof path, "%s/%s", r->write_dir, base);
      cards(info, text, sizeof text);
      segy_writer_opts wo = { .revision = 1,
                             .format_code = info->format_code == 1 ? 1 : 5,
                             .samples = info->samples, .interval_us = info->interval_us,
                             .sorting_code = info->sorting_code ? info->sorting_code : 1,
                             .ensemble_fold = info->ensemble_fold,
                             .traces_per_ensemble = info->traces_per_ensemble,
                             .measurement_system = (int16_t)geometry_units_resolved(&r->units),
                             .line_no = info->line_no,
                             .text = text };
      if (info->samples > bufcap) {
        free(buf);
        bufcap = info->samples;
        buf = malloc(bufcap * sizeof *buf);
        if (!buf) {
          segy_close(sf);
          return tz_fail(err, TZ_E_NOMEM, "trace buffer");
        }
      }
      if ((rc = fileio_check_not_input(path, r->files[f], "--write", err))) {
        segy_close(sf);
        free(buf);
        return rc;
      }
      if ((rc = segy_writer_open(&w, path, &wo, err)))
        goto file_done;
    }
    int32_t last_ffid = 0;
    int have_last = 0;
    for (int64_t t = 0; t < n; t++) {
      segy_trace_header h;
      geometry_trace g;
      rc = writing ? segy_trace_read(sf, t, &h, buf, bufcap, err)
                   : segy_header_read(sf, t, &h, err);
      if (rc)
        goto file_done;
      if ((rc = geometry_source_trace(r->src, &h, t, &g, err))) {
        tz_err_path(err, r->files[f]);
        goto file_done;
      }
      int new_shot = !have_last || g.field_record != last_ffid;
      if (which == 1) {
        if ((rc = survey_add(r->survey, f, &h, &g, err)))
          goto file_done;
      } else {
        if (new_shot && (rc = add_shot(r, (int)f, &g, err)))
          goto file_done;
        shot_sum *s = &r->shots[r->nshots - 1];
        r->read++;
        s->traces++;
        bins_loc loc;
        int st = bins_locate(r->line, g.midpoint_x, g.midpoint_y, &loc);
        if (st == BINS_OUT_OF_RANGE) {
          rc = tz_fail_at(err, TZ_E_FORMAT, t, -1,
                          "midpoint (%.2f, %.2f) is %.3g m along the line: its CMP number is "
                          "out of range (check the line origin, bin size and coordinates)",
                          g.midpoint_x, g.midpoint_y, loc.along_m);
          goto file_done;
        }
        int cls = geometry_trace_class(h.kind);
        if (cls == GEOMETRY_TRACE_AUXILIARY) {
          r->auxiliary++;
        } else if (cls == GEOMETRY_TRACE_DEAD) {
          r->dead++;
        } else if (st != BINS_IN) {
          r->off_line++;
        } else {
          if ((rc = bins_fold_add(r->fold, loc.cmp, g.offset, err))) {
            if (err->trace < 0)
              err->trace = t;
            goto file_done;
          }
          r->binned++;
          s->live++;
          if (g.offset_abs < s->omin) s->omin = g.offset_abs;
          if (g.offset_abs > s->omax) s->omax = g.offset_abs;
          if (loc.cmp < s->cmin) s->cmin = loc.cmp;
          if (loc.cmp > s->cmax) s->cmax = loc.cmp;
        }
        if (writing) {
          geometry_to_header(&g, &h);
          if (st == BINS_IN) {
            h.cmp = loc.cmp;
            h.cmp_x = loc.centre_x;
            h.cmp_y = loc.centre_y;
          }
          if ((rc = segy_trace_write(w, &h, buf, err)))
            goto file_done;
        }
      }
      last_ffid = g.field_record;
      have_last = 1;
    }
  file_done:
    if (rc)
      tz_err_path(err, r->files[f]);
    if (w) {
      if (rc)
        segy_writer_abort(w);
      else
        rc = segy_writer_finish(w, err);
    }
    segy_close(sf);
    if (rc)
      break;
  }
  free(buf);
  return rc;
}

static const char *base_of(const char *path)
{
  const char *b = strrchr(path, '/');
  return b ? b + 1 : path;
}

static int cmp_base(const void *a, const void *b)
{
  return strcmp(base_of(*(char *const *)a), base_of(*(char *const *)b));
}

/* --write puts every copy under its own file name in one folder: two inputs with
 * the same name would leave only the second. TZ_E_CREATE naming both. */
static int check_write_names(char **files, size_t n, tz_err *err)
{
  char **v = malloc((n ? n : 1) * sizeof *v);
  if (!v)
    return tz_fail(err, TZ_E_NOMEM, "file names");
  memcpy(v, files, n * sizeof *v);
  qsort(v, n, sizeof *v, cmp_base);
  int rc = TZ_OK;
  for (size_t i = 1; i < n && !rc; i++)
    if (!strcmp(base_of(v[i]), base_of(v[i - 1])))
      rc = tz_fail(err, TZ_E_CREATE, "--write: %s and %s have the same name; their copies "
                   "would overwrite each other", v[i - 1], v[i]);
  free(v);
  return rc;
}

static int write_fold_table(const run *r, const bins_fold *pred, const char *path, tz_err *err)
{
  fileio_out *o;
  if (fileio_create(&o, path, err))
    return err->status;
  FILE *fp = fileio_stream(o);
  bins_fold_summary s;
  bins_fold_summarise(r->fold, &s);
  fprintf(fp, "cmp,x_m,y_m,fold,offset_min_m,offset_max_m,offset_mean_m%s\n",
          pred ? ",predicted_fold" : "");
  for (int64_t c = s.first_cmp; c <= s.last_cmp; c++) {
    bins_cmp_stats st;
    bins_fold_get(r->fold, (int32_t)c, &st);
    fprintf(fp, "%d,%.2f,%.2f,%lld,%.2f,%.2f,%.2f", (int)c, st.x, st.y, (long long)st.fold,
            st.offset_min_m, st.offset_max_m, st.offset_mean_m);
    if (pred) {
      bins_cmp_stats ps;
      bins_fold_get(pred, (int32_t)c, &ps);
      fprintf(fp, ",%lld", (long long)ps.fold);
    }
    fputc('\n', fp);
  }
  return fileio_commit(o, err);
}

static const char *const sps_kind_names[3] = { "source", "receiver", "relation" };

static void print_sps(const sps_set *s)
{
  sps_summary m;
  sps_get_summary(s, &m);
  printf("SPS revision 2.1 files: %zu source points (%zu in matched relations), %zu receiver "
         "points (%zu), %zu relation records (%zu matched): %zu channels placed\n",
         m.source_points, m.sources_used, m.receiver_points, m.receivers_used, m.relations,
         m.relations_matched, m.traces);
  size_t n = sps_unmatched_count(s);
  if (n)
    printf("  unmatched records: %zu\n", n);
  for (size_t i = 0; i < n; i++) {
    const sps_unmatched *u = sps_unmatched_get(s, i);
    printf("    %s line %lld (%s record): %s\n", sps_file_name(s, u->kind), (long long)u->line,
           sps_kind_names[u->kind], u->what);
  }
}

static cJSON *sps_json(const sps_set *s)
{
  sps_summary m;
  sps_get_summary(s, &m);
  cJSON *o = cJSON_CreateObject();
  if (!o)
    return NULL;
  cJSON_AddStringToObject(o, "source_file", sps_file_name(s, SPS_SOURCE));
  cJSON_AddStringToObject(o, "receiver_file", sps_file_name(s, SPS_RECEIVER));
  cJSON_AddStringToObject(o, "relation_file", sps_file_name(s, SPS_RELATION));
  cJSON_AddNumberToObject(o, "source_points", (double)m.source_points);
  cJSON_AddNumberToObject(o, "source_points_matched", (double)m.sources_used);
  cJSON_AddNumberToObject(o, "receiver_points", (double)m.receiver_points);
  cJSON_AddNumberToObject(o, "receiver_points_matched", (double)m.receivers_used);
  cJSON_AddNumberToObject(o, "relations", (double)m.relations);
  cJSON_AddNumberToObject(o, "relations_matched", (double)m.relations_matched);
  cJSON_AddNumberToObject(o, "channels", (double)m.traces);
  cJSON *a = cJSON_AddArrayToObject(o, "unmatched");
  for (size_t i = 0; a && i < sps_unmatched_count(s); i++) {
    const sps_unmatched *u = sps_unmatched_get(s, i);
    cJSON *e = cJSON_CreateObject();
    if (!e)
      break;
    cJSON_AddStringToObject(e, "file", sps_file_name(s, u->kind));
    cJSON_AddStringToObject(e, "record", sps_kind_names[u->kind]);
    cJSON_AddNumberToObject(e, "line", (double)u->line);
    cJSON_AddStringToObject(e, "what", u->what);
    cJSON_AddItemToArray(a, e);
  }
  return o;
}

/* "record number, source point" naming which numbers show a gap. */
static void gap_kinds(unsigned f, char *out, size_t cap)
{
  snprintf(out, cap, "%s%s%s%s%s", f & SURVEY_GAP_RECORD ? "record number" : "",
           (f & SURVEY_GAP_RECORD) && (f & (SURVEY_GAP_POINT | SURVEY_GAP_POSITION)) ? ", " : "",
           f & SURVEY_GAP_POINT ? "source point" : "",
           (f & SURVEY_GAP_POINT) && (f & SURVEY_GAP_POSITION) ? ", " : "",
           f & SURVEY_GAP_POSITION ? "source position" : "");
}

static void print_gaps(const run *r, const survey_figures *fig)
{
  size_t n;
  const survey_gap *g = survey_gaps(r->survey, &n);
  if (!n) {
    if (fig->records > 1 && !fig->from_layout)
      printf("missing shots: none (record numbers, source points and source positions "
             "step evenly)\n");
    return;
  }
  printf("missing shots: %lld in %zu gaps\n", (long long)fig->shots_missing, n);
  for (size_t i = 0; i < n; i++) {
    char k[64];
    gap_kinds(g[i].flags, k, sizeof k);
    const char *U = geometry_unit_symbol(geometry_units_resolved(&r->units));
    printf("  after record %d (source point %d at %.2f %.2f %s) and before record %d (source "
           "point %d, %.2f %s along the line): %lld missing, seen in the %s\n",
           (int)g[i].record_before, (int)g[i].point_before, g[i].x_before_m, g[i].y_before_m, U,
           (int)g[i].record_after, (int)g[i].point_after, g[i].distance_m, U,
           (long long)g[i].missing, k);
  }
}

static cJSON *gaps_json(const run *r)
{
  size_t n;
  const survey_gap *g = survey_gaps(r->survey, &n);
  return qc_gaps_json(g, n, (const char *const *)r->files);
}

static cJSON *json_summary(const run *r, const bins_fold *pred, const char *kind,
                           const char *gfile, const survey_figures *fig)
{
  cJSON *o = cJSON_CreateObject();
  if (!o)
    return NULL;
  cJSON_AddStringToObject(o, "format", "tzero-geometry/1");
  cJSON_AddStringToObject(o, "geometry", kind);
  if (gfile)
    cJSON_AddStringToObject(o, "geometry_file", gfile);
  if (r->sps)
    cJSON_AddItemToObject(o, "sps", sps_json(r->sps));
  cJSON *un = cJSON_AddObjectToObject(o, "units");
  cJSON_AddStringToObject(un, "length", geometry_unit_name(geometry_units_resolved(&r->units)));
  cJSON_AddStringToObject(un, "from", geometry_units_source(&r->units));
  bins_params p = bins_line_get_params(r->line);
  cJSON *ln = cJSON_AddObjectToObject(o, "line");
  cJSON_AddStringToObject(ln, "kind", bins_line_is_crooked(r->line) ? "crooked" : "straight");
  if (bins_line_is_crooked(r->line)) {
    cJSON *nd = cJSON_AddArrayToObject(ln, "nodes");
    for (size_t i = 0; nd && i < bins_line_node_count(r->line); i++) {
      double xy[2];
      bins_line_node(r->line, i, &xy[0], &xy[1]);
      cJSON_AddItemToArray(nd, cJSON_CreateDoubleArray(xy, 2));
    }
  }
  cJSON_AddBoolToObject(ln, "fitted", fig->fitted);
  cJSON_AddNumberToObject(ln, "origin_x_m", p.origin_x);
  cJSON_AddNumberToObject(ln, "origin_y_m", p.origin_y);
  cJSON_AddNumberToObject(ln, "azimuth_deg", p.azimuth_deg);
  cJSON_AddNumberToObject(ln, "bin_size_m", p.size_m);
  cJSON_AddNumberToObject(ln, "first_cmp", p.first_cmp);
  cJSON_AddNumberToObject(ln, "max_off_line_m", p.max_off_line_m);
  if (fig->fitted) {
    cJSON_AddNumberToObject(ln, "fit_rms_off_line_m", fig->fit.rms_off_line_m);
    cJSON_AddNumberToObject(ln, "fit_max_off_line_m", fig->fit.max_off_line_m);
    cJSON_AddNumberToObject(ln, "fit_length_m", fig->fit.length_m);
  }
  cJSON_AddNumberToObject(o, "receiver_interval_m", fig->receiver_interval_m);
  cJSON_AddNumberToObject(o, "source_interval_m", fig->source_interval_m);
  if (fig->receiver_step_median_m > 0) {
    cJSON_AddNumberToObject(o, "receiver_step_median_m", fig->receiver_step_median_m);
    cJSON_AddNumberToObject(o, "source_step_median_m", fig->source_step_median_m);
  }
  cJSON *ms = cJSON_AddObjectToObject(o, "missing_shots");
  cJSON_AddNumberToObject(ms, "count", (double)fig->shots_missing);
  cJSON_AddItemToObject(ms, "gaps", gaps_json(r));
  cJSON_AddNumberToObject(o, "channels_per_record", fig->channels_per_record);
  cJSON_AddNumberToObject(o, "records", (double)fig->records);
  if (isfinite(fig->shooting_azimuth_deg))
    cJSON_AddNumberToObject(o, "shooting_azimuth_deg", fig->shooting_azimuth_deg);
  cJSON *tr = cJSON_AddObjectToObject(o, "traces");
  cJSON_AddNumberToObject(tr, "read", (double)r->read);
  cJSON_AddNumberToObject(tr, "binned", (double)r->binned);
  cJSON *sk = cJSON_AddObjectToObject(tr, "skipped");
  cJSON_AddNumberToObject(sk, "dead", (double)r->dead);
  cJSON_AddNumberToObject(sk, "auxiliary", (double)r->auxiliary);
  cJSON_AddNumberToObject(sk, "off_line", (double)r->off_line);
  bins_fold_summary s;
  bins_fold_summarise(r->fold, &s);
  cJSON *cr = cJSON_AddObjectToObject(o, "cmp_range");
  cJSON_AddNumberToObject(cr, "first", s.first_cmp);
  cJSON_AddNumberToObject(cr, "last", s.last_cmp);
  cJSON *fo = cJSON_AddObjectToObject(o, "fold");
  cJSON_AddNumberToObject(fo, "nominal", fig->nominal_fold);
  cJSON_AddNumberToObject(fo, "min", (double)s.min);
  cJSON_AddNumberToObject(fo, "max", (double)s.max);
  cJSON_AddNumberToObject(fo, "mean", s.mean);
  cJSON_AddNumberToObject(fo, "cmps_live", (double)s.cmps_live);
  if (pred) {
    bins_fold_summary ps;
    bins_fold_summarise(pred, &ps);
    cJSON *pf = cJSON_AddObjectToObject(fo, "predicted");
    cJSON_AddNumberToObject(pf, "first_cmp", ps.first_cmp);
    cJSON_AddNumberToObject(pf, "last_cmp", ps.last_cmp);
    cJSON_AddNumberToObject(pf, "min", (double)ps.min);
    cJSON_AddNumberToObject(pf, "max", (double)ps.max);
    cJSON_AddNumberToObject(pf, "mean", ps.mean);
  }
  cJSON *cm = cJSON_AddArrayToObject(o, "cmps");
  for (int64_t c = s.first_cmp; cm && c <= s.last_cmp; c++) {
    bins_cmp_stats st;
    bins_fold_get(r->fold, (int32_t)c, &st);
    cJSON *e = cJSON_CreateObject();
    if (!e)
      break;
    cJSON_AddNumberToObject(e, "cmp", (double)c);
    cJSON_AddNumberToObject(e, "x_m", st.x);
    cJSON_AddNumberToObject(e, "y_m", st.y);
    cJSON_AddNumberToObject(e, "fold", (double)st.fold);
    cJSON_AddNumberToObject(e, "offset_min_m", st.offset_min_m);
    cJSON_AddNumberToObject(e, "offset_max_m", st.offset_max_m);
    cJSON_AddNumberToObject(e, "offset_mean_m", st.offset_mean_m);
    if (pred) {
      bins_cmp_stats ps;
      bins_fold_get(pred, (int32_t)c, &ps);
      cJSON_AddNumberToObject(e, "predicted_fold", (double)ps.fold);
    }
    cJSON *hist = cJSON_AddArrayToObject(e, "offset_distribution");
    for (int k = 0; hist && k < BINS_OFFSET_CLASSES; k++)
      cJSON_AddItemToArray(hist, cJSON_CreateNumber(st.offset_hist[k]));
    cJSON_AddItemToArray(cm, e);
  }
  cJSON_AddNumberToObject(o, "offset_class_m", bins_fold_offset_class(r->fold));
  cJSON *sh = cJSON_AddArrayToObject(o, "shots");
  for (size_t i = 0; sh && i < r->nshots; i++) {
    const shot_sum *q = &r->shots[i];
    cJSON *e = cJSON_CreateObject();
    if (!e)
      break;
    cJSON_AddStringToObject(e, "path", r->files[q->file]);
    cJSON_AddNumberToObject(e, "field_record", q->field_record);
    cJSON_AddNumberToObject(e, "traces", (double)q->traces);
    cJSON_AddNumberToObject(e, "binned", (double)q->live);
    cJSON_AddNumberToObject(e, "source_x_m", q->sx);
    cJSON_AddNumberToObject(e, "source_y_m", q->sy);
    if (q->live) {
      cJSON_AddNumberToObject(e, "offset_min_m", q->omin);
      cJSON_AddNumberToObject(e, "offset_max_m", q->omax);
      cJSON_AddNumberToObject(e, "cmp_first", q->cmin);
      cJSON_AddNumberToObject(e, "cmp_last", q->cmax);
    }
    cJSON_AddItemToArray(sh, e);
  }
  return o;
}

static void print_text(const run *r, const bins_fold *pred, const char *kind,
                       const survey_figures *fig)
{
  bins_params p = bins_line_get_params(r->line);
  bins_fold_summary s;
  bins_fold_summarise(r->fold, &s);
  printf("geometry from %s; %zu files, %lld traces (%lld binned, %lld dead, %lld auxiliary, "
         "%lld off the line)\n", kind, r->nfiles, (long long)r->read, (long long)r->binned,
         (long long)r->dead, (long long)r->auxiliary, (long long)r->off_line);
  int u = geometry_units_resolved(&r->units);
  printf("units: %s (from the %s%s)%s\n", geometry_unit_name(u), geometry_units_source(&r->units),
         r->units.job || r->units.files ? "" : ": no file's binary header bytes 3255-3256 say",
         u == GEOMETRY_UNIT_FEET ? "; lengths in ft, velocities in ft/s" : "");
  const char *U = geometry_unit_symbol(u);
  if (r->sps)
    print_sps(r->sps);
  printf("processing line: %s%s, origin %.2f %.2f %s, azimuth %.4f deg\n",
         bins_line_is_crooked(r->line) ? "crooked" : "straight", fig->fitted ? " (fitted)" : "",
         p.origin_x, p.origin_y, U, p.azimuth_deg);
  if (bins_line_is_crooked(r->line))
    printf("  %zu nodes%s\n", bins_line_node_count(r->line),
           fig->fitted ? ", fitted through the midpoints (a running mean across the line)" : "");
  if (fig->fitted)
    printf("  fit: RMS distance off the line %.3f %s, largest %.3f %s, length %.2f %s\n",
           fig->fit.rms_off_line_m, U, fig->fit.max_off_line_m, U, fig->fit.length_m, U);
  printf("bin size %.3f %s; receiver interval %.3f %s; source interval %.3f %s\n", p.size_m, U,
         fig->receiver_interval_m, U, fig->source_interval_m, U);
  if (fig->receiver_step_median_m > 0)
    printf("  measured: median along-line receiver step %.4f %s, median source move %.4f %s\n",
           fig->receiver_step_median_m, U, fig->source_step_median_m, U);
  printf("%lld records, %.1f channels per record; shooting azimuth %.4f deg\n",
         (long long)fig->records, fig->channels_per_record, fig->shooting_azimuth_deg);
  printf("CMPs %d to %d (%lld with traces)\n", (int)s.first_cmp, (int)s.last_cmp,
         (long long)s.cmps_live);
  printf("fold: nominal %.2f, min %lld, max %lld, mean %.2f\n", fig->nominal_fold, (long long)s.min,
         (long long)s.max, s.mean);
  print_gaps(r, fig);
  if (pred) {
    bins_fold_summary ps;
    bins_fold_summarise(pred, &ps);
    printf("predicted from the layout: CMPs %d to %d, fold min %lld, max %lld, mean %.2f\n",
           (int)ps.first_cmp, (int)ps.last_cmp, (long long)ps.min, (long long)ps.max, ps.mean);
  }
  printf("\n%-8s %8s %8s %14s %14s %10s %10s %8s %8s  %s\n", "record", "traces", "binned",
         "source_x_m", "source_y_m", "off_min_m", "off_max_m", "cmp_from", "cmp_to", "file");
  for (size_t i = 0; i < r->nshots; i++) {
    const shot_sum *q = &r->shots[i];
    printf("%-8d %8lld %8lld %14.2f %14.2f", (int)q->field_record, (long long)q->traces,
           (long long)q->live, q->sx, q->sy);
    if (q->live)
      printf(" %10.2f %10.2f %8d %8d", q->omin, q->omax, (int)q->cmin, (int)q->cmax);
    else
      printf(" %10s %10s %8s %8s", "-", "-", "-", "-");
    printf("  %s\n", r->files[q->file]);
  }
}

enum { O_UNITS = 200, O_JOB = 256, O_LAYOUT, O_TABLE, O_SPS, O_MAP, O_BIN, O_OX, O_OY, O_AZ, O_CROOKED, O_CSMOOTH, O_FIRST,
       O_MAXOFF, O_OCLASS, O_FOLD, O_WRITE, O_JSON, O_QUIET };

int cmd_geometry(int argc, char **argv)
{
  static const struct option opts[] = {
    { "job", required_argument, NULL, O_JOB },
    { "layout", required_argument, NULL, O_LAYOUT },
    { "table", required_argument, NULL, O_TABLE },
    { "sps", required_argument, NULL, O_SPS },
    { "units", required_argument, NULL, O_UNITS },
    { "header-map", required_argument, NULL, O_MAP },
    { "bin-size", required_argument, NULL, O_BIN },
    { "origin-x", required_argument, NULL, O_OX },
    { "origin-y", required_argument, NULL, O_OY },
    { "azimuth", required_argument, NULL, O_AZ },
    { "crooked", required_argument, NULL, O_CROOKED },
    { "crooked-smoothing", required_argument, NULL, O_CSMOOTH },
    { "first-cmp", required_argument, NULL, O_FIRST },
    { "max-off-line", required_argument, NULL, O_MAXOFF },
    { "offset-class", required_argument, NULL, O_OCLASS },
    { "fold-table", required_argument, NULL, O_FOLD },
    { "write", required_argument, NULL, O_WRITE },
    { "json", no_argument, NULL, O_JSON },
    { "quiet", no_argument, NULL, O_QUIET },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  const char *cmd = "geometry";
  const char *job_path = NULL, *layout_path = NULL, *table_path = NULL, *map_path = NULL;
  const char *sps_arg = NULL;
  int units = 0;
  const char *crooked = NULL, *fold_path = NULL, *write_dir = NULL;
  double csmooth = 0, bin = 0, ox = NAN, oy = NAN, az = NAN, maxoff = 0, oclass = 0;
  long long first = 1;
  int has_first = 0, json = 0, quiet = 0, c;
  cli_opt_begin();
  while ((c = cli_getopt(argc, argv, "h", opts)) != -1) {
    switch (c) {
    case O_JOB: job_path = optarg; break;
    case O_LAYOUT: layout_path = optarg; break;
    case O_TABLE: table_path = optarg; break;
    case O_SPS: sps_arg = optarg; break;
    case O_UNITS:
      if (!strcmp(optarg, "metres")) units = GEOMETRY_UNIT_METRES;
      else if (!strcmp(optarg, "feet")) units = GEOMETRY_UNIT_FEET;
      else return cli_usage_error(cmd, "--units: expected metres or feet");
      break;
    case O_MAP: map_path = optarg; break;
    case O_BIN:
      if (cli_parse_f64(cmd, "--bin-size", optarg, &bin)) return EX_USAGE;
      if (!(bin > 0)) return cli_usage_error(cmd, "--bin-size: must be > 0 m");
      break;
    case O_OX: if (cli_parse_f64(cmd, "--origin-x", optarg, &ox)) return EX_USAGE; break;
    case O_OY: if (cli_parse_f64(cmd, "--origin-y", optarg, &oy)) return EX_USAGE; break;
    case O_AZ: if (cli_parse_f64(cmd, "--azimuth", optarg, &az)) return EX_USAGE; break;
    case O_CROOKED: crooked = optarg; break;
    case O_CSMOOTH:
      if (cli_parse_f64(cmd, "--crooked-smoothing", optarg, &csmooth)) return EX_USAGE;
      if (!(csmooth > 0)) return cli_usage_error(cmd, "--crooked-smoothing: must be > 0 m");
      break;
    case O_FIRST:
      if (cli_parse_i64(cmd, "--first-cmp", optarg, &first)) return EX_USAGE;
      if (first < -1000000000LL || first > 1000000000LL)
        return cli_usage_error(cmd, "--first-cmp: out of range");
      has_first = 1;
      break;
    case O_MAXOFF:
      if (cli_parse_f64(cmd, "--max-off-line", optarg, &maxoff)) return EX_USAGE;
      if (!(maxoff >= 0)) return cli_usage_error(cmd, "--max-off-line: must be >= 0 m");
      break;
    case O_OCLASS:
      if (cli_parse_f64(cmd, "--offset-class", optarg, &oclass)) return EX_USAGE;
      if (!(oclass > 0)) return cli_usage_error(cmd, "--offset-class: must be > 0 m");
      break;
    case O_FOLD: fold_path = optarg; break;
    case O_WRITE: write_dir = optarg; break;
    case O_JSON: json = 1; break;
    case O_QUIET: quiet = 1; break;
    case 'h': help(); return EX_OK;
    default: return cli_opt_error(cmd, argv, opts);
    }
  }
  if (!!layout_path + !!table_path + !!sps_arg > 1)
    return cli_usage_error(cmd, "give one of --layout, --table and --sps");
  char sps_buf[3 * 4096];
  const char *sps_paths[3] = { NULL, NULL, NULL };
  if (sps_arg) {
    size_t len = strlen(sps_arg);
    if (len >= sizeof sps_buf)
      return cli_usage_error(cmd, "--sps: the file names are too long");
    memcpy(sps_buf, sps_arg, len + 1);
    char *p = sps_buf;
    for (int k = 0; k < 3; k++) {
      char *comma = strchr(p, ',');
      if ((k < 2) != (comma != NULL) || (comma ? comma == p : !*p))
        return cli_usage_error(cmd, "--sps: expected three file names SOURCE,RECEIVER,RELATION "
                               "(the S, R and X files)");
      sps_paths[k] = p;
      if (comma) {
        *comma = '\0';
        p = comma + 1;
      }
    }
  }
  if ((isnan(ox) + isnan(oy) + isnan(az)) % 3 != 0)
    return cli_usage_error(cmd, "--origin-x, --origin-y and --azimuth go together");
  if ((crooked || csmooth > 0) && !isnan(az))
    return cli_usage_error(cmd, "--crooked and --crooked-smoothing replace "
                           "--origin-x/--origin-y/--azimuth");
  if (crooked && csmooth > 0)
    return cli_usage_error(cmd, "give --crooked FILE or --crooked-smoothing M, not both");
  if (job_path && optind < argc)
    return cli_usage_error(cmd, "with --job the shot files come from the job");
  if (!job_path && optind >= argc)
    return cli_usage_error(cmd, "no shot files given");

  tz_err err;
  tz_err_init(&err);
  run r;
  memset(&r, 0, sizeof r);
  r.cmd = cmd;
  r.write_dir = write_dir;
  geometry_units_init(&r.units, units);
  job_spec *job = NULL;
  geometry_layout lay;
  geometry_layout_init(&lay);
  int have_layout = 0, rc = TZ_OK;
  double *nx = NULL, *ny = NULL;
  size_t nn = 0;
  survey_figures fig;
  memset(&fig, 0, sizeof fig);
  bins_fold *pred = NULL;
  const char *kind = "headers", *gfile = NULL;
  sps_set *sps = NULL;

  if (job_path) {
    if ((rc = job_load(&job, job_path, &err)))
      goto done;
    r.files = job->shots;
    r.nfiles = job->nshots;
    if (!units)
      geometry_units_init(&r.units, job->units);
    if (job->geometry == JOB_GEOMETRY_LAYOUT && !layout_path && !table_path && !sps_arg)
      layout_path = job->geometry_file;
    if (job->geometry == JOB_GEOMETRY_TABLE && !layout_path && !table_path && !sps_arg)
      table_path = job->geometry_file;
    if (job->geometry == JOB_GEOMETRY_SPS && !layout_path && !table_path && !sps_arg)
      for (int k = 0; k < 3; k++)
        sps_paths[k] = job->sps[k];
    if (!map_path)
      map_path = job->header_map;
    r.oo.interval_us = job->interval_us;
    if (bin <= 0 && job->bins.has_size)
      bin = job->bins.size_m;
    if (isnan(az) && job->bins.has_azimuth && job->bins.has_origin) {
      ox = job->bins.origin_x_m;
      oy = job->bins.origin_y_m;
      az = job->bins.azimuth_deg;
    }
    if (!has_first)
      first = job->bins.first_cmp;
    if (!crooked && !(csmooth > 0) && isnan(az)) {
      crooked = job->bins.crooked_file;
      csmooth = job->bins.crooked_smoothing_m;
    }
    if (maxoff == 0)
      maxoff = job->bins.max_distance_m;
  } else {
    r.files = argv + optind;
    r.nfiles = (size_t)(argc - optind);
  }
  if (map_path) {
    if ((rc = segy_header_map_load(&r.map, map_path, &err)))
      goto done;
    r.oo.map = &r.map;
  }
  if (layout_path) {
    kind = "layout";
    gfile = layout_path;
    if ((rc = geometry_layout_load(&lay, layout_path, &err)) ||
        (rc = geometry_source_layout(&r.src, &lay, &err)))
      goto done;
    have_layout = 1;
  } else if (table_path) {
    kind = "table";
    gfile = table_path;
    geometry_table *t;
    if ((rc = geometry_table_load(&t, table_path, &err)) ||
        (rc = geometry_source_table(&r.src, t, &err)))
      goto done;
  } else if (sps_paths[0]) {
    kind = "SPS";
    gfile = sps_paths[2];
    if ((rc = sps_load(&sps, sps_paths[0], sps_paths[1], sps_paths[2], &err)) ||
        (rc = sps_geometry_source(sps, &r.src, &err)))
      goto done;
    r.sps = sps;
  } else if ((rc = geometry_source_headers(&r.src, &err))) {
    goto done;
  }
  if (crooked && (rc = bins_nodes_load(crooked, &nx, &ny, &nn, &err)))
    goto done;
  survey_line_spec ls = { .bin_size_m = bin > 0 ? bin : 0, .has_line = !isnan(az),
                          .origin_x_m = ox, .origin_y_m = oy, .azimuth_deg = az,
                          .node_x = nx, .node_y = ny, .nnodes = nn,
                          .first_cmp = (int32_t)first, .max_off_line_m = maxoff,
                          .crooked_smoothing_m = csmooth };
  if ((rc = survey_new(&r.survey, r.src, &ls, &err)))
    goto done;
  if (survey_wants_traces(r.survey) && (rc = scan_shots(&r, 1, &err)))
    goto done;
  if ((rc = survey_finish(r.survey, r.src, &r.line, &fig, &err)))
    goto done;
  double dg = fig.receiver_interval_m;
  bin = bins_line_get_params(r.line).size_m;
  if (oclass <= 0)
    oclass = 8 * (dg > 0 ? dg : 2 * bin);
  if ((rc = bins_fold_new(&r.fold, r.line, oclass, &err)))
    goto done;
  if (write_dir && (rc = check_write_names(r.files, r.nfiles, &err)))
    goto done;
  if (write_dir && mkdir(write_dir, 0777) != 0 && errno != EEXIST) {
    int e = errno;
    tz_err_path(&err, write_dir);
    rc = tz_fail_os(&err, TZ_E_CREATE, e, "cannot create the output folder");
    goto done;
  }
  if ((rc = scan_shots(&r, 2, &err)))
    goto done;
  if (have_layout && ((rc = bins_fold_new(&pred, r.line, oclass, &err)) ||
                      (rc = bins_fold_predict(pred, r.line, &lay, NULL, &err))))
    goto done;
  if (fold_path) {
    const char *given[] = { job_path, layout_path, table_path, crooked, map_path };
    for (size_t i = 0; !rc && i < sizeof given / sizeof given[0]; i++)
      rc = fileio_check_not_input(fold_path, given[i], "--fold-table", &err);
    for (size_t i = 0; !rc && i < r.nfiles; i++)
      rc = fileio_check_not_input(fold_path, r.files[i], "--fold-table", &err);
    if (rc || (rc = write_fold_table(&r, pred, fold_path, &err)))
      goto done;
  }
  if (json) {
    if (cli_print_json(json_summary(&r, pred, kind, gfile, &fig)) != EX_OK) {
      rc = tz_fail(&err, TZ_E_NOMEM, "JSON summary");
      goto done;
    }
  } else if (!quiet) {
    print_text(&r, pred, kind, &fig);
  }
done:
  free(nx);
  free(ny);
  free(r.shots);
  bins_fold_free(pred);
  bins_fold_free(r.fold);
  bins_line_free(r.line);
  survey_free(r.survey);
  geometry_source_free(r.src);
  sps_free(sps);
  geometry_layout_free(&lay);
  job_free(job);
  return rc ? cli_report(cmd, &err) : EX_OK;
}
