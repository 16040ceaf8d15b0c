/* fk.c -- f-k fan filter of a whole record (docs/conditioning.md).
 *
 * A linear event of apparent velocity v lies on the line f = v k of the f-k plane
 * (Sheriff & Geldart 1995, the section on apparent velocity and f-k filtering; Yilmaz
 * 2001, the f-k filtering section). The step builds, per record:
 *
 *   grid     slot round(x / spacing) for each trace's signed offset x, over the line's
 *            whole signed-offset range plus npad slots each side; a slot of several
 *            traces holds their mean, an empty slot is zero. npad = max(4, nslots/10)
 *            empty slots each side of the line's range, and nx rounded up to a fast
 *            FFT size, keep the periodic transform from wrapping one end of a record
 *            onto the other; time is zero-padded to nt >= 1.5 ns samples for the same
 *            reason. (Copies of the edge traces in the pad were tried: they add flat,
 *            infinitely fast events that a reject fan passes, and left the ends of a
 *            300 m/s event 9 dB stronger than empty slots do.)
 *   2D FFT   real FFT along time of every occupied row, then, for each frequency
 *            column whose fan weight is not 1 everywhere, a complex FFT along x,
 *            the weight, and the inverse; the inverse real FFT of the rows the
 *            record's traces need. This is the 2D transform (FFTW computes the same
 *            sums) with the work of untouched columns and empty rows left out.
 *   weight   H(f, k) = 1 - a(f) m(v), v = f / |k| (k = 0: v infinite). m is the
 *            rejection: for "reject", 1 inside [v1, v2], a cosine taper to 0 over
 *            w = taper_pct/100 (v2 - v1) outside each end; for "pass", 1 - that.
 *            a(f) = 0 below min_hz, a cosine ramp to 1 over taper_pct/100 min_hz,
 *            then 1 (min_hz = 0: a = 1 everywhere).
 *   restore  a trace alone in its slot takes the filtered slot; traces sharing a
 *            slot each lose the slot's rejected part (mean in - mean out).
 *
 * Spatial aliasing: k is sampled up to 1 / (2 spacing); an event of velocity v is
 * aliased above f = v / (2 spacing) and its aliased energy lands at higher |v|, where
 * a reject fan leaves it.
 *
 * Plans (FFTW_ESTIMATE, made once in condition_fk_new, single-threaded) are run with
 * the new-array interface on each thread's own buffers; every sum is done in the same
 * order on every run, so the output does not depend on the thread.
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "signal/signal_int.h"

struct condition_fk {
  size_t step;               /* index in the chain, for messages */
  size_t ns, nt, nf, nx;     /* samples, padded time length, frequencies, x length */
  size_t nfs;                /* row stride of the spectra: nf rounded up to 4 (alignment) */
  size_t npad;               /* edge slots each side of a record */
  int64_t slot0;             /* slot of grid row npad (round(offset_min / spacing)) */
  size_t nslots;             /* slots of the line's offset range */
  double spacing_m;
  fftwf_plan tf, ti;         /* time r2c / c2r of nt */
  fftwf_plan xf, xi;         /* x forward / backward complex of nx */
  float *H;                  /* nf x nx weights / nx (rows of identity columns unused) */
  unsigned char *active;     /* nf: 1 when column f needs the x transform */
};

struct condition_fk_work {
  const condition_fk *fk;
  float *row;                /* nt real samples */
  fftwf_complex *spec;       /* nx rows of nfs: time spectra of the grid rows */
  fftwf_complex *col;        /* nx */
  float *sum;                /* nx x ns: slot means of the input (the grid rows) */
  unsigned *count;           /* nx traces per slot */
  unsigned char *live;       /* nx rows holding data (the record's slots) */
};

/* Cosine taper from 1 at u = 0 to 0 at u = 1. */
static double fall(double u)
{
  return u <= 0 ? 1.0 : u >= 1 ? 0.0 : 0.5 * (1.0 + cos(M_PI * u));
}

