/* spectrum.c -- average amplitude spectra by FFTW, tapered windows, selections of
 * SEG-Y traces.
 *
 * Each window of nwin samples is multiplied by a Tukey (cosine-ended) taper
 * (Harris 1978, "On the use of windows for harmonic analysis with the discrete
 * Fourier transform"), zero-padded to nfft >= 2 nwin, transformed by FFTW's real
 * transform (FFTW_ESTIMATE: the same bits on every run), and |X(f_k)| is added in
 * double precision. The mean over windows, scaled by 2 / sum(taper), gives a
 * sinusoid's amplitude at its frequency. Averaging amplitudes (not powers) follows
 * the "average amplitude spectra"; either way a peak stays where it is.
 *
 * Not here: the front end's CSV/JSON (src/cli/spectrum.c), pictures (picture.c).
 */
#include "tzero/spectrum.h"
#include "signal/signal_int.h"

#include <errno.h>
#include <fftw3.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

struct spectrum_plan {
  size_t nwin, nfft, nfreq;
  double dt_s, scale;
  float *taper;                 /* nwin */
  fftwf_plan fwd;
};

struct spectrum_acc {
  const spectrum_plan *p;
  float *buf;                   /* nfft */
  fftwf_complex *spec;          /* nfreq */
  double *sum;                  /* nfreq */
  int64_t n;
};

void spectrum_plan_free(spectrum_plan *p)
{
  if (!p)
    return;
  if (p->fwd)
    fftwf_destroy_plan(p->fwd);
  free(p->taper);
  free(p);
}

int spectrum_plan_new(spectrum_plan **out, size_t nwin, double dt_s, double taper_pct,
                      tz_err *err)
{
  if (nwin < 2 || nwin > SPECTRUM_MAX_SAMPLES)
    return tz_fail(err, TZ_E_ARG, "spectrum window of %zu samples (2 to %d)", nwin,
                   SPECTRUM_MAX_SAMPLES);
  if (!isfinite(dt_s) || dt_s <= 0)
    return tz_fail(err, TZ_E_ARG, "sample interval %.10g s is not usable", dt_s);
  if (!isfinite(taper_pct) || taper_pct < 0 || taper_pct > 50)
    return tz_fail(err, TZ_E_ARG, "taper %.10g %% is not between 0 and 50", taper_pct);
  spectrum_plan *p = calloc(1, sizeof *p);
  if (!p)
    return tz_fail(err, TZ_E_NOMEM, "spectrum plan");
  p->nwin = nwin;
  p->dt_s = dt_s;
  p->nfft = condition_fast_size(2 * nwin > 64 ? 2 * nwin : 64);
  p->nfreq = p->nfft / 2 + 1;
  p->taper = malloc(nwin * sizeof *p->taper);
  float *x = fftwf_malloc(p->nfft * sizeof *x);
  fftwf_complex *X = fftwf_malloc(p->nfreq * sizeof *X);
  int rc = TZ_OK;
  if (!p->taper || !x || !X) {
    rc = tz_fail(err, TZ_E_NOMEM, "spectrum plan of %zu samples", p->nfft);
  } else if (!(p->fwd = fftwf_plan_dft_r2c_1d((int)p->nfft, x, X, FFTW_ESTIMATE))) {
    rc = tz_fail(err, TZ_E_FFT, "FFTW cannot plan a real transform of %zu samples", p->nfft);
  } else {
    /* m samples of each end follow half a cosine from 0 to 1 */
    double m = taper_pct / 100.0 * (double)nwin, sum = 0;
    for (size_t i = 0; i < nwin; i++) {
      double d = (double)(i < nwin - 1 - i ? i : nwin - 1 - i) + 0.5;
      double w = d >= m ? 1.0 : 0.5 * (1.0 - cos(M_PI * d / m));
      p->taper[i] = (float)w;
      sum += w;
    }
    p->scale = 2.0 / sum;
  }
  fftwf_free(x);
  fftwf_free(X);
  if (rc) {
    spectrum_plan_free(p);
    return rc;
  }
  *out = p;
  return TZ_OK;
}

size_t spectrum_plan_nfreq(const spectrum_plan *p) { return p->nfreq; }
double spectrum_plan_df_hz(const spectrum_plan *p) { return 1.0 / ((double)p->nfft * p->dt_s); }
size_t spectrum_plan_nwin(const spectrum_plan *p) { return p->nwin; }

void spectrum_acc_free(spectrum_acc *a)
{
  if (!a)
    return;
  fftwf_free(a->buf);
  fftwf_free(a->spec);
  free(a->sum);
  free(a);
}

