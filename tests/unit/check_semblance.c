/* check_semblance.c -- Neidell-Taner semblance, panels, automatic picks, CMP lists. */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/semblance.h"
#include "unit.h"

static double one_window(const float *tr, size_t ntr, size_t ns, size_t at, size_t half)
{
  semblance_acc *a;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(semblance_acc_new(&a, ns, &e), TZ_OK);
  for (size_t i = 0; i < ntr; i++)
    semblance_acc_add(a, tr + i * ns, 0, ns);
  float *out = malloc(ns * sizeof *out);
  semblance_acc_finish(a, half, out, NULL);
  double s = out[at];
  free(out);
  semblance_acc_free(a);
  return s;
}

/* computed from Neidell & Taner 1971 (check value 17 of docs/references.md):
 * three identical traces [1,2,3] give exactly 1. */
START_TEST(test_identical)
{
  const float tr[] = { 1, 2, 3, 1, 2, 3, 1, 2, 3 };
  ck_assert(one_window(tr, 3, 3, 1, 1) == 1.0);
  /* Stack power (Taner and Koehler 1969): window mean of the squared average
   * trace, here (1 + 4 + 9)/3. */
  semblance_acc *a;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(semblance_acc_new(&a, 3, &e), TZ_OK);
  for (int i = 0; i < 3; i++)
    semblance_acc_add(a, tr + 3 * i, 0, 3);
  float s[3], pw[3];
  semblance_acc_finish(a, 1, s, pw);
  ck_assert_double_eq_tol(pw[1], 14.0 / 3.0, 1e-6);
  ck_assert_double_eq_tol(pw[0], 5.0 / 2.0, 1e-6);
  semblance_acc_free(a);
}
END_TEST

/* computed from Neidell & Taner 1971 (check value 18 of docs/references.md): [1,0]&[-1,0] -> 0; [1,2]&[1,0] -> 0.666667;
 * [1,2,3]&[2,4,6] -> 0.9; one live trace and three zero traces -> 0.25 = 1/N. */
START_TEST(test_check_values)
{
  const float a[] = { 1, 0, -1, 0 };
  const float b[] = { 1, 2, 1, 0 };
  const float c[] = { 1, 2, 3, 2, 4, 6 };
  const float d[] = { 1, 2, 3, 0, 0, 0, 0, 0, 0, 0, 0, 0 };
  ck_assert_double_eq_tol(one_window(a, 2, 2, 0, 1), 0.0, 1e-7);
  ck_assert_double_eq_tol(one_window(b, 2, 2, 0, 1), 2.0 / 3.0, 1e-6);
  ck_assert_double_eq_tol(one_window(c, 2, 3, 1, 1), 0.9, 1e-6);
  ck_assert_double_eq_tol(one_window(d, 4, 3, 1, 1), 0.25, 1e-7);
}
END_TEST

/* Deterministic Gaussian noise: xorshift64 + Box-Muller (common practice). */
static double gauss(uint64_t *s)
{
  double u[2];
  for (int i = 0; i < 2; i++) {
    *s ^= *s << 13;
    *s ^= *s >> 7;
    *s ^= *s << 17;
    u[i] = ((double)(*s >> 11) + 0.5) / 9007199254740992.0;
  }
  return sqrt(-2 * log(u[0])) * cos(2 * M_PI * u[1]);
}

/* computed from Neidell & Taner 1971 (check value 19 of docs/references.md): N = 24 independent Gaussian traces, a
 * 50-sample window, mean semblance 1/24 = 0.0417 within +-0.005 over >= 200 trials. */
START_TEST(test_noise)
{
  enum { N = 24, NS = 50, TRIALS = 400 };
  float *tr = malloc(N * NS * sizeof *tr);
  uint64_t seed = 0x9e3779b97f4a7c15ull;
  double mean = 0;
  for (int t = 0; t < TRIALS; t++) {
    for (int i = 0; i < N * NS; i++)
      tr[i] = (float)gauss(&seed);
    mean += one_window(tr, N, NS, 25, 25);   /* window [0, 50): all 50 samples */
  }
  mean /= TRIALS;
  ck_assert_msg(fabs(mean - 1.0 / 24.0) < 0.005, "mean semblance %g", mean);
  free(tr);
}
END_TEST

/* Muted samples are not live: N counts the traces live at each sample
 * (Neidell & Taner 1971; the fold normalisation is common practice). One trace live alone gives 1; a fully muted
 * window gives 0 (denominator 0); weighted and range adds agree. */
