/* check_geometry.c -- layouts, geometry tables, per-trace geometry, large coordinates. */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "tzero/geometry.h"
#include "unit.h"

static geometry_layout parse_ok(const char *json)
{
  geometry_layout l;
  tz_err e;
  tz_err_init(&e);
  int rc = geometry_layout_parse(&l, json, strlen(json), "t.json", &e);
  if (rc)
    ck_abort_msg("layout parse failed: %s", e.msg);
  return l;
}

/* Computed by hand, common practice (check value 21 of docs/references.md): S = (1000, 0), R = (3000, 400) gives
 * M = (2000, 200), |offset| = 2039.608 m, positive (receiver in the +x direction). */
START_TEST(test_midpoint_offset_check_value)
{
  geometry_trace g = { .source_x = 1000, .source_y = 0, .receiver_x = 3000, .receiver_y = 400 };
  geometry_derive(&g, 90.0, 0.0);
  ck_assert_double_eq_tol(g.midpoint_x, 2000.0, 1e-9);
  ck_assert_double_eq_tol(g.midpoint_y, 200.0, 1e-9);
  ck_assert_double_eq_tol(g.offset_abs, 2039.608, 5e-4);
  ck_assert(g.offset > 0);
  /* Azimuth atan2(dx, dy) clockwise from north (Sheriff & Geldart 1995; common practice). */
  ck_assert_double_eq_tol(g.azimuth_deg, atan2(2000.0, 400.0) * 180.0 / M_PI, 1e-9);
  /* Shooting westwards, the same receiver lies behind: negative (SEG-Y rule, R1 37-40). */
  geometry_derive(&g, 270.0, 0.0);
  ck_assert(g.offset < 0);
  /* Direction unknown: the sign of the header offset is kept. */
  geometry_derive(&g, NAN, -5.0);
  ck_assert(g.offset < 0);
}
END_TEST

/* computed from Sheriff & Geldart 1995 and a brute-force midpoint count (check value 20 of docs/references.md): nominal fold and bin. */
START_TEST(test_nominal_fold_check_values)
{
  static const struct { int n; double dg, ds, fold, bin; } c[] = {
    { 96, 25, 50, 24, 12.5 }, { 240, 12.5, 25, 60, 6.25 }, { 48, 50, 150, 8, 25 },
  };
  for (size_t i = 0; i < 3; i++) {
    geometry_layout l;
    geometry_layout_init(&l);
    l.channels = c[i].n;
    l.receiver_interval_m = c[i].dg;
    l.source_interval_m = c[i].ds;
    ck_assert_double_eq_tol(geometry_layout_nominal_fold(&l), c[i].fold, 1e-12);
    ck_assert_double_eq_tol(geometry_layout_default_bin(&l), c[i].bin, 1e-12);
  }
}
END_TEST

/* Common practice: an off-end shot's midpoints cover half the spread length. */
START_TEST(test_off_end_midpoints_half_spread)
{
  const char *sp[] = { "ahead", "behind" };
  for (int s = 0; s < 2; s++) {
    char json[512];
    snprintf(json, sizeof json,
             "{\"receiver_interval_m\": 5, \"source_interval_m\": 10, \"shot_count\": 3,"
             " \"channels\": 48, \"spread\": \"%s\", \"near_offset_m\": 10,"
             " \"azimuth_deg\": 30, \"first_station_x_m\": 1000, \"first_station_y_m\": 2000,"
             " \"first_source_m\": 400}", sp[s]);
    geometry_layout l = parse_ok(json);
    double amin = INFINITY, amax = -INFINITY, rmin = INFINITY, rmax = -INFINITY;
    double su = sin(30 * M_PI / 180), cu = cos(30 * M_PI / 180);
    tz_err e;
    tz_err_init(&e);
    for (size_t c = 0; c < 48; c++) {
      geometry_trace g;
      ck_assert_int_eq(geometry_layout_trace(&l, 1, c, &g, &e), TZ_OK);
      double m = (g.midpoint_x - 1000) * su + (g.midpoint_y - 2000) * cu;
      double r = (g.receiver_x - 1000) * su + (g.receiver_y - 2000) * cu;
      amin = fmin(amin, m); amax = fmax(amax, m);
      rmin = fmin(rmin, r); rmax = fmax(rmax, r);
      /* ahead: positive offsets; behind: negative (SEG-Y sign rule). */
      ck_assert(s == 0 ? g.offset > 0 : g.offset < 0);
      ck_assert_double_eq_tol(fabs(g.offset), 10 + (s == 0 ? c : 47 - c) * 5.0, 1e-9);
    }
    ck_assert_double_eq_tol(rmax - rmin, 47 * 5.0, 1e-9);
    ck_assert_double_eq_tol(amax - amin, 0.5 * (rmax - rmin), 1e-9);
    geometry_layout_free(&l);
  }
}
END_TEST

