/* survey.c -- the acquisition figures and the processing line, inferred once (survey.h).
 *
 * One accumulator fed trace by trace in file order: per record it keeps the
 * channel count, the median receiver step and the first source position
 * (memory ~ records + channels of one record); the live midpoints go to the
 * line fitter when the line is to be fitted. survey_finish() turns the records
 * into the figures and builds the line.
 *
 * Not here: reading files (the callers own their loops and their error
 * policy), binning and fold (bins.c).
 */
#include "tzero/survey.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

typedef struct record {
  double dg;            /* median receiver step (NAN when the record has none) */
  double sx, sy;        /* source of the first channel */
  double channels;
} record;

struct survey {
  survey_line_spec spec;
  double *node_x, *node_y;        /* owned copies of the crooked nodes */
  const geometry_layout *layout;  /* borrowed from the source, NULL for headers/tables */
  double precision_m;             /* of the coordinates: intervals are rounded to it */
  bins_fitter *fit;               /* NULL unless the line is fitted */
  record *rec;
  size_t nrec, caprec;
  double *steps;                  /* receiver steps of the current record */
  size_t nsteps, capsteps;
  int open;                       /* a record is open */
  size_t file;
  int32_t field_record;
  double prx, pry;                /* previous channel's receiver */
};

static int cmp_dbl(const void *a, const void *b)
{
  double x = *(const double *)a, y = *(const double *)b;
  return (x > y) - (x < y);
}

/* Median of the finite values of v (reordered); NAN when there are none. */
static double median(double *v, size_t n)
{
  size_t k = 0;
  for (size_t i = 0; i < n; i++)
    if (isfinite(v[i]))
      v[k++] = v[i];
  if (!k)
    return NAN;
  qsort(v, k, sizeof *v, cmp_dbl);
  return k % 2 ? v[k / 2] : 0.5 * (v[k / 2 - 1] + v[k / 2]);
}

int survey_new(survey **out, const geometry_source *src, const survey_line_spec *spec,
               tz_err *err)
{
  survey *s = calloc(1, sizeof *s);
  if (!s)
    return tz_fail(err, TZ_E_NOMEM, "survey");
  s->spec = *spec;
  s->layout = geometry_source_get_layout(src);
  s->precision_m = geometry_source_kind(src) == GEOMETRY_FROM_HEADERS ? 0.01 : 0.001;
  int rc = TZ_OK;
  if (spec->nnodes) {
    s->node_x = malloc(spec->nnodes * sizeof *s->node_x);
    s->node_y = malloc(spec->nnodes * sizeof *s->node_y);
    if (!s->node_x || !s->node_y) {
      rc = tz_fail(err, TZ_E_NOMEM, "crooked-line nodes");
    } else {
      memcpy(s->node_x, spec->node_x, spec->nnodes * sizeof *s->node_x);
      memcpy(s->node_y, spec->node_y, spec->nnodes * sizeof *s->node_y);
      s->spec.node_x = s->node_x;
      s->spec.node_y = s->node_y;
    }
  }
  if (!rc && !s->layout && !spec->nnodes && !spec->has_line)
    rc = bins_fitter_new(&s->fit, err);
  if (rc) {
    survey_free(s);
    return rc;
  }
  *out = s;
  return TZ_OK;
}

void survey_free(survey *s)
{
  if (!s)
    return;
  bins_fitter_free(s->fit);
  free(s->node_x);
  free(s->node_y);
  free(s->rec);
  free(s->steps);
  free(s);
}

int survey_wants_traces(const survey *s) { return s->layout == NULL; }

static void close_record(survey *s)
{
  if (s->open)
    s->rec[s->nrec - 1].dg = median(s->steps, s->nsteps);
  s->open = 0;
  s->nsteps = 0;
}

static int open_record(survey *s, size_t file, const geometry_trace *g, tz_err *err)
{
  close_record(s);
  if (s->nrec == s->caprec) {
    if (s->caprec >= SURVEY_MAX_RECORDS)
      return tz_fail(err, TZ_E_FORMAT, "more than %d records", SURVEY_MAX_RECORDS);
    size_t nc = s->caprec ? s->caprec * 2 : 256;
    record *r = realloc(s->rec, nc * sizeof *r);
    if (!r)
      return tz_fail(err, TZ_E_NOMEM, "survey records");
    s->rec = r;
    s->caprec = nc;
  }
  record *r = &s->rec[s->nrec++];
  r->dg = NAN;
  r->sx = g->source_x;
  r->sy = g->source_y;
  r->channels = 0;
  s->open = 1;
  s->file = file;
  s->field_record = g->field_record;
  return TZ_OK;
}

int survey_add(survey *s, size_t file, const segy_trace_header *h, const geometry_trace *g,
               tz_err *err)
{
  int cls = geometry_trace_class(h->kind);
  if (s->layout || cls == GEOMETRY_TRACE_AUXILIARY)
    return TZ_OK;
  int rc;
  if (!s->open || file != s->file || g->field_record != s->field_record) {
    if ((rc = open_record(s, file, g, err)))
      return rc;
  } else {
    double d = hypot(g->receiver_x - s->prx, g->receiver_y - s->pry);
    if (d >= SURVEY_REPEAT_M) {
      if (s->nsteps == s->capsteps) {
        size_t nc = s->capsteps ? s->capsteps * 2 : 256;
        double *v = realloc(s->steps, nc * sizeof *v);
        if (!v)
          return tz_fail(err, TZ_E_NOMEM, "receiver steps");
        s->steps = v;
        s->capsteps = nc;
      }
      s->steps[s->nsteps++] = d;
    }
  }
  s->rec[s->nrec - 1].channels++;
  s->prx = g->receiver_x;
  s->pry = g->receiver_y;
  if (s->fit && cls == GEOMETRY_TRACE_DATA)
    return bins_fitter_add(s->fit, g->midpoint_x, g->midpoint_y, err);
  return TZ_OK;
}

