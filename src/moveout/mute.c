/* mute.c -- mute times of a trace from controls along the line and first breaks.
 *
 * Interpolation: the polyline of a control is linear in offset between its
 * points and constant outside them; between control CMPs the two neighbouring
 * polylines are evaluated at the trace's offset and blended linearly in CMP
 * number (constant beyond the first and last control), the rule of the velocity
 * table (docs/velocity-table.md). First-break picks are those of the picks file of
 * `tzero firstbreaks` (read by firstbreak_picks_load); a trace without a pick
 * takes the straight line through its record's nearest picks on the same side
 * of the source in signed offset (extended along the end segment beyond the
 * outermost pick). Common practice for mutes, e.g. Yilmaz 2001, "Seismic Data
 * Analysis", section 1.6 (muting).
 *
 * Not here: zeroing samples (nmo_apply, nmo_band_mute), JSON (job_mute.c).
 */
#include "tzero/mute.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/firstbreak.h"
#include "tzero/table.h"

static const char *const kind_names[MUTE__KINDS] = { "top", "inner", "bottom" };

const char *mute_kind_name(int kind)
{
  return kind >= 0 && kind < MUTE__KINDS ? kind_names[kind] : "unknown";
}

int mute_set_new(mute_set **out, tz_err *err)
{
  mute_set *m = calloc(1, sizeof *m);
  if (!m)
    return tz_fail(err, TZ_E_NOMEM, "mute set");
  m->taper_ms = 10;
  m->after_first_break_ms = NAN;
  *out = m;
  return TZ_OK;
}

void mute_set_free(mute_set *m)
{
  if (!m)
    return;
  for (int k = 0; k < MUTE__KINDS; k++) {
    for (size_t i = 0; i < m->kind[k].n; i++)
      free(m->kind[k].c[i].p);
    free(m->kind[k].c);
  }
  free(m->picks);
  free(m->picks_path);
  free(m);
}

int mute_set_active(const mute_set *m)
{
  if (!m)
    return 0;
  for (int k = 0; k < MUTE__KINDS; k++)
    if (m->kind[k].n)
      return 1;
  return !isnan(m->after_first_break_ms);
}

int mute_set_add(mute_set *m, int kind, int32_t cmp, const mute_point *p, size_t n,
                 int *which, tz_err *err)
{
  if (which)
    *which = 1;
  if (kind < 0 || kind >= MUTE__KINDS)
    return tz_fail(err, TZ_E_ARG, "mute kind %d unknown", kind);
  mute_surface *s = &m->kind[kind];
  if (s->n >= MUTE_MAX_CONTROLS)
    return tz_fail(err, TZ_E_ARG, "more than %d controls", MUTE_MAX_CONTROLS);
  if (s->n && cmp <= s->c[s->n - 1].cmp) {
    if (which)
      *which = 0;
    return tz_fail(err, TZ_E_ARG, "CMP %d is not after the previous control's CMP %d "
                   "(controls go in increasing CMP order)", (int)cmp, (int)s->c[s->n - 1].cmp);
  }
  if (n == 0 || n > MUTE_MAX_POINTS)
    return tz_fail(err, TZ_E_ARG, "%zu points (1 to %d allowed)", n, MUTE_MAX_POINTS);
  for (size_t i = 0; i < n; i++) {
    if (!isfinite(p[i].offset_m) || p[i].offset_m < 0)
      return tz_fail(err, TZ_E_ARG, "point %zu: offset %.10g m must be 0 or more", i,
                     p[i].offset_m);
    if (i > 0 && !(p[i].offset_m > p[i - 1].offset_m))
      return tz_fail(err, TZ_E_ARG, "point %zu: offset %.10g m is not after %.10g m "
                     "(offsets must increase)", i, p[i].offset_m, p[i - 1].offset_m);
    if (!isfinite(p[i].time_ms) || (kind == MUTE_INNER && !isfinite(p[i].time_end_ms)))
      return tz_fail(err, TZ_E_ARG, "point %zu: time must be finite", i);
    if (kind == MUTE_INNER && p[i].time_end_ms < p[i].time_ms)
      return tz_fail(err, TZ_E_ARG, "point %zu: the cone is inverted at offset %.10g m "
                     "(end %.10g ms before start %.10g ms)", i, p[i].offset_m,
                     p[i].time_end_ms, p[i].time_ms);
  }
  if (s->n % 16 == 0) {
    mute_control *c = realloc(s->c, (s->n + 16) * sizeof *c);
    if (!c)
      return tz_fail(err, TZ_E_NOMEM, "mute controls");
    s->c = c;
  }
  mute_point *q = malloc(n * sizeof *q);
  if (!q)
    return tz_fail(err, TZ_E_NOMEM, "mute points");
  memcpy(q, p, n * sizeof *q);
  for (size_t i = 0; i < n; i++)
    if (kind != MUTE_INNER)
      q[i].time_end_ms = q[i].time_ms;
  s->c[s->n++] = (mute_control){ .cmp = cmp, .n = n, .p = q };
  return TZ_OK;
}

