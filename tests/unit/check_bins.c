/* check_bins.c -- processing lines, CMP numbering, fitted and crooked lines, fold. */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "tzero/bins.h"
#include "unit.h"

static bins_line *straight(double ox, double oy, double az, double size, int32_t first,
                           double maxoff)
{
  bins_params p = { ox, oy, az, size, first, maxoff };
  bins_line *l = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(bins_line_straight(&l, &p, &e), TZ_OK);
  return l;
}

/* The binning rule of tzero-geometry(1), worked by hand:
 * origin (100, 200), azimuth 90, size 2.5, first CMP 1. Midpoint (112.4, 205):
 * s = 12.4 -> 12.4 / 2.5 = 4.96 -> CMP 6; 5 m north of an eastward line is left (-5).
 * Azimuth 45: midpoint (110, 110) from origin (0, 0) -> s = 110 sqrt 2 = 155.563,
 * size 10 -> round(15.556) = 16 -> CMP 116 with first CMP 100; on the line (off 0). */
START_TEST(test_straight_hand_cases)
{
  bins_line *l = straight(100, 200, 90, 2.5, 1, 0);
  bins_loc loc;
  ck_assert_int_eq(bins_locate(l, 112.4, 205, &loc), BINS_IN);
  ck_assert_int_eq(loc.cmp, 6);
  ck_assert_double_eq_tol(loc.along_m, 12.4, 1e-12);
  ck_assert_double_eq_tol(loc.off_line_m, -5.0, 1e-12);
  ck_assert_double_eq_tol(loc.centre_x, 112.5, 1e-12);
  ck_assert_double_eq_tol(loc.centre_y, 200.0, 1e-12);
  /* A CMP number beyond int32 is reported, not wrapped (common practice). */
  ck_assert_int_eq(bins_locate(l, 1e12, 200, &loc), BINS_OUT_OF_RANGE);
  /* Before the origin: s = -3.8 -> round(-1.52) = -2 -> CMP -1. */
  ck_assert_int_eq(bins_locate(l, 96.2, 199, &loc), BINS_IN);
  ck_assert_int_eq(loc.cmp, -1);
  bins_line_free(l);
  l = straight(0, 0, 45, 10, 100, 0);
  ck_assert_int_eq(bins_locate(l, 110, 110, &loc), BINS_IN);
  ck_assert_double_eq_tol(loc.along_m, 110 * sqrt(2.0), 1e-9);
  ck_assert_double_eq_tol(loc.off_line_m, 0, 1e-9);
  ck_assert_int_eq(loc.cmp, 116);
  ck_assert_double_eq_tol(loc.centre_x, 160 / sqrt(2.0), 1e-9);
  bins_line_free(l);
}
END_TEST

