/* check_sps.c -- sps.c: SPS revision 2.1 records decoded from their columns.
 *
 * Records are built here column by column from the layout published in SEG
 * Technical Standards Committee, "SPS format, revision 2.1" (2006) (see sps.h),
 * so a shifted column in the reader fails these cases. */
#include <stdio.h>
#include <string.h>

#include "tzero/sps.h"
#include "unit.h"

/* An 80-column point record: identifier, line 2-11, point 12-21, index 24,
 * depth 31-34, easting 47-55, northing 56-65, elevation 66-71. */
static void point(char *out, char id, const char *line, double pt, int idx, double depth,
                  double x, double y, double z)
{
  snprintf(out, 82, "%c%10s%10.2f  %1d%2s%4d%4.1f%4d%2d%6.1f%9.1f%10.1f%6.1f%9s\n", id, line,
           pt, idx, "G1", 0, depth, 0, 0, 0.0, x, y, z, "");
}

/* An 80-column relation record: field record 8-15, source line 18-27, point
 * 28-37, index 38, channels 39-43 to 44-48 step 49, receiver line 50-59, points
 * 60-69 to 70-79, index 80. */
static void relation(char *out, int ffid, const char *sl, double sp, int c0, int c1,
                     const char *rl, double r0, double r1)
{
  snprintf(out, 82, "X%6s%8d1 %10s%10.2f1%5d%5d1%10s%10.2f%10.2f1\n", "T1", ffid, sl, sp, c0,
           c1, rl, r0, r1);
}

static int parse(sps_set **out, const char *s, const char *r, const char *x, tz_err *e)
{
  const char *names[3] = { "t.s", "t.r", "t.x" };
  const char *texts[3] = { s, r, x };
  const size_t lens[3] = { strlen(s), strlen(r), strlen(x) };
  tz_err_init(e);
  return sps_parse(out, names, texts, lens, e);
}

START_TEST(test_columns_and_matching)
{
  char s[400], r[800], x[200], b[82];
  strcpy(s, "H00 SPS format version num.     SPS V2.1\n");
  point(b, 'S', "L7", 100, 1, 1.5, 1000.0, 2000.0, 50.0);
  strcat(s, b);
  point(b, 'S', "L7", 104, 1, 0, 1040.0, 2000.0, 51.0);    /* never shot */
  strcat(s, b);
  r[0] = '\0';
  for (int k = 0; k < 6; k++) {                            /* stations 101..106, 10 m */
    point(b, 'R', "L7", 101 + k, 1, 0, 1010.0 + 10 * k, 2000.5, 40.0 + k);
    strcat(r, b);
  }
  ck_assert_uint_eq(strlen(b), 81);
  relation(x, 7, "L7", 100, 1, 3, "L7", 101, 103);        /* the R file's points */
  relation(b, 7, "L7", 100, 4, 5, "L7", 106, 104);        /* two channels, reversed */
  strcat(x, b);
  ck_assert_uint_eq(strlen(b), 81);
  sps_set *sp = NULL;
  tz_err e;
  ck_assert_int_eq(parse(&sp, s, r, x, &e), TZ_OK);
  sps_summary m;
  sps_get_summary(sp, &m);
  ck_assert_uint_eq(m.source_points, 2);
  ck_assert_uint_eq(m.receiver_points, 6);
  ck_assert_uint_eq(m.relations_matched, 2);               /* 106..104 has 3 points for 2
                                                            * channels: evenly spaced 106, 104 */
  ck_assert_uint_eq(m.relations, 2);
  ck_assert_uint_eq(sps_unmatched_count(sp), 2);          /* source 104, receiver 105 */
  ck_assert_int_eq(sps_unmatched_get(sp, 0)->kind, SPS_SOURCE);
  ck_assert_int_eq(sps_unmatched_get(sp, 0)->line, 3);
  ck_assert_int_eq(sps_unmatched_get(sp, 1)->line, 5);
  geometry_table *t = NULL;
  ck_assert_int_eq(sps_to_table(sp, &t, &e), TZ_OK);
  ck_assert_uint_eq(geometry_table_rows(t), 5);
  geometry_trace g;
  ck_assert_int_eq(geometry_table_find(t, 7, 2, &g, &e), TZ_OK);
  ck_assert_double_eq(g.source_x, 1000.0);
  ck_assert_double_eq(g.source_depth, 1.5);
  ck_assert_double_eq(g.source_z, 50.0);
  ck_assert_double_eq(g.receiver_x, 1020.0);
  ck_assert_double_eq(g.receiver_y, 2000.5);
  ck_assert_double_eq(g.receiver_z, 41.0);
  ck_assert_int_eq(geometry_table_find(t, 7, 4, &g, &e), TZ_OK);
  ck_assert_double_eq(g.receiver_x, 1060.0);
  ck_assert_int_eq(geometry_table_find(t, 7, 5, &g, &e), TZ_OK);
  ck_assert_double_eq(g.receiver_x, 1040.0);
  geometry_table_free(t);
  sps_free(sp);
}
END_TEST

START_TEST(test_errors_name_columns)
{
  char s[200], r[200], x[200], b[82];
  point(s, 'S', "L7", 100, 1, 0, 1000.0, 2000.0, 50.0);
  point(r, 'R', "L7", 101, 1, 0, 1010.0, 2000.0, 50.0);
  relation(x, 7, "L7", 100, 1, 1, "L7", 101, 101);
  sps_set *sp = NULL;
  tz_err e;
  strcpy(b, s);
  b[50] = 'x';                                             /* column 51, in the easting */
  ck_assert_int_eq(parse(&sp, b, r, x, &e), TZ_E_FORMAT);
  ck_assert_int_eq(e.line, 1);
  ck_assert_str_eq(e.path, "t.s");
  ck_assert_ptr_nonnull(strstr(e.msg, "columns 47-55 (map grid easting)"));
  strcpy(b, x);
  b[37] = 'Q';                                             /* column 38, the source index */
  ck_assert_int_eq(parse(&sp, s, r, b, &e), TZ_E_FORMAT);
  ck_assert_ptr_nonnull(strstr(e.msg, "column 38 (source point index)"));
  strcpy(b, r);
  b[0] = 'S';
  ck_assert_int_eq(parse(&sp, s, b, x, &e), TZ_E_FORMAT);
  ck_assert_ptr_nonnull(strstr(e.msg, "column 1 (record identifier)"));
  strcpy(b, x);
  b[60] = '\t';
  ck_assert_int_eq(parse(&sp, s, r, b, &e), TZ_E_FORMAT);
  ck_assert_ptr_nonnull(strstr(e.msg, "column 61: a tab"));
  ck_assert_int_eq(parse(&sp, s, r, "H only a header\n", &e), TZ_E_FORMAT);
  ck_assert_ptr_nonnull(strstr(e.msg, "no X records"));
  /* the same field record and channel from two relation records */
  char x2[200];
  strcpy(x2, x);
  relation(b, 7, "L7", 100, 1, 1, "L7", 101, 101);
  strcat(x2, b);
  ck_assert_int_eq(parse(&sp, s, r, x2, &e), TZ_OK);
  geometry_table *t = NULL;
  ck_assert_int_eq(sps_to_table(sp, &t, &e), TZ_E_FORMAT);
  ck_assert_ptr_nonnull(strstr(e.msg, "field record 7 channel 1 already given on line 1"));
  sps_free(sp);
}
END_TEST

static Suite *sps_suite(void)
{
  Suite *s = suite_create("sps");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_columns_and_matching);
  tcase_add_test(tc, test_errors_name_columns);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(sps_suite)
