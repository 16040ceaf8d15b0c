/* semblance_bench.c -- time for one semblance panel (for `make bench`).
 *
 * Issue #6 case: a 5-CMP supergather of 60 traces each (300 traces, offsets
 * 25 to 1500 m), 1500 samples at 2 ms, 150 trial velocities (1400 to 4380 m/s
 * in 20 m/s steps), 40 ms window, stretch limit 50 %, linear interpolation.
 * Traces: four Ricker reflections on exact hyperbolas plus random noise.
 * Reports the best of `repeats` runs for 1 and 2 threads, the speed-up, the
 * corrected samples per second, the autopick time, and checks that both
 * thread counts give a bitwise-identical panel.
 * Usage: semblance_bench [repeats]
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "tzero/semblance.h"
#include "tzero/table.h"

#include "bench_util.h"

#define NTR 300
#define NS 1500
#define DT 0.002

int main(int argc, char **argv)
{
  int64_t reps = 3;
  if (argc > 1 && (table_parse_i64(argv[1], &reps) || reps < 1)) {
    fprintf(stderr, "usage: semblance_bench [repeats]\n");
    return 2;
  }
  float *g = calloc((size_t)NTR * NS, sizeof *g);
  double *off = malloc(NTR * sizeof *off);
  if (!g || !off)
    return 1;
  static const double t0[] = { 0.4, 0.9, 1.5, 2.2 }, v[] = { 1800, 2200, 2600, 3000 };
  unsigned s = 12345u;
  for (size_t i = 0; i < NTR; i++) {
    off[i] = 25.0 * (double)(i % 60 + 1);
    for (size_t j = 0; j < NS; j++) {
      s = s * 1103515245u + 12345u;
      g[i * NS + j] = 0.1f * ((float)(s >> 8) / 16777216.0f - 0.5f);
    }
    for (int e = 0; e < 4; e++) {
      double t = sqrt(t0[e] * t0[e] + off[i] * off[i] / (v[e] * v[e]));
      for (size_t j = 0; j < NS; j++) {
        double u = M_PI * 30.0 * ((double)j * DT - t);
        g[i * NS + j] += (float)((1 - 2 * u * u) * exp(-u * u));
      }
    }
  }
  semblance_params p;
  semblance_params_init(&p);
  p.velocity_min_mps = 1400;
  p.velocity_max_mps = 4380;
  p.velocity_step_mps = 20;
  size_t nvel;
  tz_err e;
  tz_err_init(&e);
  if (semblance_params_check(&p, &nvel, &e))
    return bench_die("semblance_bench", &e);
  semblance_gather sg = { .ntraces = NTR, .axis = { 0.0, DT, NS }, .samples = g, .offset_m = off };
  float *pan[2], *pow_[2];
  double best[2];
  for (int th = 0; th < 2; th++) {
    pan[th] = malloc(nvel * NS * sizeof(float));
    pow_[th] = malloc(nvel * NS * sizeof(float));
    if (!pan[th] || !pow_[th])
      return 1;
    p.threads = th + 1;
    best[th] = 1e30;
    for (int64_t r = 0; r < reps; r++) {
      double t = bench_now();
      if (semblance_panel(&sg, &p, pan[th], pow_[th], &e))
        return bench_die("semblance_bench", &e);
      t = bench_now() - t;
      best[th] = t < best[th] ? t : best[th];
    }
  }
  semblance_pick_params pp;
  semblance_pick_params_init(&pp);
  semblance_pick *pk;
  size_t np;
  double tp = bench_now();
  if (semblance_autopick(pan[0], pow_[0], nvel, &sg.axis, &p, &pp, &pk, &np, &e))
    return bench_die("semblance_bench", &e);
  tp = bench_now() - tp;
  int same = memcmp(pan[0], pan[1], nvel * NS * sizeof(float)) == 0 &&
             memcmp(pow_[0], pow_[1], nvel * NS * sizeof(float)) == 0;
  printf("semblance panel: %d traces (5 CMPs x 60), %d samples, %zu trial velocities\n", NTR,
         NS, nvel);
  printf("  1 thread : %8.1f ms  (%.0f M corrected samples/s)\n", best[0] * 1e3,
         (double)NTR * NS * (double)nvel / best[0] / 1e6);
  printf("  2 threads: %8.1f ms  speed-up %.2fx\n", best[1] * 1e3, best[0] / best[1]);
  printf("  autopick : %8.2f ms  (%zu picks)\n", tp * 1e3, np);
  printf("  panels identical for 1 and 2 threads: %s\n", same ? "yes" : "NO");
  free(pk);
  for (int th = 0; th < 2; th++) {
    free(pan[th]);
    free(pow_[th]);
  }
  free(g);
  free(off);
  return same ? 0 : 1;
}
