/* residual.c -- surface-consistent residual statics (residual.h states the
 * method, its sources and the sign).
 *
 * Memory: one shifted copy of the stored traces and one window-long sum per
 * CMP. Per iteration: one sinc shift per trace, one sum per CMP, one
 * correlation per trace over 2 L + 1 lags, then the Gauss-Seidel sweeps over
 * the picks. Not here: reading the line and NMO (the front end drives the
 * stack's reader), writing the table.
 */
#include "tzero/residual.h"

#include <math.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#define PI 3.14159265358979323846

/* Four floats as one value (GCC and Clang vector extensions, the SSE registers
 * every x86-64 has; elsewhere the compiler splits them), lane by lane IEEE, so
 * the results do not depend on the machine or the thread count. */
typedef float v4f __attribute__((vector_size(16)));

static inline v4f load4(const float *p)
{
  v4f v;
  memcpy(&v, p, sizeof v);
  return v;
}

void residual_params_init(residual_params *p)
{
  memset(p, 0, sizeof *p);
  p->max_shift_ms = 10.0;
  p->iterations = 3;
  p->sweeps = 300;
  p->pilot_half_width = 2;
  p->min_correlation = 0.3;
  p->remove_trend = 1;
  p->moveout_term = 0;
  p->moveout_cmps = 100;
  p->damping = 1.0;
}

void residual_result_free(residual_result *r)
{
  if (!r)
    return;
  free(r->source_ms);
  free(r->receiver_ms);
  free(r->cmp_ms);
  r->source_ms = r->receiver_ms = r->cmp_ms = NULL;
}

size_t residual_margin(const residual_params *p, double dt_ms)
{
  return (size_t)ceil(p->max_shift_ms * (double)(p->iterations + 1) / dt_ms) + 5;
}

/* Modified Bessel function I0 by its power series (Abramowitz and Stegun 9.6.12). */
static double bessel_i0(double x)
{
  double s = 1.0, t = 1.0, q = x * x / 4.0;
  for (int k = 1; k < 60; k++) {
    t *= q / ((double)k * (double)k);
    s += t;
    if (t < 1e-17 * s)
      break;
  }
  return s;
}

void residual_shift(const float *x, size_t n, double shift, float *out)
{
  double a = floor(-shift), f = -shift - a;
  double h[8], sum = 0.0, i0b = bessel_i0(5.0);
  for (int k = -3; k <= 4; k++) {
    double d = f - (double)k;                  /* distance from the output point */
    double s = fabs(d) < 1e-12 ? 1.0 : sin(PI * d) / (PI * d);
    double r = d / 4.0, w = 1.0 - r * r;
    h[k + 3] = s * (w > 0.0 ? bessel_i0(5.0 * sqrt(w)) / i0b : 0.0);
    sum += h[k + 3];
  }
  for (int k = 0; k < 8; k++)
    h[k] /= sum;
  long ia = (long)a, N = (long)n;
  long lo = 3 - ia > 0 ? 3 - ia : 0, hi = N - 4 - ia < N ? N - 4 - ia : N;
  if (lo > N) lo = N;
  if (hi < lo) hi = lo;
  for (long m = 0; m < lo; m++)
    out[m] = 0.0f;
  float g[8];                     /* single precision in the sample loop (float data) */
  for (int k = 0; k < 8; k++)
    g[k] = (float)h[k];
  long mm = lo;
  for (; mm + 4 <= hi; mm += 4) {  /* four output samples at a time, same sums per sample */
    const float *p = x + mm + ia - 3;
    v4f r = ((g[0] * load4(p) + g[1] * load4(p + 1)) + (g[2] * load4(p + 2) + g[3] * load4(p + 3))) +
            ((g[4] * load4(p + 4) + g[5] * load4(p + 5)) + (g[6] * load4(p + 6) + g[7] * load4(p + 7)));
    memcpy(out + mm, &r, sizeof r);
  }
  for (; mm < hi; mm++) {
    const float *p = x + mm + ia - 3;
    out[mm] = ((g[0] * p[0] + g[1] * p[1]) + (g[2] * p[2] + g[3] * p[3])) +
              ((g[4] * p[4] + g[5] * p[5]) + (g[6] * p[6] + g[7] * p[7]));
  }
  for (long m = hi; m < N; m++)
    out[m] = 0.0f;
}

