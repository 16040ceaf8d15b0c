/* check_nmo.c -- exact NMO, stretch and top mutes, fourth-order moveout, sinc8.
 *
 * References: hyperbolic traveltime and stretch (Yilmaz 2001; check values 10-14
 * of docs/references.md), Ricker wavelet (Ricker 1953), exact flat-layer ray tracing
 * (Snell's law; Sheriff & Geldart 1995; check values 23-24), fourth-order moveout
 * (Alkhalifah & Tsvankin 1995), band-limited signals sampled analytically. */
#include <math.h>
#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/nmo.h"
#include "tzero/velocity.h"
#include "unit.h"

#define MAXNS 4000

static double ricker(double t, double fp)
{
  double a = M_PI * M_PI * fp * fp * t * t;   /* Ricker 1953 */
  return (1 - 2 * a) * exp(-a);
}

/* Peak time near sample `near` (+-w samples) with a three-point parabola through
 * the largest sample (sub-sample interpolation). */
static double peak_time(const float *y, size_t ns, double tf, double dt, long near, long w)
{
  long lo = near - w < 1 ? 1 : near - w, hi = near + w > (long)ns - 2 ? (long)ns - 2 : near + w;
  long k = lo;
  for (long i = lo; i <= hi; i++)
    if (y[i] > y[k])
      k = i;
  double a = y[k - 1], b = y[k], c = y[k + 1], den = a - 2 * b + c;
  double d = den != 0 ? 0.5 * (a - c) / den : 0;
  return tf + ((double)k + d) * dt;
}

static nmo_workspace *ws_new(size_t ns)
{
  nmo_workspace *ws = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(nmo_workspace_new(&ws, ns, &e), TZ_OK);
  return ws;
}

static void apply(nmo_workspace *ws, const nmo_params *p, const nmo_top_mute *m,
                  const nmo_axis *ax, double x, const float *in, const float *vel,
                  const float *eta, float *out, float *w, nmo_trace_info *info)
{
  tz_err e;
  tz_err_init(&e);
  int rc = nmo_apply(ws, p, m, ax, x, in, vel, eta, out, w, info, &e);
  ck_assert_msg(rc == TZ_OK, "nmo_apply: %s", e.msg);
}

/* computed from the exact hyperbola, Yilmaz 2001; computed from the NMO stretch, Yilmaz 2001 (check values 10-14 of docs/references.md). */
START_TEST(test_formulas)
{
  /* #10: t0 = 1, v = 2000, x = 1000 -> 1.118034 s; parabolic approx 125 ms. */
  ck_assert_double_eq_tol(nmo_moveout_time(1.0, 1000, 2000, 0), 1.118034, 1e-6);
  /* #11: x = 2000 -> t0 sqrt(2). */
  ck_assert_double_eq_tol(nmo_moveout_time(1.0, 2000, 2000, 0), 1.414214, 1e-6);
  /* #12: t0 = 0.5, v = 2000, x = 1000 -> stretch 41.421 %. */
  ck_assert_double_eq_tol(nmo_stretch(1000, 0.5, 2000), 0.41421, 1e-5);
  /* #13: stretch-mute offsets 830.66 / 1118.03 / 1732.05 m. */
  ck_assert_double_eq_tol(nmo_stretch_mute_offset(0.5, 2000, 0.3), 830.66, 1e-2);
  ck_assert_double_eq_tol(nmo_stretch_mute_offset(0.5, 2000, 0.5), 1118.03, 1e-2);
  ck_assert_double_eq_tol(nmo_stretch_mute_offset(0.5, 2000, 1.0), 1732.05, 1e-2);
  /* #14 with the Delta t / t0 definition chosen in docs/nmo.md:
   * v = 1500 + 1000 t0, x = 1500: 80.28 % at 0.5 s, 16.62 % at 1.0 s. */
  ck_assert_double_eq_tol(nmo_stretch(1500, 0.5, 2000), 0.8028, 1e-4);
  ck_assert_double_eq_tol(nmo_stretch(1500, 1.0, 2500), 0.1662, 1e-4);
  /* Round trip: at the mute offset the stretch equals the limit. */
  ck_assert_double_eq_tol(nmo_stretch(nmo_stretch_mute_offset(0.7, 2300, 0.4), 0.7, 2300),
                          0.4, 1e-12);
  ck_assert_int_eq(nmo_interp_parse("sinc8"), NMO_INTERP_SINC8);
  ck_assert_int_eq(nmo_interp_parse("cubic"), -1);
}
END_TEST

