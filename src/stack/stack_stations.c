/* stack_stations.c -- source and receiver stations of a line and their statics.
 *
 * Station numbers come from the position along the processing line: for a
 * layout the distance s from the layout's station 0 along its azimuth (so the
 * numbers are the layout's own), otherwise the distance from the processing
 * line's origin (along a crooked line: bins_locate) less an anchor a that puts the receivers at station centres
 * (survey_station_anchor: a line fitted through the midpoints starts half a
 * station off the receivers, where GPS scatter would split or merge them);
 * station = floor((s - a) / interval + 1/2) (halves round up), with
 * interval = statics.station_interval_m or the receiver interval of the
 * geometry. A header pass collects every station that a stackable trace uses;
 * two positions more than half an interval apart that fall on one number are
 * an error, not a merge (set a smaller interval).
 *
 * Statics per station (docs/statics.md): the elevation term -(E - D) / v_r; with
 * uphole statics the weathering thickness under each shot hole from its uphole
 * time and depth, interpolated linearly in station number between holes (held
 * beyond the first and last), giving -(h / v_w + (E - h - D) / v_r) at
 * receivers and the buried-source time at sources; then each station statics
 * table adds its static_ms, matched by (kind, station), its x/y checked
 * against the geometry within half an interval.
 *
 * Not here: shifting samples (the chain, nmo_shift), the table format (statics.c).
 */
#include "stack_int.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define MAX_STATIONS 10000000

int32_t stack_station_of(const stack_plan *p, double x, double y)
{
  return stack_station_at(p, p->st_interval, x, y);
}

/* The frame stations are counted in: the layout's station 0 and azimuth, else
 * the processing line's origin and azimuth. */
static void station_frame(const stack_plan *p, double *ox, double *oy, double *sn, double *cs)
{
  const geometry_layout *l = geometry_source_get_layout(p->geo);
  geometry_sincos_deg(l ? l->azimuth_deg : p->line_info.azimuth_deg, sn, cs);
  *ox = l ? l->first_station_x_m : p->line_info.origin_x_m;
  *oy = l ? l->first_station_y_m : p->line_info.origin_y_m;
}

double stack_station_along(const stack_plan *p, double x, double y)
{
  if (!geometry_source_get_layout(p->geo) && bins_line_node_count(p->line)) {
    bins_loc loc;                 /* a crooked line: the distance along it */
    bins_locate(p->line, x, y, &loc);
    return loc.along_m;
  }
  double ox, oy, sn, cs;
  station_frame(p, &ox, &oy, &sn, &cs);
  return (x - ox) * sn + (y - oy) * cs;
}

int32_t stack_station_at(const stack_plan *p, double interval_m, double x, double y)
{
  double k = floor((stack_station_along(p, x, y) - p->st_anchor_m) / interval_m + 0.5 + 1e-9);
  return k > INT32_MAX ? INT32_MAX : k < INT32_MIN ? INT32_MIN : (int32_t)k;
}

static int cmp_station(const void *a, const void *b)
{
  const stack_station *x = a, *y = b;
  return (x->station > y->station) - (x->station < y->station);
}

const stack_station *stack_station_find(const stack_plan *p, int kind, int32_t station)
{
  if (!p->has_stations || kind < 0 || kind > 1)
    return NULL;
  stack_station key;
  key.station = station;
  return bsearch(&key, p->stations[kind], p->nstations[kind], sizeof key, cmp_station);
}

const stack_station *stack_plan_stations(const stack_plan *p, int kind, size_t *n)
{
  if (!p->has_stations || kind < 0 || kind > 1) {
    *n = 0;
    return NULL;
  }
  *n = p->nstations[kind];
  return p->stations[kind];
}

double stack_plan_station_interval(const stack_plan *p)
{
  return p->has_stations ? p->st_interval : 0;
}

