/* fuzz_poststack.c -- post-stack steps files (JSON, tzero condition --steps): parse,
 * then bind the chain to two small sections and apply it (every parameter the parser
 * lets through must give a plan or a refusal, never a crash or a hang). */
#include <math.h>
#include <stdint.h>

#include "fuzz_util.h"
#include "tzero/job.h"
#include "tzero/poststack.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
  char path[64];
  int fd = fuzz_memfile(data, size, path, sizeof path);
  if (fd < 0)
    return 0;
  poststack_chain c;
  tz_err e;
  tz_err_init(&e);
  int rc = job_load_poststack(&c, path, &e);
  close(fd);
  if (rc)
    return 0;
  static const struct { double t0, dt; size_t ns, ntr; } axes[] = {
    { 0.0, 0.004, 300, 24 }, { -0.05, 0.002, 64, 3 },
  };
  static float x[300 * 24];
  static unsigned char live[24];
  for (size_t a = 0; a < sizeof axes / sizeof axes[0]; a++) {
    size_t ns = axes[a].ns, ntr = axes[a].ntr;
    for (size_t j = 0; j < ntr; j++) {
      live[j] = j % 5 != 3;
      for (size_t i = 0; i < ns; i++)
        x[j * ns + i] = live[j] ? (float)sin(0.3 * (double)i + 0.7 * (double)j) : 0.0f;
    }
    poststack_plan *p = NULL;
    tz_err_init(&e);
    if (poststack_plan_new(&p, &c, (int)a, axes[a].t0, axes[a].dt, ns, ntr, &e) == TZ_OK) {
      tz_err_init(&e);
      poststack_apply(p, x, live, &e);
    }
    poststack_plan_free(p);
  }
  char buf[2048];
  poststack_describe(&c, POSTSTACK_STAGE_ALL, buf, sizeof buf);
  return 0;
}
