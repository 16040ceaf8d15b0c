/* check_simd.c -- the AVX2 kernels give the same bits as the portable code.
 *
 * Source of the rule: DEVELOPERS.md (threads and SIMD) requires the stacked section to be
 * bitwise reproducible; the SIMD paths (src/moveout/nmo.c, src/io/segy_conv.c) are only
 * allowed because they perform the portable code's IEEE operations lane by
 * lane. The portable paths themselves are checked against outside references
 * in check_nmo.c, check_segy.c and the segyio/NumPy cross-checks; here each
 * SIMD result is compared with them bit for bit on random inputs.
 * On a CPU without AVX2 both sides take the portable path (the test says so).
 */
#include <float.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include "io/segy_priv.h"
#include "tzero/nmo.h"
#include "tzero/semblance.h"
#include "unit.h"

static uint32_t rnd(uint64_t *s)   /* xorshift64* (Vigna 2016) */
{
  *s ^= *s >> 12;
  *s ^= *s << 25;
  *s ^= *s >> 27;
  return (uint32_t)((*s * 2685821657736338717ull) >> 32);
}

static double unif(uint64_t *s, double a, double b)
{
  return a + (b - a) * (rnd(s) / 4294967296.0);
}

/* IBM words of every exponent (0..127), fractions normalised, unnormalised and
 * zero, both signs, decoded in runs of every length 0..40 from odd offsets: the
 * block decoder against the one-word converter, and the overflow count against
 * the value computed in double (IBM: 16^(e - 64) x fraction / 2^24,
 * IBM System/360 Principles of Operation, hexadecimal floating point). */
START_TEST(test_ibm_blocks)
{
  enum { N = 4096 };
  static unsigned char bytes[4 * N + 3];
  static float out[N];
  uint64_t s = 0x9E3779B97F4A7C15ull;
  for (int round = 0; round < 200; round++) {
    unsigned char *b = bytes + (round % 3);
    size_t n = round < 41 ? (size_t)round : N - (size_t)(rnd(&s) % 64);
    int64_t want_bad = 0;
    for (size_t i = 0; i < n; i++) {
      uint32_t e = rnd(&s) % 128, f;
      uint32_t kind = rnd(&s) % 8;
      if (round % 2)
        e = 39 + e % 58;                    /* mostly the fast range */
      f = kind == 0 ? 0 : kind == 1 ? rnd(&s) % 0x100000u : rnd(&s) & 0xFFFFFFu;
      uint32_t w = (rnd(&s) & 0x80000000u) | e << 24 | f;
      b[4 * i] = (unsigned char)(w >> 24);
      b[4 * i + 1] = (unsigned char)(w >> 16);
      b[4 * i + 2] = (unsigned char)(w >> 8);
      b[4 * i + 3] = (unsigned char)w;
      if (f && ldexp((double)f, 4 * ((int)e - 64) - 24) > FLT_MAX)
        want_bad++;
    }
    int64_t bad = segy_decode_samples(1, SEGY_ORDER_BIG, b, n, out);
    ck_assert_int_eq(bad, want_bad);
    for (size_t i = 0; i < n; i++) {
      uint32_t w = (uint32_t)b[4 * i] << 24 | (uint32_t)b[4 * i + 1] << 16 |
                   (uint32_t)b[4 * i + 2] << 8 | b[4 * i + 3];
      float r = segy_ibm_to_float(w);
      if (memcmp(&r, &out[i], sizeof r))
        ck_abort_msg("round %d word %zu (0x%08X): block %a, one-word %a", round, i,
                     (unsigned)w, (double)out[i], (double)r);
    }
  }
}
END_TEST

/* Random gathers through both NMO paths: sample counts 1..2500 (so every SIMD
 * tail length occurs), negative start times, velocity inversions, eta, stretch
 * limits 0-150 %, top mutes with and without taper, both interpolations. */
