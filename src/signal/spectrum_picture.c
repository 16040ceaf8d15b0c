/* spectrum_picture.c -- pictures of amplitude spectra and of the f-k spectrum of a
 * record, drawn with the chart helpers of picture.h (cairo: PNG, SVG, PDF).
 *
 * The f-k spectrum: the record's data traces on a regular offset grid (mean of
 * traces sharing a slot, zero for empty slots), each tapered in time (10 % cosine
 * ends, as spectrum_plan_new), zero-padded to fast sizes of at least twice the
 * grid in x and in time, a 2D FFT by FFTW (real along time, complex along x),
 * |F| in dB against the peak. Not here: the spectra themselves (spectrum.c).
 */
#include "tzero/spectrum.h"
#include "signal/signal_int.h"
#include "tzero/table.h"

#include <fftw3.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void spectrum_curve_free(spectrum_curve *c)
{
  if (!c)
    return;
  free(c->hz);
  free(c->db);
  memset(c, 0, sizeof *c);
}

int spectrum_curve_load(spectrum_curve *c, const char *path, tz_err *err)
{
  memset(c, 0, sizeof *c);
  table_reader *t = NULL;
  int rc = table_open(&t, path, err);
  if (rc)
    return rc;
  size_t nf, cap = 0, ihz = (size_t)-1, idb = (size_t)-1;
  if ((rc = table_next(t, &nf, err)))
    goto done;
  for (size_t i = 0; i < nf; i++) {
    if (!strcmp(table_field(t, i), "frequency_hz"))
      ihz = i;
    if (!strcmp(table_field(t, i), "amplitude_db"))
      idb = i;
  }
  if (ihz == (size_t)-1 || idb == (size_t)-1) {
    rc = tz_fail_at(err, TZ_E_FORMAT, -1, -1, "%s: line %lld: expected the columns "
                    "frequency_hz and amplitude_db (a CSV of tzero spectrum)", path,
                    (long long)table_line(t));
    goto done;
  }
  while (!(rc = table_next(t, &nf, err)) && nf) {
    if (c->n >= SPECTRUM_MAX_ROWS) {
      rc = tz_fail(err, TZ_E_FORMAT, "%s: more than %d rows", path, SPECTRUM_MAX_ROWS);
      break;
    }
    if (c->n == cap) {
      cap = cap ? 2 * cap : 1024;
      double *a = realloc(c->hz, cap * sizeof *a), *b = a ? realloc(c->db, cap * sizeof *b) : NULL;
      if (a)
        c->hz = a;
      if (!a || !b) {
        rc = tz_fail(err, TZ_E_NOMEM, "spectrum of %zu rows", cap);
        break;
      }
      c->db = b;
    }
    if ((rc = table_field_f64(t, ihz, "frequency_hz", &c->hz[c->n], err)) ||
        (rc = table_field_f64(t, idb, "amplitude_db", &c->db[c->n], err)))
      break;
    c->n++;
  }
  if (!rc && c->n < 2)
    rc = tz_fail(err, TZ_E_FORMAT, "%s: fewer than two frequencies", path);
done:
  table_close(t);
  if (rc)
    spectrum_curve_free(c);
  return rc;
}

/* The level floor and the picture size (0: the defaults given). */
static int check_sizes(double min_db, uint32_t *w, uint32_t *h, uint32_t dw, uint32_t dh,
                       tz_err *err)
{
  if (!(min_db < 0))
    return tz_fail(err, TZ_E_ARG, "lowest level %.10g dB is not below 0", min_db);
  *w = *w ? *w : dw;
  *h = *h ? *h : dh;
  if (*w < PICTURE_MIN_WIDTH || *h < PICTURE_MIN_HEIGHT || *w > PICTURE_MAX_SIDE ||
      *h > PICTURE_MAX_SIDE)
    return tz_fail(err, TZ_E_ARG, "picture of %u x %u px is outside %u x %u .. %u px", *w, *h,
                   PICTURE_MIN_WIDTH, PICTURE_MIN_HEIGHT, PICTURE_MAX_SIDE);
  return TZ_OK;
}

