/* poststack.c -- post-stack conditioning: the chain, its checks and descriptions,
 * the plan, the time-variant band-pass, trace balancing and AGC (poststack.h).
 *
 *   bandpass   one forward FFT of the trace zero-padded to nfft = the smallest
 *              2^a 3^b 5^c >= 2 ns (so no filter response wraps onto the trace);
 *              per window, the spectrum times A_k(f) / nfft (the window's
 *              trapezoid, Ormsby 1961) and an inverse FFT; the output is
 *              sum_k w_k(t) y_k(t) with the blend weights of
 *              poststack_blend_weight(), precomputed per sample.
 *   balance    x <- x * target / RMS(x over the window), in double; a trace with
 *              no energy in the window is left as it is.
 *   agc        a one-step prestack chain (condition.h), trace by trace.
 *   f-x        poststack_fx.c.
 *
 * Not here: JSON (src/job/job_poststack.c), reading and writing sections.
 */
#include "tzero/poststack.h"
#include "signal/poststack_int.h"
#include "signal/signal_int.h"

#include <fftw3.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* ---- names ---- */

static const char *const kind_names[] = {
  [POSTSTACK_BANDPASS] = "bandpass",
  [POSTSTACK_FX] = "fx_prediction",
  [POSTSTACK_BALANCE] = "balance",
  [POSTSTACK_AGC] = "agc",
};
#define NKIND (sizeof kind_names / sizeof kind_names[0])

const char *poststack_kind_name(int kind)
{
  return kind > 0 && (size_t)kind < NKIND ? kind_names[kind] : "unknown";
}

int poststack_kind_parse(const char *s)
{
  for (size_t k = 1; s && k < NKIND; k++)
    if (!strcmp(s, kind_names[k]))
      return (int)k;
  return -1;
}

/* ---- the chain ---- */

void poststack_chain_init(poststack_chain *c, const char *root)
{
  memset(c, 0, sizeof *c);
  snprintf(c->root, sizeof c->root, "%s", root ? root : "$");
}

static poststack_step *next_step(poststack_chain *c, int kind, int after, tz_err *err)
{
  if (c->n >= POSTSTACK_MAX_STEPS) {
    tz_fail(err, TZ_E_JOB, "step: a post-stack chain holds at most %d steps",
            POSTSTACK_MAX_STEPS);
    return NULL;
  }
  poststack_step *s = &c->step[c->n];
  memset(s, 0, sizeof *s);
  s->kind = kind;
  s->after_migration = after ? 1 : 0;
  return s;
}

static int finite_ms(double t_s)
{
  return isfinite(t_s) && fabs(t_s) * 1e3 <= POSTSTACK_MAX_MS;
}

/* The prestack band-pass's corner rules (condition.h), named by the window. */
static int check_corners(const double *f, size_t i, tz_err *err)
{
  condition_chain cc;
  condition_chain_init(&cc);
  tz_err why;
  tz_err_init(&why);
  if (condition_chain_add_bandpass(&cc, f, &why))
    return tz_fail(err, TZ_E_JOB, "windows[%zu].corners_hz: %s (corners increase: f1 < f2 <= "
                   "f3 < f4)", i, why.msg);
  return TZ_OK;
}