/* Single flat reflector, constant v, Ricker on the exact hyperbola (Yilmaz 2001, hyperbolic moveout), with a
 * non-zero recording delay. After NMO the peak sits at t0 within a quarter sample at
 * every unmuted offset, for both interpolators. The small-moveout shortcut
 * dt ~ x^2/(2 t0 v^2) (Yilmaz 2001, small-spread approximation) misplaces it by far more; the difference is printed. */
START_TEST(test_flattens_exact_hyperbola)
{
  const double v = 2000, t0 = 0.6, dt = 0.002, tf = 0.1, fp = 25;
  const size_t ns = 600;
  float in[600], out[600], w[600], vel[600];
  for (size_t i = 0; i < ns; i++)
    vel[i] = (float)v;
  nmo_workspace *ws = ws_new(ns);
  nmo_params p;
  nmo_params_init(&p);
  nmo_axis ax = { tf, dt, ns };
  long i0 = lround((t0 - tf) / dt);
  for (int interp = NMO_INTERP_LINEAR; interp <= NMO_INTERP_SINC8; interp++) {
    p.interp = interp;
    int checked = 0;
    for (double x = 0; x <= 2000; x += 100) {
      double tx = sqrt(t0 * t0 + x * x / (v * v));
      for (size_t i = 0; i < ns; i++)
        in[i] = (float)ricker(tf + i * dt - tx, fp);
      apply(ws, &p, NULL, &ax, x, in, vel, NULL, out, w, NULL);
      int live = 1;
      for (long i = i0 - 20; i <= i0 + 20; i++)
        live &= w[i] == 1.0f;
      if (!live)
        continue;   /* wavelet touches the stretch mute */
      double tp = peak_time(out, ns, tf, dt, i0, 10);
      ck_assert_msg(fabs(tp - t0) < dt / 4, "%s, x = %g m: peak at %.5f s, t0 %.5f s",
                    nmo_interp_name(interp), x, tp, t0);
      checked++;
    }
    /* Stretch mute 50 %: live up to x = v t0 sqrt(1.5^2 - 1) = 1342 m (minus taper). */
    ck_assert_int_ge(checked, 12);
  }
  /* The small-moveout approximation, applied the same way, at x = 800 m. */
  const double x = 800;
  double tx = sqrt(t0 * t0 + x * x / (v * v));
  for (size_t i = 0; i < ns; i++)
    in[i] = (float)ricker(tf + i * dt - tx, fp);
  for (size_t i = 0; i < ns; i++) {
    double tt0 = tf + i * dt, ta = tt0 + x * x / (2 * tt0 * v * v);
    double u = (ta - tf) / dt;
    size_t k = (size_t)u;
    out[i] = k + 1 < ns ? (float)(in[k] + (u - k) * (in[k + 1] - in[k])) : 0.0f;
  }
  double ta = peak_time(out, ns, tf, dt, i0, 40);
  p.interp = NMO_INTERP_LINEAR;
  for (size_t i = 0; i < ns; i++)
    in[i] = (float)ricker(tf + i * dt - tx, fp);
  apply(ws, &p, NULL, &ax, x, in, vel, NULL, out, w, NULL);
  double te = peak_time(out, ns, tf, dt, i0, 10);
  printf("# x = %g m, t0 = %g s: exact NMO puts the peak at %+.3f ms from t0, the "
         "small-moveout approximation at %+.3f ms\n", x, t0, (te - t0) * 1e3, (ta - t0) * 1e3);
  ck_assert_msg(fabs(ta - t0) > 10 * dt / 4,
                "small-moveout error only %.3f ms; exact %.3f ms", (ta - t0) * 1e3,
                (te - t0) * 1e3);
  nmo_workspace_free(ws);
}
END_TEST

