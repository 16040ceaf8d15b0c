/* check_velocity.c -- velocity tables (format and interpolation rules of docs/velocity-table.md),
 * Dix conversion (Dix 1955; check values 15-16 of docs/references.md), checks. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/velocity.h"
#include "unit.h"

static velocity_table *parse_ok(const char *txt)
{
  velocity_table *t = NULL;
  tz_err e;
  tz_err_init(&e);
  int rc = velocity_table_parse(&t, "v.csv", txt, strlen(txt), &e);
  ck_assert_msg(rc == TZ_OK, "parse failed: line %lld: %s", (long long)e.line, e.msg);
  return t;
}

/* Expects the table to be rejected as malformed at `line`, with `needle` in the message. */
static void parse_bad(const char *txt, int64_t line, const char *needle)
{
  velocity_table *t = NULL;
  tz_err e;
  tz_err_init(&e);
  int rc = velocity_table_parse(&t, "bad.csv", txt, strlen(txt), &e);
  ck_assert_msg(rc == TZ_E_FORMAT, "accepted a bad table (rc %d): %s", rc, txt);
  ck_assert_ptr_null(t);
  ck_assert_int_eq(e.line, line);
  ck_assert_str_eq(e.path, "bad.csv");
  ck_assert_msg(strstr(e.msg, needle), "message '%s' lacks '%s'", e.msg, needle);
}

/* The example of docs/velocity-table.md, with a second CMP. */
static const char *TABLE =
    "# stacking velocities, line 4\n"
    "cmp,time_ms,velocity_mps\n"
    "120,0,1500\n"
    "120,180,1720\n"
    "120,420,2050\n"
    "240,0,1500\n"
    "240,200,1900\n";

START_TEST(test_parse_and_query)
{
  velocity_table *t = parse_ok(TABLE);
  ck_assert_uint_eq(velocity_table_ncmps(t), 2);
  ck_assert_int_eq(velocity_table_cmp(t, 0), 120);
  ck_assert_int_eq(velocity_table_cmp(t, 1), 240);
  ck_assert_uint_eq(velocity_table_nknots(t, 0), 3);
  double ts, v, eta;
  velocity_table_knot(t, 0, 1, &ts, &v, &eta);
  ck_assert_double_eq_tol(ts, 0.180, 1e-12);
  ck_assert(v == 1720);
  ck_assert(eta == 0);
  ck_assert_int_eq(velocity_table_knot_line(t, 0, 1), 4);
  ck_assert_int_eq(velocity_table_has_eta(t), 0);
  ck_assert_str_eq(velocity_table_source(t), "v.csv");
  velocity_table_free(t);
}
END_TEST

/* Interpolation rules of docs/velocity-table.md: linear in time between knots, constant outside;
 * linear in CMP number between control CMPs at equal time, constant outside.
 * Expected values worked by hand from those rules. */
START_TEST(test_sampling_rules)
{
  velocity_table *t = parse_ok(TABLE);
  /* In time, at a control CMP: 90 ms is halfway 0-180 ms -> 1610. */
  ck_assert_double_eq_tol(velocity_at(t, 120, 0.090, NULL), 1610.0, 1e-9);
  /* 300 ms: 1720 + (120/240) * 330 = 1885. */
  ck_assert_double_eq_tol(velocity_at(t, 120, 0.300, NULL), 1885.0, 1e-9);
  /* After the last knot: held (2050); CMP 240 after 200 ms: 1900. */
  ck_assert_double_eq_tol(velocity_at(t, 120, 2.0, NULL), 2050.0, 1e-9);
  ck_assert_double_eq_tol(velocity_at(t, 240, 0.9, NULL), 1900.0, 1e-9);
  /* Between CMPs at equal time: CMP 150 is 1/4 of the way 120 -> 240.
   * At 300 ms: f120 = 1885, f240 = 1900 -> 1885 + 0.25 * 15 = 1888.75. */
  ck_assert_double_eq_tol(velocity_at(t, 150, 0.300, NULL), 1888.75, 1e-9);
  /* Outside the control CMPs: held at the end ones. */
  ck_assert_double_eq_tol(velocity_at(t, 10, 0.300, NULL), 1885.0, 1e-9);
  ck_assert_double_eq_tol(velocity_at(t, 9999, 0.100, NULL), 1700.0, 1e-9);
  /* velocity_sample on a regular axis agrees with the pointwise rule, including a
   * negative first time (held at the first knot) and times past the last knot. */
  float vel[400];
  velocity_sample(t, 180, -0.040, 0.004, 400, vel, NULL);
  for (int i = 0; i < 400; i++) {
    double tm = -0.040 + 0.004 * i;
    double want = velocity_at(t, 180, tm, NULL);
    ck_assert_msg(fabs(vel[i] - want) < 1e-3 * want, "sample %d: %g vs %g", i, vel[i],
                  want);
  }
  /* CMP 180 (halfway) at 0 ms: 1500; at 200 ms: f120 = 1720 + 20/240*330 = 1747.5,
   * f240 = 1900, mean 1823.75. */
  ck_assert_double_eq_tol(vel[10], 1500.0, 1e-3);
  ck_assert_double_eq_tol(vel[60], 1823.75, 1e-3);
  velocity_table_free(t);
}
END_TEST