int spectrum_acc_new(spectrum_acc **out, const spectrum_plan *p, tz_err *err)
{
  spectrum_acc *a = calloc(1, sizeof *a);
  if (!a)
    return tz_fail(err, TZ_E_NOMEM, "spectrum sums");
  a->p = p;
  a->buf = fftwf_malloc(p->nfft * sizeof *a->buf);
  a->spec = fftwf_malloc(p->nfreq * sizeof *a->spec);
  a->sum = calloc(p->nfreq, sizeof *a->sum);
  if (!a->buf || !a->spec || !a->sum) {
    spectrum_acc_free(a);
    return tz_fail(err, TZ_E_NOMEM, "spectrum sums of %zu frequencies", p->nfreq);
  }
  *out = a;
  return TZ_OK;
}

void spectrum_acc_add(spectrum_acc *a, const float *x)
{
  const spectrum_plan *p = a->p;
  for (size_t i = 0; i < p->nwin; i++)
    a->buf[i] = x[i] * p->taper[i];
  memset(a->buf + p->nwin, 0, (p->nfft - p->nwin) * sizeof *a->buf);
  fftwf_execute_dft_r2c(p->fwd, a->buf, a->spec);
  for (size_t k = 0; k < p->nfreq; k++)
    a->sum[k] += hypot((double)a->spec[k][0], (double)a->spec[k][1]);
  a->n++;
}

int64_t spectrum_acc_count(const spectrum_acc *a) { return a->n; }

void spectrum_acc_mean(const spectrum_acc *a, double *mean)
{
  double s = a->n ? a->p->scale / (double)a->n : 0;
  for (size_t k = 0; k < a->p->nfreq; k++)
    mean[k] = a->sum[k] * s;
}

void spectrum_to_db(const double *v, size_t n, double *db)
{
  double mx = 0;
  for (size_t k = 0; k < n; k++)
    mx = v[k] > mx ? v[k] : mx;
  for (size_t k = 0; k < n; k++)
    db[k] = v[k] > 0 && mx > 0 ? fmax(20.0 * log10(v[k] / mx), SPECTRUM_FLOOR_DB)
                               : SPECTRUM_FLOOR_DB;
}

/* ---- selections ---- */

static int parse_i64(const char *s, const char **end, int64_t *v)
{
  errno = 0;
  char *e;
  long long x = strtoll(s, &e, 10);
  if (e == s || errno)
    return -1;
  *v = x;
  *end = e;
  return 0;
}

int spectrum_parse_ranges(const char *s, spectrum_range *out, size_t max, size_t *n,
                          tz_err *err)
{
  *n = 0;
  const char *p = s;
  while (*p) {
    const char *e;
    int64_t a, b;
    if (parse_i64(p, &e, &a))
      return tz_fail(err, TZ_E_ARG, "'%s': expected a number at '%s'", s, p);
    b = a;
    if (*e == '-' && e[1] && (e[1] == '-' || (e[1] >= '0' && e[1] <= '9'))) {
      if (parse_i64(e + 1, &e, &b))
        return tz_fail(err, TZ_E_ARG, "'%s': expected a number after '-'", s);
    }
    if (b < a)
      return tz_fail(err, TZ_E_ARG, "'%s': range %lld-%lld runs backwards", s, (long long)a,
                     (long long)b);
    if (*n >= max)
      return tz_fail(err, TZ_E_ARG, "'%s': more than %zu ranges", s, max);
    out[*n].lo = a;
    out[*n].hi = b;
    (*n)++;
    if (*e == ',' && e[1])
      e++;
    else if (*e)
      return tz_fail(err, TZ_E_ARG, "'%s': unexpected '%s'", s, e);
    p = e;
  }
  if (!*n)
    return tz_fail(err, TZ_E_ARG, "empty list");
  return TZ_OK;
}

static int in_ranges(const spectrum_range *r, size_t n, int64_t v)
{
  if (!n)
    return 1;
  for (size_t i = 0; i < n; i++)
    if (v >= r[i].lo && v <= r[i].hi)
      return 1;
  return 0;
}

void spectrum_result_free(spectrum_result *r)
{
  if (!r)
    return;
  free(r->amplitude);
  free(r->db);
  r->amplitude = r->db = NULL;
}

typedef struct axis {
  int set;
  uint32_t ns, interval_us;
  int16_t delay_ms;
  size_t i0, nwin;
} axis;

/* The window's samples on the first file's axis. */
static int set_axis(axis *ax, const spectrum_request *rq, const segy_trace_header *h,
                    const char *path, tz_err *err)
{
  ax->set = 1;
  ax->ns = h->samples;
  ax->interval_us = h->interval_us;
  ax->delay_ms = h->delay_ms;
  double dt_ms = h->interval_us / 1000.0, t0 = h->delay_ms;
  double tend = t0 + dt_ms * (h->samples - 1);
  double a = rq->start_ms, b = rq->end_ms;
  if (!(b > a)) {
    a = t0;
    b = tend;
  }
  double i0 = ceil((a - t0) / dt_ms - 1e-9), i1 = floor((b - t0) / dt_ms + 1e-9);
  i0 = i0 < 0 ? 0 : i0;
  i1 = i1 > (double)h->samples - 1 ? (double)h->samples - 1 : i1;
  if (!(i1 - i0 >= 1))
    return tz_fail_at(err, TZ_E_ARG, -1, -1, "%s: the window %.10g-%.10g ms holds fewer than "
                      "two samples of the traces (%.10g to %.10g ms)", path, a, b, t0, tend);
  ax->i0 = (size_t)i0;
  ax->nwin = (size_t)(i1 - i0) + 1;
  return TZ_OK;
}

