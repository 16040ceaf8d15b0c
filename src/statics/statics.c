/* statics.c -- elevation-static formulas, station numbers, station statics tables.
 *
 * The formulas are the field-static corrections of common practice (Sheriff and
 * Geldart 1995, ch. on corrections; Yilmaz 2001, sec. 3.4): a station's static
 * replaces the near-surface between it and a flat datum by material of the
 * replacement velocity, with vertical paths. Tables are read with table.h (so
 * every error names the file and the line) and kept sorted by (kind, station)
 * for binary search.
 *
 * Not here: which trace has which station (the stack plan's station pass),
 * shifting samples (nmo_shift), job keys (job.c).
 */
#include "tzero/statics.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/fileio.h"
#include "tzero/table.h"

const char *statics_kind_name(int kind)
{
  return kind == STATICS_SOURCE ? "source" : kind == STATICS_RECEIVER ? "receiver" : "unknown";
}

double statics_elevation_ms(double elevation_m, double datum_m, double v_r_mps)
{
  return -(elevation_m - datum_m) / v_r_mps * 1e3;
}

double statics_weathered_ms(double elevation_m, double thickness_m, double v_w_mps,
                            double datum_m, double v_r_mps)
{
  return -(thickness_m / v_w_mps + (elevation_m - thickness_m - datum_m) / v_r_mps) * 1e3;
}

double statics_buried_source_ms(double elevation_m, double depth_m, double thickness_m,
                                double v_w_mps, double datum_m, double v_r_mps)
{
  if (depth_m < thickness_m)
    return -((thickness_m - depth_m) / v_w_mps + (elevation_m - thickness_m - datum_m) / v_r_mps) *
           1e3;
  return -(elevation_m - depth_m - datum_m) / v_r_mps * 1e3;
}

double statics_uphole_thickness_m(double uphole_ms, double depth_m, double v_w_mps,
                                  double v_r_mps)
{
  double h = (uphole_ms * 1e-3 - depth_m / v_r_mps) / (1.0 / v_w_mps - 1.0 / v_r_mps);
  if (!(h > 0))
    return 0;
  return h > depth_m ? depth_m : h;
}

int32_t statics_station_number(double s_m, double interval_m)
{
  double k = nearbyint(s_m / interval_m);
  if (k > INT32_MAX)
    return INT32_MAX;
  if (k < INT32_MIN)
    return INT32_MIN;
  return (int32_t)k;
}

/* ---------------------------------------------------------------- tables */

struct statics_table {
  char *path;
  size_t n;
  statics_row *row;
};

static int row_order(const void *a, const void *b)
{
  const statics_row *x = a, *y = b;
  if (x->kind != y->kind)
    return x->kind - y->kind;
  return (x->station > y->station) - (x->station < y->station);
}

void statics_table_free(statics_table *t)
{
  if (!t)
    return;
  free(t->path);
  free(t->row);
  free(t);
}

const char *statics_table_path(const statics_table *t) { return t->path; }
size_t statics_table_rows(const statics_table *t) { return t->n; }
const statics_row *statics_table_row(const statics_table *t, size_t i)
{
  return i < t->n ? &t->row[i] : NULL;
}

const statics_row *statics_table_find(const statics_table *t, int kind, int32_t station)
{
  statics_row key;
  key.kind = kind;
  key.station = station;
  return bsearch(&key, t->row, t->n, sizeof *t->row, row_order);
}

static const char *const columns[] = { "kind", "station", "x_m", "y_m", "elevation_m",
                                       "static_ms" };
#define NCOL (sizeof columns / sizeof columns[0])