int poststack_chain_add_bandpass(poststack_chain *c, const poststack_window *w, size_t n,
                                 int after, tz_err *err)
{
  if (n < 1 || n > POSTSTACK_MAX_WINDOWS)
    return tz_fail(err, TZ_E_JOB, "windows: %zu windows, expected 1 to %d", n,
                   POSTSTACK_MAX_WINDOWS);
  for (size_t i = 0; i < n; i++) {
    const poststack_window *a = &w[i];
    if (!finite_ms(a->from_s) || !finite_ms(a->to_s))
      return tz_fail(err, TZ_E_JOB, "windows[%zu]: times %.10g to %.10g ms are not within "
                     "+-%g ms", i, a->from_s * 1e3, a->to_s * 1e3, POSTSTACK_MAX_MS);
    if (!(a->to_s > a->from_s))
      return tz_fail(err, TZ_E_JOB, "windows[%zu].to_ms: %.10g ms is not after from_ms "
                     "%.10g ms", i, a->to_s * 1e3, a->from_s * 1e3);
    if (check_corners(a->corners_hz, i, err))
      return err->status;
    if (!i)
      continue;
    const poststack_window *b = &w[i - 1];
    if (!(a->from_s > b->from_s) || !(a->to_s > b->to_s))
      return tz_fail(err, TZ_E_JOB, "windows[%zu]: %.10g-%.10g ms does not follow windows[%zu] "
                     "(%.10g-%.10g ms): windows go down the trace, each starting and ending "
                     "later than the one before", i, a->from_s * 1e3, a->to_s * 1e3, i - 1,
                     b->from_s * 1e3, b->to_s * 1e3);
    if (a->from_s > b->to_s)
      return tz_fail(err, TZ_E_JOB, "windows[%zu].from_ms: %.10g ms leaves a gap after "
                     "windows[%zu], which ends at %.10g ms (adjacent windows touch or overlap)",
                     i, a->from_s * 1e3, i - 1, b->to_s * 1e3);
    if (i >= 2 && a->from_s < w[i - 2].to_s)
      return tz_fail(err, TZ_E_JOB, "windows[%zu].from_ms: %.10g ms overlaps windows[%zu], "
                     "which ends at %.10g ms (only adjacent windows may overlap)", i,
                     a->from_s * 1e3, i - 2, w[i - 2].to_s * 1e3);
  }
  poststack_step *s = next_step(c, POSTSTACK_BANDPASS, after, err);
  if (!s)
    return err->status;
  s->nwindows = n;
  memcpy(s->window, w, n * sizeof *w);
  c->n++;
  return TZ_OK;
}

int poststack_chain_add_fx(poststack_chain *c, size_t window_traces, double window_s,
                           size_t op, double pct, double min_hz, double max_hz, int after,
                           tz_err *err)
{
  if (op < 1 || op > POSTSTACK_MAX_OPERATOR)
    return tz_fail(err, TZ_E_JOB, "operator_traces: %zu is not between 1 and %d", op,
                   POSTSTACK_MAX_OPERATOR);
  if (window_traces < 2 || window_traces > POSTSTACK_MAX_WINDOW_TRACES)
    return tz_fail(err, TZ_E_JOB, "window_traces: %zu is not between 2 and %d", window_traces,
                   POSTSTACK_MAX_WINDOW_TRACES);
  if (op * 2 > window_traces)
    return tz_fail(err, TZ_E_JOB, "operator_traces: %zu traces is longer than the window "
                   "allows: window_traces %zu must be at least twice the operator (%zu), so "
                   "that every trace of a window is predicted from one side at least", op,
                   window_traces, 2 * op);
  if (!finite_ms(window_s) || window_s <= 0)
    return tz_fail(err, TZ_E_JOB, "window_ms: %.10g is not between 0 (exclusive) and %g",
                   window_s * 1e3, POSTSTACK_MAX_MS);
  if (!isfinite(pct) || pct < 0 || pct > 100)
    return tz_fail(err, TZ_E_JOB, "prewhitening_pct: %.10g is not between 0 and 100", pct);
  if (!isfinite(min_hz) || min_hz < 0)
    return tz_fail(err, TZ_E_JOB, "min_hz: %.10g is not a frequency >= 0", min_hz);
  if (!isfinite(max_hz) || max_hz < 0 || (max_hz > 0 && max_hz <= min_hz))
    return tz_fail(err, TZ_E_JOB, "max_hz: %.10g Hz is not above min_hz %.10g Hz", max_hz,
                   min_hz);
  poststack_step *s = next_step(c, POSTSTACK_FX, after, err);
  if (!s)
    return err->status;
  s->window_traces = window_traces;
  s->window_s = window_s;
  s->operator_traces = op;
  s->prewhitening_pct = pct;
  s->min_hz = min_hz;
  s->max_hz = max_hz;
  c->n++;
  return TZ_OK;
}