START_TEST(test_live_count)
{
  enum { NS = 8 };
  float t1[NS] = { 1, -2, 3, 1, 2, -1, 1, 1 };
  float t2[NS] = { 0, 0, 0, 0, -2, 1, -1, -1 };   /* live only from sample 4 */
  float w2[NS] = { 0, 0, 0, 0, 1, 1, 1, 1 };
  float w1[NS] = { 1, 1, 1, 1, 1, 1, 1, 1 };
  semblance_acc *a, *b;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(semblance_acc_new(&a, NS, &e), TZ_OK);
  ck_assert_int_eq(semblance_acc_new(&b, NS, &e), TZ_OK);
  semblance_acc_add(a, t1, 0, NS);
  semblance_acc_add(a, t2, 4, NS);
  semblance_acc_add_weighted(b, t1, w1);
  semblance_acc_add_weighted(b, t2, w2);
  float sa[NS], sb[NS];
  semblance_acc_finish(a, 0, sa, NULL);
  semblance_acc_finish(b, 0, sb, NULL);
  for (int j = 0; j < 4; j++)
    ck_assert(sa[j] == 1.0f);       /* one live trace */
  for (int j = 4; j < NS; j++)
    ck_assert(sa[j] == 0.0f);       /* equal and opposite */
  ck_assert(memcmp(sa, sb, sizeof sa) == 0);
  /* With a floor of 1.5 live traces the one-trace samples give 0 (our rule). */
  semblance_acc_min_live(a, 1.5);
  semblance_acc_finish(a, 0, sa, NULL);
  for (int j = 0; j < 4; j++)
    ck_assert(sa[j] == 0.0f);
  semblance_acc_min_live(a, 0);
  semblance_acc_reset(a);
  semblance_acc_add(a, t1, 3, 3);    /* nothing live */
  semblance_acc_finish(a, 2, sa, NULL);
  for (int j = 0; j < NS; j++)
    ck_assert(sa[j] == 0.0f);
  semblance_acc_free(a);
  semblance_acc_free(b);
}
END_TEST

/* The fold floor: samples with fewer live traces than min_fold give 0, the
 * others keep the plain value (Neidell and Taner 1971 for the value; the floor
 * is our rule); the largest live count is reported. */
START_TEST(test_min_fold)
{
  enum { NS = 8 };
  float t[NS] = { 1, 2, 3, 4, 4, 3, 2, 1 };
  semblance_acc *a;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(semblance_acc_new(&a, NS, &e), TZ_OK);
  semblance_acc_add(a, t, 0, NS);
  semblance_acc_add(a, t, 0, NS);
  semblance_acc_add(a, t, 2, NS);   /* three live from sample 2, two before */
  float s[NS];
  semblance_acc_min_fold(a, 3);
  semblance_acc_finish(a, 0, s, NULL);
  ck_assert_uint_eq(semblance_acc_max_live(a), 3);
  ck_assert(s[0] == 0.0f && s[1] == 0.0f);
  for (int j = 2; j < NS; j++)
    ck_assert_msg(fabsf(s[j] - 1.0f) < 1e-6f, "sample %d: %g", j, s[j]);  /* identical traces */
  semblance_acc_min_fold(a, 4);
  semblance_acc_finish(a, 0, s, NULL);
  for (int j = 0; j < NS; j++)
    ck_assert(s[j] == 0.0f);
  semblance_acc_free(a);
}
END_TEST

/* The running-sum window equals the definition summed directly (Neidell and
 * Taner 1971), including windows cut at the trace ends. */
START_TEST(test_window_matches_definition)
{
  enum { N = 5, NS = 64, HALF = 6 };
  float tr[N * NS];
  uint64_t seed = 42;
  for (int i = 0; i < N * NS; i++)
    tr[i] = (float)gauss(&seed) + (float)(i % NS) * 0.05f;
  semblance_acc *a;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(semblance_acc_new(&a, NS, &e), TZ_OK);
  for (int i = 0; i < N; i++)
    semblance_acc_add(a, tr + i * NS, 0, NS);
  float out[NS];
  semblance_acc_finish(a, HALF, out, NULL);
  for (int j = 0; j < NS; j++) {
    double num = 0, den = 0;
    for (int k = j - HALF; k <= j + HALF; k++) {
      if (k < 0 || k >= NS)
        continue;
      double s = 0, q = 0;
      for (int i = 0; i < N; i++) {
        s += tr[i * NS + k];
        q += (double)tr[i * NS + k] * tr[i * NS + k];
      }
      num += s * s;
      den += N * q;
    }
    ck_assert_double_eq_tol(out[j], num / den, 1e-6);
  }
  semblance_acc_free(a);
}
END_TEST