int spectrum_of_files(const char *const *paths, size_t n, const spectrum_request *rq,
                      spectrum_result *out, tz_err *err)
{
  memset(out, 0, sizeof *out);
  spectrum_plan *p = NULL;
  spectrum_acc *acc = NULL;
  float *x = NULL;
  segy_file *f = NULL;
  axis ax = { 0 };
  int64_t dead = 0;
  int rc = TZ_OK;
  for (size_t i = 0; i < n && !rc; i++) {
    if ((rc = segy_open(&f, paths[i], rq->open, err)))
      break;
    int64_t nt = segy_trace_count(f);
    for (int64_t t = 0; t < nt && !rc; t++) {
      segy_trace_header h;
      if ((rc = segy_header_read(f, t, &h, err)))
        break;
      if ((h.kind != 1 && h.kind != 0) || !in_ranges(rq->records, rq->nrecords, h.field_record) ||
          !in_ranges(rq->channels, rq->nchannels, h.channel))
        continue;
      double off = fabs(h.offset);
      if (off < rq->offset_min_m || (rq->offset_max_m >= 0 && off > rq->offset_max_m))
        continue;
      if (!ax.set) {
        if ((rc = set_axis(&ax, rq, &h, paths[i], err)) ||
            (rc = spectrum_plan_new(&p, ax.nwin, ax.interval_us * 1e-6, rq->taper_pct, err)) ||
            (rc = spectrum_acc_new(&acc, p, err)))
          break;
        if (!(x = malloc(ax.ns * sizeof *x))) {
          rc = tz_fail(err, TZ_E_NOMEM, "trace of %u samples", ax.ns);
          break;
        }
      } else if (h.samples != ax.ns || h.interval_us != ax.interval_us ||
                 h.delay_ms != ax.delay_ms) {
        rc = tz_fail_at(err, TZ_E_FORMAT, t, -1, "%u samples at %u us from %d ms, but the "
                        "first trace selected has %u at %u us from %d ms: spectra need one "
                        "time axis", h.samples, h.interval_us, h.delay_ms, ax.ns,
                        ax.interval_us, ax.delay_ms);
        tz_err_path(err, paths[i]);
        break;
      }
      if ((rc = segy_trace_read(f, t, &h, x, ax.ns, err)))
        break;
      const float *w = x + ax.i0;
      double e = 0;
      for (size_t k = 0; k < ax.nwin; k++)
        e += fabs(w[k]);
      if (!(e > 0)) {
        dead++;
        continue;
      }
      spectrum_acc_add(acc, w);
    }
    segy_close(f);
    f = NULL;
  }
  if (!rc && (!acc || !spectrum_acc_count(acc)))
    rc = tz_fail(err, TZ_E_ARG, "no live data trace matches the selection (%lld selected traces "
                 "were all zero in the window)", (long long)dead);
  if (!rc) {
    out->nfreq = spectrum_plan_nfreq(p);
    out->df_hz = spectrum_plan_df_hz(p);
    out->amplitude = malloc(out->nfreq * sizeof *out->amplitude);
    out->db = malloc(out->nfreq * sizeof *out->db);
    if (!out->amplitude || !out->db) {
      rc = tz_fail(err, TZ_E_NOMEM, "spectrum of %zu frequencies", out->nfreq);
    } else {
      spectrum_acc_mean(acc, out->amplitude);
      double mx = 0;
      size_t kmax = 0;
      for (size_t k = 0; k < out->nfreq; k++)
        if (out->amplitude[k] > mx) {
          mx = out->amplitude[k];
          kmax = k;
        }
      for (size_t k = 0; k < out->nfreq; k++)
        out->amplitude[k] = mx > 0 ? out->amplitude[k] / mx : 0;
      spectrum_to_db(out->amplitude, out->nfreq, out->db);
      out->peak_hz = (double)kmax * out->df_hz;
      out->traces = spectrum_acc_count(acc);
      out->traces_dead = dead;
      double dt_ms = ax.interval_us / 1000.0;
      out->interval_ms = dt_ms;
      out->samples = ax.nwin;
      out->start_ms = ax.delay_ms + dt_ms * (double)ax.i0;
      out->end_ms = out->start_ms + dt_ms * (double)(ax.nwin - 1);
    }
  }
  if (rc)
    spectrum_result_free(out);
  segy_close(f);
  free(x);
  spectrum_acc_free(acc);
  spectrum_plan_free(p);
  return rc;
}
