/* fuzz_segy.c -- SEG-Y reader: open (byte order, text encoding, trace count),
 * scan every trace with samples, read headers and samples of the first traces.
 * The input is the whole file, given to segy_open() as a memory file. */
#include "fuzz_util.h"
#include "tzero/segy.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
  char path[64];
  int fd = fuzz_memfile(data, size, path, sizeof path);
  if (fd < 0)
    return 0;
  for (int pass = 0; pass < 2; pass++) {
    segy_open_opts o = { 0 };
    o.allow_partial = pass;   /* both the strict and the lenient open */
    segy_file *f = NULL;
    tz_err e;
    tz_err_init(&e);
    if (segy_open(&f, path, &o, &e) == TZ_OK) {
      segy_stats st;
      tz_err_init(&e);
      segy_scan(f, 1, &st, &e);
      const segy_info *in = segy_get_info(f);
      size_t cap = in->samples ? in->samples : 1;
      float *s = malloc(cap * sizeof *s);
      int64_t n = segy_trace_count(f);
      for (int64_t i = 0; s && i < n && i < 64; i++) {
        segy_trace_header h;
        tz_err_init(&e);
        if (segy_header_read(f, i, &h, &e) == TZ_OK && h.samples <= cap) {
          tz_err_init(&e);
          segy_trace_read(f, i, &h, s, cap, &e);
        }
      }
      free(s);
    }
    segy_close(f);
  }
  close(fd);
  return 0;
}