double condition_fk_weight(const condition_step *s, double f_hz, double k_per_m)
{
  double f = fabs(f_hz), k = fabs(k_per_m);
  double v1 = s->fan_mps[0], v2 = s->fan_mps[1];
  double w = s->taper_pct / 100.0 * (v2 - v1);
  double v = k > 0 ? f / k : INFINITY;
  double r;   /* 1 inside the fan [v1, v2], tapering to 0 outside */
  if (v >= v1 && v <= v2)
    r = 1.0;
  else if (w <= 0)
    r = 0.0;
  else if (v < v1)
    r = fall((v1 - v) / w);
  else
    r = isinf(v) ? 0.0 : fall((v - v2) / w);
  double m = s->fan_pass ? 1.0 - r : r;
  double a = 1.0;
  if (s->min_hz > 0) {
    double wf = s->taper_pct / 100.0 * s->min_hz;
    a = f < s->min_hz ? 0.0 : wf > 0 ? 1.0 - fall((f - s->min_hz) / wf) : 1.0;
  }
  return 1.0 - a * m;
}

void condition_fk_free(condition_fk *fk)
{
  if (!fk)
    return;
  if (fk->tf)
    fftwf_destroy_plan(fk->tf);
  if (fk->ti)
    fftwf_destroy_plan(fk->ti);
  if (fk->xf)
    fftwf_destroy_plan(fk->xf);
  if (fk->xi)
    fftwf_destroy_plan(fk->xi);
  free(fk->H);
  free(fk->active);
  free(fk);
}

int condition_fk_new(condition_fk **out, const condition_step *s, size_t step, size_t ns,
                     double dt_s, double spacing_m, double omin, double omax, tz_err *err)
{
  if (!isfinite(spacing_m) || spacing_m <= 0)
    return tz_fail(err, TZ_E_ARG, "conditioning[%zu] (fk_filter): trace spacing %.10g m is "
                   "not positive", step, spacing_m);
  if (!isfinite(omin) || !isfinite(omax) || omax < omin)
    return tz_fail(err, TZ_E_ARG, "conditioning[%zu] (fk_filter): offset range %.10g to "
                   "%.10g m is not usable", step, omin, omax);
  double span = (omax - omin) / spacing_m;
  if (span > CONDITION_MAX_FK_SLOTS)
    return tz_fail(err, TZ_E_ARG, "conditioning[%zu] (fk_filter): offsets %.10g to %.10g m at "
                   "%.10g m spacing need %.0f trace positions, beyond %d", step, omin, omax,
                   spacing_m, span + 1, CONDITION_MAX_FK_SLOTS);
  double nyq = 0.5 / dt_s;
  if (s->min_hz >= nyq)
    return tz_fail(err, TZ_E_ARG, "conditioning[%zu] (fk_filter): min_hz %.10g is at or above "
                   "the Nyquist frequency %.10g Hz", step, s->min_hz, nyq);
  condition_fk *fk = calloc(1, sizeof *fk);
  if (!fk)
    return tz_fail(err, TZ_E_NOMEM, "f-k plan");
  fk->step = step;
  fk->ns = ns;
  fk->spacing_m = spacing_m;
  fk->slot0 = (int64_t)llround(omin / spacing_m);
  fk->nslots = (size_t)(llround(omax / spacing_m) - fk->slot0 + 1);
  fk->npad = fk->nslots / 10 > 4 ? fk->nslots / 10 : 4;
  fk->nx = condition_fast_size(fk->nslots + 2 * fk->npad);
  fk->nt = condition_fast_size(ns + ns / 2);
  fk->nf = fk->nt / 2 + 1;
  fk->nfs = (fk->nf + 3) & ~(size_t)3;   /* every row as aligned as FFTW's plan arrays */
  int rc = TZ_OK;
  float *row = fftwf_malloc(fk->nt * sizeof *row);
  fftwf_complex *X = fftwf_malloc(fk->nf * sizeof *X);
  fftwf_complex *C = fftwf_malloc(fk->nx * sizeof *C);
  fk->H = malloc(fk->nf * fk->nx * sizeof *fk->H);
  fk->active = calloc(fk->nf, 1);
  if (!row || !X || !C || !fk->H || !fk->active) {
    rc = tz_fail(err, TZ_E_NOMEM, "f-k plan of %zu x %zu", fk->nx, fk->nt);
    goto done;
  }
  fk->tf = fftwf_plan_dft_r2c_1d((int)fk->nt, row, X, FFTW_ESTIMATE);
  fk->ti = fftwf_plan_dft_c2r_1d((int)fk->nt, X, row, FFTW_ESTIMATE);
  fk->xf = fftwf_plan_dft_1d((int)fk->nx, C, C, FFTW_FORWARD, FFTW_ESTIMATE);
  fk->xi = fftwf_plan_dft_1d((int)fk->nx, C, C, FFTW_BACKWARD, FFTW_ESTIMATE);
  if (!fk->tf || !fk->ti || !fk->xf || !fk->xi) {
    rc = tz_fail(err, TZ_E_FFT, "FFTW cannot plan the f-k transforms (%zu x %zu)", fk->nx,
                 fk->nt);
    goto done;
  }
  double df = 1.0 / ((double)fk->nt * dt_s), dk = 1.0 / ((double)fk->nx * spacing_m);
  for (size_t jf = 0; jf < fk->nf; jf++) {
    float *h = fk->H + jf * fk->nx;
    for (size_t ix = 0; ix < fk->nx; ix++) {
      double k = (ix <= fk->nx / 2 ? (double)ix : (double)ix - (double)fk->nx) * dk;
      double wgt = condition_fk_weight(s, (double)jf * df, k);
      if (wgt != 1.0)
        fk->active[jf] = 1;
      h[ix] = (float)(wgt / (double)fk->nx);
    }
  }
done:
  fftwf_free(row);
  fftwf_free(X);
  fftwf_free(C);
  if (rc) {
    condition_fk_free(fk);
    return rc;
  }
  *out = fk;
  return TZ_OK;
}

