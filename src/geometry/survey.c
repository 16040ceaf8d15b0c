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
  double dg;            /* median along-line receiver step (NAN when the record has none) */
  double sx, sy;        /* source of the first channel */
  double rx[2], ry[2];  /* first and last receiver */
  double channels;
  size_t file;
  int32_t field_record, source_point;
} record;

struct survey {
  survey_line_spec spec;
  double *node_x, *node_y;        /* owned copies of the crooked nodes */
  const geometry_layout *layout;  /* borrowed from the source, NULL for headers/tables */
  double precision_m;             /* of the coordinates: intervals are rounded to it */
  bins_fitter *fit;               /* NULL unless the line is fitted */
  record *rec;
  size_t nrec, caprec;
  double *steps;                  /* receiver positions (x, y) of the current record,
                                   * from its first receiver; then room for its steps */
  size_t nsteps, capsteps;
  double rx0, ry0;                /* the current record's first receiver */
  survey_gap *gaps;
  size_t ngaps;
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
  if (!rc && spec->crooked_smoothing_m > 0 && (s->layout || spec->nnodes || spec->has_line))
    rc = tz_fail(err, TZ_E_ARG, "an automatic crooked line is fitted through the midpoints: "
                 "not with a given line or node file, nor a layout (whose line is straight)");
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
  free(s->gaps);
  free(s);
}

int survey_wants_traces(const survey *s) { return s->layout == NULL; }

/* Each channel step is measured along the record's receiver line where it is:
 * projected on the chord from SURVEY_CHORD_STEPS receivers before it to as many
 * after it, so scatter across the line does not lengthen the steps
 * (hypot(5, 0.4) = 5.016) and a bend in the line does not shorten them. */