/* Rounded to the precision of the coordinates: trace headers carry centimetres
 * at best (coordinate scalar -100, common practice), so distances between
 * rounded positions scatter by a centimetre at an oblique azimuth; a geometry
 * table is taken to the millimetre. */
static double to_precision(double v, double q)
{
  return isfinite(v) ? round(v / q) * q : 0;
}

/* dg, ds and N from the records. */
static int header_figures(survey *s, survey_figures *fig, tz_err *err)
{
  double q = s->precision_m;
  close_record(s);
  fig->records = (int64_t)s->nrec;
  if (!s->nrec)
    return TZ_OK;
  double *v = malloc(s->nrec * sizeof *v);
  if (!v)
    return tz_fail(err, TZ_E_NOMEM, "survey figures");
  for (size_t i = 0; i < s->nrec; i++)
    v[i] = s->rec[i].dg;
  fig->receiver_interval_m = to_precision(median(v, s->nrec), q);
  size_t k = 0;
  for (size_t i = 1; i < s->nrec; i++) {
    double d = hypot(s->rec[i].sx - s->rec[i - 1].sx, s->rec[i].sy - s->rec[i - 1].sy);
    if (d >= SURVEY_REPEAT_M)
      v[k++] = d;
  }
  fig->source_interval_m = to_precision(median(v, k), q);
  for (size_t i = 0; i < s->nrec; i++)
    v[i] = s->rec[i].channels;
  fig->channels_per_record = median(v, s->nrec);
  free(v);
  double dg = fig->receiver_interval_m, ds = fig->source_interval_m;
  fig->nominal_fold = dg > 0 && ds > 0 ? fig->channels_per_record * dg / (2.0 * ds) : 0;
  return TZ_OK;
}

static void layout_figures(const geometry_layout *l, survey_figures *fig)
{
  fig->receiver_interval_m = l->receiver_interval_m;
  fig->source_interval_m = l->source_interval_m;
  fig->channels_per_record = (double)geometry_layout_channels(l);
  fig->nominal_fold = geometry_layout_nominal_fold(l);
  fig->records = (int64_t)geometry_layout_shots(l);
  fig->from_layout = 1;
}

static int make_line(survey *s, double size, bins_line **line, survey_figures *fig, tz_err *err)
{
  const survey_line_spec *sp = &s->spec;
  if (sp->nnodes)
    return bins_line_crooked(line, sp->node_x, sp->node_y, sp->nnodes, size, sp->first_cmp,
                             sp->max_off_line_m, err);
  bins_params p;
  int rc;
  if (sp->has_line) {
    p = (bins_params){ sp->origin_x_m, sp->origin_y_m, sp->azimuth_deg, size, sp->first_cmp,
                       sp->max_off_line_m };
  } else if (s->layout) {
    if ((rc = bins_params_from_layout(s->layout, size, sp->first_cmp, &p, err)))
      return rc;
    p.max_off_line_m = sp->max_off_line_m;
  } else {
    if ((rc = bins_fitter_solve(s->fit, size, sp->first_cmp, sp->max_off_line_m, &p,
                                &fig->fit, err)))
      return rc;
    fig->fitted = 1;
  }
  return bins_line_straight(line, &p, err);
}

int survey_finish(survey *s, geometry_source *src, bins_line **line, survey_figures *fig,
                  tz_err *err)
{
  memset(fig, 0, sizeof *fig);
  *line = NULL;
  int rc;
  if (s->layout)
    layout_figures(s->layout, fig);
  else if ((rc = header_figures(s, fig, err)))
    return rc;
  double size = s->spec.bin_size_m;
  if (!(size > 0)) {
    if (!(fig->receiver_interval_m > 0))
      return tz_fail(err, TZ_E_FORMAT, "no receiver interval in the trace headers to take "
                     "the bin size from: give a bin size");
    size = 0.5 * fig->receiver_interval_m;   /* half the receiver interval (common practice) */
  }
  if ((rc = make_line(s, size, line, fig, err)))
    return rc;
  if (s->layout) {
    fig->shooting_azimuth_deg = geometry_source_direction(src);
    return TZ_OK;
  }
  /* The shooting direction: along the line, the way the sources move. */
  double dir = bins_line_get_params(*line).azimuth_deg, su, cu;
  if (s->nrec > 1) {
    const record *a = &s->rec[0], *b = &s->rec[s->nrec - 1];
    geometry_sincos_deg(dir, &su, &cu);
    if ((b->sx - a->sx) * su + (b->sy - a->sy) * cu < 0)
      dir = fmod(dir + 180.0, 360.0);
  }
  fig->shooting_azimuth_deg = dir;
  geometry_source_set_direction(src, dir);
  return TZ_OK;
}
