/* fuzz_model.c -- layered-earth models (JSON): parse, then exact reflection
 * times of every interface at a few offsets (synth's ray tracing). */
#include "fuzz_util.h"
#include "tzero/synth.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
  char *text = malloc(size + 1);
  if (!text)
    return 0;
  memcpy(text, data, size);
  text[size] = '\0';
  synth_model m;
  tz_err e;
  tz_err_init(&e);
  int rc = synth_model_parse(&m, text, size, "model.json", &e);
  free(text);
  if (rc)
    return 0;
  static const double offsets[] = { 0, 1, 250, 5000 };
  for (size_t k = 0; k + 1 < m.nlayers; k++) {
    for (size_t i = 0; i < sizeof offsets / sizeof offsets[0]; i++) {
      double t, p;
      synth_flat_time(&m, k, offsets[i], &t, &p);
    }
    synth_t0(&m, k);
    synth_vrms(&m, k);
  }
  return 0;
}
