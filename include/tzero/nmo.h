/* nmo.h -- exact hyperbolic (optionally fourth-order) NMO of one trace, with mutes.
 *
 * Usage, per thread:  nmo_workspace_new() once; per CMP: velocity_sample() onto the
 * trace time axis (the caller caches the arrays); per trace: nmo_apply(). The
 * output sits on the input's own time axis (t0 of output sample i equals the
 * recorded time of input sample i, t_first_s + i dt_s; t_first_s is the delay and
 * may be non-zero or negative). See docs/nmo.md for equations, stretch definition,
 * sinc8 window and tapers.
 */
#ifndef TZERO_NMO_H
#define TZERO_NMO_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"

typedef enum {
  NMO_INTERP_LINEAR = 0,       /* 2-point linear */
  NMO_INTERP_SINC8 = 1         /* 8-point Kaiser-windowed (beta 5) sinc, unit DC gain */
} nmo_interp;

#define NMO_MAX_SAMPLES 1000000   /* largest trace a workspace accepts */
#define NMO_MUTE_MAX_POINTS 256

/* Parameters: a plain value, build it on the stack (nmo_params_init() first). */
typedef struct nmo_params {
  double stretch_limit_pct;    /* mute output samples where 100 (t - t0)/t0 > this;
                                  0 disables the stretch mute. Default 50. */
  double stretch_taper_ms;     /* raised-cosine ramp over the first live samples after
                                  the stretch-mute edge (0 = hard edge). Default 10 */
  int interp;                  /* nmo_interp. Default NMO_INTERP_LINEAR */
  int use_eta;                 /* 1: fourth-order term when an eta array is given */
} nmo_params;

void nmo_params_init(nmo_params *p);

/* Top mute: a polyline of (absolute offset m, recorded time ms), offsets strictly
 * increasing; linear in offset between points, constant outside them. Input samples
 * earlier than the mute time are zeroed in recorded time, before correction; a
 * raised-cosine ramp of taper_ms follows the mute time. n = 0 means no top mute. */
typedef struct nmo_top_mute {
  size_t n;
  double offset_m[NMO_MUTE_MAX_POINTS];
  double time_ms[NMO_MUTE_MAX_POINTS];
  double taper_ms;
} nmo_top_mute;

/* Validates and fills *m (offsets >= 0 strictly increasing, times finite, n <=
 * NMO_MUTE_MAX_POINTS, taper_ms >= 0). TZ_E_ARG with a message naming the point. */
int nmo_top_mute_set(nmo_top_mute *m, const double *offset_m, const double *time_ms,
                     size_t n, double taper_ms, tz_err *err);
/* Mute time in seconds at |offset_m| (-INFINITY when m is NULL or empty). */
double nmo_top_mute_seconds(const nmo_top_mute *m, double offset_m);

/* Per-thread scratch: padded input copy, sinc table, index buffers. One per thread;
 * never share a workspace between threads. *out owns it: nmo_workspace_free(). */
typedef struct nmo_workspace nmo_workspace;
int nmo_workspace_new(nmo_workspace **out, size_t ns_max, tz_err *err);
void nmo_workspace_free(nmo_workspace *ws);    /* NULL is a no-op */
/* simd = 0 selects the portable kernels, 1 (the default) the AVX2 ones where the
 * CPU has them. Both give the same bits (tests/unit/check_simd.c); for tests and
 * benchmarks. Returns 1 when the AVX2 kernels are now in use. */
int nmo_workspace_simd(nmo_workspace *ws, int simd);

/* The time axis shared by input and output. */
typedef struct nmo_axis {
  double t_first_s;            /* time of sample 0 (the recording delay) */
  double dt_s;                 /* sample interval, > 0 */
  size_t ns;                   /* samples, <= the workspace's ns_max */
} nmo_axis;

/* What happened to one trace (for QC); counts in output samples. */
typedef struct nmo_trace_info {
  size_t first_live;           /* first output sample with weight > 0 (ns if none) */
  size_t end_live;             /* one past the last live output sample */
  size_t live;                 /* samples with weight > 0 */
  size_t muted_stretch;        /* zeroed by the stretch mute */
  size_t muted_top;            /* zeroed by the top mute (and not by stretch) */
  size_t muted_end;            /* zeroed because t maps beyond the trace end */
  size_t muted_inner;          /* zeroed by an inner (cone) mute: nmo_band_mute() */
  size_t muted_bottom;         /* zeroed by a bottom mute: nmo_band_mute() */
} nmo_trace_info;