/* The stretch mute starts where (t - t0)/t0 reaches the limit, i.e. at offset
 * x = v t0 sqrt((1 + s)^2 - 1) (derived from the hyperbola, Yilmaz 2001; check value 13 of docs/references.md). */
START_TEST(test_stretch_mute_edge)
{
  const double v = 2000, dt = 0.002;
  const size_t ns = 1000;
  float in[1000], out[1000], w[1000], vel[1000];
  for (size_t i = 0; i < ns; i++) {
    in[i] = 1.0f;
    vel[i] = (float)v;
  }
  nmo_workspace *ws = ws_new(ns);
  nmo_params p;
  nmo_params_init(&p);
  p.stretch_limit_pct = 30;
  p.stretch_taper_ms = 0;
  nmo_axis ax = { 0.0, dt, ns };
  const size_t i05 = 250;   /* t0 = 0.5 s */
  double xm = nmo_stretch_mute_offset(0.5, v, 0.3);   /* 830.66 m */
  apply(ws, &p, NULL, &ax, xm - 0.5, in, vel, NULL, out, w, NULL);
  ck_assert_msg(w[i05] > 0, "t0 = 0.5 s muted at x = %.2f m (< %.2f)", xm - 0.5, xm);
  apply(ws, &p, NULL, &ax, xm + 0.5, in, vel, NULL, out, w, NULL);
  ck_assert_msg(w[i05] == 0 && out[i05] == 0, "t0 = 0.5 s live at x = %.2f m", xm + 0.5);
  /* For any offset, the first live sample is the first t0 with stretch <= limit:
   * t0 >= x / (v sqrt(1.3^2 - 1)). */
  for (double x = 100; x < 2000; x += 137) {   /* muted zone ends inside the trace */
    nmo_trace_info info;
    apply(ws, &p, NULL, &ax, x, in, vel, NULL, out, w, &info);
    double t0m = x / (v * sqrt(1.69 - 1));
    size_t want = (size_t)ceil(t0m / dt - 1e-9);
    ck_assert_msg(info.first_live == want || fabs(t0m / dt - round(t0m / dt)) < 1e-3,
                  "x = %g: first live %zu, formula %zu", x, info.first_live, want);
    for (size_t i = 0; i < ns; i++)
      ck_assert((w[i] > 0) == (i >= info.first_live && i < info.end_live));
    ck_assert_uint_eq(info.muted_stretch + info.muted_top + info.live + info.muted_end, ns);
  }
  /* With a taper: the first live samples ramp up (0 < w < 1), data carry the factor. */
  p.stretch_taper_ms = 10;   /* 5 samples */
  nmo_trace_info info;
  apply(ws, &p, NULL, &ax, 1000, in, vel, NULL, out, w, &info);
  size_t f = info.first_live;
  for (size_t k = 0; k < 5; k++) {
    ck_assert(w[f + k] > 0 && w[f + k] < 1);
    ck_assert_double_eq_tol(out[f + k], w[f + k], 1e-6);   /* input is 1 */
    if (k)
      ck_assert(w[f + k] > w[f + k - 1]);
  }
  ck_assert(w[f + 5] == 1.0f);
  ck_assert(w[f - 1] == 0.0f);
  nmo_workspace_free(ws);
}
END_TEST

/* Top mute applied in recorded time; samples mapping past the trace end are dead;
 * t0 < 0 (negative delay) is dead. Common practice for mutes; expected zones worked
 * from the hyperbola. */