double residual_decompose(const residual_input *in, const double *lag, const double *w,
                          int sweeps, double damping, double *src, double *rec, double *cmp,
                          double *rnmo, size_t block)
{
  size_t ns = in->nsources, nr = in->nreceivers, nc = in->ncmps;
  const double *off = rnmo ? in->offset_m : NULL;
  if (block < 1)
    block = 1;
  size_t nb = nc / block + 1;
  memset(src, 0, ns * sizeof *src);
  memset(rec, 0, nr * sizeof *rec);
  memset(cmp, 0, nc * sizeof *cmp);
  if (rnmo)
    memset(rnmo, 0, nb * sizeof *rnmo);
  size_t mx = ns > nr ? ns : nr;
  mx = mx > nc ? mx : nc;
  double *num = malloc(mx * sizeof *num), *den = malloc(mx * sizeof *den);
  if (!num || !den) {
    free(num), free(den);
    return NAN;
  }
#define X2(i) (off ? (off[i] / 1000.0) * (off[i] / 1000.0) : 0.0)
#define MODEL(i) (src[in->source[i]] + rec[in->receiver[i]] + cmp[in->cmp[i]] + \
                  (off ? rnmo[in->cmp[i] / block] * X2(i) : 0.0))
  int nterms = off ? 4 : 3;
  for (int sw = 0; sw < sweeps; sw++) {
    /* Each term in turn: the (damped) weighted least-squares value given the others. */
    for (int term = 0; term < nterms; term++) {
      size_t nt = term == 0 ? ns : term == 1 ? nr : term == 2 ? nc : nb;
      const uint32_t *idx = term == 0 ? in->source : term == 1 ? in->receiver : in->cmp;
      size_t div = term == 3 ? block : 1;
      double *x = term == 0 ? src : term == 1 ? rec : term == 2 ? cmp : rnmo;
      memset(num, 0, nt * sizeof *num);
      memset(den, 0, nt * sizeof *den);
      for (size_t i = 0; i < in->ntraces; i++) {
        if (!(w[i] > 0.0))
          continue;
        size_t q = idx[i] / div;
        double g = term == 3 ? X2(i) : 1.0;   /* the term's coefficient in the model */
        double rest = lag[i] - MODEL(i) + g * x[q];
        num[q] += w[i] * g * rest;
        den[q] += w[i] * g * g;
      }
      double dmp = term <= 1 ? damping : 0.0;  /* structure and moveout are not shrunk */
      for (size_t k = 0; k < nt; k++)
        x[k] = den[k] > 0.0 ? num[k] / (den[k] + dmp) : 0.0;
    }
  }
  double ss = 0.0, ws = 0.0;
  for (size_t i = 0; i < in->ntraces; i++) {
    if (!(w[i] > 0.0))
      continue;
    double r = lag[i] - MODEL(i);
    ss += w[i] * r * r;
    ws += w[i];
  }
#undef MODEL
#undef X2
  free(num), free(den);
  return ws > 0.0 ? sqrt(ss / ws) : 0.0;
}

/* Removes the mean (and, with along != NULL, the least-squares line along the
 * line) of the terms that have picks (used[k]); terms without picks are 0. */
static void remove_mean_trend(double *x, size_t n, const double *along, const unsigned char *used)
{
  double s0 = 0.0, sx = 0.0, sy = 0.0, sxx = 0.0, sxy = 0.0;
  for (size_t k = 0; k < n; k++) {
    if (!used[k])
      continue;
    double a = along ? along[k] : 0.0;
    s0 += 1.0, sx += a, sy += x[k], sxx += a * a, sxy += a * x[k];
  }
  if (s0 == 0.0)
    return;
  double b = 0.0, c = sy / s0;
  if (along) {
    double den = s0 * sxx - sx * sx;
    if (den > 0.0) {
      b = (s0 * sxy - sx * sy) / den;
      c = (sy - b * sx) / s0;
    }
  }
  for (size_t k = 0; k < n; k++)
    x[k] = used[k] ? x[k] - (c + b * (along ? along[k] : 0.0)) : 0.0;
}

static double clamp(double v, double lim)
{
  return v > lim ? lim : v < -lim ? -lim : v;
}

/* ---- the per-trace work, dealt to threads in fixed blocks of traces ----
 * Shifting and correlating a trace touch only that trace's outputs, so any
 * thread count gives the same bits; the CMP sums are formed afterwards in trace
 * order by one thread. */
typedef struct job {
  const residual_params *p;
  const residual_input *in;
  const double *S, *R;
  float *buf;
  const double *pil;
  double *lag, *w;
  long L;
  int mode;                  /* 0 shift, 1 correlate */
  size_t t0, t1;             /* traces */
  float *q;                  /* own scratch: nwin */
  double *c;                 /* own scratch: 2L + 1 */
} job;

