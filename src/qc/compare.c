/* compare.c -- two stacked sections of one line compared CMP by CMP.
 *
 * Typical use: the same line stacked before and after a velocity revision.
 * Traces are matched by the CMP number in their headers (bytes 21-24), never by
 * position, so sections covering different CMP ranges compare on their
 * overlap. For every matched pair, over one time window: RMS amplitudes, RMS
 * of the difference, energy ratio B/A (and in dB), and the peak of the
 * cross-correlation normalised by the two window energies, with its lag.
 * A better-focused stack sums its reflections in phase and so carries more
 * energy (the principle behind stack-power velocity analysis, Taner and
 * Koehler 1969), which is what "B stronger" reports.
 *
 * Memory: one trace of each file at a time plus a (CMP, trace) index per file.
 * Not here: printing (the front end), stacking (src/stack/).
 */
#include "tzero/compare.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/segy.h"

void compare_params_init(compare_params *p)
{
  p->max_lag_ms = 20;
  p->time_min_ms = -INFINITY;
  p->time_max_ms = INFINITY;
  p->threshold_db = 0.5;
}

const char *compare_verdict_name(int verdict)
{
  return verdict > 0 ? "stronger" : verdict < 0 ? "weaker" : "similar";
}

void compare_traces(const float *a, const float *b, size_t ns, size_t max_lag, double dt_ms,
                    double threshold_db, compare_cmp *out)
{
  double ea = 0, eb = 0, ed = 0;
  for (size_t j = 0; j < ns; j++) {
    double x = a[j], y = b[j];
    ea += x * x;
    eb += y * y;
    ed += (y - x) * (y - x);
  }
  double n = ns ? (double)ns : 1.0;
  out->rms_a = sqrt(ea / n);
  out->rms_b = sqrt(eb / n);
  out->rms_difference = sqrt(ed / n);
  if (ea > 0) {
    out->relative_difference = out->rms_difference / out->rms_a;
    out->energy_ratio = eb / ea;
    out->energy_ratio_db = eb > 0 ? 10.0 * log10(eb / ea) : -INFINITY;
  } else {
    out->relative_difference = NAN;
    out->energy_ratio = eb > 0 ? INFINITY : NAN;
    out->energy_ratio_db = eb > 0 ? INFINITY : 0.0;
  }
  out->verdict = out->energy_ratio_db > threshold_db    ? COMPARE_STRONGER
                 : out->energy_ratio_db < -threshold_db ? COMPARE_WEAKER
                                                        : COMPARE_SIMILAR;
  out->lag_ms = 0;
  if (!(ea > 0) || !(eb > 0)) {
    out->peak_correlation = ea == eb ? 1.0 : 0.0;   /* both silent: identical */
    return;
  }
  if (max_lag >= ns)
    max_lag = ns ? ns - 1 : 0;
  double norm = 1.0 / sqrt(ea * eb), best = -2;
  long best_lag = 0;
  /* Lags in the order 0, -1, +1, -2, +2, ... so a tie goes to the smallest |lag|. */
  for (size_t m = 0; m <= 2 * max_lag; m++) {
    long lag = (m & 1) ? -(long)((m + 1) / 2) : (long)(m / 2);
    size_t j0 = lag < 0 ? (size_t)(-lag) : 0, j1 = lag > 0 ? ns - (size_t)lag : ns;
    double c = 0;
    for (size_t j = j0; j < j1; j++)
      c += (double)a[j] * b[(size_t)((long)j + lag)];
    c *= norm;
    if (c > best) {
      best = c;
      best_lag = lag;
    }
  }
  out->peak_correlation = best;
  out->lag_ms = (double)best_lag * dt_ms;
}

struct idx {
  int32_t cmp;
  int64_t trace;
};

static int by_cmp(const void *x, const void *y)
{
  const struct idx *a = x, *b = y;
  if (a->cmp != b->cmp)
    return a->cmp < b->cmp ? -1 : 1;
  return a->trace < b->trace ? -1 : a->trace > b->trace;
}