START_TEST(test_top_mute_and_trace_end)
{
  const double v = 2000, dt = 0.004, tf = -0.1;
  const size_t ns = 300;   /* -0.1 .. 1.096 s */
  float in[300], out[300], w[300], vel[300];
  for (size_t i = 0; i < ns; i++) {
    in[i] = 1.0f;
    vel[i] = (float)v;
  }
  nmo_workspace *ws = ws_new(ns);
  nmo_params p;
  nmo_params_init(&p);
  p.stretch_limit_pct = 0;   /* off */
  nmo_top_mute m;
  tz_err e;
  tz_err_init(&e);
  double mx[] = { 0, 1000 }, mt[] = { 100, 500 };
  ck_assert_int_eq(nmo_top_mute_set(&m, mx, mt, 2, 0, &e), TZ_OK);
  ck_assert_double_eq_tol(nmo_top_mute_seconds(&m, -500), 0.300, 1e-12);
  ck_assert_double_eq_tol(nmo_top_mute_seconds(&m, 2500), 0.500, 1e-12);
  nmo_axis ax = { tf, dt, ns };
  const double x = 500;
  nmo_trace_info info;
  apply(ws, &p, &m, &ax, x, in, vel, NULL, out, w, &info);
  double tlast = tf + (ns - 1) * dt;
  for (size_t i = 0; i < ns; i++) {
    double t0 = tf + i * dt, t = sqrt(t0 * t0 + x * x / (v * v));
    int live = t0 >= 0 && t >= 0.300 && t <= tlast;
    if (fabs(t - 0.3) < 1e-5 || fabs(t - tlast) < 1e-5)
      continue;
    ck_assert_msg((w[i] > 0) == live, "sample %zu (t0 %.3f, t %.4f): weight %g", i, t0, t,
                  w[i]);
    ck_assert(live ? fabs(out[i] - 1.0f) < 1e-5 : out[i] == 0.0f);
  }
  ck_assert_uint_gt(info.muted_top, 0);
  ck_assert_uint_gt(info.muted_end, 0);
  /* A tapered top mute: the weights rise across taper_ms after the mute time. */
  ck_assert_int_eq(nmo_top_mute_set(&m, mx, mt, 2, 40, &e), TZ_OK);
  apply(ws, &p, &m, &ax, x, in, vel, NULL, out, w, &info);
  size_t f = info.first_live;
  ck_assert(w[f] > 0 && w[f] < 0.5);
  ck_assert_double_eq_tol(out[f], w[f], 0.05);
  /* Bad polylines are refused. */
  double bx[] = { 0, 0 };
  ck_assert_int_eq(nmo_top_mute_set(&m, bx, mt, 2, 0, &e), TZ_E_ARG);
  nmo_workspace_free(ws);
}
END_TEST

/* Exact reflection time from the base of a stack of flat layers (Snell's law,
 * Snell's law through flat layers, Sheriff & Geldart 1995): solve x(p) = x by bisection, then t(p). */
static double ray_time(const double *h, const double *v, int n, double x)
{
  double vmax = 0;
  for (int k = 0; k < n; k++)
    vmax = v[k] > vmax ? v[k] : vmax;
  double lo = 0, hi = 1 / vmax * (1 - 1e-12);
  for (int it = 0; it < 200; it++) {
    double p = 0.5 * (lo + hi), xs = 0;
    for (int k = 0; k < n; k++)
      xs += 2 * h[k] * p * v[k] / sqrt(1 - p * p * v[k] * v[k]);
    if (xs < x)
      lo = p;
    else
      hi = p;
  }
  double p = 0.5 * (lo + hi), t = 0;
  for (int k = 0; k < n; k++)
    t += 2 * h[k] / (v[k] * sqrt(1 - p * p * v[k] * v[k]));
  return t;
}

/* Fourth-order moveout (Alkhalifah and Tsvankin 1995) with the effective eta of a
 * layered medium flattens exact ray-traced times better than the hyperbola. */