int poststack_chain_add_balance(poststack_chain *c, double from_s, double to_s, double target,
                                int after, tz_err *err)
{
  if (!finite_ms(from_s) || !finite_ms(to_s))
    return tz_fail(err, TZ_E_JOB, "from_ms: %.10g to %.10g ms are not within +-%g ms",
                   from_s * 1e3, to_s * 1e3, POSTSTACK_MAX_MS);
  if (!(to_s > from_s))
    return tz_fail(err, TZ_E_JOB, "to_ms: %.10g ms is not after from_ms %.10g ms", to_s * 1e3,
                   from_s * 1e3);
  if (!isfinite(target) || !(target > 0) || target > 1e30)
    return tz_fail(err, TZ_E_JOB, "target_rms: %.10g is not a positive amplitude", target);
  poststack_step *s = next_step(c, POSTSTACK_BALANCE, after, err);
  if (!s)
    return err->status;
  s->from_s = from_s;
  s->to_s = to_s;
  s->target_rms = target;
  c->n++;
  return TZ_OK;
}

int poststack_chain_add_agc(poststack_chain *c, double window_s, int measure, int after,
                            tz_err *err)
{
  condition_chain cc;
  condition_chain_init(&cc);
  tz_err why;
  tz_err_init(&why);
  if (condition_chain_add_agc(&cc, window_s, measure, &why))
    return tz_fail(err, TZ_E_JOB, "window_ms: %s", why.msg);
  poststack_step *s = next_step(c, POSTSTACK_AGC, after, err);
  if (!s)
    return err->status;
  s->window_s = window_s;
  s->measure = measure;
  c->n++;
  return TZ_OK;
}

static int in_stage(const poststack_step *s, int stage)
{
  return stage == POSTSTACK_STAGE_ALL ||
         (stage == POSTSTACK_STAGE_AFTER) == (s->after_migration != 0);
}

size_t poststack_chain_count(const poststack_chain *c, int stage)
{
  size_t n = 0;
  for (size_t k = 0; k < c->n; k++)
    n += (size_t)in_stage(&c->step[k], stage);
  return n;
}

/* ---- descriptions ---- */

typedef struct outbuf {
  char *p;
  size_t cap, len;
} outbuf;