int stack_plan_floating(const stack_plan *p, int32_t cmp, double *elevation_m, double *ms)
{
  int64_t i = (int64_t)cmp - p->fd_first;
  if (!p->fd_ms || i < 0 || i >= (int64_t)p->fd_n)
    return 0;
  *elevation_m = p->fd_elev_m[i];
  *ms = p->fd_ms[i];
  return 1;
}

double stack_floating_ms(const stack_plan *p, int32_t cmp)
{
  if (!p->fd_ms)
    return 0;
  int64_t i = (int64_t)cmp - p->fd_first;
  if (i < 0)
    i = 0;
  if (i >= (int64_t)p->fd_n)
    i = (int64_t)p->fd_n - 1;
  return p->fd_ms[i];
}

/* The floating datum: the surface elevation under each CMP (the receiver
 * stations' elevations, linear in position between stations, held beyond the
 * ends), smoothed by a running mean over floating_datum_smooth_m along the line
 * (common practice); never below the flat datum's side it started on matters
 * not: F may lie above or below D. */
static double elevation_at(const stack_station *r, size_t nr, double s)
{
  if (s <= r[0].station || nr == 1)
    return r[0].elevation_m;
  if (s >= r[nr - 1].station)
    return r[nr - 1].elevation_m;
  size_t lo = 0, hi = nr - 1;      /* r[lo].station < s <= r[hi].station */
  while (hi - lo > 1) {
    size_t mid = (lo + hi) / 2;
    if (r[mid].station < s)
      lo = mid;
    else
      hi = mid;
  }
  double w = (s - r[lo].station) / (double)(r[hi].station - r[lo].station);
  return r[lo].elevation_m + w * (r[hi].elevation_m - r[lo].elevation_m);
}

#define FD_MAX_CMPS 10000000

static int floating_build(stack_plan *p, tz_err *err)
{
  const job_statics *js = &p->job->statics;
  size_t nr = p->nstations[STATICS_RECEIVER];
  const stack_station *r = p->stations[STATICS_RECEIVER];
  if (!nr)
    return TZ_OK;
  /* every CMP of the line lies between its outermost stations */
  int32_t lo = INT32_MAX, hi = INT32_MIN;
  for (int k = 0; k < 2; k++)
    for (size_t i = 0; i < p->nstations[k]; i += p->nstations[k] > 1 ? p->nstations[k] - 1 : 1) {
      bins_loc loc;
      bins_locate(p->line, p->stations[k][i].x_m, p->stations[k][i].y_m, &loc);
      lo = loc.cmp < lo ? loc.cmp : lo;
      hi = loc.cmp > hi ? loc.cmp : hi;
    }
  if (hi < lo || (int64_t)hi - lo + 1 > FD_MAX_CMPS)
    return tz_fail(err, TZ_E_FORMAT, "floating datum: the stations span CMPs %d to %d",
                   (int)lo, (int)hi);
  size_t n = (size_t)((int64_t)hi - lo + 1);
  double *raw = malloc(n * sizeof *raw);
  p->fd_elev_m = malloc(n * sizeof *p->fd_elev_m);
  p->fd_ms = malloc(n * sizeof *p->fd_ms);
  if (!raw || !p->fd_elev_m || !p->fd_ms) {
    free(raw);
    return tz_fail(err, TZ_E_NOMEM, "floating datum of %zu CMPs", n);
  }
  p->fd_first = lo;
  p->fd_n = n;
  for (size_t c = 0; c < n; c++) {
    double x, y;
    bins_cmp_centre(p->line, lo + (int32_t)c, &x, &y);
    double s = (stack_station_along(p, x, y) - p->st_anchor_m) / p->st_interval;
    raw[c] = elevation_at(r, nr, s);
  }
  size_t h = (size_t)floor(js->floating_datum_smooth_m / (2 * p->line_info.size_m) + 0.5);
  for (size_t c = 0; c < n; c++) {
    size_t a = c > h ? c - h : 0, b = c + h + 1 < n ? c + h + 1 : n;
    double sum = 0;
    for (size_t k = a; k < b; k++)
      sum += raw[k];
    p->fd_elev_m[c] = sum / (double)(b - a);
    p->fd_ms[c] = 2e3 * (p->fd_elev_m[c] - js->datum_m) / js->replacement_velocity_mps;
  }
  free(raw);
  return TZ_OK;
}