START_TEST(test_fourth_order_layered)
{
  const double h[] = { 500, 500 }, vl[] = { 2000, 3000 };
  const double t0 = 0.5 + 1.0 / 3, vrms = sqrt((2000.0 * 2000 * 0.5 + 9e6 / 3) / t0);
  /* Alkhalifah & Tsvankin 1995: eta_eff = (mu4/mu2^2 - 1)/8 = 1/48 for this model; check values 23-24 of docs/references.md. */
  const double eta_eff = 1.0 / 48;
  ck_assert_double_eq_tol(vrms, 2449.490, 1e-3);
  ck_assert_double_eq_tol(ray_time(h, vl, 2, 1186.4358), 0.962211, 1e-6);
  ck_assert_double_eq_tol(nmo_moveout_time(t0, 1186.4358, vrms, 0), 0.963872, 1e-6);
  ck_assert_double_eq_tol(nmo_moveout_time(t0, 1186.4358, vrms, eta_eff), 0.962604, 1e-6);
  ck_assert_double_eq_tol(ray_time(h, vl, 2, 2814.74), 1.389719, 2e-6);
  ck_assert_double_eq_tol(nmo_moveout_time(t0, 2814.74, vrms, 0) - 1.389719, 0.02976, 2e-5);
  ck_assert_double_eq_tol(nmo_moveout_time(t0, 2814.74, vrms, eta_eff) - 1.389719, 0.01734,
                          2e-5);

  const double dt = 0.001;
  const size_t ns = 2000;
  static float in[2000], out[2000], vel[2000], eta[2000];
  /* The velocity function comes through a velocity table with an eta column. */
  char txt[200];
  snprintf(txt, sizeof txt, "cmp,time_ms,velocity_mps,eta\n1,0,%.6f,%.8f\n", vrms, eta_eff);
  velocity_table *vt;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(velocity_table_parse(&vt, "eta.csv", txt, strlen(txt), &e), TZ_OK);
  velocity_sample(vt, 1, 0.0, dt, ns, vel, eta);
  nmo_workspace *ws = ws_new(ns);
  nmo_params p;
  nmo_params_init(&p);
  p.stretch_limit_pct = 0;
  p.interp = NMO_INTERP_SINC8;
  nmo_axis ax = { 0.0, dt, ns };
  long i0 = lround(t0 / dt);
  double worst_h = 0, worst_4 = 0;
  for (double x = 0; x <= 2800; x += 200) {
    double tx = ray_time(h, vl, 2, x);
    for (size_t i = 0; i < ns; i++)
      in[i] = (float)ricker(i * dt - tx, 30);
    apply(ws, &p, NULL, &ax, x, in, vel, NULL, out, NULL, NULL);
    double eh = fabs(peak_time(out, ns, 0, dt, i0, 100) - t0);
    apply(ws, &p, NULL, &ax, x, in, vel, eta, out, NULL, NULL);
    double e4 = fabs(peak_time(out, ns, 0, dt, i0, 100) - t0);
    worst_h = eh > worst_h ? eh : worst_h;
    worst_4 = e4 > worst_4 ? e4 : worst_4;
  }
  printf("# layered model, x <= 2800 m: residual moveout after NMO %.3f ms (hyperbola), "
         "%.3f ms (fourth order)\n", worst_h * 1e3, worst_4 * 1e3);
  /* In t0 the residual is the traveltime error times t/t0 (about 1.67 at 2800 m):
   * from §4 #24, about 29 ms (fourth order) against 50 ms (hyperbola). */
  ck_assert_msg(worst_4 < 0.7 * worst_h, "fourth order %.3f ms, hyperbola %.3f ms",
                worst_4 * 1e3, worst_h * 1e3);
  /* use_eta = 0 ignores the eta array. */
  p.use_eta = 0;
  apply(ws, &p, NULL, &ax, 2800, in, vel, eta, out, NULL, NULL);
  ck_assert_double_eq_tol(fabs(peak_time(out, ns, 0, dt, i0, 100) - t0), worst_h, 1e-4);
  velocity_table_free(vt);
  nmo_workspace_free(ws);
}
END_TEST

/* Interpolation error on band-limited analytic signals: unit cosines at 0.2, 0.35 and
 * 0.5 of Nyquist sampled exactly; the expected output is the cosine at the exact
 * moveout time (computed here in double). Bound for sinc8 (docs/nmo.md): 0.006 of
 * the amplitude up to half Nyquist; linear is several times worse. */