/* Crooked line, hand-made: nodes (0,0) -> (100,0) -> (100,100), bin 10 m, first CMP 1. */
START_TEST(test_crooked_hand_cases)
{
  double x[] = { 0, 100, 100 }, y[] = { 0, 0, 100 };
  bins_line *l;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(bins_line_crooked(&l, x, y, 3, 10, 1, 4.0, &e), TZ_OK);
  bins_loc loc;
  /* 3 m north of the eastward leg: left of the line, s = 50 -> CMP 6. */
  ck_assert_int_eq(bins_locate(l, 50, 3, &loc), BINS_IN);
  ck_assert_int_eq(loc.cmp, 6);
  ck_assert_double_eq_tol(loc.off_line_m, -3, 1e-12);
  /* 3 m east of the northward leg: right, s = 100 + 50 -> CMP 16, centre (100, 50). */
  ck_assert_int_eq(bins_locate(l, 103, 50, &loc), BINS_IN);
  ck_assert_int_eq(loc.cmp, 16);
  ck_assert_double_eq_tol(loc.off_line_m, 3, 1e-12);
  ck_assert_double_eq_tol(loc.centre_x, 100, 1e-12);
  ck_assert_double_eq_tol(loc.centre_y, 50, 1e-12);
  /* Before the first node: the first leg extends, s = -20 -> CMP -1. */
  ck_assert_int_eq(bins_locate(l, -20, 1, &loc), BINS_IN);
  ck_assert_int_eq(loc.cmp, -1);
  ck_assert_double_eq_tol(loc.centre_x, -20, 1e-12);
  /* Past the last node: s = 230 -> CMP 24, centre (100, 130). */
  ck_assert_int_eq(bins_locate(l, 100, 130, &loc), BINS_IN);
  ck_assert_int_eq(loc.cmp, 24);
  ck_assert_double_eq_tol(loc.centre_y, 130, 1e-12);
  /* Inside the bend, nearer the second leg: (96, 60) is 4 m from x = 100 but 60
   * from the first leg; s = 160, left of a northward leg. */
  ck_assert_int_eq(bins_locate(l, 96, 60, &loc), BINS_IN);
  ck_assert_int_eq(loc.cmp, 17);
  ck_assert_double_eq_tol(loc.off_line_m, -4, 1e-12);
  /* Beyond the 4 m limit: off the line. */
  ck_assert_int_eq(bins_locate(l, 50, 4.5, &loc), BINS_OFF_LINE);
  bins_line_free(l);
  double bx[] = { 0, 0 }, by[] = { 5, 5 };
  ck_assert_int_eq(bins_line_crooked(&l, bx, by, 2, 10, 1, 0, &e), TZ_E_ARG);
}
END_TEST

/* Least squares through pairs of points 1 m either side of a line of azimuth 30
 * (hand-made): the principal axis is that line, the origin the projection of the
 * lowest pair, and adding them in reverse order reverses the azimuth. */
START_TEST(test_fit_line)
{
  double su = sin(30 * M_PI / 180), cu = cos(30 * M_PI / 180);
  for (int rev = 0; rev < 2; rev++) {
    bins_fitter *f;
    tz_err e;
    tz_err_init(&e);
    ck_assert_int_eq(bins_fitter_new(&f, &e), TZ_OK);
    for (int i = 0; i < 201; i++) {
      int j = rev ? 200 - i : i;
      double sj = 2.5 * j;
      for (int side = 0; side < 2; side++) {
        double d = side ? 1.0 : -1.0;
        ck_assert_int_eq(bins_fitter_add(f, 612000.0 + sj * su + d * cu,
                                         5432100.0 + sj * cu - d * su, &e), TZ_OK);
      }
    }
    bins_params p;
    bins_fit_report r;
    ck_assert_int_eq(bins_fitter_solve(f, 2.5, 1, 0, &p, &r, &e), TZ_OK);
    ck_assert_double_eq_tol(p.azimuth_deg, rev ? 210.0 : 30.0, 1e-6);
    ck_assert_double_eq_tol(r.length_m, 500.0, 1e-6);
    ck_assert(r.max_off_line_m > 0.99 && r.max_off_line_m < 1.01);
    double ox = rev ? 612000.0 + 500 * su : 612000.0, oy = rev ? 5432100.0 + 500 * cu : 5432100.0;
    ck_assert_double_eq_tol(p.origin_x, ox, 1e-5);
    ck_assert_double_eq_tol(p.origin_y, oy, 1e-5);
    bins_fitter_free(f);
  }
  bins_fitter *f;
  tz_err e;
  tz_err_init(&e);
  bins_fitter_new(&f, &e);
  bins_fitter_add(f, 1, 1, &e);
  bins_fitter_add(f, 1, 1, &e);
  bins_params p;
  ck_assert_int_eq(bins_fitter_solve(f, 2.5, 1, 0, &p, NULL, &e), TZ_E_FORMAT);
  bins_fitter_free(f);
}
END_TEST

/* Roll-along off-end line, 48 channels, dg = 5 m, ds = 10 m, bins of dg/2:
 * nominal fold N dg / (2 ds) = 12 (Sheriff & Geldart 1995; common practice) equals the
 * fold in the middle of the line. Stacking chart (common practice): shot i covers
 * the 48 bins from 4i, so the fold of bin j from the line start is floor(j/4) + 1
 * until it reaches 12, and the same ramp mirrored at the far end. */