static void shift_range(job *j)
{
  const residual_input *in = j->in;
  for (size_t i = j->t0; i < j->t1; i++) {
    double sh = (j->S[in->source[i]] + j->R[in->receiver[i]]) / in->dt_ms;
    residual_shift(in->samples + i * in->nsamp, in->nsamp, sh, j->buf + i * in->nsamp);
  }
}

static void correlate_range(job *j)
{
  const residual_input *in = j->in;
  size_t nw = in->nwin;
  long L = j->L;
  float *qf = j->q;
  double *c = j->c;
  for (size_t i = j->t0; i < j->t1; i++) {
    const float *y = j->buf + i * in->nsamp + in->first;
    const double *pk = j->pil + (size_t)in->cmp[i] * nw;
    double ep = 0.0, ey = 0.0;
    for (size_t t = 0; t < nw; t++) {
      double qq = pk[t] - y[t];               /* the pilot without the trace itself */
      qf[t] = (float)qq;
      ep += qq * qq;
      ey += (double)y[t] * y[t];
    }
    long lbest = 0;
    double cbest = -INFINITY;
    for (long l = -L; l <= L; l++) {
      /* eight single-precision partial sums in a fixed pattern (one vector
       * register's worth): the same bits every run */
      v4f a0 = { 0, 0, 0, 0 }, a1 = { 0, 0, 0, 0 };
      const float *yl = y + l;
      size_t t = 0;
      for (; t + 8 <= nw; t += 8) {
        a0 += load4(yl + t) * load4(qf + t);
        a1 += load4(yl + t + 4) * load4(qf + t + 4);
      }
      float a8[8];
      memcpy(a8, &a0, sizeof a0);
      memcpy(a8 + 4, &a1, sizeof a1);
      double sum = 0.0;
      for (; t < nw; t++)
        sum += (double)yl[t] * qf[t];
      sum += (((double)a8[0] + a8[1]) + ((double)a8[2] + a8[3])) +
             (((double)a8[4] + a8[5]) + ((double)a8[6] + a8[7]));
      c[l + L] = sum;
      if (sum > cbest)
        cbest = sum, lbest = l;
    }
    j->lag[i] = 0.0;
    j->w[i] = 0.0;
    if (!(ep > 0.0) || !(ey > 0.0) || lbest == -L || lbest == L)
      continue;                                /* no pilot, dead trace or peak at the edge */
    double rho = cbest / sqrt(ep * ey);
    if (!(rho >= j->p->min_correlation))
      continue;
    double cm = c[lbest - 1 + L], c0 = c[lbest + L], cp = c[lbest + 1 + L];
    double den = cm - 2.0 * c0 + cp, d = den < 0.0 ? 0.5 * (cm - cp) / den : 0.0;
    j->lag[i] = ((double)lbest + d) * in->dt_ms;
    j->w[i] = rho;
  }
}

static void *run_job(void *arg)
{
  job *j = arg;
  if (j->mode == 0)
    shift_range(j);
  else
    correlate_range(j);
  return NULL;
}

/* Runs mode on every trace, the traces split into nthreads equal blocks. */
static void run_all(job *jobs, int nthreads, int mode, size_t ntraces)
{
  pthread_t th[RESIDUAL_MAX_THREADS];
  int started[RESIDUAL_MAX_THREADS] = { 0 };
  for (int t = 0; t < nthreads; t++) {
    jobs[t].mode = mode;
    jobs[t].t0 = ntraces * (size_t)t / (size_t)nthreads;
    jobs[t].t1 = ntraces * (size_t)(t + 1) / (size_t)nthreads;
  }
  for (int t = 1; t < nthreads; t++)
    started[t] = pthread_create(&th[t], NULL, run_job, &jobs[t]) == 0;
  run_job(&jobs[0]);
  for (int t = 1; t < nthreads; t++) {
    if (started[t])
      pthread_join(th[t], NULL);
    else
      run_job(&jobs[t]);                     /* a thread that could not start: here */
  }
}

/* Shifts every trace by its current static and sums the CMP windows; returns
 * the stack power. */
static double shift_and_stack(job *jobs, int nthreads, const residual_input *in, float *buf,
                              double *acc)
{
  size_t nw = in->nwin;
  run_all(jobs, nthreads, 0, in->ntraces);
  memset(acc, 0, in->ncmps * nw * sizeof *acc);
  for (size_t i = 0; i < in->ntraces; i++) {
    double *a = acc + (size_t)in->cmp[i] * nw;
    const float *yw = buf + i * in->nsamp + in->first;
    for (size_t t = 0; t < nw; t++)
      a[t] += yw[t];
  }
  double pw = 0.0;
  for (size_t k = 0; k < in->ncmps * nw; k++)
    pw += acc[k] * acc[k];
  return pw;
}