/* ---- synthetic gathers: Ricker wavelets (Ricker 1953) on
 * exact hyperbolas t^2 = t0^2 + x^2/v^2 (Yilmaz 2001, hyperbolic moveout). */
struct event { double t0, v, amp; };

static float *make_gather(const struct event *ev, size_t nev, size_t ntr, double dx,
                          const nmo_axis *ax, double **offsets)
{
  float *s = calloc(ntr * ax->ns, sizeof *s);
  *offsets = malloc(ntr * sizeof **offsets);
  for (size_t i = 0; i < ntr; i++) {
    double x = dx * (double)(i + 1);
    (*offsets)[i] = x;
    for (size_t e = 0; e < nev; e++) {
      double t = sqrt(ev[e].t0 * ev[e].t0 + x * x / (ev[e].v * ev[e].v));
      for (size_t j = 0; j < ax->ns; j++) {
        double u = M_PI * 25.0 * (ax->t_first_s + (double)j * ax->dt_s - t);
        s[i * ax->ns + j] += (float)(ev[e].amp * (1 - 2 * u * u) * exp(-u * u));
      }
    }
  }
  return s;
}

static float *run_panel(const struct event *ev, size_t nev, int threads, size_t *nvel,
                        nmo_axis *ax, semblance_params *p, float **power)
{
  *ax = (nmo_axis){ .t_first_s = 0, .dt_s = 0.002, .ns = 600 };
  double *off;
  float *g = make_gather(ev, nev, 48, 25.0, ax, &off);
  semblance_params_init(p);
  p->velocity_min_mps = 1500;
  p->velocity_max_mps = 3500;
  p->velocity_step_mps = 25;
  p->threads = threads;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(semblance_params_check(p, nvel, &e), TZ_OK);
  ck_assert_uint_eq(*nvel, 81);
  float *panel = malloc(*nvel * ax->ns * sizeof *panel);
  *power = malloc(*nvel * ax->ns * sizeof **power);
  semblance_gather sg = { .ntraces = 48, .axis = *ax, .samples = g, .offset_m = off };
  ck_assert_int_eq(semblance_panel(&sg, p, panel, *power, &e), TZ_OK);
  free(g);
  free(off);
  return panel;
}

/* Semblance is near 1 at the event's (t0, v) and semblance x stack power
 * peaks there (Taner and Koehler 1969); the panel is bitwise identical for 1
 * and 3 threads (DEVELOPERS.md, threads: bitwise-identical output). */
START_TEST(test_panel_peak_and_threads)
{
  const struct event ev[] = { { 0.5, 2200, 1.0 } };
  size_t nvel;
  nmo_axis ax;
  semblance_params p;
  float *w1, *w3;
  float *p1 = run_panel(ev, 1, 1, &nvel, &ax, &p, &w1);
  float *p3 = run_panel(ev, 1, 3, &nvel, &ax, &p, &w3);
  ck_assert(memcmp(p1, p3, nvel * ax.ns * sizeof *p1) == 0);
  ck_assert(memcmp(w1, w3, nvel * ax.ns * sizeof *w1) == 0);
  size_t bk = 0, bj = 0, ns = ax.ns;
  for (size_t k = 0; k < nvel; k++)
    for (size_t j = 0; j < ns; j++)
      if (p1[k * ns + j] * w1[k * ns + j] > p1[bk * ns + bj] * w1[bk * ns + bj]) {
        bk = k;
        bj = j;
      }
  ck_assert_double_eq_tol(1500 + 25.0 * (double)bk, 2200, 12.5);
  ck_assert_double_eq_tol((double)bj * ax.dt_s, 0.5, 0.003);
  ck_assert(p1[(2200 - 1500) / 25 * ns + 250] > 0.95);
  free(p1);
  free(p3);
  free(w1);
  free(w3);
}
END_TEST

/* Automatic picks on three events recover their velocities within 1 % (the
 * events are exact hyperbolas, so the best-fit velocity is the true one). */