/* Indexes the CMP numbers of one file and checks every trace shares one axis. */
static int index_file(segy_file *f, const char *path, struct idx **out, size_t *n,
                      int32_t *delay_ms, tz_err *err)
{
  int64_t nt = segy_trace_count(f);
  const segy_info *in = segy_get_info(f);
  if (nt <= 0) {
    tz_err_path(err, path);
    return tz_fail(err, TZ_E_FORMAT, "no traces to compare");
  }
  if (nt > COMPARE_MAX_TRACES) {
    tz_err_path(err, path);
    return tz_fail(err, TZ_E_FORMAT, "%lld traces: more than %d for a stacked section",
                   (long long)nt, COMPARE_MAX_TRACES);
  }
  struct idx *ix = malloc((size_t)nt * sizeof *ix);
  if (!ix)
    return tz_fail(err, TZ_E_NOMEM, "CMP index of %lld traces", (long long)nt);
  segy_trace_header h;
  for (int64_t i = 0; i < nt; i++) {
    int rc = segy_header_read(f, i, &h, err);
    if (rc) {
      free(ix);
      return tz_err_path(err, path);
    }
    if (i == 0)
      *delay_ms = h.delay_ms;
    if (h.samples != in->samples || h.delay_ms != *delay_ms) {
      free(ix);
      tz_err_path(err, path);
      return tz_fail_at(err, TZ_E_FORMAT, i, -1,
                        "trace has %u samples starting at %d ms, the first trace %u "
                        "starting at %d ms: a stacked section needs one sample axis",
                        h.samples, h.delay_ms, in->samples, *delay_ms);
    }
    ix[i] = (struct idx){ h.cmp, i };
  }
  qsort(ix, (size_t)nt, sizeof *ix, by_cmp);
  for (int64_t i = 1; i < nt; i++)
    if (ix[i].cmp == ix[i - 1].cmp) {
      int32_t c = ix[i].cmp;
      int64_t t0 = ix[i - 1].trace, t1 = ix[i].trace;
      free(ix);
      tz_err_path(err, path);
      return tz_fail_at(err, TZ_E_FORMAT, t1, -1,
                        "CMP %d appears in traces %lld and %lld: traces are matched by "
                        "CMP number, so a stacked section has one trace per CMP",
                        c, (long long)t0 + 1, (long long)t1 + 1);
    }
  *out = ix;
  *n = (size_t)nt;
  return TZ_OK;
}

void compare_result_free(compare_result *r)
{
  if (!r)
    return;
  free(r->cmps);
  free(r->runs);
  free(r);
}

static int summarise(compare_result *r, tz_err *err)
{
  r->runs = malloc((r->n ? r->n : 1) * sizeof *r->runs);
  if (!r->runs)
    return tz_fail(err, TZ_E_NOMEM, "comparison summary");
  double sum_rd = 0, minc = 2;
  for (size_t i = 0; i < r->n; i++) {
    const compare_cmp *c = &r->cmps[i];
    if (c->verdict > 0)
      r->stronger++;
    else if (c->verdict < 0)
      r->weaker++;
    else
      r->similar++;
    sum_rd += c->rms_difference;
    if (c->peak_correlation < minc)
      minc = c->peak_correlation;
    compare_run *last = r->nruns ? &r->runs[r->nruns - 1] : NULL;
    if (last && last->verdict == c->verdict) {
      last->last_cmp = c->cmp;
      last->count++;
      last->mean_db += c->energy_ratio_db;
    } else {
      r->runs[r->nruns++] = (compare_run){ c->cmp, c->cmp, c->verdict, 1, c->energy_ratio_db };
    }
  }
  for (size_t k = 0; k < r->nruns; k++)
    r->runs[k].mean_db /= (double)r->runs[k].count;
  r->mean_rms_difference = r->n ? sum_rd / (double)r->n : 0;
  r->min_peak_correlation = r->n ? minc : NAN;
  return TZ_OK;
}