/* Common practice: a split-spread shot's midpoints cover half of each side. */
START_TEST(test_split_midpoints_half_each_side)
{
  geometry_layout l = parse_ok(
      "{\"receiver_interval_m\": 4, \"source_interval_m\": 8, \"shot_count\": 2,"
      " \"channels\": 60, \"spread\": \"split\", \"channels_behind\": 20,"
      " \"near_offset_m\": 6, \"azimuth_deg\": 90, \"first_source_m\": 500}");
  tz_err e;
  tz_err_init(&e);
  double bmin = INFINITY, bmax = -INFINITY, amin = INFINITY, amax = -INFINITY;
  for (size_t c = 0; c < 60; c++) {
    geometry_trace g;
    ck_assert_int_eq(geometry_layout_trace(&l, 0, c, &g, &e), TZ_OK);
    if (c < 20) {
      ck_assert(g.offset < 0);
      bmin = fmin(bmin, g.midpoint_x); bmax = fmax(bmax, g.midpoint_x);
    } else {
      ck_assert(g.offset > 0);
      amin = fmin(amin, g.midpoint_x); amax = fmax(amax, g.midpoint_x);
    }
  }
  ck_assert_double_eq_tol(bmax - bmin, 0.5 * 19 * 4, 1e-9);
  ck_assert_double_eq_tol(amax - amin, 0.5 * 39 * 4, 1e-9);
  /* Nearest midpoints sit half the gap from the source. */
  ck_assert_double_eq_tol(bmax, 500 - 3, 1e-9);
  ck_assert_double_eq_tol(amin, 500 + 3, 1e-9);
  geometry_layout_free(&l);
}
END_TEST

/* Skipped shots keep their shot point numbers; field records count recorded shots.
 * Fixed spread: every shot records the same receivers. */
START_TEST(test_skipped_and_fixed)
{
  geometry_layout l = parse_ok(
      "{\"receiver_interval_m\": 10, \"source_interval_m\": 20, \"shot_count\": 6,"
      " \"channels\": 12, \"fixed_spread\": true, \"first_field_record\": 101,"
      " \"first_shot_point\": 1, \"skipped_shot_points\": [4, 2], \"first_channel\": 1,"
      " \"channel_order\": \"reverse\"}");
  ck_assert_uint_eq(geometry_layout_shots(&l), 4);
  tz_err e;
  tz_err_init(&e);
  geometry_shot s;
  int32_t want_sp[] = { 1, 3, 5, 6 };
  for (size_t k = 0; k < 4; k++) {
    ck_assert_int_eq(geometry_layout_shot(&l, k, &s, &e), TZ_OK);
    ck_assert_int_eq(s.field_record, 101 + (int)k);
    ck_assert_int_eq(s.shot_point, want_sp[k]);
    ck_assert_double_eq_tol(s.x, (want_sp[k] - 1) * 20.0, 1e-9);
    geometry_trace g;
    ck_assert_int_eq(geometry_layout_trace(&l, k, 0, &g, &e), TZ_OK);
    ck_assert_double_eq_tol(g.receiver_x, 110.0, 1e-9);   /* reverse order: channel 1 last */
  }
  ck_assert_int_eq(geometry_layout_shot(&l, 4, &s, &e), TZ_E_ARG);
  geometry_layout_free(&l);
}
END_TEST

START_TEST(test_layout_errors)
{
  geometry_layout l;
  tz_err e;
  const char *bad[] = {
    "{\"receiver_interval_m\": 5, \"source_interval_m\": 10, \"shot_count\": 3, \"channels\": 4,"
    " \"chanels_behind\": 2}",
    "{\"receiver_interval_m\": 5, \"source_interval_m\": 10, \"shot_count\": 3}",
    "{\"receiver_interval_m\": -5, \"source_interval_m\": 10, \"shot_count\": 3, \"channels\": 4}",
    "{\"receiver_interval_m\": 5, \"source_interval_m\": 10, \"shot_count\": 3.5, \"channels\": 4}",
    "{\"receiver_interval_m\": 5, \"source_interval_m\": 10, \"shot_count\": 3, \"channels\": 4,"
    " \"spread\": \"sideways\"}",
    "{\"receiver_interval_m\": 5, ",
  };
  const char *want[] = { "did you mean \"channels_behind\"", "missing key \"channels\"",
                         "receiver_interval_m must be > 0",
                         "$.shot_count: expected an integer", "$.spread: expected",
                         "layout is not valid JSON" };
  for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
    tz_err_init(&e);
    ck_assert_int_eq(geometry_layout_parse(&l, bad[i], strlen(bad[i]), "bad.json", &e),
                     TZ_E_FORMAT);
    ck_assert_msg(strstr(e.msg, want[i]), "case %zu: %s", i, e.msg);
    ck_assert_str_eq(e.path, "bad.json");
  }
}
END_TEST