/* ---- evaluation ---- */

static double poly_time(const mute_control *c, double x, int end)
{
  const mute_point *p = c->p;
  size_t n = c->n;
  if (x <= p[0].offset_m)
    return end ? p[0].time_end_ms : p[0].time_ms;
  if (x >= p[n - 1].offset_m)
    return end ? p[n - 1].time_end_ms : p[n - 1].time_ms;
  size_t lo = 0, hi = n - 1;   /* p[lo].offset < x < p[hi].offset */
  while (hi - lo > 1) {
    size_t mid = (lo + hi) / 2;
    if (p[mid].offset_m <= x)
      lo = mid;
    else
      hi = mid;
  }
  double f = (x - p[lo].offset_m) / (p[hi].offset_m - p[lo].offset_m);
  double a = end ? p[lo].time_end_ms : p[lo].time_ms;
  double b = end ? p[hi].time_end_ms : p[hi].time_ms;
  return a + f * (b - a);
}

double mute_surface_time(const mute_surface *s, int32_t cmp, double offset_m, int end)
{
  if (!s || s->n == 0)
    return NAN;
  double x = fabs(offset_m);
  const mute_control *c = s->c;
  size_t n = s->n;
  if (cmp <= c[0].cmp)
    return poly_time(&c[0], x, end);
  if (cmp >= c[n - 1].cmp)
    return poly_time(&c[n - 1], x, end);
  size_t lo = 0, hi = n - 1;
  while (hi - lo > 1) {
    size_t mid = (lo + hi) / 2;
    if (c[mid].cmp <= cmp)
      lo = mid;
    else
      hi = mid;
  }
  double f = (double)(cmp - c[lo].cmp) / (double)(c[hi].cmp - c[lo].cmp);
  double a = poly_time(&c[lo], x, end), b = poly_time(&c[hi], x, end);
  return a + f * (b - a);
}

static int pick_cmp(const void *a, const void *b)
{
  const mute_pick *x = a, *y = b;
  if (x->record != y->record)
    return x->record < y->record ? -1 : 1;
  if (x->offset_m != y->offset_m)
    return x->offset_m < y->offset_m ? -1 : 1;
  return (x->channel > y->channel) - (x->channel < y->channel);
}