START_TEST(test_control_cmps_unsorted_and_eta)
{
  /* File order need not be CMP order; interpolation uses CMP numbers. */
  velocity_table *t = parse_ok("cmp,time_ms,velocity_mps,eta\n"
                               "300,0,2000,0.10\n"
                               "100,0,1000,0.00\n"
                               "200,0,3000,0.05\n");
  ck_assert_int_eq(velocity_table_has_eta(t), 1);
  double eta;
  ck_assert_double_eq_tol(velocity_at(t, 150, 1.0, &eta), 2000.0, 1e-9);
  ck_assert_double_eq_tol(eta, 0.025, 1e-12);
  ck_assert_double_eq_tol(velocity_at(t, 250, 1.0, &eta), 2500.0, 1e-9);
  ck_assert_double_eq_tol(eta, 0.075, 1e-12);
  float v[3], e[3];
  velocity_sample(t, 400, 0.0, 0.5, 3, v, e);
  ck_assert(v[2] == 2000.0f);
  ck_assert_double_eq_tol(e[2], 0.10, 1e-7);
  velocity_table_free(t);
}
END_TEST

START_TEST(test_constant_table)
{
  velocity_table *t = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(velocity_table_constant(&t, 2000, &e), TZ_OK);
  float v[5];
  velocity_sample(t, -7, 0.0, 0.25, 5, v, NULL);
  for (int i = 0; i < 5; i++)
    ck_assert(v[i] == 2000.0f);
  velocity_table_free(t);
  tz_err_init(&e);
  ck_assert_int_eq(velocity_table_constant(&t, 0, &e), TZ_E_ARG);
}
END_TEST

/* Each invalid table names its line (docs/velocity-table.md). */
START_TEST(test_errors_name_line)
{
  parse_bad("120,0,1500\n", 1, "missing header");
  parse_bad("# only a comment\n\n", -1, "empty velocity table");
  parse_bad("", -1, "empty velocity table");
  parse_bad("cmp,time_ms,velocity_mps\n# no rows\n", 1, "no rows");
  parse_bad("cmp,time_ms,speed\n120,0,1500\n", 1, "unknown column 'speed'");
  parse_bad("cmp,time_ms,velocity_mps,anisotropy\n", 1, "unknown column 'anisotropy'");
  parse_bad("cmp,time_ms\n", 1, "header has 2 columns");
  parse_bad("cmp,time_ms,velocity_mps\n120,0,1500\n120,400,1900\n120,300,2000\n", 4,
            "not after the previous");
  parse_bad("cmp,time_ms,velocity_mps\n120,0,1500\n120,400,0\n", 3, "must be positive");
  parse_bad("cmp,time_ms,velocity_mps\n120,0,-1500\n", 2, "must be positive");
  parse_bad("cmp,time_ms,velocity_mps\n120,0,1500\n120,0,1500\n", 3, "duplicate row");
  parse_bad("cmp,time_ms,velocity_mps\n120,0,fast\n", 2, "expected a number");
  parse_bad("cmp,time_ms,velocity_mps\n12x,0,1500\n", 2, "expected an integer");
  parse_bad("cmp,time_ms,velocity_mps\n120,0,1500\n240,0,1500\n120,500,2000\n", 4,
            "reappears");
  parse_bad("cmp,time_ms,velocity_mps\n120,0\n", 2, "2 fields");
  parse_bad("cmp,time_ms,velocity_mps\n120,-5,1500\n", 2, ">= 0");
  parse_bad("cmp,time_ms,velocity_mps,eta\n120,0,1500,-0.7\n", 2, "eta");
  /* Beyond single precision / any seismic velocity: refused, not overflowed. */
  parse_bad("cmp,time_ms,velocity_mps\n120,0,1e43\n", 2, "outside");
  parse_bad("cmp,time_ms,velocity_mps\n120,0,1e-40\n", 2, "outside");
  parse_bad("cmp,time_ms,velocity_mps\n120,1e300,1500\n", 2, "at most");
}
END_TEST