/* Large projected coordinates (northings of millions of metres) keep centimetres:
 * positions built from line coordinates must give offsets equal to the exact
 * line-coordinate distance (Sheriff & Geldart 1995 formulas; precision: common practice). */
START_TEST(test_large_coordinates)
{
  geometry_layout l = parse_ok(
      "{\"receiver_interval_m\": 2.5, \"source_interval_m\": 5, \"shot_count\": 400,"
      " \"channels\": 96, \"spread\": \"split\", \"near_offset_m\": 1.25,"
      " \"azimuth_deg\": 37.3, \"first_station_x_m\": 734512.37,"
      " \"first_station_y_m\": 6543210.91, \"first_source_m\": 100}");
  tz_err e;
  tz_err_init(&e);
  double worst = 0;
  for (size_t k = 0; k < 400; k += 37)
    for (size_t c = 0; c < 96; c++) {
      geometry_trace g;
      ck_assert_int_eq(geometry_layout_trace(&l, k, c, &g, &e), TZ_OK);
      double src = 100 + 5.0 * (double)k;
      double rec = c < 48 ? src - 1.25 - (47 - (double)c) * 2.5 : src + 1.25 + ((double)c - 48) * 2.5;
      worst = fmax(worst, fabs(g.offset - (rec - src)));
    }
  ck_assert_msg(worst < 1e-6, "worst offset error %g m", worst);
  /* Header-style values with a centimetre scalar give back centimetre offsets. */
  geometry_trace g = { .source_x = 734512.37, .source_y = 6543210.91,
                       .receiver_x = 734512.38, .receiver_y = 6543210.91 };
  geometry_derive(&g, 90, 0);
  ck_assert_double_eq_tol(g.offset, 0.01, 1e-7);
  ck_assert_double_eq_tol(g.midpoint_x, 734512.375, 1e-7);
  geometry_layout_free(&l);
}
END_TEST

static const char *table_txt =
    "# observer's log, line 7\n"
    "field_record,channel,source_x_m,source_y_m,source_z_m,receiver_x_m,receiver_y_m,receiver_z_m\n"
    "5,1,100,0,12.5,110,0,12.0\n"
    "5,2,100,0,12.5,120,0,11.5\n"
    "6,1,110,0,12.0,90,0,13.0\n";

START_TEST(test_table_match)
{
  geometry_table *t;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(geometry_table_parse(&t, "log.csv", table_txt, strlen(table_txt), &e), TZ_OK);
  ck_assert_uint_eq(geometry_table_rows(t), 3);
  geometry_source *src;
  ck_assert_int_eq(geometry_source_table(&src, t, &e), TZ_OK);
  geometry_source_set_direction(src, 90.0);
  segy_trace_header h;
  memset(&h, 0, sizeof h);
  h.field_record = 6;
  h.channel = 1;
  h.kind = SEGY_KIND_SEISMIC;
  geometry_trace g;
  ck_assert_int_eq(geometry_source_trace(src, &h, 7, &g, &e), TZ_OK);
  ck_assert_double_eq_tol(g.offset, -20.0, 1e-12);
  ck_assert_double_eq_tol(g.midpoint_x, 100.0, 1e-12);
  ck_assert_double_eq_tol(g.receiver_z, 13.0, 1e-12);
  ck_assert_int_eq(g.live, 1);
  h.channel = 3;
  ck_assert_int_eq(geometry_source_trace(src, &h, 7, &g, &e), TZ_E_FORMAT);
  ck_assert_msg(strstr(e.msg, "field record 6 channel 3: not in geometry table log.csv"), "%s",
                e.msg);
  ck_assert_int_eq(e.trace, 7);
  geometry_source_free(src);
}
END_TEST