static const unsigned char CURVE_RGB[SPECTRUM_MAX_CURVES][3] = {
  { 0, 0, 0 }, { 200, 30, 30 }, { 30, 90, 200 }, { 20, 140, 60 },
  { 150, 60, 170 }, { 220, 130, 0 }, { 0, 150, 160 }, { 120, 120, 120 },
};

int spectrum_draw(const spectrum_curve *c, size_t n, const char *const *labels,
                  const char *title, double max_hz, double min_db, uint32_t width,
                  uint32_t height, int format, picture_ctx **out, tz_err *err)
{
  if (n < 1 || n > SPECTRUM_MAX_CURVES)
    return tz_fail(err, TZ_E_ARG, "%zu spectra in one picture (1 to %d)", n, SPECTRUM_MAX_CURVES);
  if (check_sizes(min_db, &width, &height, 720, 420, err))
    return err->status;
  double fmax = max_hz;
  if (!(fmax > 0))
    for (size_t i = 0; i < n; i++)
      fmax = fmax > c[i].hz[c[i].n - 1] ? fmax : c[i].hz[c[i].n - 1];
  picture_ctx *ctx = NULL;
  int rc = picture_ctx_new(&ctx, format, width, height, err);
  if (rc)
    return rc;
  picture_frame f = { .x = 70, .y = 64, .w = width - 70 - 24.0, .h = height - 64 - 56.0,
                      .x0 = 0, .x1 = fmax, .y0 = min_db, .y1 = 0 };
  picture_title(ctx, title ? title : "Amplitude spectrum", "mean amplitude of the traces, "
                "dB against the peak");
  picture_grid_y(ctx, &f);
  double *px = NULL;
  for (size_t i = 0; i < n && !rc; i++) {
    free(px);
    px = malloc(2 * c[i].n * sizeof *px);
    if (!px) {
      rc = tz_fail(err, TZ_E_NOMEM, "curve of %zu points", c[i].n);
      break;
    }
    double *py = px + c[i].n;
    size_t m = 0;
    for (size_t k = 0; k < c[i].n && c[i].hz[k] <= fmax; k++, m++) {
      px[m] = picture_frame_px(&f, c[i].hz[k]);
      py[m] = picture_frame_py(&f, c[i].db[k] > min_db ? c[i].db[k] : min_db);
    }
    picture_ctx_attrs(ctx, "data-curve=\"%zu\"", i);
    picture_ctx_polyline(ctx, px, py, m, 1.5, 0, CURVE_RGB[i]);
  }
  free(px);
  if (!rc) {
    picture_frame_draw(ctx, &f);
    picture_axis_x(ctx, &f, PICTURE_SIDE_BOTTOM, "FREQUENCY (Hz)", 0);
    picture_axis_y(ctx, &f, PICTURE_SIDE_LEFT, "AMPLITUDE (dB)", 0);
    if (labels)
      picture_legend(ctx, f.x, 54, n, labels, CURVE_RGB, NULL);
    *out = ctx;
    return TZ_OK;
  }
  picture_ctx_free(ctx);
  return rc;
}

void spectrum_fk_free(spectrum_fk *f)
{
  if (!f)
    return;
  free(f->db);
  memset(f, 0, sizeof *f);
}

static int cmp_double(const void *a, const void *b)
{
  double x = *(const double *)a, y = *(const double *)b;
  return x < y ? -1 : x > y;
}