START_TEST(test_control_cmps_beyond_the_job_range_are_refused)
{
  /* INT64_MIN and INT64_MAX as control CMPs made the interpolation weight
   * overflow (1.38e22 m/s at CMP -1); CMP numbers are limited as the job's are. */
  parse_bad("cmp,time_ms,velocity_mps\n-9223372036854775808,0,1500\n"
            "9223372036854775807,0,2500\n", 2, "outside -1000000000 to 1000000000");
  parse_bad("cmp,time_ms,velocity_mps\n1,0,1500\n1000000001,0,2500\n", 3, "outside");
  /* the extremes themselves are fine, and CMP 0 lies on the straight line
   * between them (linear in CMP number at equal time: 2000 m/s) */
  const char *txt = "cmp,time_ms,velocity_mps\n-1000000000,0,1500\n1000000000,0,2500\n";
  velocity_table *t;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(velocity_table_parse(&t, "v.csv", txt, strlen(txt), &e), TZ_OK);
  float v[4];
  velocity_sample(t, 0, 0.0, 0.001, 4, v, NULL);
  ck_assert_float_eq_tol(v[0], 2000.0f, 1e-3f);
  velocity_sample(t, INT64_MIN, 0.0, 0.001, 4, v, NULL);   /* held constant outside */
  ck_assert_float_eq_tol(v[3], 1500.0f, 1e-3f);
  ck_assert_double_eq_tol(velocity_at(t, INT64_MAX, 0.0, NULL), 2500.0, 1e-9);
  ck_assert_double_eq_tol(velocity_at(t, -1, 0.0, NULL), 2000.0 - 0.0000005, 1e-6);
  velocity_table_free(t);
}
END_TEST

START_TEST(test_low_fold_note_with_a_range_to_int64_max_is_only_a_comment)
{
  /* found by fuzzing (fuzz_velocity): "CMP 0-9223372036854775807" walked the
   * range with x++ past INT64_MAX (signed overflow). Beyond the CMP limit the
   * note is taken as a plain comment. */
  const char *txt = "# " VELOCITY_LOW_FOLD_NOTE ": CMP 5-9223372036854775807\n"
                    "cmp,time_ms,velocity_mps\n1,0,1500\n";
  velocity_table *t;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(velocity_table_parse(&t, "v.csv", txt, strlen(txt), &e), TZ_OK);
  const int64_t *c;
  ck_assert_uint_eq(velocity_table_low_fold(t, &c), 0);
  velocity_table_free(t);
  /* a note inside the limits still counts */
  const char *ok = "# " VELOCITY_LOW_FOLD_NOTE ": CMP 5-7, 9\n"
                   "cmp,time_ms,velocity_mps\n1,0,1500\n";
  tz_err_init(&e);
  ck_assert_int_eq(velocity_table_parse(&t, "v.csv", ok, strlen(ok), &e), TZ_OK);
  ck_assert_uint_eq(velocity_table_low_fold(t, &c), 4);
  velocity_table_free(t);
}
END_TEST

START_TEST(test_builder_and_write_roundtrip)
{
  velocity_table *t = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(velocity_table_new(&t, 1, &e), TZ_OK);
  ck_assert_int_eq(velocity_table_add(t, 5, 0.0, 1500, 0.0, &e), TZ_OK);
  ck_assert_int_eq(velocity_table_add(t, 5, 0.25, 1750.5, 0.02, &e), TZ_OK);
  ck_assert_int_eq(velocity_table_add(t, 5, 0.25, 1800, 0.02, &e), TZ_E_ARG);
  tz_err_init(&e);
  ck_assert_int_eq(velocity_table_add(t, 9, 0.1, 2000, 0.03, &e), TZ_OK);
  char *buf = NULL;
  size_t len = 0;
  FILE *fp = open_memstream(&buf, &len);
  ck_assert_int_eq(velocity_table_write_stream(t, fp, "mem", &e), TZ_OK);
  fclose(fp);
  /* The file format of docs/velocity-table.md, written out literally. */
  ck_assert_str_eq(buf, "cmp,time_ms,velocity_mps,eta\n5,0,1500,0\n5,250,1750.5,0.02\n"
                        "9,100,2000,0.03\n");
  velocity_table *u = parse_ok(buf);
  ck_assert_uint_eq(velocity_table_ncmps(u), 2);
  free(buf);
  velocity_table_free(u);
  velocity_table_free(t);
}
END_TEST

