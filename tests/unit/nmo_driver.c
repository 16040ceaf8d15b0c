/* nmo_driver.c -- runs the nmo library on a raw float32 gather, for the NumPy
 * cross-checks in tests/xcheck (not a Check suite, and not part of tzero).
 *
 * usage: nmo_driver TABLE CMP T_FIRST_S DT_S NS INTERP STRETCH_PCT TAPER_MS
 *                   IN.f32 OFFSETS.f32 OUT.f32 WEIGHTS.f32
 * IN holds ntr x NS samples and OFFSETS ntr offsets (m), host-order float32; OUT and
 * WEIGHTS receive ntr x NS corrected samples and live weights. The velocity of CMP
 * is sampled from TABLE with velocity_sample(); eta is used when TABLE has it.
 * Exit 0 on success, 1 on any failure (message on stderr).
 */
#include <stdio.h>
#include <stdlib.h>

#include "tzero/nmo.h"
#include "tzero/table.h"
#include "tzero/velocity.h"

#include "driver_io.h"

static int fail(const char *what)
{
  fprintf(stderr, "nmo_driver: %s\n", what);
  return 1;
}

int main(int argc, char **argv)
{
  if (argc != 13)
    return fail("usage: TABLE CMP T_FIRST_S DT_S NS INTERP STRETCH_PCT TAPER_MS IN OFFSETS "
                "OUT WEIGHTS");
  int64_t cmp, ns64;
  double tf, dt, spct, taper;
  if (table_parse_i64(argv[2], &cmp) || table_parse_f64(argv[3], &tf) ||
      table_parse_f64(argv[4], &dt) || table_parse_i64(argv[5], &ns64) || ns64 < 1 ||
      table_parse_f64(argv[7], &spct) || table_parse_f64(argv[8], &taper))
    return fail("bad numeric argument");
  int interp = nmo_interp_parse(argv[6]);
  if (interp < 0)
    return fail("interpolation must be linear or sinc8");
  size_t ns = (size_t)ns64, nin, ntr;
  float *in = driver_slurp(argv[9], &nin), *off = driver_slurp(argv[10], &ntr);
  if (!in || !off || nin != ntr * ns)
    return fail("cannot read the gather, or its size is not traces x NS");
  tz_err e;
  tz_err_init(&e);
  velocity_table *vt;
  nmo_workspace *ws;
  if (velocity_table_load(&vt, argv[1], &e) || nmo_workspace_new(&ws, ns, &e))
    return fail(e.msg);
  float *vel = malloc(ns * sizeof *vel), *eta = malloc(ns * sizeof *eta);
  float *out = malloc(nin * sizeof *out), *w = malloc(nin * sizeof *w);
  if (!vel || !eta || !out || !w)
    return fail("out of memory");
  velocity_sample(vt, cmp, tf, dt, ns, vel, eta);
  nmo_params p;
  nmo_params_init(&p);
  p.interp = interp;
  p.stretch_limit_pct = spct;
  p.stretch_taper_ms = taper;
  nmo_axis ax = { tf, dt, ns };
  const float *ep = velocity_table_has_eta(vt) ? eta : NULL;
  for (size_t j = 0; j < ntr; j++)
    if (nmo_apply(ws, &p, NULL, &ax, off[j], in + j * ns, vel, ep, out + j * ns, w + j * ns,
                  NULL, &e))
      return fail(e.msg);
  if (driver_spill(argv[11], out, nin) || driver_spill(argv[12], w, nin))
    return fail("cannot write the outputs");
  free(vel);
  free(eta);
  free(out);
  free(w);
  free(in);
  free(off);
  nmo_workspace_free(ws);
  velocity_table_free(vt);
  return 0;
}
