/* fuzz_layout.c -- acquisition layouts (JSON): parse, check, and place the
 * first shots and channels, as synth and geometry --layout do. */
#include "fuzz_util.h"
#include "tzero/geometry.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
  char *text = malloc(size + 1);
  if (!text)
    return 0;
  memcpy(text, data, size);
  text[size] = '\0';
  geometry_layout l;
  geometry_layout_init(&l);
  tz_err e;
  tz_err_init(&e);
  int rc = geometry_layout_parse(&l, text, size, "layout.json", &e);
  free(text);
  if (rc)
    return 0;
  tz_err_init(&e);
  if (geometry_layout_check(&l, &e) == TZ_OK) {
    size_t ns = geometry_layout_shots(&l), nc = geometry_layout_channels(&l);
    for (size_t k = 0; k < ns && k < 8; k++) {
      geometry_shot sh;
      tz_err_init(&e);
      if (geometry_layout_shot(&l, k, &sh, &e))
        continue;
      for (size_t c = 0; c < nc && c < 16; c++) {
        geometry_trace g;
        tz_err_init(&e);
        geometry_layout_trace(&l, k, c, &g, &e);
      }
    }
  }
  geometry_layout_free(&l);
  return 0;
}