void stack_stations_free(stack_plan *p)
{
  free(p->fd_elev_m);
  free(p->fd_ms);
  p->fd_elev_m = p->fd_ms = NULL;
  for (int k = 0; k < 2; k++) {
    free(p->stations[k]);
    p->stations[k] = NULL;
    p->nstations[k] = 0;
  }
}

/* A growing sorted array of one kind's stations. */
typedef struct station_list {
  stack_station *v;
  size_t n, cap;
  double *depth_sum, *uphole_sum;   /* parallel to v: sums for the means */
  int64_t *uphole_n;
} station_list;

static int list_add(station_list *L, const stack_plan *p, int kind, double x, double y,
                    double z, double depth, double uphole, const char *path, int64_t trace,
                    tz_err *err)
{
  int32_t st = stack_station_of(p, x, y);
  size_t lo = 0, hi = L->n;
  while (lo < hi) {
    size_t mid = (lo + hi) / 2;
    if (L->v[mid].station < st)
      lo = mid + 1;
    else
      hi = mid;
  }
  if (lo < L->n && L->v[lo].station == st) {
    stack_station *s = &L->v[lo];
    double d = hypot(x - s->x_m, y - s->y_m);
    if (d > 0.5 * p->st_interval) {
      tz_err_path(err, path);
      return tz_fail_at(err, TZ_E_FORMAT, trace, -1,
                        "two %s positions (%.2f, %.2f) and (%.2f, %.2f), %.2f m apart, fall on "
                        "station %d (station interval %g m): they are different stations; set "
                        "statics.station_interval_m smaller",
                        statics_kind_name(kind), s->x_m, s->y_m, x, y, d, (int)st,
                        p->st_interval);
    }
    s->traces++;
    L->depth_sum[lo] += depth;
    if (uphole > 0) {
      L->uphole_sum[lo] += uphole;
      L->uphole_n[lo]++;
    }
    return TZ_OK;
  }
  if (L->n >= MAX_STATIONS)
    return tz_fail(err, TZ_E_FORMAT, "more than %d %s stations", MAX_STATIONS,
                   statics_kind_name(kind));
  if (L->n == L->cap) {
    size_t nc = L->cap ? L->cap * 2 : 256;
    stack_station *v = realloc(L->v, nc * sizeof *v);
    if (v)
      L->v = v;
    double *a = realloc(L->depth_sum, nc * sizeof *a);
    if (a)
      L->depth_sum = a;
    double *b = realloc(L->uphole_sum, nc * sizeof *b);
    if (b)
      L->uphole_sum = b;
    int64_t *c = realloc(L->uphole_n, nc * sizeof *c);
    if (c)
      L->uphole_n = c;
    if (!v || !a || !b || !c)
      return tz_fail(err, TZ_E_NOMEM, "station list");
    L->cap = nc;
  }
  size_t m = L->n - lo;
  memmove(L->v + lo + 1, L->v + lo, m * sizeof *L->v);
  memmove(L->depth_sum + lo + 1, L->depth_sum + lo, m * sizeof *L->depth_sum);
  memmove(L->uphole_sum + lo + 1, L->uphole_sum + lo, m * sizeof *L->uphole_sum);
  memmove(L->uphole_n + lo + 1, L->uphole_n + lo, m * sizeof *L->uphole_n);
  stack_station *s = &L->v[lo];
  memset(s, 0, sizeof *s);
  s->kind = kind;
  s->station = st;
  s->x_m = x;
  s->y_m = y;
  s->elevation_m = z;
  s->traces = 1;
  L->depth_sum[lo] = depth;
  L->uphole_sum[lo] = uphole > 0 ? uphole : 0;
  L->uphole_n[lo] = uphole > 0;
  L->n++;
  return TZ_OK;
}

