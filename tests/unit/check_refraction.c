/* check_refraction.c -- delay-time refraction: the two-layer formulas of Sheriff
 * and Geldart (1995, Exploration Seismology, 2nd ed., refraction chapter;
 * section numbers from memory), values computed from them, the two-segment fit
 * and the all-stations delay-time solution on picks made by those formulas. */
#include <math.h>
#include <stdlib.h>

#include "tzero/refraction.h"
#include "unit.h"

/* Two-layer worked example, v0 = 700 m/s over v1 = 2000 m/s, h = 10 m
 * (computed from the formulas): i_c = asin(0.35) = 20.4873 deg, cos i_c =
 * 0.936750, t_i = 2 h cos i_c / v0 = 26.7643 ms, delay = 13.3821 ms,
 * x_c = 2 h sqrt(2700 / 1300) = 28.8231 m. */
START_TEST(test_two_layer_formulas)
{
  ck_assert_double_eq_tol(refraction_critical_angle_deg(700, 2000), 20.4873, 1e-4);
  ck_assert_double_eq_tol(refraction_intercept_ms(10, 700, 2000), 26.7643, 1e-4);
  ck_assert_double_eq_tol(refraction_delay_ms(10, 700, 2000), 13.3821, 1e-4);
  ck_assert_double_eq_tol(refraction_crossover_m(10, 700, 2000), 28.8231, 1e-4);
  ck_assert_double_eq_tol(refraction_thickness_m(13.3821, 700, 2000), 10.0, 1e-4);
  /* Static through 10 m of weathering at 700 m/s from 150 m to a 120 m datum
   * at 2000 m/s: -(10/700 + 20/2000) s = -24.2857 ms (definition of a datum
   * static through weathering and replacement medium, common practice). */
  ck_assert_double_eq_tol(refraction_datum_static_ms(150, 10, 700, 120, 2000), -24.2857, 1e-4);
}
END_TEST

/* First arrivals of the worked example every 2 m to 120 m (direct wave x / v0
 * before the crossover, head wave x / v1 + t_i after it): the two-segment fit
 * gives back t_i, the crossover distance and both velocities; half the
 * intercept is the delay of source and receiver, to 0.01 ms. */
START_TEST(test_two_segment_fit)
{
  double x[60], t[60];
  double ti = refraction_intercept_ms(10, 700, 2000);
  for (int i = 0; i < 60; i++) {
    x[i] = 2.0 * (i + 1);
    t[i] = fmin(1000.0 * x[i] / 700.0, 1000.0 * x[i] / 2000.0 + ti);
  }
  refraction_two_segments f;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(refraction_fit_two_segments(x, t, 60, 3, &f, &e), TZ_OK);
  ck_assert_double_eq_tol(f.intercept_ms, 26.7643, 0.01);
  ck_assert_double_eq_tol(f.intercept_ms / 2.0, 13.3821, 0.01);
  ck_assert_double_eq_tol(f.crossover_m, 28.8231, 0.01);
  ck_assert_double_eq_tol(f.direct_mps, 700.0, 0.01);
  ck_assert_double_eq_tol(f.refractor_mps, 2000.0, 0.01);
  ck_assert_double_eq_tol(f.direct_intercept_ms, 0.0, 0.01);
  ck_assert(f.rms_ms < 1e-6);
  ck_assert_uint_eq(f.n_direct, 14);          /* 2..28 m lie before 28.82 m */
  /* all on one straight line: no break between two slopes */
  for (int i = 0; i < 60; i++)
    t[i] = x[i] / 2.0;
  tz_err_init(&e);
  ck_assert_int_eq(refraction_fit_two_segments(x, t, 60, 3, &f, &e), TZ_E_ARG);
  tz_err_init(&e);
  ck_assert_int_eq(refraction_fit_two_segments(x, t, 5, 3, &f, &e), TZ_E_ARG);
}
END_TEST

/* Picks made by the delay-time model t = delta_s + delta_r + x / v1 (Gardner
 * 1939; Sheriff and Geldart 1995): receivers every 10 m at stations 100..180,
 * a shot at every second station, offsets 40 to 300 m on both sides, station
 * delays from the formula for thicknesses 4..16 m; then again with the shots
 * half a station off the receivers (their delay the mean of the two beside).
 * The solution gives back every delay and the refractor velocity. */
static double thick(int st) { return 10.0 + 6.0 * sin(0.11 * st); }

static size_t make_picks(refraction_pick *pk, int half_station_shots, double v1)
{
  size_t n = 0;
  /* half-station shots stop inside the spread: a tie to receivers on one side
   * only cannot know the delay beyond the last receiver */
  for (int s = 100; s <= (half_station_shots ? 178 : 180); s += 2) {
    double sa = 10.0 * (s - 100) + (half_station_shots ? 5.0 : 0.0);
    double ds = half_station_shots
                  ? 0.5 * (refraction_delay_ms(thick(s), 700, v1) +
                           refraction_delay_ms(thick(s + 1), 700, v1))
                  : refraction_delay_ms(thick(s), 700, v1);
    for (int r = 100; r <= 180; r++) {
      double ra = 10.0 * (r - 100), x = fabs(ra - sa);
      if (x < 40.0 || x > 300.0)
        continue;
      pk[n] = (refraction_pick){ s, r, sa, ra,
                                 ds + refraction_delay_ms(thick(r), 700, v1) +
                                     1000.0 * x / v1, 1.0 };
      n++;
    }
  }
  return n;
}