void condition_fk_work_free(condition_fk_work *w)
{
  if (!w)
    return;
  fftwf_free(w->row);
  fftwf_free(w->spec);
  fftwf_free(w->col);
  free(w->sum);
  free(w->count);
  free(w->live);
  free(w);
}

int condition_fk_work_new(condition_fk_work **out, const condition_fk *fk, tz_err *err)
{
  condition_fk_work *w = calloc(1, sizeof *w);
  if (!w)
    return tz_fail(err, TZ_E_NOMEM, "f-k workspace");
  w->fk = fk;
  w->row = fftwf_malloc(fk->nt * sizeof *w->row);
  w->spec = fftwf_malloc(fk->nx * fk->nfs * sizeof *w->spec);
  w->col = fftwf_malloc(fk->nx * sizeof *w->col);
  w->sum = malloc(fk->nx * fk->ns * sizeof *w->sum);
  w->count = malloc(fk->nx * sizeof *w->count);
  w->live = malloc(fk->nx);
  if (!w->row || !w->spec || !w->col || !w->sum || !w->count || !w->live) {
    condition_fk_work_free(w);
    return tz_fail(err, TZ_E_NOMEM, "f-k workspace of %zu x %zu", fk->nx, fk->nt);
  }
  *out = w;
  return TZ_OK;
}

/* Grid row of signed offset x, or -1 outside the grid. */
static long row_of(const condition_fk *fk, double x)
{
  double q = x / fk->spacing_m;
  if (!isfinite(q) || fabs(q) > 1e15)
    return -1;
  int64_t r = (int64_t)llround(q) - fk->slot0 + (int64_t)fk->npad;
  return r < (int64_t)fk->npad || r >= (int64_t)(fk->npad + fk->nslots) ? -1 : (long)r;
}

