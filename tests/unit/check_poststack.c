/* check_poststack.c -- post-stack conditioning: the chain's refusals, the band-pass
 * blend, f-x prediction of linear events, dead traces, descriptions.
 *
 * References: the trapezoid amplitude of a sinusoid on an FFT bin (Ormsby 1961;
 * check value 27 of docs/references.md: (5, 10, 40, 50) Hz passes 25 Hz with 1,
 * 7.5 Hz with 0.5); linear events are predictable from trace to trace at every
 * frequency (Canales 1984); the blend and the window rules as docs/poststack.md
 * states them (issue 23: overlaps, gaps, corners); amplitudes are measured by a
 * least-squares fit of sin and cos, not by an FFT. */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/poststack.h"
#include "unit.h"

static poststack_window win(double from_ms, double to_ms, double f1, double f2, double f3,
                            double f4)
{
  poststack_window w = { from_ms * 1e-3, to_ms * 1e-3, { f1, f2, f3, f4 } };
  return w;
}

static double amplitude(const float *x, size_t i0, size_t i1, double f, double dt)
{
  double ss = 0, cc = 0, sc = 0, xs = 0, xc = 0;
  for (size_t i = i0; i < i1; i++) {
    double s = sin(2 * M_PI * f * i * dt), c = cos(2 * M_PI * f * i * dt);
    ss += s * s; cc += c * c; sc += s * c; xs += x[i] * s; xc += x[i] * c;
  }
  double det = ss * cc - sc * sc, a = (xs * cc - xc * sc) / det, b = (xc * ss - xs * sc) / det;
  return sqrt(a * a + b * b);
}

START_TEST(test_window_rules)
{
  poststack_chain c;
  poststack_chain_init(&c, "$.poststack");
  tz_err e;
  poststack_window w[3] = { win(0, 500, 5, 10, 60, 80), win(400, 900, 5, 10, 40, 60),
                            win(900, 2000, 4, 8, 30, 40) };
  tz_err_init(&e);
  ck_assert_int_eq(poststack_chain_add_bandpass(&c, w, 3, 0, &e), TZ_OK);
  poststack_window gap[2] = { w[0], win(600, 900, 5, 10, 40, 60) };
  tz_err_init(&e);
  ck_assert_int_eq(poststack_chain_add_bandpass(&c, gap, 2, 0, &e), TZ_E_JOB);
  ck_assert_msg(strstr(e.msg, "windows[1].from_ms") && strstr(e.msg, "gap"), "%s", e.msg);
  poststack_window three[3] = { w[0], win(100, 900, 5, 10, 40, 60), win(450, 1000, 5, 10, 40, 60) };
  tz_err_init(&e);
  ck_assert_int_eq(poststack_chain_add_bandpass(&c, three, 3, 0, &e), TZ_E_JOB);
  ck_assert_msg(strstr(e.msg, "windows[2].from_ms") && strstr(e.msg, "overlaps windows[0]"),
                "%s", e.msg);
  poststack_window inside[2] = { w[0], win(100, 400, 5, 10, 40, 60) };
  tz_err_init(&e);
  ck_assert_int_eq(poststack_chain_add_bandpass(&c, inside, 2, 0, &e), TZ_E_JOB);
  ck_assert_msg(!strncmp(e.msg, "windows[1]:", 11), "%s", e.msg);
  poststack_window corners[1] = { win(0, 500, 5, 10, 8, 50) };
  tz_err_init(&e);
  ck_assert_int_eq(poststack_chain_add_bandpass(&c, corners, 1, 0, &e), TZ_E_JOB);
  ck_assert_msg(!strncmp(e.msg, "windows[0].corners_hz: band-pass corner f3", 42), "%s", e.msg);
  tz_err_init(&e);
  ck_assert_int_eq(poststack_chain_add_fx(&c, 10, 0.2, 6, 1, 0, 0, 0, &e), TZ_E_JOB);
  ck_assert_msg(!strncmp(e.msg, "operator_traces:", 16), "%s", e.msg);
  ck_assert_uint_eq(c.n, 1);   /* refusals leave the chain as it was */
}
END_TEST

