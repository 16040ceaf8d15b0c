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
  double dt_s;
  double scale;
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

/* The window's samples on the first selected trace's axis. */
static int set_axis(axis *ax, const spectrum_request *rq, uint32_t ns, uint32_t interval_us,
                    int16_t delay_ms, const char *path, tz_err *err)
{
  ax->set = 1;
  ax->ns = ns;
  ax->interval_us = interval_us;
  ax->delay_ms = delay_ms;
  double dt_ms = interval_us / 1000.0, t0 = delay_ms;
  double tend = t0 + dt_ms * (ns - 1);
  double a = rq->start_ms, b = rq->end_ms;
  if (!(b > a)) {
    a = t0;
    b = tend;
  }
  double i0 = ceil((a - t0) / dt_ms - 1e-9), i1 = floor((b - t0) / dt_ms + 1e-9);
  i0 = i0 < 0 ? 0 : i0;
  i1 = i1 > (double)ns - 1 ? (double)ns - 1 : i1;
  if (!(i1 - i0 >= 1))
    return tz_fail_at(err, TZ_E_ARG, -1, -1, "%s: the window %.10g-%.10g ms holds fewer than "
                      "two samples of the traces (%.10g to %.10g ms)", path, a, b, t0, tend);
  ax->i0 = (size_t)i0;
  ax->nwin = (size_t)(i1 - i0) + 1;
  return TZ_OK;
}

/* The sums of one request: traces are offered one by one. */
typedef struct collector {
  const spectrum_request *rq;
  axis ax;
  spectrum_plan *p;
  spectrum_acc *acc;
  int64_t dead;
} collector;

int spectrum_selects(const spectrum_request *rq, const segy_trace_header *h)
{
  if ((h->kind != 1 && h->kind != 0) || !in_ranges(rq->records, rq->nrecords, h->field_record) ||
      !in_ranges(rq->channels, rq->nchannels, h->channel))
    return 0;
  double off = fabs(h->offset);
  return !(off < rq->offset_min_m || (rq->offset_max_m >= 0 && off > rq->offset_max_m));
}

/* Sets the axis from the first trace offered; later ones must share it. */
static int collect_axis(collector *c, const segy_trace_header *h, uint32_t ns,
                        uint32_t interval_us, const char *path, int64_t trace, tz_err *err)
{
  if (!c->ax.set)
    return set_axis(&c->ax, c->rq, ns, interval_us, h->delay_ms, path, err) ||
                   spectrum_plan_new(&c->p, c->ax.nwin, interval_us * 1e-6, c->rq->taper_pct,
                                     err) ||
                   spectrum_acc_new(&c->acc, c->p, err)
               ? err->status
               : TZ_OK;
  if (ns != c->ax.ns || interval_us != c->ax.interval_us || h->delay_ms != c->ax.delay_ms) {
    tz_fail_at(err, TZ_E_FORMAT, trace, -1, "%u samples at %u us from %d ms, but the first "
               "trace selected has %u at %u us from %d ms: spectra need one time axis", ns,
               interval_us, h->delay_ms, c->ax.ns, c->ax.interval_us, c->ax.delay_ms);
    return tz_err_path(err, path);
  }
  return TZ_OK;
}

static void collect_add(collector *c, const float *x)
{
  const float *w = x + c->ax.i0;
  double e = 0;
  for (size_t k = 0; k < c->ax.nwin; k++)
    e += fabs(w[k]);
  if (e > 0)
    spectrum_acc_add(c->acc, w);
  else
    c->dead++;
}

static int collect_finish(collector *c, spectrum_result *out, tz_err *err)
{
  if (!c->acc || !spectrum_acc_count(c->acc))
    return tz_fail(err, TZ_E_ARG, "no live data trace matches the selection (%lld selected "
                   "traces were all zero in the window)", (long long)c->dead);
  out->nfreq = spectrum_plan_nfreq(c->p);
  out->df_hz = spectrum_plan_df_hz(c->p);
  out->amplitude = malloc(out->nfreq * sizeof *out->amplitude);
  out->db = malloc(out->nfreq * sizeof *out->db);
  if (!out->amplitude || !out->db)
    return tz_fail(err, TZ_E_NOMEM, "spectrum of %zu frequencies", out->nfreq);
  spectrum_acc_mean(c->acc, out->amplitude);
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
  out->traces = spectrum_acc_count(c->acc);
  out->traces_dead = c->dead;
  double dt_ms = c->ax.interval_us / 1000.0;
  out->interval_ms = dt_ms;
  out->samples = c->ax.nwin;
  out->start_ms = c->ax.delay_ms + dt_ms * (double)c->ax.i0;
  out->end_ms = out->start_ms + dt_ms * (double)(c->ax.nwin - 1);
  return TZ_OK;
}

static int collect_end(collector *c, int rc, spectrum_result *out, tz_err *err)
{
  if (!rc)
    rc = collect_finish(c, out, err);
  if (rc)
    spectrum_result_free(out);
  spectrum_acc_free(c->acc);
  spectrum_plan_free(c->p);
  return rc;
}

int spectrum_of_files(const char *const *paths, size_t n, const spectrum_request *rq,
                      spectrum_result *out, tz_err *err)
{
  memset(out, 0, sizeof *out);
  collector c = { .rq = rq };
  float *x = NULL;
  segy_file *f = NULL;
  int rc = TZ_OK;
  for (size_t i = 0; i < n && !rc; i++) {
    if ((rc = segy_open(&f, paths[i], rq->open, err)))
      break;
    int64_t nt = segy_trace_count(f);
    for (int64_t t = 0; t < nt && !rc; t++) {
      segy_trace_header h;
      if ((rc = segy_header_read(f, t, &h, err)))
        break;
      if (!spectrum_selects(rq, &h))
        continue;
      if ((rc = collect_axis(&c, &h, h.samples, h.interval_us, paths[i], t, err)))
        break;
      if (!x && !(x = malloc(c.ax.ns * sizeof *x))) {
        rc = tz_fail(err, TZ_E_NOMEM, "trace of %u samples", c.ax.ns);
        break;
      }
      if (!(rc = segy_trace_read(f, t, &h, x, c.ax.ns, err)))
        collect_add(&c, x);
    }
    segy_close(f);
    f = NULL;
  }
  free(x);
  return collect_end(&c, rc, out, err);
}

int spectrum_of_traces(const segy_trace_header *h, const float *samples, size_t n, size_t ns,
                       uint32_t interval_us, const spectrum_request *rq, spectrum_result *out,
                       tz_err *err)
{
  memset(out, 0, sizeof *out);
  collector c = { .rq = rq };
  int rc = TZ_OK;
  if (ns > SPECTRUM_MAX_SAMPLES)
    rc = tz_fail(err, TZ_E_ARG, "traces of %zu samples (at most %d)", ns, SPECTRUM_MAX_SAMPLES);
  for (size_t j = 0; j < n && !rc; j++)
    if (spectrum_selects(rq, &h[j]) &&
        !(rc = collect_axis(&c, &h[j], (uint32_t)ns, interval_us, "", (int64_t)j, err)))
      collect_add(&c, samples + j * ns);
  return collect_end(&c, rc, out, err);
}