#define SURVEY_CHORD_STEPS 3
static void close_record(survey *s)
{
  if (s->open) {
    const double *p = s->steps;
    size_t n = s->nsteps, k = 0;
    double *out = s->steps + 2 * n;          /* the second half of the buffer */
    for (size_t i = 0; i + 1 < n; i++) {
      size_t a = i > SURVEY_CHORD_STEPS ? i - SURVEY_CHORD_STEPS : 0;
      size_t b = i + 1 + SURVEY_CHORD_STEPS < n ? i + 1 + SURVEY_CHORD_STEPS : n - 1;
      double cx = p[2 * b] - p[2 * a], cy = p[2 * b + 1] - p[2 * a + 1], c = hypot(cx, cy);
      double dx = p[2 * i + 2] - p[2 * i], dy = p[2 * i + 3] - p[2 * i + 1];
      double d = c > 0 ? fabs(dx * cx + dy * cy) / c : hypot(dx, dy);
      if (d >= SURVEY_REPEAT_M)
        out[k++] = d;
    }
    s->rec[s->nrec - 1].dg = median(out, k);
    s->rec[s->nrec - 1].rx[1] = s->prx;
    s->rec[s->nrec - 1].ry[1] = s->pry;
  }
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
  r->rx[0] = r->rx[1] = g->receiver_x;
  r->ry[0] = r->ry[1] = g->receiver_y;
  r->channels = 0;
  r->file = file;
  r->field_record = g->field_record;
  r->source_point = 0;
  s->open = 1;
  s->rx0 = g->receiver_x;
  s->ry0 = g->receiver_y;
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
    s->rec[s->nrec - 1].source_point = h->source_point;
  }
  if (s->nsteps == 0 || hypot(g->receiver_x - s->prx, g->receiver_y - s->pry) >= SURVEY_REPEAT_M) {
    if (s->nsteps == s->capsteps) {
      size_t nc = s->capsteps ? s->capsteps * 2 : 256;
      double *v = realloc(s->steps, 4 * nc * sizeof *v);   /* positions, then steps */
      if (!v)
        return tz_fail(err, TZ_E_NOMEM, "receiver positions");
      s->steps = v;
      s->capsteps = nc;
    }
    s->steps[2 * s->nsteps] = g->receiver_x - s->rx0;
    s->steps[2 * s->nsteps + 1] = g->receiver_y - s->ry0;
    s->nsteps++;
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

double survey_round_interval(double v, double q)
{
  if (!(v > 0) || !isfinite(v))
    return to_precision(v, q);
  double p = pow(10.0, floor(log10(v)));
  const double steps[] = { p, 0.5 * p, 0.25 * p, 0.1 * p };
  for (size_t i = 0; i < sizeof steps / sizeof steps[0]; i++) {
    double r = round(v / steps[i]) * steps[i];
    if (r > 0 && fabs(v - r) <= 0.005 * r)
      return r;
  }
  return to_precision(v, q);
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
  fig->receiver_step_median_m = to_precision(median(v, s->nrec), q * 0.1);
  fig->receiver_interval_m = survey_round_interval(fig->receiver_step_median_m, q);
  size_t k = 0;
  for (size_t i = 1; i < s->nrec; i++) {
    double d = hypot(s->rec[i].sx - s->rec[i - 1].sx, s->rec[i].sy - s->rec[i - 1].sy);
    if (d >= SURVEY_REPEAT_M)
      v[k++] = d;
  }
  fig->source_step_median_m = to_precision(median(v, k), q * 0.1);
  fig->source_interval_m = survey_round_interval(fig->source_step_median_m, q);
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

/* Median of |v[i+1] - v[i]| over the steps that are not 0 (repeats). */
static double median_step(const record *r, size_t n, int points, double *tmp)
{
  size_t k = 0;
  for (size_t i = 1; i < n; i++) {
    double d = points ? (double)r[i].source_point - r[i - 1].source_point
                      : (double)r[i].field_record - r[i - 1].field_record;
    if (d != 0)
      tmp[k++] = fabs(d);
  }
  return median(tmp, k);
}

/* How many whole steps are missing in a move of d (d / step - 1 when d is a
 * whole multiple, >= 2, of step within tol of a step), else 0. */
static int64_t missing_steps(double d, double step, double tol)
{
  if (!(step > 0) || !(d > 1.5 * step) || !isfinite(d / step) || d / step > 1e9)
    return 0;
  double k = round(d / step);
  return fabs(d - k * step) <= tol * step ? (int64_t)k - 1 : 0;
}

/* Gaps in the shooting (survey_gap): consecutive records whose field record
 * numbers, source point numbers or source positions along the line skip one
 * or more whole steps of their usual (median) step. Positions allow a quarter
 * of the source interval of scatter. */
static int find_gaps(survey *s, const bins_line *line, const survey_figures *fig, tz_err *err)
{
  if (s->nrec < 2)
    return TZ_OK;
  double *tmp = malloc(s->nrec * sizeof *tmp);
  if (!tmp)
    return tz_fail(err, TZ_E_NOMEM, "survey gaps");
  double rstep = median_step(s->rec, s->nrec, 0, tmp);
  double pstep = median_step(s->rec, s->nrec, 1, tmp);
  free(tmp);
  double ds = fig->source_interval_m;
  int rc = TZ_OK;
  size_t cap = 0;
  bins_loc a, b;
  bins_locate(line, s->rec[0].sx, s->rec[0].sy, &a);
  for (size_t i = 1; i < s->nrec && !rc; i++, a = b) {
    const record *p = &s->rec[i - 1], *q = &s->rec[i];
    bins_locate(line, q->sx, q->sy, &b);
    double along = b.along_m - a.along_m;     /* along the line (or polyline) */
    int64_t mr = missing_steps((double)q->field_record - p->field_record, rstep, 1e-9);
    int64_t mp = p->source_point && q->source_point
                     ? missing_steps(fabs((double)q->source_point - p->source_point), pstep, 1e-9)
                     : 0;
    int64_t mx = missing_steps(fabs(along), ds, 0.25);
    if (!mr && !mp && !mx)
      continue;
    if (s->ngaps == cap) {
      size_t nc = cap ? 2 * cap : 16;
      survey_gap *g = realloc(s->gaps, nc * sizeof *g);
      if (!g) {
        rc = tz_fail(err, TZ_E_NOMEM, "survey gaps");
        break;
      }
      s->gaps = g;
      cap = nc;
    }
    survey_gap *g = &s->gaps[s->ngaps++];
    g->file_before = p->file;
    g->file_after = q->file;
    g->record_before = p->field_record;
    g->record_after = q->field_record;
    g->point_before = p->source_point;
    g->point_after = q->source_point;
    g->x_before_m = p->sx;
    g->y_before_m = p->sy;
    g->x_after_m = q->sx;
    g->y_after_m = q->sy;
    g->distance_m = fabs(along);
    g->flags = (mr ? SURVEY_GAP_RECORD : 0u) | (mp ? SURVEY_GAP_POINT : 0u) |
               (mx ? SURVEY_GAP_POSITION : 0u);
    g->missing = mr > mp ? mr : mp;
    if (mx > g->missing)
      g->missing = mx;
  }
  return rc;
}

static int make_line(survey *s, double size, bins_line **line, survey_figures *fig, tz_err *err)
{
  const survey_line_spec *sp = &s->spec;
  if (sp->nnodes)
    return bins_line_crooked(line, sp->node_x, sp->node_y, sp->nnodes, size, sp->first_cmp,
                             sp->max_off_line_m, err);
  if (sp->crooked_smoothing_m > 0) {
    fig->fitted = 1;
    return bins_fitter_solve_crooked(s->fit, sp->crooked_smoothing_m, size, sp->first_cmp,
                                     sp->max_off_line_m, line, &fig->fit, err);
  }
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
  if ((rc = find_gaps(s, *line, fig, err)))
    return rc;
  fig->gaps = s->ngaps;
  for (size_t i = 0; i < s->ngaps; i++)
    fig->shots_missing += s->gaps[i].missing;
  return TZ_OK;
}

const survey_gap *survey_gaps(const survey *s, size_t *n)
{
  *n = s->ngaps;
  return s->gaps;
}

/* Receivers at station centres: with r = s / interval - floor(s / interval) the
 * fraction of each record's first and last receiver's position s along the
 * line (bins_locate), the phase is the circular mean of r (atan2 of the summed sines and
 * cosines of 2 pi r; Mardia & Jupp, "Directional Statistics", 2000, sec. 2.2.1)
 * refined by the median of the differences from it, each wrapped to [-1/2, 1/2)
 * (robust to a few receivers off the grid); the anchor is the phase times the
 * interval, wrapped to [-(1/2 + 1e-6), 1/2 - 1e-6) intervals so that a phase of
 * one half within rounding numbers the stations as floor(s / interval + 1/2)
 * does. Stations numbered floor((s - anchor) / interval + 1/2) then put scattered
 * receivers at the nominal interval on distinct stations. */
double survey_station_anchor(const survey *s, const bins_line *line, double interval_m)
{
  if (!s || !s->nrec || !line || !(interval_m > 0))
    return 0;
  double sum_s = 0, sum_c = 0;
  double *d = malloc(2 * s->nrec * sizeof *d);
  if (!d)
    return 0;
  size_t n = 0;
  for (size_t i = 0; i < s->nrec; i++)
    for (int k = 0; k < 2; k++) {
      bins_loc loc;
      bins_locate(line, s->rec[i].rx[k], s->rec[i].ry[k], &loc);
      double a = loc.along_m / interval_m;
      double r = a - floor(a);
      if (!isfinite(r))
        continue;
      d[n++] = r;
      sum_s += sin(2 * M_PI * r);
      sum_c += cos(2 * M_PI * r);
    }
  double phi0 = atan2(sum_s, sum_c) / (2 * M_PI);
  for (size_t i = 0; i < n; i++) {
    double w = d[i] - phi0;
    d[i] = w - floor(w + 0.5);
  }
  double phi = n ? phi0 + median(d, n) : 0;
  free(d);
  phi -= floor(phi + 0.5 + 1e-6);
  return phi * interval_m;
}
