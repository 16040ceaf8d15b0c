/* check_mute.c -- mute times along the line (mute.c) and band mutes (nmo_band_mute).
 *
 * Expected values are worked out by hand from the interpolation rule the
 * module documents (linear in offset between points, linear in CMP between
 * controls, constant beyond both: the rule of the velocity table,
 * docs/velocity-table.md; common practice for mutes). */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "tzero/mute.h"
#include "tzero/nmo.h"
#include "unit.h"

static mute_set *two_controls(void)
{
  mute_set *m = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(mute_set_new(&m, &e), TZ_OK);
  const mute_point a[] = { { 0, 20, 0 }, { 480, 260, 0 } };
  const mute_point b[] = { { 0, 40, 0 }, { 240, 100, 0 }, { 480, 300, 0 } };
  ck_assert_int_eq(mute_set_add(m, MUTE_TOP, 200, a, 2, NULL, &e), TZ_OK);
  ck_assert_int_eq(mute_set_add(m, MUTE_TOP, 300, b, 3, NULL, &e), TZ_OK);
  const mute_point c[] = { { 0, 0, 100 }, { 600, 1500, 1800 } };
  ck_assert_int_eq(mute_set_add(m, MUTE_INNER, 250, c, 2, NULL, &e), TZ_OK);
  return m;
}

START_TEST(test_interpolation)
{
  mute_set *m = two_controls();
  mute_trace t = { 200, 1, 1, 240, 0 };
  mute_times mt;
  mute_eval(m, &t, &mt);
  ck_assert_double_eq_tol(mt.top_ms, 140, 1e-9);          /* 20 + 240/480 * 240 */
  t.offset_m = -240;                                       /* the sign does not matter */
  mute_eval(m, &t, &mt);
  ck_assert_double_eq_tol(mt.top_ms, 140, 1e-9);
  t.cmp = 250;                                             /* halfway: (140 + 100) / 2 */
  mute_eval(m, &t, &mt);
  ck_assert_double_eq_tol(mt.top_ms, 120, 1e-9);
  ck_assert_double_eq_tol(mt.inner_from_ms, 600, 1e-9);   /* 1500 * 240/600 */
  ck_assert_double_eq_tol(mt.inner_to_ms, 100 + 1700 * 0.4, 1e-9);
  ck_assert(isinf(mt.bottom_ms) && mt.bottom_ms > 0);
  t.cmp = 100;                                             /* before the first control */
  t.offset_m = 1000;                                       /* beyond the last point */
  mute_eval(m, &t, &mt);
  ck_assert_double_eq_tol(mt.top_ms, 260, 1e-9);
  ck_assert_double_eq_tol(mt.inner_to_ms, 1800, 1e-9);
  t.cmp = 900;
  t.offset_m = 360;                                        /* 100 + 120/240 * 200 */
  mute_eval(m, &t, &mt);
  ck_assert_double_eq_tol(mt.top_ms, 200, 1e-9);
  mute_eval(NULL, &t, &mt);
  ck_assert(isinf(mt.top_ms) && mt.top_ms < 0 && isnan(mt.inner_from_ms));
  mute_set_free(m);
}
END_TEST

START_TEST(test_validation)
{
  mute_set *m = two_controls();
  tz_err e;
  int which = -1;
  const mute_point ok[] = { { 0, 20, 0 }, { 100, 30, 0 } };
  tz_err_init(&e);
  ck_assert_int_eq(mute_set_add(m, MUTE_TOP, 250, ok, 2, &which, &e), TZ_E_ARG);
  ck_assert_int_eq(which, 0);
  ck_assert_ptr_nonnull(strstr(e.msg, "CMP 250 is not after"));
  const mute_point back[] = { { 0, 20, 0 }, { 100, 30, 0 }, { 100, 40, 0 } };
  tz_err_init(&e);
  ck_assert_int_eq(mute_set_add(m, MUTE_BOTTOM, 1, back, 3, &which, &e), TZ_E_ARG);
  ck_assert_int_eq(which, 1);
  ck_assert_ptr_nonnull(strstr(e.msg, "point 2: offset 100 m is not after 100 m"));
  const mute_point inv[] = { { 0, 50, 40 } };
  tz_err_init(&e);
  ck_assert_int_eq(mute_set_add(m, MUTE_INNER, 300, inv, 1, &which, &e), TZ_E_ARG);
  ck_assert_ptr_nonnull(strstr(e.msg, "cone is inverted"));
  mute_set_free(m);
}
END_TEST

static char *write_tmp(const char *text)
{
  static const char tmpl[] = "/tmp/check_mute.XXXXXX";
  char *p = malloc(sizeof tmpl);
  memcpy(p, tmpl, sizeof tmpl);
  int fd = mkstemp(p);
  ck_assert_int_ge(fd, 0);
  ck_assert_int_eq((int)write(fd, text, strlen(text)), (int)strlen(text));
  close(fd);
  return p;
}

/* First-break picks: the trace's own pick, else the straight line through the
 * record's picks on the same side of the source. */