int spectrum_fk_of_record(const char *path, int64_t rec, double dx, const segy_open_opts *open,
                          spectrum_fk *out, tz_err *err)
{
  memset(out, 0, sizeof *out);
  segy_file *f = NULL;
  float *traces = NULL, *grid = NULL, *row = NULL;
  double *off = NULL, *sorted = NULL;
  fftwf_complex *spec = NULL, *col = NULL;
  fftwf_plan tp = NULL, xp = NULL;
  int rc = segy_open(&f, path, open, err);
  if (rc)
    return rc;
  const segy_info *info = segy_get_info(f);   /* borrowed until segy_close() */
  size_t ns = info->samples, ntr = 0, cap = 0;
  double dt_s = info->interval_us * 1e-6;
  int64_t nt = segy_trace_count(f);
  for (int64_t t = 0; t < nt && !rc; t++) {   /* the record's data traces, as read */
    segy_trace_header h;
    if ((rc = segy_header_read(f, t, &h, err)))
      break;
    if (h.field_record != rec || (h.kind != 1 && h.kind != 0))
      continue;
    if (ntr == cap) {
      cap = cap ? 2 * cap : 256;
      if (cap > CONDITION_MAX_FK_SLOTS || (size_t)cap * ns > (size_t)1 << 28) {
        rc = tz_fail(err, TZ_E_FORMAT, "record %lld of %s holds more than %d traces",
                     (long long)rec, path, CONDITION_MAX_FK_SLOTS);
        break;
      }
      float *a = realloc(traces, cap * ns * sizeof *a);
      double *b = a ? realloc(off, cap * sizeof *b) : NULL;
      if (a)
        traces = a;
      if (!a || !b) {
        rc = tz_fail(err, TZ_E_NOMEM, "record of %zu traces", cap);
        break;
      }
      off = b;
    }
    if ((rc = segy_trace_read(f, t, &h, traces + ntr * ns, ns, err)))
      break;
    off[ntr++] = h.offset;
  }
  segy_close(f);
  if (!rc && ntr < 2)
    rc = tz_fail(err, TZ_E_ARG, "%s: record %lld has %zu data traces; an f-k spectrum needs at "
                 "least two", path, (long long)rec, ntr);
  if (!rc && !(dx > 0)) {   /* median step between distinct sorted offsets */
    if (!(sorted = malloc(ntr * sizeof *sorted))) {
      rc = tz_fail(err, TZ_E_NOMEM, "offsets");
    } else {
      memcpy(sorted, off, ntr * sizeof *sorted);
      qsort(sorted, ntr, sizeof *sorted, cmp_double);
      size_t m = 0;
      for (size_t i = 1; i < ntr; i++)
        if (sorted[i] - sorted[i - 1] > 1e-6)
          sorted[m++] = sorted[i] - sorted[i - 1];
      qsort(sorted, m, sizeof *sorted, cmp_double);
      dx = m ? sorted[m / 2] : 0;
      /* offsets in headers are often whole metres (12.5 m steps read as 12 and 13):
       * the span over the number of steps between distinct offsets, when that is
       * close to the median step (no gaps in the record) */
      double span = off[0], lo_o = off[0];
      for (size_t i = 1; i < ntr; i++) {
        span = off[i] > span ? off[i] : span;
        lo_o = off[i] < lo_o ? off[i] : lo_o;
      }
      double even = m ? (span - lo_o) / (double)m : 0;   /* m + 1 distinct offsets */
      if (fabs(even - dx) < 0.25 * dx)
        dx = even;
      if (!(dx > 0))
        rc = tz_fail(err, TZ_E_ARG, "%s: record %lld: the traces share one offset; give a "
                     "spacing", path, (long long)rec);
    }
  }
  size_t nx = 0, ntf = 0, nf = 0, nfs = 0;
  long lo = 0;
  if (!rc) {
    long hi = 0;
    for (size_t j = 0; j < ntr; j++) {
      long s = lround(off[j] / dx);
      lo = !j || s < lo ? s : lo;
      hi = !j || s > hi ? s : hi;
    }
    if (hi - lo + 1 > CONDITION_MAX_FK_SLOTS)
      rc = tz_fail(err, TZ_E_ARG, "%s: record %lld spans %ld trace positions at %.10g m, "
                   "beyond %d", path, (long long)rec, hi - lo + 1, dx, CONDITION_MAX_FK_SLOTS);
    nx = condition_fast_size(2 * (size_t)(hi - lo + 1));
    ntf = condition_fast_size(2 * ns);
    nf = ntf / 2 + 1;
    nfs = (nf + 3) & ~(size_t)3;   /* rows as aligned as the plan's arrays */
  }
  unsigned *count = NULL;
  if (!rc) {
    grid = calloc(nx * ns, sizeof *grid);
    count = calloc(nx, sizeof *count);
    row = fftwf_malloc(ntf * sizeof *row);
    spec = fftwf_malloc(nx * nfs * sizeof *spec);
    col = fftwf_malloc(nx * sizeof *col);
    out->db = malloc(nx * nf * sizeof *out->db);
    if (!grid || !count || !row || !spec || !col || !out->db)
      rc = tz_fail(err, TZ_E_NOMEM, "f-k spectrum of %zu x %zu", nx, ntf);
  }
  if (!rc) {
    tp = fftwf_plan_dft_r2c_1d((int)ntf, row, spec, FFTW_ESTIMATE);
    xp = fftwf_plan_dft_1d((int)nx, col, col, FFTW_FORWARD, FFTW_ESTIMATE);
    if (!tp || !xp)
      rc = tz_fail(err, TZ_E_FFT, "FFTW cannot plan %zu x %zu", nx, ntf);
  }
  if (!rc) {
    for (size_t j = 0; j < ntr; j++) {
      size_t r = (size_t)(lround(off[j] / dx) - lo);
      count[r]++;
      for (size_t i = 0; i < ns; i++)
        grid[r * ns + i] += traces[j * ns + i];
    }
    double m = 0.1 * (double)ns;   /* the 10 % cosine ends of spectrum_plan_new() */
    for (size_t r = 0; r < nx; r++) {
      fftwf_complex *X = spec + r * nfs;
      if (!count[r]) {
        memset(X, 0, nf * sizeof *X);
        continue;
      }
      for (size_t i = 0; i < ns; i++) {
        double d = (double)(i < ns - 1 - i ? i : ns - 1 - i) + 0.5;
        double w = d >= m ? 1.0 : 0.5 * (1.0 - cos(M_PI * d / m));
        row[i] = (float)(grid[r * ns + i] / (double)count[r] * w);
      }
      memset(row + ns, 0, (ntf - ns) * sizeof *row);
      fftwf_execute_dft_r2c(tp, row, X);
    }
    double peak = 0;
    size_t half = nx / 2;
    for (size_t jf = 0; jf < nf; jf++) {
      for (size_t r = 0; r < nx; r++) {
        col[r][0] = spec[r * nfs + jf][0];
        col[r][1] = spec[r * nfs + jf][1];
      }
      fftwf_execute_dft(xp, col, col);
      for (size_t ix = 0; ix < nx; ix++) {   /* column ik = ix shifted so k increases */
        size_t ik = (ix + half) % nx;
        double a = hypot(col[ix][0], col[ix][1]);
        out->db[jf * nx + ik] = (float)a;
        peak = a > peak ? a : peak;
      }
    }
    for (size_t q = 0; q < nx * nf; q++)
      out->db[q] = peak > 0 && out->db[q] > 0
                       ? (float)fmax(20.0 * log10(out->db[q] / peak), SPECTRUM_FLOOR_DB)
                       : (float)SPECTRUM_FLOOR_DB;
    out->nk = nx;
    out->nf = nf;
    out->dk = 1.0 / ((double)nx * dx);
    out->df = 1.0 / ((double)ntf * dt_s);
    out->k0 = -(double)half * out->dk;
    out->spacing_m = dx;
    out->traces = (int64_t)ntr;
  }
  if (tp)
    fftwf_destroy_plan(tp);
  if (xp)
    fftwf_destroy_plan(xp);
  fftwf_free(row);
  fftwf_free(spec);
  fftwf_free(col);
  free(count);
  free(grid);
  free(traces);
  free(off);
  free(sorted);
  if (rc)
    spectrum_fk_free(out);
  return rc;
}