int residual_solve(const residual_params *p, const residual_input *in, residual_result *r,
                   residual_progress_fn progress, void *ctx, tz_err *err)
{
  memset(r, 0, sizeof *r);
  if (!(p->max_shift_ms > 0.0) || !isfinite(p->max_shift_ms))
    return tz_fail(err, TZ_E_ARG, "residual statics: maximum shift %g ms is not > 0",
                   p->max_shift_ms);
  if (p->iterations < 1 || p->iterations > RESIDUAL_MAX_ITERATIONS)
    return tz_fail(err, TZ_E_ARG, "residual statics: %d iterations (1 to %d)", p->iterations,
                   RESIDUAL_MAX_ITERATIONS);
  if (p->moveout_cmps < 1 || p->moveout_cmps > 1000000)
    return tz_fail(err, TZ_E_ARG, "residual statics: %d CMPs per moveout term (1 to 1000000)",
                   p->moveout_cmps);
  if (!(p->damping >= 0.0) || !isfinite(p->damping))
    return tz_fail(err, TZ_E_ARG, "residual statics: damping %g is not >= 0", p->damping);
  if (p->sweeps < 1 || p->sweeps > 10000 || p->pilot_half_width < 0 ||
      p->pilot_half_width > 1000)
    return tz_fail(err, TZ_E_ARG, "residual statics: sweeps %d (1 to 10000), pilot half-width "
                   "%d (0 to 1000)", p->sweeps, p->pilot_half_width);
  if (in->ntraces == 0 || in->ntraces > RESIDUAL_MAX_TRACES)
    return tz_fail(err, TZ_E_ARG, "residual statics: %zu traces (1 to %u)", in->ntraces,
                   RESIDUAL_MAX_TRACES);
  if (in->nsources == 0 || in->nreceivers == 0 || in->ncmps == 0 ||
      in->nsources > RESIDUAL_MAX_TERMS || in->nreceivers > RESIDUAL_MAX_TERMS ||
      in->ncmps > RESIDUAL_MAX_TERMS)
    return tz_fail(err, TZ_E_ARG, "residual statics: %zu sources, %zu receivers, %zu CMPs",
                   in->nsources, in->nreceivers, in->ncmps);
  if (!(in->dt_ms > 0.0) || in->nwin < 4)
    return tz_fail(err, TZ_E_ARG, "residual statics: window of %zu samples at %g ms", in->nwin,
                   in->dt_ms);
  size_t need = residual_margin(p, in->dt_ms);
  if (in->first < need || in->nsamp < in->first + in->nwin + need)
    return tz_fail(err, TZ_E_ARG, "residual statics: window [%zu, %zu) of %zu samples leaves "
                   "less than %zu samples of margin", in->first, in->first + in->nwin,
                   in->nsamp, need);
  for (size_t i = 0; i < in->ntraces; i++)
    if (in->source[i] >= in->nsources || in->receiver[i] >= in->nreceivers ||
        in->cmp[i] >= in->ncmps)
      return tz_fail(err, TZ_E_ARG, "residual statics: trace %zu: term out of range", i);

  int rc = TZ_OK;
  size_t nw = in->nwin, nt = in->ntraces;
  long L = (long)floor(p->max_shift_ms / in->dt_ms);
  if (L < 1)
    L = 1;
  float *buf = malloc(nt * in->nsamp * sizeof *buf);
  double *acc = malloc(in->ncmps * nw * sizeof *acc);
  double *pil = malloc(in->ncmps * nw * sizeof *pil);
  double *lag = malloc(nt * sizeof *lag), *w = malloc(nt * sizeof *w);
  int nth = p->threads > 0 ? p->threads : (int)sysconf(_SC_NPROCESSORS_ONLN);
  if (nth < 1)
    nth = 1;
  if (nth > RESIDUAL_MAX_THREADS)
    nth = RESIDUAL_MAX_THREADS;
  if ((size_t)nth > nt)
    nth = (int)nt;
  job jobs[RESIDUAL_MAX_THREADS];
  double *cs = malloc((size_t)nth * (size_t)(2 * L + 1) * sizeof *cs);
  float *qs = malloc((size_t)nth * nw * sizeof *qs);
  double *dS = malloc(in->nsources * sizeof *dS), *dR = malloc(in->nreceivers * sizeof *dR);
  int rnmo_on = p->moveout_term && in->offset_m;
  size_t block = p->moveout_cmps > 0 ? (size_t)p->moveout_cmps : 1;
  double *rn = rnmo_on ? malloc((in->ncmps / block + 1) * sizeof *rn) : NULL;
  unsigned char *uS = malloc(in->nsources), *uR = malloc(in->nreceivers);
  r->source_ms = calloc(in->nsources, sizeof *r->source_ms);
  r->receiver_ms = calloc(in->nreceivers, sizeof *r->receiver_ms);
  r->cmp_ms = calloc(in->ncmps, sizeof *r->cmp_ms);
  if (!buf || !acc || !pil || !lag || !w || !cs || !qs || !dS || !dR || !uS || !uR || (rnmo_on && !rn) ||
      !r->source_ms ||
      !r->receiver_ms || !r->cmp_ms) {
    rc = tz_fail(err, TZ_E_NOMEM, "residual statics: %zu traces of %zu samples", nt,
                 in->nsamp);
    goto done;
  }
  r->nsources = in->nsources, r->nreceivers = in->nreceivers, r->ncmps = in->ncmps;
  double *S = r->source_ms, *R = r->receiver_ms;
  for (int t = 0; t < nth; t++)
    jobs[t] = (job){ p, in, S, R, buf, pil, lag, w, L, 0, 0, 0, qs + (size_t)t * nw,
                     cs + (size_t)t * (size_t)(2 * L + 1) };
  double power = shift_and_stack(jobs, nth, in, buf, acc);
  int hw = p->pilot_half_width;
  for (int it = 0; it < p->iterations; it++) {
    residual_iteration *ri = &r->it[it];
    ri->power_before = power;
    /* Pilots: CMP sums over the neighbours. */
    for (size_t k = 0; k < in->ncmps; k++) {
      double *pk = pil + k * nw;
      memset(pk, 0, nw * sizeof *pk);
      size_t k0 = k >= (size_t)hw ? k - (size_t)hw : 0;
      size_t k1 = k + (size_t)hw < in->ncmps ? k + (size_t)hw : in->ncmps - 1;
      for (size_t j = k0; j <= k1; j++) {
        const double *a = acc + j * nw;
        for (size_t t = 0; t < nw; t++)
          pk[t] += a[t];
      }
    }
    run_all(jobs, nth, 1, nt);
    double ss = 0.0;
    size_t npk = 0;
    for (size_t i = 0; i < nt; i++)
      if (w[i] > 0.0)
        ss += lag[i] * lag[i], npk++;
    ri->picks = npk;
    ri->pick_rms_ms = npk ? sqrt(ss / (double)npk) : 0.0;
    ri->fit_rms_ms = residual_decompose(in, lag, w, p->sweeps, p->damping, dS, dR, r->cmp_ms,
                                        rn, block);
    memset(uS, 0, in->nsources);
    memset(uR, 0, in->nreceivers);
    for (size_t i = 0; i < nt; i++)
      if (w[i] > 0.0)
        uS[in->source[i]] = 1, uR[in->receiver[i]] = 1;
    remove_mean_trend(dS, in->nsources, p->remove_trend ? in->source_along_m : NULL, uS);
    remove_mean_trend(dR, in->nreceivers, p->remove_trend ? in->receiver_along_m : NULL, uR);
    for (size_t k = 0; k < in->nsources; k++)
      S[k] -= clamp(dS[k], p->max_shift_ms);
    for (size_t k = 0; k < in->nreceivers; k++)
      R[k] -= clamp(dR[k], p->max_shift_ms);
    double us = 0.0;
    for (size_t i = 0; i < nt; i++) {
      double d = clamp(dS[in->source[i]], p->max_shift_ms) +
                 clamp(dR[in->receiver[i]], p->max_shift_ms);
      us += d * d;
    }
    ri->update_rms_ms = sqrt(us / (double)nt);
    double after = shift_and_stack(jobs, nth, in, buf, acc);
    ri->power_after = after;
    r->iterations = it + 1;
    if (after < power) {
      /* The update lowered the stack power: the lags were not telling statics
       * (noise, events the NMO did not flatten). Keep the statics as they were
       * and stop (common practice: never keep an update that degrades the stack). */
      for (size_t k = 0; k < in->nsources; k++)
        S[k] += clamp(dS[k], p->max_shift_ms);
      for (size_t k = 0; k < in->nreceivers; k++)
        R[k] += clamp(dR[k], p->max_shift_ms);
      ri->reverted = 1;
      r->reverted = 1;
      if (progress)
        progress(ctx, it + 1, ri);
      break;
    }
    power = after;
    if (progress)
      progress(ctx, it + 1, ri);
  }
done:
  free(buf), free(acc), free(pil), free(lag), free(w), free(cs), free(qs), free(dS), free(dR);
  free(uS), free(uR), free(rn);
  if (rc)
    residual_result_free(r);
  return rc;
}