static void list_free(station_list *L)
{
  free(L->v);
  free(L->depth_sum);
  free(L->uphole_sum);
  free(L->uphole_n);
}

/* Weathering thickness at station number st from the shot holes (station,
 * thickness) sorted by station: linear between, held beyond the ends. */
static double thickness_at(const int32_t *hs, const double *hh, size_t nh, int32_t st)
{
  if (!nh)
    return NAN;
  if (st <= hs[0])
    return hh[0];
  if (st >= hs[nh - 1])
    return hh[nh - 1];
  size_t k = 1;
  while (hs[k] < st)
    k++;
  double w = (double)(st - hs[k - 1]) / (double)(hs[k] - hs[k - 1]);
  return hh[k - 1] + w * (hh[k] - hh[k - 1]);
}

static int apply_table(stack_plan *p, const char *path, tz_err *err)
{
  statics_table *t = NULL;
  int rc = statics_table_load(&t, path, err);
  if (rc)
    return rc;
  for (size_t i = 0; i < statics_table_rows(t) && !rc; i++) {
    const statics_row *r = statics_table_row(t, i);
    stack_station *s = (stack_station *)stack_station_find(p, r->kind, r->station);
    if (!s) {
      rc = tz_fail_line(err, TZ_E_FORMAT, r->line, "%s station %d is not in the geometry of "
                        "this line (stations are numbered from the position along the line, "
                        "interval %g m)", statics_kind_name(r->kind), (int)r->station,
                        p->st_interval);
      break;
    }
    double d = hypot(r->x_m - s->x_m, r->y_m - s->y_m);
    if (d > 0.5 * p->st_interval) {
      rc = tz_fail_line(err, TZ_E_FORMAT, r->line, "%s station %d at (%.2f, %.2f) is %.2f m "
                        "from the geometry's (%.2f, %.2f), more than half the station interval",
                        statics_kind_name(r->kind), (int)r->station, r->x_m, r->y_m, d, s->x_m,
                        s->y_m);
      break;
    }
    s->table_ms += r->static_ms;
  }
  if (rc)
    tz_err_path(err, path);
  statics_table_free(t);
  return rc;
}