START_TEST(test_nmo_paths)
{
  enum { NSMAX = 2500 };
  static float in[NSMAX], vel[NSMAX], eta[NSMAX];
  static float o1[NSMAX], w1[NSMAX], o2[NSMAX], w2[NSMAX];
  tz_err e;
  tz_err_init(&e);
  nmo_workspace *simd, *port;
  ck_assert_int_eq(nmo_workspace_new(&simd, NSMAX, &e), TZ_OK);
  ck_assert_int_eq(nmo_workspace_new(&port, NSMAX, &e), TZ_OK);
  int have = nmo_workspace_simd(simd, 1);
  ck_assert_int_eq(nmo_workspace_simd(port, 0), 0);
  if (!have)
    printf("skip - check_simd: AVX2 kernels against the portable code: no AVX2 on this CPU "
           "(both sides ran the portable code)\n");
  uint64_t s = 12345;
  for (int c = 0; c < 400; c++) {
    nmo_axis ax;
    ax.ns = c < 40 ? (size_t)c + 1 : 1 + rnd(&s) % NSMAX;
    ax.dt_s = (double)(1 + rnd(&s) % 4) * 1e-3;
    ax.t_first_s = rnd(&s) % 4 ? 0.0 : -unif(&s, 0, 0.1);
    double v = unif(&s, 1400, 2000);
    for (size_t i = 0; i < ax.ns; i++) {
      in[i] = (float)unif(&s, -1, 1);
      v += unif(&s, c % 5 ? 0 : -30, 8);   /* every fifth function has inversions */
      vel[i] = (float)(v > 300 ? v : 300);
      eta[i] = (float)unif(&s, 0, 0.2);
    }
    nmo_params p;
    nmo_params_init(&p);
    p.interp = c % 2 ? NMO_INTERP_SINC8 : NMO_INTERP_LINEAR;
    p.stretch_limit_pct = (double)(rnd(&s) % 4) * 50;
    p.stretch_taper_ms = (double)(rnd(&s) % 3) * 10;
    p.use_eta = c % 3 == 0;
    nmo_top_mute m;
    double mx[] = { 0, 3000 }, mt[] = { unif(&s, 0, 50), unif(&s, 200, 1500) };
    ck_assert_int_eq(nmo_top_mute_set(&m, mx, mt, 2, (double)(rnd(&s) % 2) * 20, &e), TZ_OK);
    const nmo_top_mute *mp = c % 4 ? &m : NULL;
    for (int t = 0; t < 8; t++) {
      double off = t == 0 ? 0 : unif(&s, -4000, 4000);
      nmo_trace_info i1, i2;
      ck_assert_int_eq(nmo_apply(simd, &p, mp, &ax, off, in, vel, eta, o1, w1, &i1, &e), TZ_OK);
      ck_assert_int_eq(nmo_apply(port, &p, mp, &ax, off, in, vel, eta, o2, w2, &i2, &e), TZ_OK);
      if (memcmp(o1, o2, ax.ns * sizeof *o1) || memcmp(w1, w2, ax.ns * sizeof *w1) ||
          memcmp(&i1, &i2, sizeof i1))
        ck_abort_msg("case %d trace %d (ns %zu, %s, offset %.1f m): SIMD and portable differ", c,
                     t, ax.ns, nmo_interp_name(p.interp), off);
    }
  }
  nmo_workspace_free(simd);
  nmo_workspace_free(port);
}
END_TEST

/* The semblance accumulator's AVX2 sums (src/velocity/semblance.c) against its
 * portable loop: random traces over random live spans (every alignment and
 * length 0..40, then long ones), panels compared bit for bit after finish. */
START_TEST(test_semblance_acc_paths)
{
  enum { NS = 1200 };
  static float tr[NS], o1[NS], o2[NS], p1[NS], p2[NS];
  tz_err e;
  tz_err_init(&e);
  semblance_acc *a, *b;
  ck_assert_int_eq(semblance_acc_new(&a, NS, &e), TZ_OK);
  ck_assert_int_eq(semblance_acc_new(&b, NS, &e), TZ_OK);
  int have = semblance_acc_simd(a, 1);
  ck_assert_int_eq(semblance_acc_simd(b, 0), 0);
  if (!have)
    printf("skip - check_simd: semblance sums: no AVX2 on this CPU (both sides portable)\n");
  uint64_t s = 777;
  for (int c = 0; c < 60; c++) {
    semblance_acc_reset(a);
    semblance_acc_reset(b);
    for (int t = 0; t < 30; t++) {
      for (size_t i = 0; i < NS; i++)
        tr[i] = (float)unif(&s, -1, 1);
      size_t lo = rnd(&s) % NS, n = c < 41 ? (size_t)c : rnd(&s) % NS;
      semblance_acc_add(a, tr, lo, lo + n);
      semblance_acc_add(b, tr, lo, lo + n);
    }
    semblance_acc_finish(a, 10, o1, p1);
    semblance_acc_finish(b, 10, o2, p2);
    if (memcmp(o1, o2, sizeof o1) || memcmp(p1, p2, sizeof p1))
      ck_abort_msg("case %d: SIMD and portable semblance differ", c);
  }
  semblance_acc_free(a);
  semblance_acc_free(b);
}
END_TEST

static Suite *simd_suite(void)
{
  Suite *s = suite_create("simd");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_ibm_blocks);
  tcase_add_test(tc, test_nmo_paths);
  tcase_add_test(tc, test_semblance_acc_paths);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(simd_suite)
