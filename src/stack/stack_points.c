/* stack_points.c -- the field shot-point numbers and surface elevations along
 * the processing line, for the section's trace headers.
 *
 * The plan's header pass (stack_plan.c, every input whatever the CMP range of
 * the run, so the parts of a line get the same values as the whole) collects,
 * file by file, for the traces the stack would use, the source positions with their field shot-point
 * numbers (bytes 17-20; the layout's numbering when the geometry is a layout)
 * and the source and receiver surface elevations. Positions are distances
 * along the processing line; points closer than half a bin share a cell and
 * are averaged. At a CMP the shot point is interpolated linearly between the
 * neighbouring sources (extrapolated from the two end sources beyond them) and
 * the surface elevation linearly between the neighbouring stations (held at the
 * end values beyond them), common practice.
 */
#include "stack_int.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

typedef stack_pt_cell pt_cell;
typedef stack_pt_list pt_list;

static int cell_cmp(const void *a, const void *b)
{
  int64_t x = ((const pt_cell *)a)->key, y = ((const pt_cell *)b)->key;
  return (x > y) - (x < y);
}

static int pt_reserve(pt_list *L, size_t more, tz_err *err)
{
  if (L->n + more <= L->cap)
    return TZ_OK;
  size_t nc = (L->cap ? L->cap * 2 : 256) + more;
  pt_cell *c = realloc(L->c, nc * sizeof *c);
  if (!c)
    return tz_fail(err, TZ_E_NOMEM, "line positions");
  L->c = c;
  L->cap = nc;
  return TZ_OK;
}

static int pt_add(pt_list *L, double cell_m, double s, double v, tz_err *err)
{
  if (!isfinite(s) || !isfinite(v))
    return TZ_OK;
  if (L->n == L->cap && pt_reserve(L, 1, err))
    return err->status;
  double k = floor(s / cell_m + 0.5);
  L->c[L->n++] = (pt_cell){ (int64_t)fmax(fmin(k, 4e18), -4e18), s, v, 1 };
  return TZ_OK;
}

/* Sorts and merges equal cells (after each file, so memory follows the cells
 * of the line, not the traces). */
static void pt_merge(pt_list *L)
{
  if (!L->n)
    return;
  qsort(L->c, L->n, sizeof *L->c, cell_cmp);
  size_t m = 0;
  for (size_t i = 1; i < L->n; i++) {
    if (L->c[i].key == L->c[m].key) {
      L->c[m].s += L->c[i].s;
      L->c[m].v += L->c[i].v;
      L->c[m].n += L->c[i].n;
    } else {
      L->c[++m] = L->c[i];
    }
  }
  L->n = L->merged = m + 1;
}

static int pt_finish(pt_list *L, double **s, double **v, size_t *n, tz_err *err)
{
  pt_merge(L);
  *n = L->n;
  *s = malloc((L->n ? L->n : 1) * sizeof **s);
  *v = malloc((L->n ? L->n : 1) * sizeof **v);
  if (!*s || !*v)
    return tz_fail(err, TZ_E_NOMEM, "line positions");
  for (size_t i = 0; i < L->n; i++) {
    (*s)[i] = L->c[i].s / L->c[i].n;
    (*v)[i] = L->c[i].v / L->c[i].n;
  }
  return TZ_OK;
}

/* Appends `from` to `to` (the file's points after the line's so far). */
static int pt_append(pt_list *to, const pt_list *from, tz_err *err)
{
  if (!from->n)
    return TZ_OK;
  if (pt_reserve(to, from->n, err))
    return err->status;
  memcpy(to->c + to->n, from->c, from->n * sizeof *from->c);
  to->n += from->n;
  return TZ_OK;
}

static double along(const stack_plan *p, double x, double y)
{
  bins_loc loc;
  bins_locate(p->line, x, y, &loc);
  return loc.along_m;
}

static double cell_of(const stack_plan *p)
{
  return p->line_info.size_m / 2;
}

int stack_points_begin(stack_plan *p, tz_err *err)
{
  double cell = cell_of(p);
  const geometry_layout *lay = geometry_source_get_layout(p->geo);
  int rc = TZ_OK;
  for (size_t k = 0; cell > 0 && lay && k < geometry_layout_shots(lay) && !rc; k++) {
    geometry_shot sh;
    if ((rc = geometry_layout_shot(lay, k, &sh, err)))
      break;
    rc = pt_add(&p->pt_src, cell, along(p, sh.x, sh.y), (double)sh.shot_point, err);
  }
  return rc;
}