START_TEST(test_delay_time_solution)
{
  refraction_pick *pk = malloc(5000 * sizeof *pk);
  for (int half = 0; half < 2; half++) {
    size_t n = make_picks(pk, half, 2000.0);
    refraction_params p;
    refraction_params_init(&p);
    p.cell_m = 10.0;
    refraction_solution *s;
    tz_err e;
    tz_err_init(&e);
    ck_assert_int_eq(refraction_solve(&p, pk, n, &s, &e), TZ_OK);
    ck_assert_uint_eq(s->picks_rejected, 0);
    ck_assert(s->residual_rms_ms < 0.01);
    for (int r = 100; r <= 180; r++) {
      const refraction_station *st = refraction_find(s, REFRACTION_RECEIVER, r);
      ck_assert_ptr_nonnull(st);
      ck_assert_double_eq_tol(st->delay_ms, refraction_delay_ms(thick(r), 700, 2000), 0.01);
      ck_assert_double_eq_tol(st->refractor_mps, 2000.0, 1.0);
      ck_assert_double_eq_tol(refraction_thickness_m(st->delay_ms, 700, st->refractor_mps),
                              thick(r), 0.01);
    }
    const refraction_station *src = refraction_find(s, REFRACTION_SOURCE, 120);
    ck_assert_ptr_nonnull(src);
    double want = half ? 0.5 * (refraction_delay_ms(thick(120), 700, 2000) +
                                refraction_delay_ms(thick(121), 700, 2000))
                       : refraction_delay_ms(thick(120), 700, 2000);
    ck_assert_double_eq_tol(src->delay_ms, want, 0.01);
    refraction_solution_free(s);
  }
  free(pk);
}
END_TEST

/* A refractor whose velocity changes along the line (1800 m/s before 400 m,
 * 2400 m/s after): the smoothed cells follow it away from the change (within
 * 3 %), and one pick 30 ms late is rejected (common practice: a bad pick must
 * not bend the solution). */
START_TEST(test_varying_refractor_and_rejection)
{
  refraction_pick *pk = malloc(5000 * sizeof *pk);
  size_t n = 0;
  for (int s = 100; s <= 180; s += 2)
    for (int r = 100; r <= 180; r++) {
      double sa = 10.0 * (s - 100), ra = 10.0 * (r - 100), x = fabs(ra - sa);
      if (x < 40.0 || x > 200.0)
        continue;
      double a = fmin(sa, ra), b = fmax(sa, ra), t = 0.0;
      double l1 = fmax(0.0, fmin(b, 400.0) - a), l2 = fmax(0.0, b - fmax(a, 400.0));
      t = 1000.0 * (l1 / 1800.0 + l2 / 2400.0) + 2.0 * 12.0;
      pk[n++] = (refraction_pick){ s, r, sa, ra, t, 1.0 };
    }
  pk[100].time_ms += 30.0;
  refraction_params p;
  refraction_params_init(&p);
  p.cell_m = 10.0;
  p.smoothing = 0.2;
  refraction_solution *s;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(refraction_solve(&p, pk, n, &s, &e), TZ_OK);
  ck_assert_uint_eq(s->picks_rejected, 1);
  ck_assert(isnan(s->residual_ms[100]));
  ck_assert_double_eq_tol(refraction_find(s, REFRACTION_RECEIVER, 120)->refractor_mps, 1800.0,
                          54.0);
  ck_assert_double_eq_tol(refraction_find(s, REFRACTION_RECEIVER, 170)->refractor_mps, 2400.0,
                          72.0);
  ck_assert_double_eq_tol(refraction_find(s, REFRACTION_RECEIVER, 140)->delay_ms, 12.0, 1.0);
  refraction_solution_free(s);
  /* bad input */
  pk[3].time_ms = NAN;
  tz_err_init(&e);
  ck_assert_int_eq(refraction_solve(&p, pk, n, &s, &e), TZ_E_ARG);
  tz_err_init(&e);
  ck_assert_int_eq(refraction_solve(&p, pk, 0, &s, &e), TZ_E_ARG);
  free(pk);
}
END_TEST

static Suite *refraction_suite(void)
{
  Suite *s = suite_create("refraction");
  TCase *tc = tcase_create("core");
  tcase_set_timeout(tc, 60);
  tcase_add_test(tc, test_two_layer_formulas);
  tcase_add_test(tc, test_two_segment_fit);
  tcase_add_test(tc, test_delay_time_solution);
  tcase_add_test(tc, test_varying_refractor_and_rejection);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(refraction_suite)
