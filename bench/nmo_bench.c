/* nmo_bench.c -- NMO throughput on a realistic CMP gather (for `make bench`).
 *
 * Gather: 240 offsets 12.5 m apart (12.5 to 3000 m), 1500 samples at 2 ms, a
 * band-limited random trace, a velocity table with 21 control CMPs and 6 knots
 * each, stretch limit 50 %, top mute. Reports output samples per second on one
 * core for linear and sinc8, the share of time spent sampling the velocity
 * function (once per CMP, as the stacker does), and the cost of sampling it for
 * every trace instead (what happens without a per-CMP cache). Times are medians over
 * the repeats, so other load on the machine disturbs them less.
 * Usage: nmo_bench [repeats]
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "tzero/nmo.h"
#include "tzero/table.h"
#include "tzero/velocity.h"

#include "bench_util.h"

#define NTR 240
#define NS 1500
#define DT 0.002

int main(int argc, char **argv)
{
  int64_t reps = 200;
  if (argc > 1 && (table_parse_i64(argv[1], &reps) || reps < 1)) {
    fprintf(stderr, "usage: nmo_bench [repeats]\n");
    return 2;
  }
  tz_err e;
  tz_err_init(&e);
  velocity_table *vt;
  if (velocity_table_new(&vt, 0, &e))
    return bench_die("nmo_bench", &e);
  for (int c = 0; c <= 20; c++)
    for (int k = 0; k < 6; k++)
      if (velocity_table_add(vt, 100 + 50 * c, k * 0.6, 1500 + 400 * k + 5 * c, 0, &e))
        return bench_die("nmo_bench", &e);
  float *in = malloc(sizeof(float) * NTR * NS), *out = malloc(sizeof(float) * NS);
  float *w = malloc(sizeof(float) * NS), *vel = malloc(sizeof(float) * NS);
  if (!in || !out || !w || !vel)
    return 1;
  unsigned s = 12345u;
  for (size_t i = 0; i < (size_t)NTR * NS; i++) {
    s = s * 1103515245u + 12345u;
    in[i] = (float)((s >> 8) & 0xffff) / 32768.0f - 1.0f;
  }
  for (size_t j = 0; j < NTR; j++)   /* 3-point smoothing: band-limited enough */
    for (size_t i = 1; i + 1 < NS; i++)
      in[j * NS + i] = 0.25f * in[j * NS + i - 1] + 0.5f * in[j * NS + i] +
                       0.25f * in[j * NS + i + 1];
  nmo_workspace *ws;
  if (nmo_workspace_new(&ws, NS, &e))
    return bench_die("nmo_bench", &e);
  nmo_params p;
  nmo_params_init(&p);
  nmo_top_mute mute;
  double mx[] = { 0, 3000 }, mt[] = { 20, 900 };
  if (nmo_top_mute_set(&mute, mx, mt, 2, 16, &e))
    return bench_die("nmo_bench", &e);
  nmo_axis ax = { 0.0, DT, NS };
  double sink = 0, t_lin_trace = 0;
  double *tv = malloc(sizeof(double) * (size_t)reps), *tn = malloc(sizeof(double) * (size_t)reps);
  if (!tv || !tn)
    return 1;
  for (int interp = NMO_INTERP_LINEAR; interp <= NMO_INTERP_SINC8; interp++) {
    p.interp = interp;
    double t_vel = 0, t_correct = 0;
    size_t live = 0;
    for (int64_t r = 0; r < reps; r++) {
      double t0 = bench_now();
      velocity_sample(vt, 100 + r % 1000, ax.t_first_s, ax.dt_s, NS, vel, NULL);
      double t1 = bench_now();
      for (size_t j = 0; j < NTR; j++) {
        nmo_trace_info info;
        if (nmo_apply(ws, &p, &mute, &ax, 12.5 * (double)(j + 1), in + j * NS, vel, NULL,
                      out, w, &info, &e))
          return bench_die("nmo_bench", &e);
        live += info.live;
        sink += out[NS / 2];
      }
      double t2 = bench_now();
      tv[r] = t1 - t0;
      tn[r] = t2 - t1;
    }
    t_vel = bench_median(tv, (size_t)reps) * (double)reps;   /* median gather, scaled */
    t_correct = bench_median(tn, (size_t)reps) * (double)reps;
    double nsamp = (double)reps * NTR * NS;
    if (interp == NMO_INTERP_LINEAR)
      t_lin_trace = t_correct / ((double)reps * NTR);
    printf("nmo %-6s: %7.1f M output samples/s/core (%5.1f M live samples/s), "
           "%.3f ms per 240x1500 gather; velocity sampling %.2f%% of the time\n",
           nmo_interp_name(interp), nsamp / t_correct * 1e-6, (double)live / t_correct * 1e-6,
           t_correct / (double)reps * 1e3, 100 * t_vel / (t_vel + t_correct));
  }
  /* Without a per-CMP cache: velocity sampled for every trace (shot order). */
  double t0 = bench_now();
  for (int64_t r = 0; r < reps; r++)
    for (size_t j = 0; j < NTR; j++) {
      velocity_sample(vt, 100 + (int64_t)((r * NTR + j) % 1000), 0.0, DT, NS, vel, NULL);
      sink += vel[7];
    }
  double t_each = (bench_now() - t0) / ((double)reps * NTR);
  printf("velocity_sample: %.2f us per 1500-sample function (%.1f M samples/s); "
         "sampled per trace instead of per CMP it would cost about %.0f%% of linear NMO\n",
         t_each * 1e6, NS / t_each * 1e-6, 100 * t_each / t_lin_trace);
  (void)sink;
  nmo_workspace_free(ws);
  velocity_table_free(vt);
  free(in);
  free(out);
  free(w);
  free(vel);
  free(tv);
  free(tn);
  return sink == 12345.678 ? 3 : 0;
}