START_TEST(test_table_errors)
{
  static const struct { const char *txt; int64_t line; const char *msg; } c[] = {
    { "field_record,channel,source_x_m,source_y_m,receiver_x_m,receiver_y_m\n1,1,0,0,5,0\n"
      "1,2,0,0,10,0\n1,1,0,0,5,0\n", 4, "already given on line 2" },
    { "field_record,channel,source_x,source_y_m,receiver_x_m,receiver_y_m\n", 1,
      "did you mean \"source_x_m\"" },
    { "field_record,channel,source_y_m,receiver_x_m,receiver_y_m\n1,1,0,0,0\n", 1,
      "missing column \"source_x_m\"" },
    { "field_record,channel,source_x_m,source_y_m,receiver_x_m,receiver_y_m\n1,1,0,0,5,0\n"
      "1,2,0,zero,5,0\n", 3, "column source_y_m: expected a number" },
    { "field_record,channel,source_x_m,source_y_m,receiver_x_m,receiver_y_m\n1,1,0,0\n", 2,
      "expected 6 fields" },
  };
  for (size_t i = 0; i < sizeof c / sizeof c[0]; i++) {
    geometry_table *t = NULL;
    tz_err e;
    tz_err_init(&e);
    ck_assert_int_eq(geometry_table_parse(&t, "g.csv", c[i].txt, strlen(c[i].txt), &e),
                     TZ_E_FORMAT);
    ck_assert_msg(strstr(e.msg, c[i].msg), "case %zu: %s", i, e.msg);
    ck_assert_int_eq(e.line, c[i].line);
    ck_assert_str_eq(e.path, "g.csv");
  }
}
END_TEST

START_TEST(test_layout_source_matching)
{
  geometry_layout l = parse_ok(
      "{\"receiver_interval_m\": 5, \"source_interval_m\": 10, \"shot_count\": 10,"
      " \"channels\": 24, \"first_field_record\": 2001, \"field_record_step\": 2}");
  geometry_source *src;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(geometry_source_layout(&src, &l, &e), TZ_OK);
  geometry_layout_free(&l);             /* the source keeps its own copy */
  segy_trace_header h;
  memset(&h, 0, sizeof h);
  h.field_record = 2005;                /* third shot */
  h.channel = 24;
  geometry_trace g;
  ck_assert_int_eq(geometry_source_trace(src, &h, 0, &g, &e), TZ_OK);
  ck_assert_double_eq_tol(g.source_x, 20.0, 1e-9);
  ck_assert_double_eq_tol(g.offset, 5.0 + 23 * 5.0, 1e-9);
  h.field_record = 2006;
  ck_assert_int_eq(geometry_source_trace(src, &h, 3, &g, &e), TZ_E_FORMAT);
  ck_assert_msg(strstr(e.msg, "no such field record"), "%s", e.msg);
  tz_err_init(&e);
  h.field_record = 2001;
  h.channel = 25;
  ck_assert_int_eq(geometry_source_trace(src, &h, 3, &g, &e), TZ_E_FORMAT);
  ck_assert_msg(strstr(e.msg, "channels 1 to 24"), "%s", e.msg);
  geometry_source_free(src);
}
END_TEST

START_TEST(test_header_source)
{
  geometry_source *src;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(geometry_source_headers(&src, &e), TZ_OK);
  segy_trace_header h;
  memset(&h, 0, sizeof h);
  h.source_x = 500000.25;
  h.source_y = 7000000.5;
  h.receiver_x = 500000.25;
  h.receiver_y = 7000100.5;
  h.receiver_elev = 42;
  h.kind = SEGY_KIND_DEAD;
  h.offset = -100;
  geometry_trace g;
  ck_assert_int_eq(geometry_source_trace(src, &h, 0, &g, &e), TZ_OK);
  ck_assert_double_eq_tol(g.offset, -100.0, 1e-9);    /* sign from the header */
  ck_assert_int_eq(g.live, 0);                        /* dead trace (R1 29-30 code 2) */
  ck_assert_double_eq_tol(g.azimuth_deg, 0.0, 1e-9);
  geometry_source_set_direction(src, 0.0);
  ck_assert_int_eq(geometry_source_trace(src, &h, 0, &g, &e), TZ_OK);
  ck_assert_double_eq_tol(g.offset, 100.0, 1e-9);
  h.coord_units = 3;                                  /* decimal degrees (R1 89-90) */
  ck_assert_int_eq(geometry_source_trace(src, &h, 4, &g, &e), TZ_E_FORMAT);
  ck_assert_int_eq(e.byte, 88);
  geometry_source_free(src);
}
END_TEST

static Suite *geometry_suite(void)
{
  Suite *s = suite_create("geometry");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_midpoint_offset_check_value);
  tcase_add_test(tc, test_nominal_fold_check_values);
  tcase_add_test(tc, test_off_end_midpoints_half_spread);
  tcase_add_test(tc, test_split_midpoints_half_each_side);
  tcase_add_test(tc, test_skipped_and_fixed);
  tcase_add_test(tc, test_layout_errors);
  tcase_add_test(tc, test_large_coordinates);
  tcase_add_test(tc, test_table_match);
  tcase_add_test(tc, test_table_errors);
  tcase_add_test(tc, test_layout_source_matching);
  tcase_add_test(tc, test_header_source);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(geometry_suite)