START_TEST(test_blend_weights)
{
  poststack_window w[3] = { win(0, 500, 5, 10, 60, 80), win(400, 900, 5, 10, 40, 60),
                            win(900, 2000, 4, 8, 30, 40) };
  for (double t = -0.1; t < 2.2; t += 0.0013) {
    double s = 0;
    for (size_t k = 0; k < 3; k++)
      s += poststack_blend_weight(w, 3, k, t);
    ck_assert_double_eq_tol(s, 1.0, 1e-12);
  }
  ck_assert_double_eq_tol(poststack_blend_weight(w, 3, 0, 0.45), 0.5, 1e-12);  /* mid-overlap */
  ck_assert_double_eq_tol(poststack_blend_weight(w, 3, 1, 0.425), 0.25, 1e-12);
  ck_assert_double_eq(poststack_blend_weight(w, 3, 1, 0.8999), 1.0);           /* touching */
  ck_assert_double_eq(poststack_blend_weight(w, 3, 2, 0.9), 1.0);
  ck_assert_double_eq(poststack_blend_weight(w, 3, 0, -1.0), 1.0);             /* held */
  ck_assert_double_eq(poststack_blend_weight(w, 3, 2, 5.0), 1.0);
}
END_TEST

/* Two windows: (5, 10, 40, 50) Hz then a pass band that stops 25 Hz. A 25 Hz
 * sinusoid passes with 1 in the first window and 0 in the second (check value 27). */
START_TEST(test_bandpass_two_windows)
{
  size_t ns = 1000;
  double dt = 0.004;
  poststack_chain c;
  poststack_chain_init(&c, "$");
  poststack_window w[2] = { win(0, 1600, 5, 10, 40, 50), win(1800, 4000, 40, 50, 70, 80) };
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(poststack_chain_add_bandpass(&c, w, 2, 0, &e), TZ_E_JOB);   /* a gap */
  w[0].to_s = 2.0;
  tz_err_init(&e);
  ck_assert_int_eq(poststack_chain_add_bandpass(&c, w, 2, 0, &e), TZ_OK);
  float *x = malloc(ns * sizeof *x);
  for (size_t i = 0; i < ns; i++)
    x[i] = (float)sin(2 * M_PI * 25 * i * dt);
  poststack_plan *p = NULL;
  ck_assert_int_eq(poststack_plan_new(&p, &c, POSTSTACK_STAGE_ALL, 0, dt, ns, 1, &e), TZ_OK);
  ck_assert_int_eq(poststack_apply(p, x, NULL, &e), TZ_OK);
  ck_assert_double_eq_tol(amplitude(x, 100, 400, 25, dt), 1.0, 0.01);    /* 0.4-1.6 s */
  ck_assert_double_eq_tol(amplitude(x, 600, 900, 25, dt), 0.0, 0.01);    /* 2.4-3.6 s */
  poststack_plan_free(p);
  free(x);
}
END_TEST

/* A linear event (constant time dip) at every frequency is exactly predictable
 * along x (Canales 1984): f-x prediction of a noise-free dipping event keeps it
 * (within 1 % RMS: prewhitening and the window merge), also beside a dead trace,
 * which is neither a design row nor an input of a prediction, and stays zero. */