START_TEST(test_autopick)
{
  const struct event ev[] = { { 0.3, 1800, 1.0 }, { 0.6, 2300, 0.8 }, { 0.9, 2700, 0.7 } };
  size_t nvel;
  nmo_axis ax;
  semblance_params p;
  float *power;
  float *panel = run_panel(ev, 3, 2, &nvel, &ax, &p, &power);
  semblance_pick_params pp;
  semblance_pick_params_init(&pp);
  semblance_pick *pk;
  size_t n;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(semblance_autopick(panel, power, nvel, &ax, &p, &pp, &pk, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 3);
  for (size_t i = 0; i < 3; i++) {
    ck_assert_double_eq_tol(pk[i].time_s, ev[i].t0, 0.004);
    ck_assert_double_eq_tol(pk[i].velocity_mps, ev[i].v, 0.01 * ev[i].v);
    ck_assert(pk[i].semblance > 0.5);
  }
  /* Dix (1955) interval velocity from the first two picks. */
  double vi = sqrt((pk[1].velocity_mps * pk[1].velocity_mps * pk[1].time_s -
                    pk[0].velocity_mps * pk[0].velocity_mps * pk[0].time_s) /
                   (pk[1].time_s - pk[0].time_s));
  ck_assert_double_eq_tol(pk[1].interval_mps, vi, 1e-6 * vi);
  ck_assert_double_eq_tol(pk[0].interval_mps, pk[0].velocity_mps, 1e-9);
  free(pk);
  /* An interval-velocity ceiling below the 0.6-0.9 s Dix velocity (about
   * 3300 m/s) forbids keeping both of the last two picks. */
  pp.interval_max_mps = 3000;
  ck_assert_int_eq(semblance_autopick(panel, power, nvel, &ax, &p, &pp, &pk, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 2);
  free(pk);
  /* A separation longer than the gaps keeps one pick out of each close pair. */
  semblance_pick_params_init(&pp);
  pp.min_separation_ms = 400;
  ck_assert_int_eq(semblance_autopick(panel, power, nvel, &ax, &p, &pp, &pk, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 2);
  ck_assert(pk[1].time_s - pk[0].time_s >= 0.4 - 1e-9);
  free(pk);
  /* A semblance floor above every maximum leaves no picks (not an error). */
  pp.min_semblance = 1.0;
  ck_assert_int_eq(semblance_autopick(panel, power, nvel, &ax, &p, &pp, &pk, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 0);
  ck_assert_ptr_null(pk);
  free(panel);
  free(power);
}
END_TEST

/* A velocity inversion is picked only when inversions are allowed. */
START_TEST(test_inversion)
{
  const struct event ev[] = { { 0.4, 2600, 1.0 }, { 0.8, 2200, 1.0 } };
  size_t nvel;
  nmo_axis ax;
  semblance_params p;
  float *power;
  float *panel = run_panel(ev, 2, 1, &nvel, &ax, &p, &power);
  semblance_pick_params pp;
  semblance_pick_params_init(&pp);
  semblance_pick *pk;
  size_t n;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(semblance_autopick(panel, power, nvel, &ax, &p, &pp, &pk, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 1);
  free(pk);
  pp.allow_inversions = 1;
  ck_assert_int_eq(semblance_autopick(panel, power, nvel, &ax, &p, &pp, &pk, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 2);
  ck_assert(pk[1].velocity_mps < pk[0].velocity_mps);
  free(pk);
  free(panel);
  free(power);
}
END_TEST

/* The stack-power floor: an event 1/50 of the strongest in amplitude has
 * 1/2500 of its power, below the default floor of 1/1000 (our own rule,
 * semblance.h), so it is picked only when the floor is lowered. */
START_TEST(test_power_floor)
{
  const struct event ev[] = { { 0.4, 2000, 1.0 }, { 0.8, 2500, 0.02 } };
  size_t nvel;
  nmo_axis ax;
  semblance_params p;
  float *power;
  float *panel = run_panel(ev, 2, 1, &nvel, &ax, &p, &power);
  semblance_pick_params pp;
  semblance_pick_params_init(&pp);
  semblance_pick *pk;
  size_t n;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(semblance_autopick(panel, power, nvel, &ax, &p, &pp, &pk, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 1);
  free(pk);
  pp.min_relative_power = 1e-4;
  ck_assert_int_eq(semblance_autopick(panel, power, nvel, &ax, &p, &pp, &pk, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 2);
  ck_assert_double_eq_tol(pk[1].velocity_mps, 2500, 25);
  free(pk);
  pp.min_relative_power = 2;
  ck_assert_int_eq(semblance_autopick(panel, power, nvel, &ax, &p, &pp, &pk, &n, &e), TZ_E_ARG);
  free(panel);
  free(power);
}
END_TEST

/* Supergathers join the gathers of a CMP range in gather order (K
 * neighbouring CMPs either side; common practice). */
START_TEST(test_supergather)
{
  float s1[2 * 3] = { 1, 2, 3, 4, 5, 6 }, s2[3] = { 7, 8, 9 }, s3[3] = { 10, 11, 12 };
  double o1[2] = { 100, 200 }, o2[1] = { 150 }, o3[1] = { 50 };
  stack_gather g[3] = {
    { .cmp = 10, .ntraces = 2, .offset_m = o1, .samples = s1 },
    { .cmp = 11, .ntraces = 1, .offset_m = o2, .samples = s2 },
    { .cmp = 13, .ntraces = 1, .offset_m = o3, .samples = s3 },
  };
  stack_gathers gs = { .axis = { 0, 0.004, 3 }, .n = 3, .g = g };
  float *s;
  double *o;
  size_t n;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(semblance_supergather(&gs, 10, 12, &s, &o, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 3);
  ck_assert(s[6] == 7 && s[8] == 9 && o[2] == 150 && o[0] == 100);
  free(s);
  free(o);
  ck_assert_int_eq(semblance_supergather(&gs, 14, 20, &s, &o, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 0);
  ck_assert_ptr_null(s);
}
END_TEST

START_TEST(test_params)
{
  semblance_params p;
  size_t nv;
  tz_err e;
  semblance_params_init(&p);
  tz_err_init(&e);
  p.velocity_step_mps = 0;
  ck_assert_int_eq(semblance_params_check(&p, &nv, &e), TZ_E_ARG);
  semblance_params_init(&p);
  tz_err_init(&e);
  p.velocity_max_mps = 1000;
  ck_assert_int_eq(semblance_params_check(&p, &nv, &e), TZ_E_ARG);
  semblance_params_init(&p);
  tz_err_init(&e);
  p.velocity_min_mps = 1500;
  p.velocity_max_mps = 1600;
  p.velocity_step_mps = 33.3;
  ck_assert_int_eq(semblance_params_check(&p, &nv, &e), TZ_OK);
  ck_assert_uint_eq(nv, 4);
}
END_TEST

/* Velocity lists for constant-velocity stacks (list syntax of tzero-cvs(1), our own). */
START_TEST(test_velocity_lists)
{
  double *v;
  size_t n;
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(semblance_parse_velocities("1500", &v, &n, &e), TZ_OK);
  ck_assert(n == 1 && v[0] == 1500);
  free(v);
  ck_assert_int_eq(semblance_parse_velocities("1500-3000:100,3500, 4e3", &v, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 18);
  ck_assert(v[0] == 1500 && v[15] == 3000 && v[16] == 3500 && v[17] == 4000);
  free(v);
  ck_assert_int_eq(semblance_parse_velocities("1500-1600:33.3", &v, &n, &e), TZ_OK);
  ck_assert_uint_eq(n, 4);
  free(v);
  static const char *bad[] = { "", "abc", "-1500", "0", "3000-1500:100", "1500-3000",
                               "1500-3000:0", "1500:100", "1500,,1600" };
  for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
    tz_err_init(&e);
    ck_assert_msg(semblance_parse_velocities(bad[i], &v, &n, &e) == TZ_E_ARG, "'%s'", bad[i]);
    ck_assert(strstr(e.msg, "velocity list item") != NULL);
  }
}
END_TEST

static Suite *semblance_suite(void)
{
  Suite *s = suite_create("semblance");
  TCase *tc = tcase_create("core");
  tcase_set_timeout(tc, 30);
  tcase_add_test(tc, test_identical);
  tcase_add_test(tc, test_check_values);
  tcase_add_test(tc, test_noise);
  tcase_add_test(tc, test_live_count);
  tcase_add_test(tc, test_min_fold);
  tcase_add_test(tc, test_window_matches_definition);
  tcase_add_test(tc, test_panel_peak_and_threads);
  tcase_add_test(tc, test_autopick);
  tcase_add_test(tc, test_inversion);
  tcase_add_test(tc, test_power_floor);
  tcase_add_test(tc, test_supergather);
  tcase_add_test(tc, test_params);
  tcase_add_test(tc, test_velocity_lists);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(semblance_suite)
