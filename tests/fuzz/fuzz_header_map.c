/* fuzz_header_map.c -- header maps (JSON naming trace header fields, bytes and
 * widths): parse, then decode every trace of a small valid SEG-Y file with the
 * map, as `inspect --header-map` and a job's header_map do. */
#include "fuzz_util.h"
#include "tzero/segy.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
  char *text = malloc(size + 1);
  if (!text)
    return 0;
  memcpy(text, data, size);
  text[size] = '\0';
  segy_header_map map;
  tz_err e;
  tz_err_init(&e);
  int rc = segy_header_map_parse(&map, text, "map.json", &e);
  free(text);
  if (rc)
    return 0;
  size_t n;
  unsigned char *file = fuzz_small_segy(&n);
  char path[64];
  int fd = file ? fuzz_memfile(file, n, path, sizeof path) : -1;
  free(file);
  if (fd < 0)
    return 0;
  segy_open_opts o = { 0 };
  o.map = &map;
  segy_file *f = NULL;
  tz_err_init(&e);
  if (segy_open(&f, path, &o, &e) == TZ_OK) {
    segy_stats st;
    tz_err_init(&e);
    segy_scan(f, 0, &st, &e);
    for (int64_t i = 0; i < segy_trace_count(f); i++) {
      segy_trace_header h;
      tz_err_init(&e);
      segy_header_read(f, i, &h, &e);
    }
  }
  segy_close(f);
  close(fd);
  return 0;
}