double mute_first_break_ms(const mute_set *m, const mute_trace *t)
{
  if (!m || !m->npicks)
    return NAN;
  const mute_pick *pk = m->picks;
  size_t lo = 0, hi = m->npicks;   /* first pick of the record */
  while (lo < hi) {
    size_t mid = (lo + hi) / 2;
    if (pk[mid].record < t->record)
      lo = mid + 1;
    else
      hi = mid;
  }
  size_t a = lo;
  hi = m->npicks;
  while (lo < hi) {
    size_t mid = (lo + hi) / 2;
    if (pk[mid].record <= t->record)
      lo = mid + 1;
    else
      hi = mid;
  }
  size_t b = lo;   /* the record's picks: [a, b), by signed offset */
  if (a == b)
    return NAN;
  double shift = m->picks_field_times ? t->static_ms : 0;
  double x = t->offset_m;
  for (size_t i = a; i < b; i++)
    if (pk[i].channel == t->channel)
      return pk[i].time_ms + shift;
  /* Same side of the source: signed offsets of the trace's sign (0 goes with +). */
  int neg = x < 0;
  size_t s0 = a, s1 = b;
  while (s0 < b && (pk[s0].offset_m < 0) != neg)
    s0++;
  s1 = s0;
  while (s1 < b && (pk[s1].offset_m < 0) == neg)
    s1++;
  if (s0 == s1) {   /* nothing on its side: the record's pick nearest in |offset| */
    size_t best = a;
    for (size_t i = a; i < b; i++)
      if (fabs(fabs(pk[i].offset_m) - fabs(x)) < fabs(fabs(pk[best].offset_m) - fabs(x)))
        best = i;
    return pk[best].time_ms + shift;
  }
  if (s1 - s0 == 1)
    return pk[s0].time_ms + shift;
  size_t k = s0;   /* segment [k, k+1] holding x, or the end segment */
  while (k + 2 < s1 && pk[k + 1].offset_m < x)
    k++;
  const mute_pick *p = &pk[k], *q = &pk[k + 1];
  double d = q->offset_m - p->offset_m;
  double f = d != 0 ? (x - p->offset_m) / d : 0;
  return p->time_ms + f * (q->time_ms - p->time_ms) + shift;
}

void mute_eval(const mute_set *m, const mute_trace *t, mute_times *out)
{
  out->top_ms = -INFINITY;
  out->inner_from_ms = out->inner_to_ms = NAN;
  out->bottom_ms = INFINITY;
  if (!m)
    return;
  const mute_surface *k = m->kind;
  if (k[MUTE_TOP].n)
    out->top_ms = mute_surface_time(&k[MUTE_TOP], t->cmp, t->offset_m, 0);
  if (!isnan(m->after_first_break_ms)) {
    double fb = mute_first_break_ms(m, t);
    if (!isnan(fb) && fb + m->after_first_break_ms > out->top_ms)
      out->top_ms = fb + m->after_first_break_ms;
  }
  if (k[MUTE_INNER].n) {
    out->inner_from_ms = mute_surface_time(&k[MUTE_INNER], t->cmp, t->offset_m, 0);
    out->inner_to_ms = mute_surface_time(&k[MUTE_INNER], t->cmp, t->offset_m, 1);
  }
  if (k[MUTE_BOTTOM].n)
    out->bottom_ms = mute_surface_time(&k[MUTE_BOTTOM], t->cmp, t->offset_m, 0);
}

/* ---- files ---- */