void stack_points_file_reset(stack_points_file *f)
{
  f->src.n = f->src.merged = 0;
  f->surf.n = f->surf.merged = 0;
  f->have_last = 0;
  f->last_record = 0;
}

int stack_points_trace(const stack_plan *p, stack_points_file *f, const segy_trace_header *h,
                       const geometry_trace *g, tz_err *err)
{
  double cell = cell_of(p);
  if (!(cell > 0))
    return TZ_OK;
  int rc = TZ_OK;
  if (!f->have_last || g->field_record != f->last_record) {
    /* one source point per record: its surface elevation, and its field
     * number unless the layout gave them */
    double ss = along(p, g->source_x, g->source_y);
    if (!(rc = pt_add(&f->surf, cell, ss, g->source_z, err)) &&
        !geometry_source_get_layout(p->geo) && h->source_point)
      rc = pt_add(&f->src, cell, ss, (double)h->source_point, err);
    f->last_record = g->field_record;
    f->have_last = 1;
  }
  if (!rc)
    rc = pt_add(&f->surf, cell, along(p, g->receiver_x, g->receiver_y), g->receiver_z, err);
  return rc;
}

int stack_points_take(stack_plan *p, const stack_points_file *f, tz_err *err)
{
  int rc = pt_append(&p->pt_surf, &f->surf, err);
  if (!rc)
    rc = pt_append(&p->pt_src, &f->src, err);
  if (!rc) {
    pt_merge(&p->pt_surf);
    pt_merge(&p->pt_src);
  }
  return rc;
}

void stack_points_file_free(stack_points_file *f)
{
  free(f->src.c);
  free(f->surf.c);
  memset(f, 0, sizeof *f);
}

int stack_points_finish(stack_plan *p, tz_err *err)
{
  int rc = TZ_OK;
  if (cell_of(p) > 0) {
    rc = pt_finish(&p->pt_src, &p->sp_s, &p->sp_v, &p->nsp, err);
    if (!rc)
      rc = pt_finish(&p->pt_surf, &p->el_s, &p->el_v, &p->nel, err);
  }
  free(p->pt_src.c);
  free(p->pt_surf.c);
  memset(&p->pt_src, 0, sizeof p->pt_src);
  memset(&p->pt_surf, 0, sizeof p->pt_surf);
  return rc;
}

void stack_points_free(stack_plan *p)
{
  free(p->pt_src.c);
  free(p->pt_surf.c);
  free(p->sp_s);
  free(p->sp_v);
  free(p->el_s);
  free(p->el_v);
}

/* Linear interpolation in sorted s[]; beyond the ends, extrapolated from the
 * two end points (extend = 1) or held at the end value. */
static double interp(const double *s, const double *v, size_t n, double x, int extend)
{
  if (n == 1)
    return v[0];
  size_t lo = 0, hi = n - 1;
  if (x <= s[0] && !extend)
    return v[0];
  if (x >= s[n - 1] && !extend)
    return v[n - 1];
  if (x <= s[0]) {
    hi = 1;
  } else if (x >= s[n - 1]) {
    lo = n - 2;
  } else {
    while (hi - lo > 1) {
      size_t m = (lo + hi) / 2;
      if (s[m] <= x)
        lo = m;
      else
        hi = m;
    }
  }
  double d = s[hi] - s[lo];
  return d > 0 ? v[lo] + (v[hi] - v[lo]) * (x - s[lo]) / d : v[lo];
}

int stack_plan_cmp_surface(const stack_plan *p, int32_t cmp, double *shot_point,
                           double *elevation_m)
{
  double x = (double)((int64_t)cmp - p->line_info.first_cmp) * p->line_info.size_m;
  int have = 0;
  if (p->nsp) {
    *shot_point = interp(p->sp_s, p->sp_v, p->nsp, x, 1);
    have |= 1;
  }
  if (p->nel) {
    *elevation_m = interp(p->el_s, p->el_v, p->nel, x, 0);
    have |= 2;
  }
  return have;
}