int compare_sections(const char *path_a, const char *path_b, const compare_params *p,
                     compare_result **out, tz_err *err)
{
  if (!(p->max_lag_ms >= 0) || !isfinite(p->max_lag_ms) || !(p->threshold_db >= 0) ||
      !(p->time_max_ms > p->time_min_ms))
    return tz_fail(err, TZ_E_ARG,
                   "comparison: lag %g ms and threshold %g dB must be >= 0, and the window "
                   "end %g ms later than its start %g ms",
                   p->max_lag_ms, p->threshold_db, p->time_max_ms, p->time_min_ms);
  segy_file *fa = NULL, *fb = NULL;
  struct idx *ia = NULL, *ib = NULL;
  float *ta = NULL, *tb = NULL;
  compare_result *r = NULL;
  size_t na = 0, nb = 0;
  int32_t da = 0, db = 0;
  double ea_all = 0, eb_all = 0;
  int rc = segy_open(&fa, path_a, NULL, err);
  if (rc) {
    tz_err_path(err, path_a);
    goto done;
  }
  if ((rc = segy_open(&fb, path_b, NULL, err))) {
    tz_err_path(err, path_b);
    goto done;
  }
  const segy_info *ia_info = segy_get_info(fa), *ib_info = segy_get_info(fb);
  if (ia_info->samples != ib_info->samples || ia_info->interval_us != ib_info->interval_us) {
    rc = tz_fail(err, TZ_E_FORMAT,
                 "different sample axes: %s has %u samples at %u us, %s has %u samples at "
                 "%u us; compare needs both sections on one time axis", path_a,
                 ia_info->samples, ia_info->interval_us, path_b, ib_info->samples,
                 ib_info->interval_us);
    goto done;
  }
  if ((rc = index_file(fa, path_a, &ia, &na, &da, err)) ||
      (rc = index_file(fb, path_b, &ib, &nb, &db, err)))
    goto done;
  if (da != db) {
    rc = tz_fail(err, TZ_E_FORMAT,
                 "different sample axes: %s starts at %d ms, %s at %d ms (delay, bytes "
                 "109-110); compare needs both sections on one time axis", path_a, da,
                 path_b, db);
    goto done;
  }
  size_t ns = ia_info->samples;
  double dt_ms = ia_info->interval_us / 1000.0;
  size_t w0 = 0, w1 = ns;
  {
    double f0 = ceil((p->time_min_ms - da) / dt_ms - 1e-9);
    double f1 = floor((p->time_max_ms - da) / dt_ms + 1e-9) + 1;
    w0 = f0 < 0 ? 0 : f0 > (double)ns ? ns : (size_t)f0;
    w1 = f1 < 0 ? 0 : f1 > (double)ns ? ns : (size_t)f1;
    if (w1 <= w0) {
      rc = tz_fail(err, TZ_E_ARG,
                   "time window %g-%g ms holds no sample of the sections (%d ms to %g ms)",
                   p->time_min_ms, p->time_max_ms, da, da + (double)(ns - 1) * dt_ms);
      goto done;
    }
  }
  ta = malloc(ns * sizeof *ta);
  tb = malloc(ns * sizeof *tb);
  r = calloc(1, sizeof *r);
  size_t cap = na < nb ? na : nb;
  if (!ta || !tb || !r || !(r->cmps = malloc(cap * sizeof *r->cmps))) {
    rc = tz_fail(err, TZ_E_NOMEM, "comparison buffers");
    goto done;
  }
  r->samples = (uint32_t)ns;
  r->interval_us = ia_info->interval_us;
  r->delay_ms = da;
  r->window_first = w0;
  r->window_end = w1;
  size_t lag = (size_t)floor(p->max_lag_ms / dt_ms + 1e-9);
  size_t i = 0, k = 0;
  segy_trace_header h;
  while (i < na && k < nb) {
    if (ia[i].cmp < ib[k].cmp) {
      r->only_a++;
      i++;
      continue;
    }
    if (ib[k].cmp < ia[i].cmp) {
      r->only_b++;
      k++;
      continue;
    }
    if ((rc = segy_trace_read(fa, ia[i].trace, &h, ta, ns, err))) {
      tz_err_path(err, path_a);
      goto done;
    }
    if ((rc = segy_trace_read(fb, ib[k].trace, &h, tb, ns, err))) {
      tz_err_path(err, path_b);
      goto done;
    }
    compare_cmp *c = &r->cmps[r->n++];
    c->cmp = ia[i].cmp;
    compare_traces(ta + w0, tb + w0, w1 - w0, lag, dt_ms, p->threshold_db, c);
    ea_all += c->rms_a * c->rms_a;
    eb_all += c->rms_b * c->rms_b;
    i++;
    k++;
  }
  r->only_a += na - i;
  r->only_b += nb - k;
  if (r->n == 0) {
    rc = tz_fail(err, TZ_E_FORMAT,
                 "no CMP number is in both %s and %s (CMP %d-%d against %d-%d)", path_a,
                 path_b, ia[0].cmp, ia[na - 1].cmp, ib[0].cmp, ib[nb - 1].cmp);
    goto done;
  }
  r->energy_ratio_db = ea_all > 0 ? 10.0 * log10(eb_all / ea_all) : (eb_all > 0 ? INFINITY : 0);
  if ((rc = summarise(r, err)))
    goto done;
  *out = r;
  r = NULL;
done:
  compare_result_free(r);
  free(ta);
  free(tb);
  free(ia);
  free(ib);
  segy_close(fa);
  segy_close(fb);
  return rc;
}