START_TEST(test_sinc8_error)
{
  const double v = 2000, dt = 0.004, x = 1000, fny = 0.5 / dt;
  const size_t ns = 1000;
  float in[1000], out[1000], vel[1000];
  for (size_t i = 0; i < ns; i++)
    vel[i] = (float)v;
  nmo_workspace *ws = ws_new(ns);
  nmo_params p;
  nmo_params_init(&p);
  p.stretch_limit_pct = 0;
  nmo_axis ax = { 0.0, dt, ns };
  const double fr[] = { 0.2, 0.35, 0.5 };
  for (int j = 0; j < 3; j++) {
    double f = fr[j] * fny, ph = 0.3 + j, err[2] = { 0, 0 };
    for (size_t i = 0; i < ns; i++)
      in[i] = (float)cos(2 * M_PI * f * i * dt + ph);
    for (int interp = 0; interp < 2; interp++) {
      p.interp = interp;
      apply(ws, &p, NULL, &ax, x, in, vel, NULL, out, NULL, NULL);
      for (size_t i = 0; i < ns; i++) {
        double t = sqrt(pow(i * dt, 2) + x * x / (v * v));
        if (t / dt > ns - 6)
          break;   /* the sinc window would reach past the trace end */
        double d = fabs(out[i] - cos(2 * M_PI * f * t + ph));
        err[interp] = d > err[interp] ? d : err[interp];
      }
    }
    printf("# %.2f Nyquist: max error linear %.5f, sinc8 %.5f\n", fr[j], err[0], err[1]);
    ck_assert_msg(err[1] < 0.006, "sinc8 error %.5f at %.2f Nyquist", err[1], fr[j]);
    ck_assert_msg(err[0] > 4 * err[1], "linear %.5f vs sinc8 %.5f", err[0], err[1]);
  }
  /* Unit gain at zero frequency: a constant stays constant. */
  for (size_t i = 0; i < ns; i++)
    in[i] = 1.0f;
  p.interp = NMO_INTERP_SINC8;
  apply(ws, &p, NULL, &ax, x, in, vel, NULL, out, NULL, NULL);
  for (size_t i = 0; i < 700; i++)
    ck_assert_double_eq_tol(out[i], 1.0, 1e-5);
  nmo_workspace_free(ws);
}
END_TEST

/* Inverse NMO puts a corrected event back on its hyperbola (Yilmaz 2001, hyperbolic moveout). The reference is
 * the analytic input, not tzero output. */
START_TEST(test_inverse)
{
  const double v = 2200, dt = 0.002, x = 700, t0 = 0.5;
  const size_t ns = 500;
  float in[500], mid[500], back[500], vel[500];
  for (size_t i = 0; i < ns; i++)
    vel[i] = (float)v;
  double tx = sqrt(t0 * t0 + x * x / (v * v));
  for (size_t i = 0; i < ns; i++)
    in[i] = (float)ricker(i * dt - tx, 20);
  nmo_workspace *ws = ws_new(ns);
  nmo_params p;
  nmo_params_init(&p);
  p.stretch_limit_pct = 0;
  p.interp = NMO_INTERP_SINC8;
  nmo_axis ax = { 0.0, dt, ns };
  apply(ws, &p, NULL, &ax, x, in, vel, NULL, mid, NULL, NULL);
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(nmo_inverse(ws, &p, &ax, x, mid, vel, NULL, back, &e), TZ_OK);
  double worst = 0;
  for (size_t i = (size_t)((tx - 0.08) / dt); i < (size_t)((tx + 0.08) / dt); i++)
    worst = fmax(worst, fabs(back[i] - in[i]));
  ck_assert_msg(worst < 0.02, "inverse(forward) differs by %.4f", worst);
  double tp = peak_time(back, ns, 0, dt, lround(tx / dt), 10);
  ck_assert_double_eq_tol(tp, tx, dt / 4);
  /* Recorded times earlier than x/v have no t0 >= 0: zero. */
  ck_assert(back[0] == 0.0f);
  nmo_workspace_free(ws);
}
END_TEST

START_TEST(test_bad_arguments)
{
  nmo_workspace *ws = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(nmo_workspace_new(&ws, 0, &e), TZ_E_ARG);
  ws = ws_new(10);
  float a[20] = { 0 }, b[20], vel[20];
  for (int i = 0; i < 20; i++)
    vel[i] = 2000;
  nmo_params p;
  nmo_params_init(&p);
  nmo_axis ax = { 0, 0, 10 };
  tz_err_init(&e);
  ck_assert_int_eq(nmo_apply(ws, &p, NULL, &ax, 10, a, vel, NULL, b, NULL, NULL, &e),
                   TZ_E_ARG);
  ax.dt_s = 0.004;
  ax.ns = 20;
  tz_err_init(&e);
  ck_assert_int_eq(nmo_apply(ws, &p, NULL, &ax, 10, a, vel, NULL, b, NULL, NULL, &e),
                   TZ_E_ARG);
  ck_assert(strstr(e.msg, "workspace") != NULL);
  ax.ns = 10;
  p.interp = 7;
  tz_err_init(&e);
  ck_assert_int_eq(nmo_apply(ws, &p, NULL, &ax, 10, a, vel, NULL, b, NULL, NULL, &e),
                   TZ_E_ARG);
  nmo_workspace_free(ws);
}
END_TEST

