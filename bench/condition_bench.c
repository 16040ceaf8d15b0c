/* condition_bench.c -- trace-conditioning throughput (for `make bench`).
 *
 * 240 random traces of 1500 samples at 2 ms, conditioned in place on one core:
 * band-pass (5, 10, 60, 80) Hz (FFT of 3000 points), spherical divergence from a
 * velocity table (velocities sampled by the caller once per CMP, as the stacker
 * does; and sampled by the workspace itself, a new CMP every trace), AGC 500 ms (RMS), and the three in one
 * chain. Reports traces per second and ns per sample; times are medians over the
 * repeats, so other load on the machine disturbs them less.
 * Usage: condition_bench [repeats]
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "tzero/condition.h"
#include "tzero/table.h"
#include "tzero/velocity.h"

#include "bench_util.h"

#define NTR 240
#define NS 1500
#define DT 0.002

enum { BP, SPH_CALLER, SPH_SELF, AGC, CHAIN, NCASE };
static const char *const names[NCASE] = {
  "band-pass 5-10-60-80 Hz", "spherical (caller's V)", "spherical (sampled V)", "AGC 500 ms rms",
  "chain sph+bp+agc",
};

int main(int argc, char **argv)
{
  int64_t reps = 20;
  if (argc > 1 && (table_parse_i64(argv[1], &reps) || reps < 1)) {
    fprintf(stderr, "usage: condition_bench [repeats]\n");
    return 2;
  }
  tz_err e;
  tz_err_init(&e);
  velocity_table *vt;
  if (velocity_table_new(&vt, 0, &e))
    return bench_die("condition_bench", &e);
  for (int c = 0; c <= 20; c++)
    for (int k = 0; k < 6; k++)
      if (velocity_table_add(vt, 100 + 50 * c, k * 0.6, 1500 + 400 * k + 5 * c, 0, &e))
        return bench_die("condition_bench", &e);
  float *src = malloc(sizeof(float) * NTR * NS), *x = malloc(sizeof(float) * NTR * NS);
  float *vel = malloc(sizeof(float) * NS);
  double *tm = malloc(sizeof(double) * (size_t)reps);
  if (!src || !x || !vel || !tm)
    return 1;
  unsigned s = 12345u;
  for (size_t i = 0; i < (size_t)NTR * NS; i++) {
    s = s * 1103515245u + 12345u;
    src[i] = (float)((s >> 8) & 0xffff) / 32768.0f - 1.0f;
  }
  const double corners[4] = { 5, 10, 60, 80 };
  double sink = 0;
  for (int k = 0; k < NCASE; k++) {
    condition_chain c;
    condition_chain_init(&c);
    int rc = TZ_OK;
    if (k == SPH_CALLER || k == SPH_SELF || k == CHAIN)
      rc = condition_chain_add_spherical(&c, 1.0, 0, &e);
    if (!rc && (k == BP || k == CHAIN))
      rc = condition_chain_add_bandpass(&c, corners, &e);
    if (!rc && (k == AGC || k == CHAIN))
      rc = condition_chain_add_agc(&c, 0.5, CONDITION_AGC_RMS, &e);
    condition_plan *p = NULL;
    condition_workspace *ws = NULL;
    if (rc || condition_plan_new(&p, &c, 0.0, DT, NS, vt, &e) ||
        condition_workspace_new(&ws, p, &e))
      return bench_die("condition_bench", &e);
    for (int64_t r = 0; r < reps; r++) {
      memcpy(x, src, sizeof(float) * NTR * NS);
      int64_t cmp = 100 + r % 1000;
      double t0 = bench_now();
      const float *v = NULL;
      if (k != SPH_SELF) {
        velocity_sample(vt, cmp, 0.0, DT, NS, vel, NULL);   /* once per CMP */
        v = vel;
      }
      for (size_t j = 0; j < NTR; j++)
        if (condition_apply(p, ws, k == SPH_SELF ? cmp + (int64_t)j : cmp, v, x + j * NS, &e))
          return bench_die("condition_bench", &e);
      tm[r] = bench_now() - t0;
      sink += x[NS / 2];
    }
    double t = bench_median(tm, (size_t)reps) / NTR;
    printf("condition %-24s: %9.0f traces/s/core (1500 samples), %6.2f ns/sample\n", names[k],
           1.0 / t, t / NS * 1e9);
    condition_workspace_free(ws);
    condition_plan_free(p);
  }
  velocity_table_free(vt);
  free(src);
  free(x);
  free(vel);
  free(tm);
  return sink == 12345.678 ? 3 : 0;
}