START_TEST(test_first_breaks)
{
  char *p = write_tmp("# first-break picks: times in ms from the shot (field times); stations\n"
                      "record,channel,source_station,receiver_station,offset_m,time_ms,quality\n"
                      "7,1,0,0,-100,80,0.9\n7,2,0,0,-50,45,0.9\n7,4,0,0,50,40,0.9\n"
                      "7,6,0,0,150,110,0.9\n8,1,0,0,50,41,0.9\n");
  mute_set *m = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(mute_set_new(&m, &e), TZ_OK);
  ck_assert_msg(mute_picks_load(m, p, 20, &e) == TZ_OK, "%s", e.msg);
  ck_assert_int_eq(m->picks_field_times, 1);
  mute_trace t = { 10, 7, 4, 50, -3 };
  ck_assert_double_eq_tol(mute_first_break_ms(m, &t), 37, 1e-9);    /* own pick + static */
  t.channel = 5, t.offset_m = 100;                                   /* 40 + 0.5 * 70 - 3 */
  ck_assert_double_eq_tol(mute_first_break_ms(m, &t), 72, 1e-9);
  t.channel = 7, t.offset_m = 200;                                   /* along the end segment */
  ck_assert_double_eq_tol(mute_first_break_ms(m, &t), 145 - 3, 1e-9);
  t.channel = 3, t.offset_m = -75;                                   /* the negative side */
  ck_assert_double_eq_tol(mute_first_break_ms(m, &t), 62.5 - 3, 1e-9);
  t.record = 9;
  ck_assert(isnan(mute_first_break_ms(m, &t)));
  t.record = 7;
  mute_times mt;
  mute_eval(m, &t, &mt);
  ck_assert_double_eq_tol(mt.top_ms, 62.5 - 3 + 20, 1e-9);
  t.record = 9;
  mute_eval(m, &t, &mt);
  ck_assert(isinf(mt.top_ms));
  mute_set_free(m);
  unlink(p);
  free(p);
}
END_TEST

START_TEST(test_file)
{
  char *p = write_tmp("# inner cone\ncmp,offset_m,time_ms,time_end_ms\n100,0,0,80\n100,500,1250,1400\n"
                      "200,0,0,100\n200,500,1000,1300\n");
  mute_set *m = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(mute_set_new(&m, &e), TZ_OK);
  ck_assert_msg(mute_file_load(m, MUTE_INNER, p, &e) == TZ_OK, "%s", e.msg);
  ck_assert_uint_eq(m->kind[MUTE_INNER].n, 2);
  ck_assert_double_eq_tol(mute_surface_time(&m->kind[MUTE_INNER], 150, 250, 0), 562.5, 1e-9);
  ck_assert_double_eq_tol(mute_surface_time(&m->kind[MUTE_INNER], 150, 250, 1), 720, 1e-9);
  unlink(p);
  free(p);
  p = write_tmp("cmp,offset_m,time_ms\n200,0,20\n200,400,200\n100,0,30\n");
  tz_err_init(&e);
  ck_assert_int_eq(mute_file_load(m, MUTE_TOP, p, &e), TZ_E_FORMAT);
  ck_assert_int_eq((int)e.line, 4);
  ck_assert_ptr_nonnull(strstr(e.msg, "CMP 100 is not after"));
  unlink(p);
  free(p);
  p = write_tmp("cmp,offset_m,time_ms,time_end_ms\n200,0,20,10\n");
  tz_err_init(&e);
  ck_assert_int_eq(mute_file_load(m, MUTE_INNER, p, &e), TZ_E_FORMAT);
  ck_assert_ptr_nonnull(strstr(e.msg, "cone is inverted"));
  unlink(p);
  free(p);
  mute_set_free(m);
}
END_TEST

/* A band mute after NMO with zero offset (t = t0): exactly the samples of the
 * band are zeroed, the ramps sit outside it, the counts add up. */
START_TEST(test_band_mute)
{
  enum { NS = 200 };
  nmo_workspace *ws = NULL;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(nmo_workspace_new(&ws, NS, &e), TZ_OK);
  nmo_params p;
  nmo_params_init(&p);
  p.stretch_limit_pct = 0;
  nmo_axis ax = { 0, 0.001, NS };
  float in[NS], vel[NS], out[NS], w[NS];
  for (int i = 0; i < NS; i++)
    in[i] = 1, vel[i] = 2000;
  nmo_trace_info info;
  ck_assert_int_eq(nmo_apply(ws, &p, NULL, &ax, 0, in, vel, NULL, out, w, &info, &e), TZ_OK);
  size_t end0 = info.end_live, live0 = info.live;   /* the last sample may map past the end */
  ck_assert(info.first_live == 0 && end0 >= NS - 1 && live0 == end0);
  nmo_band_mute(ws, &ax, 0.150, INFINITY, 0, out, w, &info);     /* bottom: 150 ms and on */
  ck_assert_uint_eq(info.muted_bottom, end0 - 150);
  ck_assert_uint_eq(info.end_live, 150);
  nmo_band_mute(ws, &ax, 0.050, 0.0595, 0.005, out, w, &info);   /* cone: samples 50-59 */
  ck_assert_uint_eq(info.muted_inner, 10);
  ck_assert_uint_eq(info.live, 140);   /* 150 - 10 */
  for (int i = 50; i < 60; i++)
    ck_assert(out[i] == 0 && w[i] == 0);
  ck_assert(w[49] > 0 && w[49] < 0.2f && w[45] == 1.0f && w[46] < 1.0f);
  ck_assert(w[60] > 0 && w[60] < 0.2f && w[65] == 1.0f);
  ck_assert(w[150] == 0 && w[149] == 1.0f);
  nmo_band_mute(ws, &ax, 0, 1, 0, out, w, &info);                /* everything */
  ck_assert_uint_eq(info.live, 0);
  ck_assert_uint_eq(info.first_live, NS);
  nmo_workspace_free(ws);
}
END_TEST

static Suite *mute_suite(void)
{
  Suite *s = suite_create("mute");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_interpolation);
  tcase_add_test(tc, test_validation);
  tcase_add_test(tc, test_first_breaks);
  tcase_add_test(tc, test_file);
  tcase_add_test(tc, test_band_mute);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(mute_suite)
