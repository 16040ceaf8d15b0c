/* bench_util.h -- what the benchmark programs share: a monotonic clock, a
 * median of repeated timings, and printing a library error. Header-only. */
#ifndef TZERO_BENCH_UTIL_H
#define TZERO_BENCH_UTIL_H

#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#include "tzero/error.h"

static inline double bench_now(void)
{
  struct timespec ts;
  clock_gettime(CLOCK_MONOTONIC, &ts);
  return (double)ts.tv_sec + (double)ts.tv_nsec * 1e-9;
}

static inline int bench_cmp_dbl(const void *a, const void *b)
{
  double x = *(const double *)a, y = *(const double *)b;
  return (x > y) - (x < y);
}

/* Median of n times (sorts in place): robust against other load on the machine. */
static inline double bench_median(double *v, size_t n)
{
  qsort(v, n, sizeof *v, bench_cmp_dbl);
  return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

/* Prints "PROG: <formatted error>" to stderr; returns 1 for main(). */
static inline int bench_die(const char *prog, const tz_err *e)
{
  char buf[1200];
  tz_err_format(e, buf, sizeof buf);
  fprintf(stderr, "%s: %s\n", prog, buf);
  return 1;
}

#endif