/* DEVELOPERS.md, threads: the same input gives bitwise-identical output for any thread count.
 * Two threads, each with its own workspace, sharing one velocity table and the
 * parameters, against a serial run. */
#define TH_NTR 48
#define TH_NS 800
struct th_job {
  const velocity_table *vt;
  const float *in;
  float *out;
  float *w;
  size_t first, n;
};

static void th_run(struct th_job *j)
{
  nmo_workspace *ws;
  tz_err e;
  tz_err_init(&e);
  if (nmo_workspace_new(&ws, TH_NS, &e))
    return;
  nmo_params p;
  nmo_params_init(&p);
  p.interp = NMO_INTERP_SINC8;
  nmo_top_mute m;
  double mx[] = { 0, 2000 }, mt[] = { 30, 700 };
  nmo_top_mute_set(&m, mx, mt, 2, 24, &e);
  nmo_axis ax = { 0.02, 0.002, TH_NS };
  float vel[TH_NS];
  for (size_t k = j->first; k < j->first + j->n; k++) {
    velocity_sample(j->vt, (int64_t)(100 + 7 * k), ax.t_first_s, ax.dt_s, TH_NS, vel, NULL);
    nmo_apply(ws, &p, &m, &ax, 40.0 * (double)k - 900, j->in + k * TH_NS, vel, NULL,
              j->out + k * TH_NS, j->w + k * TH_NS, NULL, &e);
  }
  nmo_workspace_free(ws);
}

static void *th_main(void *arg)
{
  th_run(arg);
  return NULL;
}

START_TEST(test_threads_bitwise)
{
  static float in[TH_NTR * TH_NS], o1[TH_NTR * TH_NS], w1[TH_NTR * TH_NS];
  static float o2[TH_NTR * TH_NS], w2[TH_NTR * TH_NS];
  const char *txt = "cmp,time_ms,velocity_mps\n100,0,1500\n100,900,2400\n400,0,1600\n"
                    "400,1200,2900\n";
  velocity_table *vt;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(velocity_table_parse(&vt, "th.csv", txt, strlen(txt), &e), TZ_OK);
  unsigned s = 99u;
  for (size_t i = 0; i < TH_NTR * TH_NS; i++) {
    s = s * 1103515245u + 12345u;
    in[i] = (float)((s >> 9) & 0xffff) / 32768.0f - 1.0f;
  }
  struct th_job serial = { vt, in, o1, w1, 0, TH_NTR };
  th_run(&serial);
  struct th_job a = { vt, in, o2, w2, 0, TH_NTR / 2 };
  struct th_job b = { vt, in, o2, w2, TH_NTR / 2, TH_NTR - TH_NTR / 2 };
  pthread_t ta, tb;
  ck_assert_int_eq(pthread_create(&ta, NULL, th_main, &a), 0);
  ck_assert_int_eq(pthread_create(&tb, NULL, th_main, &b), 0);
  pthread_join(ta, NULL);
  pthread_join(tb, NULL);
  ck_assert(memcmp(o1, o2, sizeof o1) == 0);
  ck_assert(memcmp(w1, w2, sizeof w1) == 0);
  velocity_table_free(vt);
}
END_TEST

static Suite *nmo_suite(void)
{
  Suite *s = suite_create("nmo");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_formulas);
  tcase_add_test(tc, test_flattens_exact_hyperbola);
  tcase_add_test(tc, test_stretch_mute_edge);
  tcase_add_test(tc, test_top_mute_and_trace_end);
  tcase_add_test(tc, test_fourth_order_layered);
  tcase_add_test(tc, test_sinc8_error);
  tcase_add_test(tc, test_inverse);
  tcase_add_test(tc, test_bad_arguments);
  tcase_add_test(tc, test_threads_bitwise);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(nmo_suite)
