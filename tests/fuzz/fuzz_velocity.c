/* fuzz_velocity.c -- velocity tables (CSV): parse, sample the function of a
 * few CMPs (inside, between and far outside the control CMPs), Dix checks,
 * write the table back. */
#include <stdint.h>

#include "fuzz_util.h"
#include "tzero/velocity.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
  velocity_table *t = NULL;
  tz_err e;
  tz_err_init(&e);
  if (velocity_table_parse(&t, "v.csv", (const char *)data, size, &e))
    return 0;
  static const int64_t cmps[] = { INT64_MIN, -1000000001, -1, 0, 1, 120, 1000000001, INT64_MAX };
  float v[64], eta[64];
  for (size_t i = 0; i < sizeof cmps / sizeof cmps[0]; i++) {
    velocity_sample(t, cmps[i], 0.0, 0.004, 64, v, eta);
    velocity_at(t, cmps[i], 0.5, NULL);
  }
  for (size_t i = 0; i < velocity_table_ncmps(t); i++)
    velocity_sample(t, velocity_table_cmp(t, i), 0.0, 0.004, 64, v, NULL);
  velocity_warning *w = NULL;
  size_t nw = 0;
  tz_err_init(&e);
  if (velocity_check(t, 0, 0, &w, &nw, &e) == TZ_OK)
    free(w);
  FILE *fp = fopen("/dev/null", "w");
  if (fp) {
    tz_err_init(&e);
    velocity_table_write_stream(t, fp, "v.csv", &e);
    fclose(fp);
  }
  velocity_table_free(t);
  return 0;
}