int mute_file_load(mute_set *m, int kind, const char *path, tz_err *err)
{
  table_reader *t;
  int rc = table_open(&t, path, err);
  if (rc)
    return rc;
  static const char *const cols[4] = { "cmp", "offset_m", "time_ms", "time_end_ms" };
  int ncol = kind == MUTE_INNER ? 4 : 3;
  long col[4] = { -1, -1, -1, -1 };
  mute_point *pts = malloc(MUTE_MAX_POINTS * sizeof *pts);
  if (!pts) {
    table_close(t);
    return tz_fail(err, TZ_E_NOMEM, "mute points");
  }
  size_t nf, np = 0;
  int header = 1, have = 0;
  int32_t cur = 0;
  int64_t first_line = 0;
  while (!rc) {
    rc = table_next(t, &nf, err);
    if (rc)
      break;
    if (header && nf > 0) {
      for (size_t i = 0; i < nf; i++)
        for (int c = 0; c < ncol; c++)
          if (!strcmp(table_field(t, i), cols[c]))
            col[c] = (long)i;
      for (int c = 0; c < ncol && !rc; c++)
        if (col[c] < 0)
          rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t), "no column %s in the header row "
                            "(%s)", cols[c], kind == MUTE_INNER ? "cmp,offset_m,time_ms,"
                            "time_end_ms" : "cmp,offset_m,time_ms");
      header = 0;
      continue;
    }
    int64_t cmp = 0;
    mute_point q = { 0, 0, 0 };
    if (nf > 0) {
      if ((rc = table_field_i64(t, (size_t)col[0], "cmp", &cmp, err)) ||
          (rc = table_field_f64(t, (size_t)col[1], "offset_m", &q.offset_m, err)) ||
          (rc = table_field_f64(t, (size_t)col[2], "time_ms", &q.time_ms, err)) ||
          (ncol == 4 && (rc = table_field_f64(t, (size_t)col[3], "time_end_ms", &q.time_end_ms,
                                              err))))
        break;
      if (cmp < INT32_MIN || cmp > INT32_MAX) {
        rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t), "column cmp: %lld out of range",
                          (long long)cmp);
        break;
      }
    }
    if (have && (nf == 0 || (int32_t)cmp != cur)) {   /* a CMP's rows end */
      int which;
      rc = mute_set_add(m, kind, cur, pts, np, &which, err);
      if (rc) {
        int64_t line = which == 0 ? first_line : table_line(t);
        err->status = TZ_OK;
        char msg[sizeof err->msg];
        snprintf(msg, sizeof msg, "%s", err->msg);
        rc = tz_fail_line(err, TZ_E_FORMAT, line, "CMP %d: %s", (int)cur, msg);
        break;
      }
      np = 0;
      have = 0;
    }
    if (nf == 0)
      break;
    if (!have) {
      cur = (int32_t)cmp;
      first_line = table_line(t);
      have = 1;
    }
    if (np >= MUTE_MAX_POINTS) {
      rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t), "CMP %d: more than %d points",
                        (int)cur, MUTE_MAX_POINTS);
      break;
    }
    if (np > 0 && !(q.offset_m > pts[np - 1].offset_m)) {
      rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t), "CMP %d: offset %.10g m is not after "
                        "%.10g m (offsets must increase)", (int)cur, q.offset_m,
                        pts[np - 1].offset_m);
      break;
    }
    if (kind == MUTE_INNER && q.time_end_ms < q.time_ms) {
      rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t), "CMP %d: the cone is inverted at "
                        "offset %.10g m (time_end_ms %.10g before time_ms %.10g)", (int)cur,
                        q.offset_m, q.time_end_ms, q.time_ms);
      break;
    }
    pts[np++] = q;
  }
  if (!rc && m->kind[kind].n == 0)
    rc = tz_fail(err, TZ_E_FORMAT, "no mute rows");
  if (rc && !err->path[0])
    tz_err_path(err, path);
  free(pts);
  table_close(t);
  return rc;
}

int mute_picks_load(mute_set *m, const char *path, double pad_ms, tz_err *err)
{
  firstbreak_file_pick *fp = NULL;
  size_t n = 0;
  int rc = firstbreak_picks_load(path, NULL, &fp, &n, err);
  if (rc)
    return rc;
  mute_pick *pk = n ? malloc(n * sizeof *pk) : NULL;
  char *p = strdup(path);
  if ((n && !pk) || !p) {
    free(fp);
    free(pk);
    free(p);
    return tz_fail(err, TZ_E_NOMEM, "%zu picks", n);
  }
  for (size_t i = 0; i < n; i++)
    pk[i] = (mute_pick){ fp[i].record, fp[i].channel, fp[i].offset_m, fp[i].time_ms };
  free(fp);
  if (n)
    qsort(pk, n, sizeof *pk, pick_cmp);
  /* The picks file's first line says its time reference (firstbreak_write_picks). */
  int field = 0;
  FILE *f = fopen(path, "r");
  if (f) {
    char line[512];
    if (fgets(line, sizeof line, f) && line[0] == '#' && strstr(line, "field times"))
      field = 1;
    fclose(f);
  }
  free(m->picks);
  free(m->picks_path);
  m->picks = pk;
  m->npicks = n;
  m->picks_path = p;
  m->picks_field_times = field;
  m->after_first_break_ms = pad_ms;
  return TZ_OK;
}