static void put(outbuf *b, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
static void put(outbuf *b, const char *fmt, ...)
{
  va_list ap;
  va_start(ap, fmt);
  int n = vsnprintf(b->len < b->cap ? b->p + b->len : NULL, b->len < b->cap ? b->cap - b->len : 0,
                    fmt, ap);
  va_end(ap);
  if (n > 0)
    b->len += (size_t)n;
}

/* One step as text of at most `width` characters (longer band-pass lists are cut
 * with "..." before the limit). */
static void step_text(const poststack_step *s, char *line, size_t width)
{
  char t[512];
  outbuf b = { t, sizeof t, 0 };
  switch (s->kind) {
  case POSTSTACK_BANDPASS:
    put(&b, "bandpass");
    for (size_t i = 0; i < s->nwindows; i++) {
      const poststack_window *w = &s->window[i];
      put(&b, "%s %g-%g ms %g/%g/%g/%g Hz", i ? "," : "", w->from_s * 1e3, w->to_s * 1e3,
          w->corners_hz[0], w->corners_hz[1], w->corners_hz[2], w->corners_hz[3]);
    }
    break;
  case POSTSTACK_FX:
    put(&b, "fx_prediction %zu tr x %g ms, op %zu, pw %g %%, ", s->window_traces,
        s->window_s * 1e3, s->operator_traces, s->prewhitening_pct);
    if (s->max_hz > 0)
      put(&b, "%g-%g Hz", s->min_hz, s->max_hz);
    else
      put(&b, "%g Hz-Nyquist", s->min_hz);
    break;
  case POSTSTACK_BALANCE:
    put(&b, "balance RMS %g-%g ms to %g", s->from_s * 1e3, s->to_s * 1e3, s->target_rms);
    break;
  case POSTSTACK_AGC:
    put(&b, "agc %g ms %s", s->window_s * 1e3, condition_agc_measure_name(s->measure));
    break;
  }
  if (b.len >= sizeof t)
    b.len = sizeof t - 1;
  if (b.len > width) {
    memcpy(t + width - 3, "...", 4);
    b.len = width;
  }
  memcpy(line, t, b.len);
  line[b.len] = '\0';
}

size_t poststack_step_text(const poststack_step *s, char *buf, size_t cap)
{
  char line[512];
  step_text(s, line, sizeof line - 1);
  return (size_t)snprintf(buf, cap, "%s", line);
}

size_t poststack_describe(const poststack_chain *c, int stage, char *buf, size_t cap)
{
  outbuf b = { buf, cap, 0 };
  if (cap)
    buf[0] = '\0';
  size_t k = 0;
  for (size_t i = 0; i < c->n; i++) {
    const poststack_step *s = &c->step[i];
    if (!in_stage(s, stage))
      continue;
    char head[64], line[96];
    snprintf(head, sizeof head, "poststack %zu%s: ", i + 1,
             stage == POSTSTACK_STAGE_ALL || !s->after_migration ? "" : " (after migration)");
    k++;
    step_text(s, line, 76 - strlen(head));
    put(&b, "%s%s%s", k > 1 ? "\n" : "", head, line);
  }
  return b.len;
}

/* ---- blend weights ---- */

double poststack_blend_weight(const poststack_window *w, size_t n, size_t k, double t)
{
  double up = 1, down = 1;
  if (k > 0) {   /* rising over the overlap with the window before */
    double a = w[k].from_s, b = w[k - 1].to_s;
    up = b > a ? (t <= a ? 0 : t >= b ? 1 : (t - a) / (b - a)) : (t >= a ? 1 : 0);
  }
  if (k + 1 < n) {   /* falling over the overlap with the window after */
    double a = w[k + 1].from_s, b = w[k].to_s;
    down = b > a ? (t <= a ? 1 : t >= b ? 0 : 1 - (t - a) / (b - a)) : (t >= a ? 0 : 1);
  }
  return up * down;
}

/* ---- the plan ---- */

typedef struct tv_window {
  size_t lo, hi;        /* samples with a weight > 0 */
  float *weight;        /* ns blend weights */
  float *gain;          /* nspec trapezoid gains A(f_k) / nfft */
  size_t klo, khi;      /* bins with a gain > 0: [klo, khi) */
} tv_window;

typedef struct plan_step {
  const poststack_step *s;
  size_t index;                       /* in the chain (for messages) */
  tv_window win[POSTSTACK_MAX_WINDOWS];
  size_t i0, i1;                      /* BALANCE: samples of the window */
  condition_plan *agc;
  condition_workspace *agc_ws;
  poststack_fx *fx;
} plan_step;

struct poststack_plan {
  poststack_chain chain;
  double t_first_s, dt_s;
  size_t ns, ntr;
  size_t n;
  plan_step step[POSTSTACK_MAX_STEPS];
  size_t nfft, nspec;                 /* band-pass transform (0 without one) */
  fftwf_plan fwd, inv;
  float *buf, *acc;                   /* nfft, ns */
  fftwf_complex *spec, *work;         /* nspec each */
};

void poststack_plan_free(poststack_plan *p)
{
  if (!p)
    return;
  for (size_t k = 0; k < p->n; k++) {
    plan_step *ps = &p->step[k];
    for (size_t i = 0; i < POSTSTACK_MAX_WINDOWS; i++) {
      free(ps->win[i].weight);
      free(ps->win[i].gain);
    }
    condition_workspace_free(ps->agc_ws);
    condition_plan_free(ps->agc);
    poststack_fx_free(ps->fx);
  }
  if (p->fwd)
    fftwf_destroy_plan(p->fwd);
  if (p->inv)
    fftwf_destroy_plan(p->inv);
  fftwf_free(p->buf);
  fftwf_free(p->spec);
  fftwf_free(p->work);
  free(p->acc);
  free(p);
}

size_t poststack_plan_steps(const poststack_plan *p)
{
  return p->n;
}

static int plan_fail(const poststack_plan *p, size_t index, tz_err *err, const char *fmt, ...)
    __attribute__((format(printf, 4, 5)));
static int plan_fail(const poststack_plan *p, size_t index, tz_err *err, const char *fmt, ...)
{
  char msg[400];
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(msg, sizeof msg, fmt, ap);
  va_end(ap);
  return tz_fail(err, TZ_E_JOB, "%s[%zu].%s", p->chain.root, index, msg);
}

static int make_fft(poststack_plan *p, tz_err *err)
{
  if (p->nfft)
    return TZ_OK;
  p->nfft = condition_fast_size(2 * p->ns);
  p->nspec = p->nfft / 2 + 1;
  p->buf = fftwf_malloc(p->nfft * sizeof *p->buf);
  p->spec = fftwf_malloc(p->nspec * sizeof *p->spec);
  p->work = fftwf_malloc(p->nspec * sizeof *p->work);
  p->acc = malloc(p->ns * sizeof *p->acc);
  if (!p->buf || !p->spec || !p->work || !p->acc)
    return tz_fail(err, TZ_E_NOMEM, "band-pass buffers of %zu samples", p->nfft);
  p->fwd = fftwf_plan_dft_r2c_1d((int)p->nfft, p->buf, p->spec, FFTW_ESTIMATE);
  p->inv = fftwf_plan_dft_c2r_1d((int)p->nfft, p->work, p->buf, FFTW_ESTIMATE);
  if (!p->fwd || !p->inv)
    return tz_fail(err, TZ_E_FFT, "FFTW could not plan a transform of %zu samples", p->nfft);
  return TZ_OK;
}

static int plan_bandpass(poststack_plan *p, plan_step *ps, tz_err *err)
{
  const poststack_step *s = ps->s;
  double nyq = 0.5 / p->dt_s;
  for (size_t i = 0; i < s->nwindows; i++)
    if (s->window[i].corners_hz[3] >= nyq)
      return plan_fail(p, ps->index, err, "windows[%zu].corners_hz: corner f4 = %.10g Hz is "
                       "at or above the Nyquist frequency %.10g Hz of the %.10g ms sample "
                       "interval", i, s->window[i].corners_hz[3], nyq, p->dt_s * 1e3);
  if (make_fft(p, err))
    return err->status;
  double df = 1.0 / ((double)p->nfft * p->dt_s);
  for (size_t i = 0; i < s->nwindows; i++) {
    tv_window *w = &ps->win[i];
    w->weight = malloc(p->ns * sizeof *w->weight);
    w->gain = malloc(p->nspec * sizeof *w->gain);
    if (!w->weight || !w->gain)
      return tz_fail(err, TZ_E_NOMEM, "band-pass window of %zu samples", p->ns);
    w->lo = p->ns;
    w->hi = 0;
    for (size_t j = 0; j < p->ns; j++) {
      double t = p->t_first_s + (double)j * p->dt_s;
      w->weight[j] = (float)poststack_blend_weight(s->window, s->nwindows, i, t);
      if (w->weight[j] > 0) {
        if (w->lo == p->ns)
          w->lo = j;
        w->hi = j + 1;
      }
    }
    if (w->lo == p->ns)
      w->lo = w->hi = 0;
    w->klo = p->nspec;
    w->khi = 0;
    for (size_t k = 0; k < p->nspec; k++) {
      double a = condition_trapezoid(s->window[i].corners_hz, (double)k * df);
      w->gain[k] = (float)(a / (double)p->nfft);
      if (a > 0) {
        if (w->klo == p->nspec)
          w->klo = k;
        w->khi = k + 1;
      }
    }
    if (w->klo == p->nspec)
      w->klo = w->khi = 0;
  }
  return TZ_OK;
}

static int plan_balance(poststack_plan *p, plan_step *ps, tz_err *err)
{
  const poststack_step *s = ps->s;
  double a = (s->from_s - p->t_first_s) / p->dt_s, b = (s->to_s - p->t_first_s) / p->dt_s;
  double lo = ceil(a - 1e-9), hi = floor(b + 1e-9) + 1;
  if (lo < 0)
    lo = 0;
  if (hi > (double)p->ns)
    hi = (double)p->ns;
  if (!(hi > lo))
    return plan_fail(p, ps->index, err, "from_ms: the window %.10g-%.10g ms holds no sample "
                     "of the section (%.10g to %.10g ms)", s->from_s * 1e3, s->to_s * 1e3,
                     p->t_first_s * 1e3, (p->t_first_s + (double)(p->ns - 1) * p->dt_s) * 1e3);
  ps->i0 = (size_t)lo;
  ps->i1 = (size_t)hi;
  return TZ_OK;
}

static int plan_agc(poststack_plan *p, plan_step *ps, tz_err *err)
{
  const poststack_step *s = ps->s;
  if (floor(s->window_s / (2 * p->dt_s) + 0.5) < 1)
    return plan_fail(p, ps->index, err, "window_ms: %.10g ms gives fewer than three samples at "
                     "the %.10g ms sample interval", s->window_s * 1e3, p->dt_s * 1e3);
  condition_chain cc;
  condition_chain_init(&cc);
  if (condition_chain_add_agc(&cc, s->window_s, s->measure, err) ||
      condition_plan_new(&ps->agc, &cc, p->t_first_s, p->dt_s, p->ns, NULL, err) ||
      condition_workspace_new(&ps->agc_ws, ps->agc, err))
    return err->status;
  return TZ_OK;
}

int poststack_plan_new(poststack_plan **out, const poststack_chain *c, int stage,
                       double t_first_s, double dt_s, size_t ns, size_t ntr, tz_err *err)
{
  *out = NULL;
  if (!isfinite(dt_s) || dt_s <= 0 || !isfinite(t_first_s))
    return tz_fail(err, TZ_E_FORMAT, "post-stack conditioning: sample interval %.10g s / first "
                   "time %.10g s is not usable", dt_s, t_first_s);
  if (ns < 1 || ns > CONDITION_MAX_SAMPLES || c->n > POSTSTACK_MAX_STEPS)
    return tz_fail(err, TZ_E_FORMAT, "post-stack conditioning: %zu samples per trace is not "
                   "between 1 and %d", ns, CONDITION_MAX_SAMPLES);
  poststack_plan *p = calloc(1, sizeof *p);
  if (!p)
    return tz_fail(err, TZ_E_NOMEM, "post-stack plan");
  p->chain = *c;
  p->t_first_s = t_first_s;
  p->dt_s = dt_s;
  p->ns = ns;
  p->ntr = ntr;
  int rc = TZ_OK;
  for (size_t k = 0; k < c->n && !rc; k++) {
    const poststack_step *s = &p->chain.step[k];
    if (!in_stage(s, stage))
      continue;
    plan_step *ps = &p->step[p->n++];
    ps->s = s;
    ps->index = k;
    switch (s->kind) {
    case POSTSTACK_BANDPASS:
      rc = plan_bandpass(p, ps, err);
      break;
    case POSTSTACK_FX: {
      char path[64];
      snprintf(path, sizeof path, "%s[%zu]", c->root, k);
      rc = poststack_fx_new(&ps->fx, s, path, ns, dt_s, ntr, err);
      break;
    }
    case POSTSTACK_BALANCE:
      rc = plan_balance(p, ps, err);
      break;
    case POSTSTACK_AGC:
      rc = plan_agc(p, ps, err);
      break;
    default:
      rc = plan_fail(p, k, err, "step: unknown kind %d", s->kind);
    }
  }
  if (rc) {
    poststack_plan_free(p);
    return rc;
  }
  *out = p;
  return TZ_OK;
}

/* ---- applying ---- */

static void apply_bandpass(poststack_plan *p, const plan_step *ps, float *x)
{
  size_t ns = p->ns;
  memcpy(p->buf, x, ns * sizeof *x);
  memset(p->buf + ns, 0, (p->nfft - ns) * sizeof *p->buf);
  fftwf_execute_dft_r2c(p->fwd, p->buf, p->spec);
  memset(p->acc, 0, ns * sizeof *p->acc);
  const float *S = (const float *)p->spec;   /* interleaved re, im (FFTW's layout) */
  float *W = (float *)p->work;
  for (size_t i = 0; i < ps->s->nwindows; i++) {
    const tv_window *w = &ps->win[i];
    if (w->hi <= w->lo)
      continue;
    memset(W, 0, 2 * p->nspec * sizeof *W);
    for (size_t k = w->klo; k < w->khi; k++) {
      W[2 * k] = S[2 * k] * w->gain[k];
      W[2 * k + 1] = S[2 * k + 1] * w->gain[k];
    }
    fftwf_execute_dft_c2r(p->inv, p->work, p->buf);
    for (size_t j = w->lo; j < w->hi; j++)
      p->acc[j] += w->weight[j] * p->buf[j];
  }
  memcpy(x, p->acc, ns * sizeof *x);
}

static void apply_balance(const plan_step *ps, float *x, size_t ns)
{
  double e = 0;
  for (size_t i = ps->i0; i < ps->i1; i++)
    e += (double)x[i] * x[i];
  double rms = sqrt(e / (double)(ps->i1 - ps->i0));
  if (!(rms > 0))
    return;   /* no energy in the window: nothing to scale */
  float g = (float)(ps->s->target_rms / rms);
  for (size_t i = 0; i < ns; i++)
    x[i] *= g;
}

int poststack_apply(poststack_plan *p, float *samples, const unsigned char *live, tz_err *err)
{
  size_t ns = p->ns;
  for (size_t j = 0; j < p->ntr; j++) {
    if (live && !live[j])
      continue;
    const float *x = samples + j * ns;
    double sum = 0;   /* one branch-free pass: a NaN or infinity makes it non-finite */
    for (size_t i = 0; i < ns; i++)
      sum += x[i];
    if (!isfinite(sum))
      for (size_t i = 0; i < ns; i++)
        if (!isfinite(x[i]))
          return tz_fail_at(err, TZ_E_FORMAT, (int64_t)j, -1, "post-stack conditioning: "
                            "sample %zu is not a finite number", i);
  }
  for (size_t k = 0; k < p->n; k++) {
    plan_step *ps = &p->step[k];
    if (ps->s->kind == POSTSTACK_FX) {
      poststack_fx_apply(ps->fx, samples, live);
      continue;
    }
    for (size_t j = 0; j < p->ntr; j++) {
      if (live && !live[j])
        continue;
      float *x = samples + j * ns;
      switch (ps->s->kind) {
      case POSTSTACK_BANDPASS:
        apply_bandpass(p, ps, x);
        break;
      case POSTSTACK_BALANCE:
        apply_balance(ps, x, ns);
        break;
      case POSTSTACK_AGC:
        if (condition_apply(ps->agc, ps->agc_ws, 0, NULL, x, err)) {
          err->trace = (int64_t)j;
          return err->status;
        }
        break;
      }
    }
  }
  return TZ_OK;
}
