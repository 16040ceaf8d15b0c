/* check_survey.c -- survey.c: rounding of measured intervals and gaps in the shooting.
 *
 * Hand cases (computed by hand from the rule in survey.h); the field-style line
 * is checked against NumPy in tests/xcheck/test_fieldline_geometry.py. */
#include <math.h>

#include "tzero/survey.h"
#include "unit.h"

START_TEST(test_round_interval)
{
  /* within 0.5 % of a round figure: rounded to it */
  ck_assert_double_eq(survey_round_interval(5.010, 0.01), 5.0);
  ck_assert_double_eq(survey_round_interval(9.96, 0.01), 10.0);
  ck_assert_double_eq(survey_round_interval(2.51, 0.01), 2.5);
  ck_assert_double_eq(survey_round_interval(12.52, 0.01), 12.5);
  ck_assert_double_eq(survey_round_interval(24.93, 0.01), 25.0);
  /* not within 0.5 % of one: the precision only (10 ft = 3.048 m, 1/3 of 10 m) */
  ck_assert_double_eq_tol(survey_round_interval(3.048, 0.001), 3.048, 1e-12);
  ck_assert_double_eq_tol(survey_round_interval(3.3333, 0.01), 3.33, 1e-12);
  ck_assert_double_eq_tol(survey_round_interval(5.04, 0.01), 5.04, 1e-12);   /* 0.8 % off */
  ck_assert_double_eq(survey_round_interval(0, 0.01), 0);
}
END_TEST

/* Five records on a line due east, 10 m apart, the third position not shot and
 * record number 5 not used: two gaps, one missing shot each. */
START_TEST(test_gaps)
{
  tz_err e;
  tz_err_init(&e);
  geometry_source *src = NULL;
  ck_assert_int_eq(geometry_source_headers(&src, &e), TZ_OK);
  survey_line_spec ls = { .bin_size_m = 2.5, .first_cmp = 1 };
  survey *sv = NULL;
  ck_assert_int_eq(survey_new(&sv, src, &ls, &e), TZ_OK);
  const double sx[] = { 0, 10, 30, 40, 50 };
  const int ffid[] = { 1, 2, 3, 4, 6 };
  const int sp[] = { 101, 102, 104, 105, 106 };
  for (size_t k = 0; k < 5; k++)
    for (int c = 0; c < 4; c++) {
      segy_trace_header h = { 0 };
      geometry_trace g = { 0 };
      h.kind = 1;
      h.source_point = sp[k];
      g.field_record = h.field_record = ffid[k];
      g.channel = c + 1;
      g.source_x = sx[k];
      g.receiver_x = sx[k] + 5 + 5 * c;
      g.receiver_y = c == 1 ? 0.4 : 0;          /* cross-line scatter */
      geometry_derive(&g, 90, 1);
      ck_assert_int_eq(survey_add(sv, k, &h, &g, &e), TZ_OK);
    }
  bins_line *line = NULL;
  survey_figures fig;
  ck_assert_int_eq(survey_finish(sv, src, &line, &fig, &e), TZ_OK);
  ck_assert_double_eq(fig.receiver_interval_m, 5.0);
  ck_assert_double_eq(fig.source_interval_m, 10.0);
  size_t n;
  const survey_gap *g = survey_gaps(sv, &n);
  ck_assert_uint_eq(n, 2);
  ck_assert_int_eq(fig.shots_missing, 2);
  ck_assert_int_eq(g[0].record_before, 2);
  ck_assert_uint_eq(g[0].flags, SURVEY_GAP_POINT | SURVEY_GAP_POSITION);
  ck_assert_double_eq_tol(g[0].distance_m, 20, 0.01);   /* the fitted line tilts a little */
  ck_assert_int_eq(g[1].record_before, 4);
  ck_assert_uint_eq(g[1].flags, SURVEY_GAP_RECORD);
  ck_assert_int_eq(g[1].missing, 1);
  bins_line_free(line);
  survey_free(sv);
  geometry_source_free(src);
}
END_TEST

static Suite *survey_suite(void)
{
  Suite *s = suite_create("survey");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_round_interval);
  tcase_add_test(tc, test_gaps);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(survey_suite)