START_TEST(test_predicted_fold_roll_along)
{
  const char *json =
      "{\"receiver_interval_m\": 5, \"source_interval_m\": 10, \"shot_count\": 60,"
      " \"channels\": 48, \"spread\": \"ahead\", \"near_offset_m\": 5,"
      " \"azimuth_deg\": 112, \"first_station_x_m\": 438120.55,"
      " \"first_station_y_m\": 6712034.81}";
  geometry_layout lay;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(geometry_layout_parse(&lay, json, strlen(json), "roll.json", &e), TZ_OK);
  bins_params p;
  ck_assert_int_eq(bins_params_from_layout(&lay, 0, 1, &p, &e), TZ_OK);
  ck_assert_double_eq_tol(p.size_m, 2.5, 1e-12);
  bins_line *l = NULL;
  ck_assert_int_eq(bins_line_straight(&l, &p, &e), TZ_OK);
  bins_fold *f;
  ck_assert_int_eq(bins_fold_new(&f, l, 25.0, &e), TZ_OK);
  int64_t off;
  ck_assert_int_eq(bins_fold_predict(f, l, &lay, &off, &e), TZ_OK);
  ck_assert_int_eq(off, 0);
  bins_fold_summary s;
  bins_fold_summarise(f, &s);
  int ncmp = 4 * 59 + 48;               /* last shot's bins end at 4*59 + 47 */
  ck_assert_int_eq(s.first_cmp, 1);
  ck_assert_int_eq(s.last_cmp, ncmp);
  ck_assert_int_eq(s.traces, 60 * 48);
  ck_assert_int_eq(s.max, 12);
  ck_assert_int_eq(s.min, 1);
  ck_assert_double_eq_tol(s.mean, 60.0 * 48 / ncmp, 1e-12);
  for (int j = 0; j < ncmp; j++) {
    bins_cmp_stats st;
    bins_fold_get(f, 1 + j, &st);
    int up = j / 4 + 1, down = (ncmp - 1 - j) / 4 + 1;
    int want = up < down ? up : down;
    if (want > 12) want = 12;
    ck_assert_msg(st.fold == want, "CMP %d fold %lld want %d", 1 + j, (long long)st.fold, want);
  }
  ck_assert_double_eq_tol(geometry_layout_nominal_fold(&lay), 12.0, 1e-12);
  /* Middle CMP: offsets 5 .. 240 m in steps of 20 m (every fourth shot). */
  bins_cmp_stats st;
  bins_fold_get(f, ncmp / 2, &st);
  ck_assert_int_eq(st.fold, 12);
  ck_assert_double_eq_tol(st.offset_max_m - st.offset_min_m, 11 * 20.0, 1e-6);
  uint32_t tot = 0;
  for (int k = 0; k < BINS_OFFSET_CLASSES; k++)
    tot += st.offset_hist[k];
  ck_assert_uint_eq(tot, 12);
  bins_fold_free(f);
  bins_line_free(l);
  geometry_layout_free(&lay);
}
END_TEST

/* The accumulator grows in both directions and keeps the statistics. */
START_TEST(test_fold_growth)
{
  bins_line *l = straight(0, 0, 0, 1, 1, 0);
  bins_fold *f;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(bins_fold_new(&f, l, 10.0, &e), TZ_OK);
  ck_assert_int_eq(bins_fold_add(f, 500, 30, &e), TZ_OK);
  ck_assert_int_eq(bins_fold_add(f, 100, -12, &e), TZ_OK);
  ck_assert_int_eq(bins_fold_add(f, 5000, 7, &e), TZ_OK);
  ck_assert_int_eq(bins_fold_add(f, 100, 400, &e), TZ_OK);
  bins_cmp_stats st;
  bins_fold_get(f, 100, &st);
  ck_assert_int_eq(st.fold, 2);
  ck_assert_double_eq_tol(st.offset_min_m, 12, 1e-12);
  ck_assert_double_eq_tol(st.offset_max_m, 400, 1e-12);
  ck_assert_uint_eq(st.offset_hist[1], 1);
  ck_assert_uint_eq(st.offset_hist[BINS_OFFSET_CLASSES - 1], 1);
  ck_assert_double_eq_tol(st.y, 99, 1e-12);
  bins_fold_summary s;
  bins_fold_summarise(f, &s);
  ck_assert_int_eq(s.first_cmp, 100);
  ck_assert_int_eq(s.last_cmp, 5000);
  ck_assert_int_eq(s.cmps_live, 3);
  ck_assert_int_eq(s.min, 0);
  ck_assert_int_eq(bins_fold_add(f, 5000 + BINS_MAX_CMPS, 7, &e), TZ_E_FORMAT);
  bins_fold_free(f);
  bins_line_free(l);
}
END_TEST