/* Dix (1955) worked example, computed (check value 15 of docs/references.md). */
START_TEST(test_dix_worked_example)
{
  double t[] = { 1.0, 1.5 }, v[] = { 2000, 2500 };
  velocity_interval iv[2];
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(velocity_dix(t, v, 2, iv, &e), TZ_OK);
  ck_assert_double_eq_tol(iv[0].v_int_mps, 2000.0, 1e-9);
  ck_assert_double_eq_tol(iv[1].v_int_sq, 10750000.0, 1e-3);
  ck_assert_double_eq_tol(iv[1].v_int_mps, 3278.719, 1e-3);
  ck_assert_int_eq(iv[1].imaginary, 0);
  ck_assert_double_eq_tol(iv[0].z_base_m, 1000.0, 1e-9);
  ck_assert_double_eq_tol(iv[1].z_base_m, 1819.68, 1e-2);
  ck_assert_double_eq_tol(velocity_depth(iv, 2, 1.5), 1819.68, 1e-2);
  ck_assert_double_eq_tol(velocity_depth(iv, 2, 0.5), 500.0, 1e-9);
  /* Round trip of Dix 1955: interval -> RMS gives 2500 back. */
  double vi[] = { iv[0].v_int_mps, iv[1].v_int_mps }, vr[2];
  ck_assert_int_eq(velocity_rms_from_interval(t, vi, 2, vr, &e), TZ_OK);
  ck_assert_double_eq_tol(vr[0], 2000.0, 1e-9);
  ck_assert_double_eq_tol(vr[1], 2500.0, 1e-9);
  /* Dix 1955: equal RMS at two times returns the same velocity. */
  double t2[] = { 1.0, 2.0 }, v2[] = { 2000, 2000 };
  ck_assert_int_eq(velocity_dix(t2, v2, 2, iv, &e), TZ_OK);
  ck_assert_double_eq_tol(iv[1].v_int_mps, 2000.0, 1e-9);
  /* Taner & Koehler 1969 definition: layers 3000 m/s for 1 s then 2000 m/s for 1 s ->
   * V_rms = sqrt((9e6 + 4e6)/2) = 2549.51 m/s. */
  double tl[] = { 1.0, 2.0 }, vl[] = { 3000, 2000 };
  ck_assert_int_eq(velocity_rms_from_interval(tl, vl, 2, vr, &e), TZ_OK);
  ck_assert_double_eq_tol(vr[1], sqrt(6.5e6), 1e-9);
}
END_TEST

/* computed from Dix 1955 (check value 16 of docs/references.md): imaginary interval velocity is flagged, not hidden. */
START_TEST(test_dix_imaginary_flagged)
{
  double t[] = { 1.0, 1.2, 1.6 }, v[] = { 2500, 2000, 2600 };
  velocity_interval iv[3];
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(velocity_dix(t, v, 3, iv, &e), TZ_OK);
  ck_assert_int_eq(iv[1].imaginary, 1);
  ck_assert_double_eq_tol(iv[1].v_int_sq, -7.25e6, 1e-3);
  ck_assert(isnan(iv[1].v_int_mps));
  ck_assert(isnan(iv[1].z_base_m));
  ck_assert(isnan(iv[2].z_base_m));        /* depth unknown below it */
  ck_assert(isnan(velocity_depth(iv, 3, 1.5)));
  ck_assert(!isnan(velocity_depth(iv, 3, 0.9)));
  /* Non-increasing times are rejected (Dix 1955). */
  double tb[] = { 1.0, 1.0 };
  ck_assert_int_eq(velocity_dix(tb, v, 2, iv, &e), TZ_E_ARG);
}
END_TEST