/* Corrects one trace: out[i] = in(t_i) with t_i^2 = t0_i^2 + x^2/v_i^2 (minus the
 * Alkhalifah-Tsvankin term when p->use_eta and eta != NULL), read by interpolation.
 *   in      ns input samples in recorded time (not modified)
 *   vel_mps ns velocities sampled at the output t0 axis (velocity_sample())
 *   eta     ns eta values, or NULL
 *   out     ns corrected samples (may not alias in)
 *   weight  ns live weights, or NULL: 0 = muted (out is 0 there); 1 = live;
 *           values in (0,1) inside a taper, where out already carries the factor.
 *           The stacker counts a sample live where weight > 0.
 *   mute    top mute, or NULL
 *   info    per-trace mute counts, or NULL
 * Samples with t0 < 0, t mapping past the last input sample, stretch above the
 * limit, or input time before the top mute are 0 with weight 0. Allocates nothing.
 * TZ_E_ARG for a bad axis (dt <= 0, ns > ns_max) or bad parameters. */
int nmo_apply(nmo_workspace *ws, const nmo_params *p, const nmo_top_mute *mute,
              const nmo_axis *ax, double offset_m, const float *in, const float *vel_mps,
              const float *eta, float *out, float *weight, nmo_trace_info *info,
              tz_err *err);

/* A band mute in recorded time, after nmo_apply() on the same workspace and axis
 * (it reads the input times nmo_apply() left in the workspace): output samples of
 * the live range whose recorded time t lies in [t_from_s, t_to_s] are zeroed
 * with weight 0; t_to_s = INFINITY mutes everything after t_from_s (a bottom
 * mute). A raised-cosine ramp of taper_s on the kept side of each finite edge
 * multiplies out and weight. Updates info (live range, live count; the newly
 * muted samples go to muted_inner, or to muted_bottom when t_to_s is infinite;
 * without weights every sample of the band counts, so apply a bottom mute
 * before a cone and at most one of each).
 * Both times NAN or t_to_s < t_from_s: nothing happens. Allocates nothing. */
void nmo_band_mute(const nmo_workspace *ws, const nmo_axis *ax, double t_from_s,
                   double t_to_s, double taper_s, float *out, float *weight,
                   nmo_trace_info *info);

/* Inverse NMO (QC): puts a corrected trace back on recorded time with the same
 * moveout (no mutes; recorded samples whose t0 falls outside the axis are 0).
 * Assumes t(t0) increases with t0 (true wherever the stretch is finite). */
int nmo_inverse(nmo_workspace *ws, const nmo_params *p, const nmo_axis *ax,
                double offset_m, const float *in, const float *vel_mps, const float *eta,
                float *out, tz_err *err);

/* Static time shift (statics): out(t) = in(t - shift_s) on the same axis, read
 * with the sinc8 kernel of this workspace (docs/nmo.md gives its error bound),
 * so a positive shift moves the data later. Input samples beyond the trace are
 * zero. *live_lo / *live_hi (may be NULL) get the output span [lo, hi) whose
 * source time lies inside the recorded trace: samples shifted in from outside
 * are 0 and are not live. |shift_s| may exceed the trace (then nothing is live).
 * Allocates nothing; out may not alias in. */
int nmo_shift(nmo_workspace *ws, const nmo_axis *ax, double shift_s, const float *in,
              float *out, size_t *live_lo, size_t *live_hi, tz_err *err);

/* ---- Formulas (Yilmaz 2001: hyperbolic moveout, NMO stretch; Alkhalifah & Tsvankin 1995) ---- */

/* Two-way time at offset x: sqrt(t0^2 + x^2/v^2 - 2 eta x^4/(v^2 (t0^2 v^2 + (1+2eta) x^2))). */
double nmo_moveout_time(double t0_s, double offset_m, double v_mps, double eta);
/* NMO stretch (t - t0)/t0 as a fraction (Yilmaz 2001), hyperbolic. */
double nmo_stretch(double offset_m, double t0_s, double v_mps);
/* Offset where the hyperbolic stretch reaches s (fraction): v t0 sqrt((1+s)^2 - 1). */
double nmo_stretch_mute_offset(double t0_s, double v_mps, double s);

const char *nmo_interp_name(int interp);       /* "linear", "sinc8"; never NULL */
/* Parses "linear" / "sinc8"; -1 for anything else. */
int nmo_interp_parse(const char *s);

#endif