/* An automatic crooked line through midpoints on a circular arc (radius 500 m,
 * 60 degrees, a midpoint every metre, no scatter): the nodes more than a
 * window (50 m) from the ends lie within 0.1 m of the arc (a centred linear fit
 * of a circle is biased by about w^2 / (24 R) = 0.2 m, and each pass fits what
 * the previous one left: computed by hand from the quadratic term), the end
 * ones within 0.45 m, and the CMP numbers follow the arc length. */
START_TEST(test_crooked_automatic)
{
  tz_err e;
  tz_err_init(&e);
  bins_fitter *f = NULL;
  ck_assert_int_eq(bins_fitter_new(&f, &e), TZ_OK);
  const double R = 500, a0 = 0, a1 = M_PI / 3;
  size_t n = (size_t)(R * (a1 - a0));
  for (size_t i = 0; i <= n; i++) {
    double a = a0 + (double)i / R;
    ck_assert_int_eq(bins_fitter_add(f, 1000 + R * sin(a), 2000 + R * cos(a), &e), TZ_OK);
  }
  bins_line *l = NULL;
  bins_fit_report rep;
  ck_assert_int_eq(bins_fitter_solve_crooked(f, 50, 2.5, 1, 0, &l, &rep, &e), TZ_OK);
  ck_assert(bins_line_is_crooked(l));
  ck_assert_uint_ge(bins_line_node_count(l), 40);
  size_t nn = bins_line_node_count(l);
  for (size_t k = 0; k < nn; k++) {
    double x, y;
    bins_line_node(l, k, &x, &y);
    /* within a window of the ends the fit is one-sided: a straight line through an
     * arc's end, evaluated at the end, is off by up to w^2 / (12 R) = 0.4 m */
    double along = (double)k / (double)(nn - 1) * R * (a1 - a0);
    double tol = along < 50 || along > R * (a1 - a0) - 50 ? 0.45 : 0.1;
    ck_assert_double_le(fabs(hypot(x - 1000, y - 2000) - R), tol);
  }
  ck_assert_double_le(rep.rms_off_line_m, 0.1);
  ck_assert_double_eq_tol(rep.length_m, R * (a1 - a0), 1.0);
  bins_loc loc;                                     /* halfway along the arc */
  double a = 0.5 * (a0 + a1);
  bins_locate(l, 1000 + R * sin(a), 2000 + R * cos(a), &loc);
  ck_assert_int_le(abs(loc.cmp - (1 + (int)lround(R * (a - a0) / 2.5))), 1);
  ck_assert_int_eq(bins_fitter_solve_crooked(f, 0, 2.5, 1, 0, &l, &rep, &e), TZ_E_ARG);
  bins_line_free(l);
  bins_fitter_free(f);
}
END_TEST

static Suite *bins_suite(void)
{
  Suite *s = suite_create("bins");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_straight_hand_cases);
  tcase_add_test(tc, test_crooked_hand_cases);
  tcase_add_test(tc, test_fit_line);
  tcase_add_test(tc, test_predicted_fold_roll_along);
  tcase_add_test(tc, test_fold_growth);
  tcase_add_test(tc, test_crooked_automatic);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(bins_suite)
