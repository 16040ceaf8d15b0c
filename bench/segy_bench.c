/* segy_bench.c -- SEG-Y read speed: header-only scan and full read of IBM
 * traces, against a plain sequential fread of the same file in the same run.
 *
 * Usage: segy_bench FILE [MB]. Writes about MB megabytes (default 300) of
 * format 1 traces to FILE with the library's writer, reads it once to warm
 * the page cache, then times: plain fread in 1 MB blocks; segy_header_read
 * over every trace; segy_trace_read over every trace; and IBM-to-float
 * conversion alone on an in-memory buffer. Rates are file megabytes (1e6
 * bytes) per second of wall-clock time; best of three runs each.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "io/segy_priv.h"   /* segy_decode_samples: the converter segy_trace_read uses */
#include "tzero/segy.h"

#include "bench_util.h"

#define NS 3000u

static double plain_read(const char *path, double *sink)
{
  FILE *fp = fopen(path, "rb");
  if (!fp)
    return -1;
  static const size_t cap = 1u << 20;
  unsigned char *buf = malloc(cap);
  double t = bench_now();
  size_t n;
  unsigned long sum = 0;
  while ((n = fread(buf, 1, cap, fp)) > 0)
    sum += buf[n - 1];
  t = bench_now() - t;
  *sink += (double)sum;
  free(buf);
  fclose(fp);
  return t;
}

int main(int argc, char **argv)
{
  if (argc < 2) {
    fprintf(stderr, "usage: segy_bench FILE [MB]\n");
    return 64;
  }
  const char *path = argv[1];
  double mb = argc > 2 ? atof(argv[2]) : 300;
  size_t tb = 240 + 4 * NS;
  long ntr = (long)(mb * 1e6 / (double)tb);
  tz_err err;
  tz_err_init(&err);

  /* write */
  segy_writer_opts o = { .format_code = 1, .samples = NS, .interval_us = 1000,
                        .sorting_code = 1, .text = "SPEED TEST FILE, INVENTED DATA" };
  segy_writer *w;
  float *s = malloc(NS * sizeof *s);
  double t = bench_now();
  if (segy_writer_open(&w, path, &o, &err))
    return bench_die("segy_bench", &err);
  for (long i = 0; i < ntr; i++) {
    segy_trace_header h;
    memset(&h, 0, sizeof h);
    h.field_record = (int32_t)(i / 240 + 1);
    h.channel = (int32_t)(i % 240 + 1);
    h.kind = 1;
    h.source_x = 1000 + 25.0 * (double)(i / 240);
    h.receiver_x = h.source_x + 12.5 * (double)(i % 240);
    for (uint32_t k = 0; k < NS; k++)
      s[k] = (float)sin(0.01 * k + (double)i) * 1000.0f;
    if (segy_trace_write(w, &h, s, &err))
      return bench_die("segy_bench", &err);
  }
  if (segy_writer_finish(w, &err))
    return bench_die("segy_bench", &err);
  double twrite = bench_now() - t;
  double bytes = 3600.0 + (double)ntr * (double)tb;
  printf("file: %.0f MB, %ld traces of %u IBM samples; written in %.2f s (%.0f MB/s, "
         "IEEE->IBM included)\n", bytes / 1e6, ntr, NS, twrite, bytes / 1e6 / twrite);

  double sink = 0, best_plain = 1e30, best_hdr = 1e30, best_full = 1e30;
  plain_read(path, &sink);            /* warm the page cache */
  for (int run = 0; run < 3; run++) {
    double tp = plain_read(path, &sink);
    if (tp < best_plain)
      best_plain = tp;

    segy_file *f;
    if (segy_open(&f, path, NULL, &err))
      return bench_die("segy_bench", &err);
    int64_t n = segy_trace_count(f);
    segy_trace_header h;
    t = bench_now();
    for (int64_t i = 0; i < n; i++) {
      if (segy_header_read(f, i, &h, &err))
        return bench_die("segy_bench", &err);
      sink += h.receiver_x;
    }
    double th = bench_now() - t;
    t = bench_now();
    for (int64_t i = 0; i < n; i++) {
      if (segy_trace_read(f, i, &h, s, NS, &err))
        return bench_die("segy_bench", &err);
      sink += s[i % NS];
    }
    double tf = bench_now() - t;
    segy_close(f);
    if (th < best_hdr)
      best_hdr = th;
    if (tf < best_full)
      best_full = tf;
  }

  /* IBM conversion alone: one trace of big-endian words, converted over and
   * over in cache, through the same loop segy_trace_read uses */
  unsigned char *words = malloc(4 * (size_t)NS);
  for (uint32_t k = 0; k < NS; k++) {
    uint32_t wd = segy_float_to_ibm((float)sin(0.37 * k) * 1000.0f);
    words[4 * k] = (unsigned char)(wd >> 24);
    words[4 * k + 1] = (unsigned char)(wd >> 16);
    words[4 * k + 2] = (unsigned char)(wd >> 8);
    words[4 * k + 3] = (unsigned char)wd;
  }
  long reps = 20000;
  t = bench_now();
  for (long r = 0; r < reps; r++) {
    segy_decode_samples(1, SEGY_ORDER_BIG, words, NS, s);
    sink += s[r % NS];
  }
  double tc = bench_now() - t;
  double nw = (double)reps * NS;

  printf("plain sequential fread (1 MB blocks): %8.0f MB/s\n", bytes / 1e6 / best_plain);
  printf("header-only scan (segy_header_read):  %8.0f MB/s of file, %.2f M traces/s\n",
         bytes / 1e6 / best_hdr, (double)ntr / best_hdr / 1e6);
  printf("full read (segy_trace_read, IBM):     %8.0f MB/s (%.0f%% of plain read)\n",
         bytes / 1e6 / best_full, 100.0 * best_plain / best_full);
  printf("IBM->float conversion alone:          %8.0f MB/s of samples (%.0f M samples/s)\n",
         nw * 4 / 1e6 / tc, nw / tc / 1e6);
  if (sink == 42.4242)
    printf("(checksum)\n");
  free(words);
  free(s);
  return 0;
}