int condition_fk_apply(const condition_fk *fk, condition_fk_work *w, float *samples,
                       size_t ntr, const condition_trace_info *info, tz_err *err)
{
  size_t ns = fk->ns, nt = fk->nt, nf = fk->nf, nfs = fk->nfs, nx = fk->nx;
  memset(w->count, 0, nx * sizeof *w->count);
  memset(w->live, 0, nx);
  long lo = (long)nx, hi = -1;
  for (size_t j = 0; j < ntr; j++) {
    if (!info[j].live)
      continue;
    long r = row_of(fk, info[j].offset_m);
    if (r < 0) {
      tz_fail(err, TZ_E_ARG, "conditioning[%zu] (fk_filter): offset %.10g m lies outside "
              "the line's offset range", fk->step, info[j].offset_m);
      err->trace = (int64_t)j;
      return err->status;
    }
    float *s = w->sum + (size_t)r * ns;
    const float *x = samples + j * ns;
    if (w->count[r]++ == 0)
      memcpy(s, x, ns * sizeof *s);
    else
      for (size_t i = 0; i < ns; i++)
        s[i] += x[i];
    lo = r < lo ? r : lo;
    hi = r > hi ? r : hi;
  }
  if (hi < 0)
    return TZ_OK;   /* no live trace */
  for (long r = lo; r <= hi; r++) {   /* means; empty slots stay dead (zero spectra) */
    float *s = w->sum + (size_t)r * ns;
    w->live[r] = w->count[r] > 0;
    if (w->count[r] > 1) {
      float inv = 1.0f / (float)w->count[r];
      for (size_t i = 0; i < ns; i++)
        s[i] *= inv;
    }
  }
  /* time transforms of the live rows; dead rows are zero spectra */
  for (size_t r = 0; r < nx; r++) {
    fftwf_complex *X = w->spec + r * nfs;
    if (!w->live[r]) {
      memset(X, 0, nf * sizeof *X);
      continue;
    }
    memcpy(w->row, w->sum + r * ns, ns * sizeof *w->row);
    memset(w->row + ns, 0, (nt - ns) * sizeof *w->row);
    fftwf_execute_dft_r2c(fk->tf, w->row, X);
  }
  /* the fan, column by column */
  for (size_t jf = 0; jf < nf; jf++) {
    if (!fk->active[jf])
      continue;
    float *c = (float *)w->col;
    for (size_t r = 0; r < nx; r++) {
      c[2 * r] = w->spec[r * nfs + jf][0];
      c[2 * r + 1] = w->spec[r * nfs + jf][1];
    }
    fftwf_execute_dft(fk->xf, w->col, w->col);
    const float *h = fk->H + jf * nx;
    for (size_t ix = 0; ix < nx; ix++) {
      c[2 * ix] *= h[ix];
      c[2 * ix + 1] *= h[ix];
    }
    fftwf_execute_dft(fk->xi, w->col, w->col);
    for (size_t r = 0; r < nx; r++) {
      w->spec[r * nfs + jf][0] = c[2 * r];
      w->spec[r * nfs + jf][1] = c[2 * r + 1];
    }
  }
  /* back to time for the record's slots: a slot of one trace keeps its filtered
   * samples, a slot of several its rejected part (mean in - mean out) */
  float scale = 1.0f / (float)nt;
  for (long r = lo; r <= hi; r++) {
    if (!w->count[r])
      continue;
    fftwf_execute_dft_c2r(fk->ti, w->spec + (size_t)r * nfs, w->row);
    float *s = w->sum + (size_t)r * ns;
    if (w->count[r] == 1)
      for (size_t i = 0; i < ns; i++)
        s[i] = w->row[i] * scale;
    else
      for (size_t i = 0; i < ns; i++)
        s[i] -= w->row[i] * scale;
  }
  for (size_t j = 0; j < ntr; j++) {
    if (!info[j].live)
      continue;
    long r = row_of(fk, info[j].offset_m);
    const float *s = w->sum + (size_t)r * ns;
    float *x = samples + j * ns;
    if (w->count[r] == 1)
      memcpy(x, s, ns * sizeof *x);
    else
      for (size_t i = 0; i < ns; i++)
        x[i] -= s[i];
  }
  return TZ_OK;
}
