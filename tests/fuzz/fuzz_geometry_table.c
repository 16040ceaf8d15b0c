/* fuzz_geometry_table.c -- geometry tables (CSV, one row per trace): parse and
 * look up a few (field record, channel) pairs. */
#include "fuzz_util.h"
#include "tzero/geometry.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
  geometry_table *t = NULL;
  tz_err e;
  tz_err_init(&e);
  if (geometry_table_parse(&t, "table.csv", (const char *)data, size, &e))
    return 0;
  static const int32_t keys[][2] = { { 1, 1 }, { 1, 2 }, { 0, 0 }, { -1, -1 },
                                     { INT32_MAX, INT32_MIN } };
  for (size_t i = 0; i < sizeof keys / sizeof keys[0]; i++) {
    geometry_trace g;
    tz_err_init(&e);
    geometry_table_find(t, keys[i][0], keys[i][1], &g, &e);
  }
  geometry_table_free(t);
  return 0;
}