int statics_table_load(statics_table **out, const char *path, tz_err *err)
{
  table_reader *tr = NULL;
  statics_table *t = calloc(1, sizeof *t);
  size_t cap = 0, nf = 0;
  size_t col[NCOL];
  int rc = TZ_OK;
  if (!t || !(t->path = strdup(path))) {
    statics_table_free(t);
    return tz_fail(err, TZ_E_NOMEM, "statics table");
  }
  if ((rc = table_open(&tr, path, err)))
    goto done;
  if ((rc = table_next(tr, &nf, err)))
    goto done;
  if (!nf) {
    rc = tz_fail(err, TZ_E_FORMAT, "empty statics table (expected a header row %s,%s,%s,%s,%s,%s)",
                 columns[0], columns[1], columns[2], columns[3], columns[4], columns[5]);
    goto done;
  }
  for (size_t c = 0; c < NCOL; c++) {
    col[c] = (size_t)-1;
    for (size_t i = 0; i < nf; i++)
      if (!strcmp(table_field(tr, i), columns[c]))
        col[c] = i;
    if (col[c] == (size_t)-1) {
      rc = tz_fail_line(err, TZ_E_FORMAT, table_line(tr),
                        "statics table has no '%s' column (needs kind,station,x_m,y_m,"
                        "elevation_m,static_ms)", columns[c]);
      goto done;
    }
  }
  for (;;) {
    if ((rc = table_next(tr, &nf, err)))
      goto done;
    if (!nf)
      break;
    int64_t line = table_line(tr);
    if (t->n >= STATICS_MAX_ROWS) {
      rc = tz_fail_line(err, TZ_E_FORMAT, line, "more than %d rows in a statics table",
                        STATICS_MAX_ROWS);
      goto done;
    }
    if (t->n == cap) {
      size_t nc = cap ? cap * 2 : 256;
      statics_row *r = realloc(t->row, nc * sizeof *r);
      if (!r) {
        rc = tz_fail(err, TZ_E_NOMEM, "statics table rows");
        goto done;
      }
      t->row = r;
      cap = nc;
    }
    statics_row *r = &t->row[t->n];
    memset(r, 0, sizeof *r);
    r->line = line;
    const char *k = table_field(tr, col[0]);
    if (!strcmp(k, "source"))
      r->kind = STATICS_SOURCE;
    else if (!strcmp(k, "receiver"))
      r->kind = STATICS_RECEIVER;
    else {
      rc = tz_fail_line(err, TZ_E_FORMAT, line, "kind '%s': expected source or receiver", k);
      goto done;
    }
    int64_t st;
    if ((rc = table_field_i64(tr, col[1], columns[1], &st, err)))
      goto done;
    if (st < INT32_MIN || st > INT32_MAX) {
      rc = tz_fail_line(err, TZ_E_FORMAT, line, "station %lld out of range", (long long)st);
      goto done;
    }
    r->station = (int32_t)st;
    if ((rc = table_field_f64(tr, col[2], columns[2], &r->x_m, err)) ||
        (rc = table_field_f64(tr, col[3], columns[3], &r->y_m, err)) ||
        (rc = table_field_f64(tr, col[4], columns[4], &r->elevation_m, err)) ||
        (rc = table_field_f64(tr, col[5], columns[5], &r->static_ms, err)))
      goto done;
    if (fabs(r->static_ms) > STATICS_MAX_MS) {
      rc = tz_fail_line(err, TZ_E_FORMAT, line, "static_ms %g beyond +-%g ms", r->static_ms,
                        STATICS_MAX_MS);
      goto done;
    }
    t->n++;
  }
  qsort(t->row, t->n, sizeof *t->row, row_order);
  for (size_t i = 1; i < t->n; i++)
    if (!row_order(&t->row[i - 1], &t->row[i])) {
      const statics_row *a = &t->row[i - 1], *b = &t->row[i];
      rc = tz_fail_line(err, TZ_E_FORMAT, a->line > b->line ? a->line : b->line,
                        "%s station %d given twice (lines %lld and %lld)",
                        statics_kind_name(a->kind), (int)a->station,
                        (long long)(a->line < b->line ? a->line : b->line),
                        (long long)(a->line > b->line ? a->line : b->line));
      goto done;
    }
done:
  table_close(tr);
  if (rc) {
    tz_err_path(err, path);
    statics_table_free(t);
    return rc;
  }
  *out = t;
  return TZ_OK;
}

int statics_table_write(const char *path, const statics_row *rows, size_t n,
                        const char *comment, tz_err *err)
{
  statics_row *s = malloc((n ? n : 1) * sizeof *s);
  if (!s)
    return tz_fail(err, TZ_E_NOMEM, "statics table of %zu rows", n);
  memcpy(s, rows, n * sizeof *s);
  qsort(s, n, sizeof *s, row_order);
  fileio_out *o = NULL;
  if (fileio_create(&o, path, err)) {
    free(s);
    return err->status;
  }
  FILE *fp = fileio_stream(o);
  if (comment) {
    const char *c = comment;
    while (*c) {
      const char *e = strchr(c, '\n');
      size_t len = e ? (size_t)(e - c) : strlen(c);
      fprintf(fp, "# %.*s\n", (int)len, c);
      c += len + (e ? 1 : 0);
    }
  }
  fprintf(fp, "kind,station,x_m,y_m,elevation_m,static_ms\n");
  for (size_t i = 0; i < n; i++)
    fprintf(fp, "%s,%d,%.3f,%.3f,%.3f,%.4f\n", statics_kind_name(s[i].kind), (int)s[i].station,
            s[i].x_m, s[i].y_m, s[i].elevation_m, s[i].static_ms);
  free(s);
  return fileio_commit(o, err);
}