START_TEST(test_fx_linear_event)
{
  size_t ntr = 48, ns = 400;
  double dt = 0.004;
  float *x = calloc(ntr * ns, sizeof *x);
  unsigned char live[48];
  for (size_t j = 0; j < ntr; j++) {
    live[j] = j != 30;
    for (size_t i = 0; i < ns; i++) {
      double t = i * dt - 0.5 - 0.003 * j, a = (M_PI * 25 * t) * (M_PI * 25 * t);
      x[j * ns + i] = live[j] ? (float)((1 - 2 * a) * exp(-a)) : 0.0f;
    }
  }
  float *ref = malloc(ntr * ns * sizeof *ref);
  memcpy(ref, x, ntr * ns * sizeof *ref);
  poststack_chain c;
  poststack_chain_init(&c, "$");
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(poststack_chain_add_fx(&c, 16, 0.2, 3, 0.5, 0, 0, 0, &e), TZ_OK);
  poststack_plan *p = NULL;
  ck_assert_int_eq(poststack_plan_new(&p, &c, POSTSTACK_STAGE_ALL, 0, dt, ns, ntr, &e), TZ_OK);
  ck_assert_int_eq(poststack_apply(p, x, live, &e), TZ_OK);
  double num = 0, den = 0;
  for (size_t j = 0; j < ntr; j++)
    for (size_t i = 0; i < ns; i++) {
      if (j == 30) {
        ck_assert(x[j * ns + i] == 0.0f);   /* the dead trace stays as it was */
        continue;
      }
      double d = x[j * ns + i] - ref[j * ns + i];
      num += d * d;
      den += (double)ref[j * ns + i] * ref[j * ns + i];
    }
  ck_assert_msg(sqrt(num / den) < 0.01, "RMS change %g", sqrt(num / den));
  poststack_plan_free(p);
  free(ref);
  free(x);
}
END_TEST

START_TEST(test_stages_and_description)
{
  poststack_chain c;
  poststack_chain_init(&c, "$.poststack");
  tz_err e;
  tz_err_init(&e);
  poststack_window w = win(0, 800, 8, 12, 60, 80);
  ck_assert_int_eq(poststack_chain_add_bandpass(&c, &w, 1, 0, &e), TZ_OK);
  ck_assert_int_eq(poststack_chain_add_balance(&c, 0.1, 0.9, 1, 0, &e), TZ_OK);
  ck_assert_int_eq(poststack_chain_add_agc(&c, 0.5, CONDITION_AGC_RMS, 1, &e), TZ_OK);
  ck_assert_uint_eq(poststack_chain_count(&c, POSTSTACK_STAGE_ALL), 3);
  ck_assert_uint_eq(poststack_chain_count(&c, POSTSTACK_STAGE_BEFORE), 2);
  ck_assert_uint_eq(poststack_chain_count(&c, POSTSTACK_STAGE_AFTER), 1);
  char buf[400];
  poststack_describe(&c, POSTSTACK_STAGE_BEFORE, buf, sizeof buf);
  ck_assert_str_eq(buf, "poststack 1: bandpass 0-800 ms 8/12/60/80 Hz\n"
                        "poststack 2: balance RMS 100-900 ms to 1");
  poststack_describe(&c, POSTSTACK_STAGE_AFTER, buf, sizeof buf);
  ck_assert_str_eq(buf, "poststack 3 (after migration): agc 500 ms rms");
  /* the plan names the JSON path of a value the axis cannot take */
  poststack_plan *p = NULL;
  tz_err_init(&e);
  ck_assert_int_eq(poststack_plan_new(&p, &c, POSTSTACK_STAGE_ALL, 0, 0.008, 100, 5, &e),
                   TZ_E_JOB);
  ck_assert_msg(!strncmp(e.msg, "$.poststack[0].windows[0].corners_hz: corner f4 = 80 Hz is at "
                         "or above the Nyquist", 78), "%s", e.msg);
  ck_assert_ptr_null(p);
}
END_TEST

static Suite *poststack_suite(void)
{
  Suite *s = suite_create("poststack");
  TCase *tc = tcase_create("core");
  tcase_set_timeout(tc, 60);
  tcase_add_test(tc, test_window_rules);
  tcase_add_test(tc, test_blend_weights);
  tcase_add_test(tc, test_bandpass_two_windows);
  tcase_add_test(tc, test_fx_linear_event);
  tcase_add_test(tc, test_stages_and_description);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(poststack_suite)