START_TEST(test_smooth_cmps_and_cmp_range)
{
  /* worked by hand: CMP 100 is 1500 m/s at 0.1 s and 1700 at 0.3 s; CMP 140 is
   * 2100 at 0.2 s; CMP 300 is 3000 at 0.1 s. Over 40 CMPs, CMP 100 at 0.1 s is
   * the mean of 1500 and CMP 140's 2100 (held above its knot) = 1800; at 0.3 s
   * (1700 + 2100) / 2 = 1900; CMP 140 at 0.2 s: CMP 100 read at 0.2 s is 1600
   * (linear between its knots), so (1600 + 2100) / 2 = 1850; CMP 300 has no
   * neighbour within 40 CMPs and keeps 3000. */
  velocity_table *t = parse_ok("cmp,time_ms,velocity_mps\n100,100,1500\n100,300,1700\n"
                               "140,200,2100\n300,100,3000\n");
  velocity_table *sm = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(velocity_table_smooth_cmps(t, 40, &sm, &e), TZ_OK);
  ck_assert_uint_eq(velocity_table_ncmps(sm), 3);
  double ts, v;
  velocity_table_knot(sm, 0, 0, &ts, &v, NULL);
  ck_assert_double_eq_tol(v, 1800, 1e-9);
  velocity_table_knot(sm, 0, 1, &ts, &v, NULL);
  ck_assert_double_eq_tol(ts, 0.3, 1e-12);
  ck_assert_double_eq_tol(v, 1900, 1e-9);
  velocity_table_knot(sm, 1, 0, &ts, &v, NULL);
  ck_assert_double_eq_tol(v, 1850, 1e-9);
  velocity_table_knot(sm, 2, 0, &ts, &v, NULL);
  ck_assert_double_eq_tol(v, 3000, 1e-9);
  velocity_table_free(sm);
  ck_assert_int_eq(velocity_table_smooth_cmps(t, 0, &sm, &e), TZ_OK);   /* 0: a copy */
  velocity_table_knot(sm, 1, 0, &ts, &v, NULL);
  ck_assert_double_eq_tol(v, 2100, 1e-9);
  velocity_table_free(sm);
  /* CMPs 90-250: CMP 300 (line 5 of the file) lies outside */
  velocity_warning *w = NULL;
  size_t n = 0;
  ck_assert_int_eq(velocity_check_cmp_range(t, 90, 250, &w, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 1);
  ck_assert_int_eq(w[0].cmp, 300);
  ck_assert_int_eq(w[0].line, 5);
  ck_assert_str_eq(velocity_warning_name(w[0].kind), "outside_line");
  free(w);
  velocity_table_free(t);
  /* one function for the whole line, wherever its CMP: no warning */
  t = parse_ok("cmp,time_ms,velocity_mps\n1,0,1500\n1,400,2000\n");
  w = NULL;
  n = 0;
  ck_assert_int_eq(velocity_check_cmp_range(t, 216, 355, &w, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 0);
  free(w);
  velocity_table_free(t);
}
END_TEST

START_TEST(test_check_warnings)
{
  velocity_table *t = parse_ok("cmp,time_ms,velocity_mps\n"
                               "10,1000,2500\n10,1200,2000\n"       /* §4 #16: imaginary */
                               "20,0,200\n20,500,250\n"             /* low (< 300 m/s) */
                               "30,1000,2000\n30,1500,2500\n"       /* §4 #15: fine */
                               "40,1000,2000\n40,1100,3500\n");     /* high: Dix ~ 9.6 km/s */
  velocity_warning *w = NULL;
  size_t n = 0;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(velocity_check(t, 0, 0, &w, &n, &e), TZ_OK);
  int seen_imag = 0, seen_inv = 0, seen_low = 0, seen_high = 0, seen30 = 0;
  for (size_t i = 0; i < n; i++) {
    if (w[i].cmp == 30)
      seen30 = 1;
    if (w[i].kind == VELOCITY_WARN_IMAGINARY && w[i].cmp == 10) {
      seen_imag = 1;
      ck_assert_int_eq(w[i].line, 3);
      ck_assert_double_eq_tol(w[i].value, -7.25e6, 1e-3);
      ck_assert(strstr(w[i].msg, "imaginary") != NULL);
    }
    if (w[i].kind == VELOCITY_WARN_INVERSION && w[i].cmp == 10)
      seen_inv = 1;
    if (w[i].kind == VELOCITY_WARN_LOW && w[i].cmp == 20)
      seen_low = 1;
    if (w[i].kind == VELOCITY_WARN_HIGH && w[i].cmp == 40)
      seen_high = 1;
  }
  ck_assert(seen_imag && seen_inv && seen_low && seen_high);
  ck_assert_msg(!seen30, "a valid Dix function drew a warning");
  ck_assert_str_eq(velocity_warning_name(VELOCITY_WARN_IMAGINARY), "imaginary");
  free(w);
  velocity_table_free(t);
}
END_TEST

START_TEST(test_load_missing_file)
{
  velocity_table *t = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(velocity_table_load(&t, "/nonexistent/v.csv", &e), TZ_E_NOINPUT);
  ck_assert_ptr_null(t);
  ck_assert_str_eq(e.path, "/nonexistent/v.csv");
}
END_TEST

/* Robustness (project rule: never a crash on bad input): random tables drawn from
 * the characters of the format either parse or fail as malformed with a line
 * number, and a parsed table samples to positive finite velocities. */
START_TEST(test_random_tables_never_crash)
{
  static const char alpha[] = "0123456789,,,,..--e#\n\n\n \t";
  char txt[512];
  unsigned s = 4242u;
  int parsed = 0;
  for (int trial = 0; trial < 3000; trial++) {
    int n = snprintf(txt, sizeof txt, "%s", trial % 3 ? "cmp,time_ms,velocity_mps\n" : "");
    /* Rows of plausible shape (few CMPs, random times and velocities, some
     * non-positive), then a few characters overwritten at random. */
    s = s * 1103515245u + 12345u;
    int rows = (int)((s >> 16) % 8);
    for (int r = 0; r < rows && n < 400; r++) {
      s = s * 1103515245u + 12345u;
      unsigned q = s >> 8;
      n += snprintf(txt + n, sizeof txt - (size_t)n, "%u,%u,%d\n", 1 + q % 3,
                    (unsigned)(r * 150 + (q >> 4) % 200), (int)((q >> 12) % 4000) - 50);
    }
    s = s * 1103515245u + 12345u;
    for (int m = (int)((s >> 16) % 3); m > 0 && n > 0; m--) {
      s = s * 1103515245u + 12345u;
      txt[(s >> 8) % (unsigned)n] = alpha[(s >> 20) % (sizeof alpha - 1)];
    }
    txt[n] = '\0';
    velocity_table *t = NULL;
    tz_err e;
    tz_err_init(&e);
    int rc = velocity_table_parse(&t, "r.csv", txt, (size_t)n, &e);
    ck_assert_msg(rc == TZ_OK || (rc == TZ_E_FORMAT && e.msg[0]), "rc %d for '%s'", rc, txt);
    if (rc == TZ_OK) {
      float v[64];
      velocity_sample(t, 3, 0.0, 0.05, 64, v, NULL);
      for (int i = 0; i < 64; i++)
        ck_assert_msg(v[i] > 0 && isfinite(v[i]), "sample %d = %g from table:\n%s", i, v[i], txt);
      parsed++;
      velocity_table_free(t);
    }
  }
  ck_assert_int_gt(parsed, 0);   /* the generator does reach valid tables */
}
END_TEST

static Suite *velocity_suite(void)
{
  Suite *s = suite_create("velocity");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_parse_and_query);
  tcase_add_test(tc, test_sampling_rules);
  tcase_add_test(tc, test_control_cmps_unsorted_and_eta);
  tcase_add_test(tc, test_constant_table);
  tcase_add_test(tc, test_errors_name_line);
  tcase_add_test(tc, test_control_cmps_beyond_the_job_range_are_refused);
  tcase_add_test(tc, test_low_fold_note_with_a_range_to_int64_max_is_only_a_comment);
  tcase_add_test(tc, test_builder_and_write_roundtrip);
  tcase_add_test(tc, test_dix_worked_example);
  tcase_add_test(tc, test_dix_imaginary_flagged);
  tcase_add_test(tc, test_check_warnings);
  tcase_add_test(tc, test_smooth_cmps_and_cmp_range);
  tcase_add_test(tc, test_load_missing_file);
  tcase_add_test(tc, test_random_tables_never_crash);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(velocity_suite)