int stack_stations_build(stack_plan *p, tz_err *err)
{
  const job_spec *j = p->job;
  const job_statics *js = &j->statics;
  station_frame(p, &p->st_ox, &p->st_oy, &p->st_sin, &p->st_cos);
  p->st_interval = js->station_interval_m > 0 ? js->station_interval_m
                                              : p->survey.receiver_interval_m;
  if (!(p->st_interval > 0))
    return tz_fail(err, TZ_E_JOB, "$.statics.station_interval_m: the geometry gives no "
                   "receiver interval to number the stations by; give one");
  p->has_stations = 1;
  station_list L[2];
  memset(L, 0, sizeof L);
  int rc = TZ_OK;
  for (size_t fi = 0; fi < p->ninputs && !rc; fi++) {
    if (p->inputs[fi].bad || !p->records[fi].n)
      continue;
    segy_file *f = NULL;
    if ((rc = stack_open_input(p, fi, &f, err)))
      break;
    int64_t n = segy_trace_count(f);
    for (int64_t t = 0; t < n && !rc; t++) {
      segy_trace_header h;
      geometry_trace g;
      int32_t cmp;
      double off, offs;
      int reason;
      if ((rc = segy_header_read(f, t, &h, err))) {
        tz_err_path(err, p->inputs[fi].path);
        break;
      }
      if (!stack_locate(p, &h, t, &cmp, &off, &offs, &g, &reason))
        continue;
      if (!(rc = list_add(&L[STATICS_SOURCE], p, STATICS_SOURCE, g.source_x, g.source_y,
                          g.source_z, g.source_depth, h.uphole_source_ms, p->inputs[fi].path, t,
                          err)))
        rc = list_add(&L[STATICS_RECEIVER], p, STATICS_RECEIVER, g.receiver_x, g.receiver_y,
                      g.receiver_z, 0, 0, p->inputs[fi].path, t, err);
    }
    segy_close(f);
  }
  int32_t *hole_station = NULL;
  double *hole_h = NULL;
  size_t nholes = 0;
  if (!rc) {
    /* means and shot-hole thicknesses */
    station_list *sources = &L[STATICS_SOURCE];
    hole_station = malloc((sources->n ? sources->n : 1) * sizeof *hole_station);
    hole_h = malloc((sources->n ? sources->n : 1) * sizeof *hole_h);
    if (!hole_station || !hole_h)
      rc = tz_fail(err, TZ_E_NOMEM, "shot-hole thicknesses");
    for (size_t i = 0; i < sources->n && !rc; i++) {
      stack_station *st = &sources->v[i];
      st->depth_m = sources->depth_sum[i] / (double)st->traces;
      st->uphole_ms = sources->uphole_n[i] ? sources->uphole_sum[i] / (double)sources->uphole_n[i] : NAN;
      st->weathering_m = NAN;
      if (js->uphole && sources->uphole_n[i] && st->depth_m > 0) {
        hole_station[nholes] = st->station;
        hole_h[nholes++] = statics_uphole_thickness_m(st->uphole_ms, st->depth_m,
                                              js->weathering_velocity_mps,
                                              js->replacement_velocity_mps);
      }
    }
    for (size_t i = 0; i < L[STATICS_RECEIVER].n; i++) {
      L[STATICS_RECEIVER].v[i].uphole_ms = NAN;
      L[STATICS_RECEIVER].v[i].weathering_m = NAN;
    }
  }
  if (!rc && js->uphole && !nholes)
    rc = tz_fail(err, TZ_E_JOB, "$.statics.uphole: no trace has both an uphole time (bytes "
                 "95-96) and a source depth (bytes 49-52)");
  for (int k = 0; k < 2 && !rc; k++) {
    for (size_t i = 0; i < L[k].n; i++) {
      stack_station *st = &L[k].v[i];
      double D = js->datum_m, vr = js->replacement_velocity_mps, vw = js->weathering_velocity_mps;
      if (!js->present || !js->elevation) {
        st->elevation_ms = 0;
      } else if (js->uphole) {
        double h = thickness_at(hole_station, hole_h, nholes, st->station);
        st->weathering_m = h;
        st->elevation_ms = k == STATICS_SOURCE
                              ? statics_buried_source_ms(st->elevation_m, st->depth_m, h, vw, D, vr)
                              : statics_weathered_ms(st->elevation_m, h, vw, D, vr);
      } else {
        st->elevation_ms = statics_elevation_ms(st->elevation_m, D, vr);
      }
    }
    p->stations[k] = L[k].v;
    p->nstations[k] = L[k].n;
    L[k].v = NULL;
  }
  free(hole_station);
  free(hole_h);
  for (int k = 0; k < 2; k++)
    list_free(&L[k]);
  for (size_t i = 0; i < js->ntables && !rc; i++)
    rc = apply_table(p, js->tables[i], err);
  for (int k = 0; k < 2 && !rc; k++)
    for (size_t i = 0; i < p->nstations[k]; i++) {
      stack_station *s = &p->stations[k][i];
      s->static_ms = s->elevation_ms + s->table_ms;
      if (fabs(s->static_ms) > STATICS_MAX_MS)
        rc = tz_fail(err, TZ_E_FORMAT, "%s station %d: static %.1f ms beyond +-%g ms (datum "
                     "%g m, elevation %g m)", statics_kind_name(k), (int)s->station,
                     s->static_ms, STATICS_MAX_MS, js->datum_m, s->elevation_m);
    }
  if (!rc && js->present && js->floating_datum_smooth_m > 0)
    rc = floating_build(p, err);
  return rc;
}