int spectrum_draw_fk(const spectrum_fk *fk, const char *title, double max_hz, double min_db,
                     const double *fan, size_t nfan, uint32_t width, uint32_t height,
                     int format, picture_ctx **out, tz_err *err)
{
  if (check_sizes(min_db, &width, &height, 640, 560, err))
    return err->status;
  double fnyq = (double)(fk->nf - 1) * fk->df;
  double fmax = max_hz > 0 && max_hz < fnyq ? max_hz : fnyq;
  size_t nrow = (size_t)floor(fmax / fk->df) + 1;
  picture_image img = { (uint32_t)fk->nk, (uint32_t)nrow, malloc(3 * fk->nk * nrow) };
  if (!img.rgb)
    return tz_fail(err, TZ_E_NOMEM, "f-k raster of %zu x %zu", fk->nk, nrow);
  for (size_t r = 0; r < nrow; r++) {   /* top row = highest frequency */
    size_t jf = nrow - 1 - r;
    for (size_t ik = 0; ik < fk->nk; ik++) {
      double v = fk->db[jf * fk->nk + ik] - min_db;
      picture_colour(PICTURE_MAP_SEQUENTIAL, v > 0 ? v : 0, -min_db, img.rgb + 3 * (r * fk->nk + ik));
    }
  }
  picture_ctx *ctx = NULL;
  int rc = picture_ctx_new(&ctx, format, width, height, err);
  if (!rc) {
    double kmin = fk->k0 - 0.5 * fk->dk, kmax = fk->k0 + ((double)fk->nk - 0.5) * fk->dk;
    picture_frame f = { .x = 80, .y = 72, .w = width - 80 - 110.0, .h = height - 72 - 56.0,
                        .x0 = kmin, .x1 = kmax, .y0 = 0, .y1 = fmax };
    char sub[160];
    snprintf(sub, sizeof sub, "%lld traces at %.4g m; amplitude in dB against the peak",
             (long long)fk->traces, fk->spacing_m);
    picture_title(ctx, title ? title : "f-k amplitude spectrum", sub);
    rc = picture_ctx_image(ctx, &img, f.x, f.y, f.w, f.h, err);
    static const unsigned char white[3] = { 255, 255, 255 };
    for (size_t i = 0; !rc && i < nfan; i++) {   /* f = v |k|, both signs */
      if (!(fan[i] > 0))
        continue;
      for (int side = -1; side <= 1; side += 2) {
        double kx = side * fmax / fan[i];
        kx = kx < kmin ? kmin : kx > kmax ? kmax : kx;
        double xs[2] = { picture_frame_px(&f, 0), picture_frame_px(&f, kx) };
        double ys[2] = { picture_frame_py(&f, 0), picture_frame_py(&f, fabs(kx) * fan[i]) };
        picture_ctx_polyline(ctx, xs, ys, 2, 1.5, 1, white);
      }
    }
    if (!rc) {
      picture_frame_draw(ctx, &f);
      picture_axis_x(ctx, &f, PICTURE_SIDE_BOTTOM, "WAVENUMBER (cycles/m)", 0);
      picture_axis_y(ctx, &f, PICTURE_SIDE_LEFT, "FREQUENCY (Hz)", 0);
      char bar[48];
      snprintf(bar, sizeof bar, "dB ABOVE %g dB", min_db);
      picture_colour_bar(ctx, f.x + f.w + 24, f.y, 16, f.h, PICTURE_MAP_SEQUENTIAL, -min_db, bar);
    }
  }
  picture_image_free(&img);
  if (rc) {
    picture_ctx_free(ctx);
    return rc;
  }
  *out = ctx;
  return TZ_OK;
}
