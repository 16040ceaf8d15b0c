/* condition_driver.c -- runs the condition library on raw float32 traces, for the
 * NumPy cross-checks in tests/xcheck (not a Check suite, and not part of tzero).
 *
 * usage: condition_driver TABLE CMP T_FIRST_S DT_S NS IN.f32 OUT.f32 STEP...
 * TABLE is a velocity table file, or "-" for none. IN holds ntr x NS host-order
 * float32 samples; OUT receives them conditioned, every trace at CMP. Steps, in order:
 *   bandpass:F1,F2,F3,F4        corners in Hz
 *   spherical:TREF_S,V_MPS      V_MPS = 0 takes the velocity table
 *   power:EXPONENT,TREF_S
 *   agc:WINDOW_S,rms|mean_abs
 * Exit 0 on success, 1 on any failure (message on stderr).
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/condition.h"
#include "tzero/table.h"
#include "tzero/velocity.h"

#include "driver_io.h"

static int fail(const char *what)
{
  fprintf(stderr, "condition_driver: %s\n", what);
  return 1;
}

/* Splits "a,b,c" into up to max numbers; returns the count or -1. */
static int numbers(char *s, double *v, int max, char **word)
{
  int n = 0;
  *word = NULL;
  for (char *tok = strtok(s, ","); tok; tok = strtok(NULL, ",")) {
    if (n < max && !table_parse_f64(tok, &v[n]))
      n++;
    else if (!*word)
      *word = tok;
    else
      return -1;
  }
  return n;
}

static int add_step(condition_chain *c, char *arg, tz_err *e)
{
  char *colon = strchr(arg, ':'), *word;
  double v[4];
  if (!colon)
    return tz_fail(e, TZ_E_ARG, "step '%s' has no ':'", arg);
  *colon = '\0';
  int n = numbers(colon + 1, v, 4, &word);
  if (!strcmp(arg, "bandpass") && n == 4)
    return condition_chain_add_bandpass(c, v, e);
  if (!strcmp(arg, "spherical") && n == 2)
    return condition_chain_add_spherical(c, v[0], v[1], e);
  if (!strcmp(arg, "power") && n == 2)
    return condition_chain_add_power(c, v[0], v[1], e);
  if (!strcmp(arg, "agc") && n == 1 && word)
    return condition_chain_add_agc(c, v[0], condition_agc_measure_parse(word), e);
  return tz_fail(e, TZ_E_ARG, "cannot read step '%s'", arg);
}

int main(int argc, char **argv)
{
  if (argc < 9)
    return fail("usage: TABLE|- CMP T_FIRST_S DT_S NS IN OUT STEP...");
  int64_t cmp, ns64;
  double tf, dt;
  if (table_parse_i64(argv[2], &cmp) || table_parse_f64(argv[3], &tf) ||
      table_parse_f64(argv[4], &dt) || table_parse_i64(argv[5], &ns64) || ns64 < 1)
    return fail("bad numeric argument");
  size_t ns = (size_t)ns64, n;
  float *x = driver_slurp(argv[6], &n);
  if (!x || n % ns)
    return fail("cannot read the traces, or their size is not traces x NS");
  tz_err e;
  tz_err_init(&e);
  velocity_table *vt = NULL;
  if (strcmp(argv[1], "-") && velocity_table_load(&vt, argv[1], &e))
    return fail(e.msg);
  condition_chain c;
  condition_chain_init(&c);
  for (int a = 8; a < argc; a++)
    if (add_step(&c, argv[a], &e))
      return fail(e.msg);
  condition_plan *p;
  condition_workspace *ws;
  if (condition_plan_new(&p, &c, tf, dt, ns, vt, &e) || condition_workspace_new(&ws, p, &e))
    return fail(e.msg);
  for (size_t j = 0; j < n / ns; j++)
    if (condition_apply(p, ws, cmp, NULL, x + j * ns, &e))
      return fail(e.msg);
  FILE *fp = fopen(argv[7], "wb");
  if (!fp || fwrite(x, sizeof *x, n, fp) != n || fclose(fp))
    return fail("cannot write the output");
  condition_workspace_free(ws);
  condition_plan_free(p);
  velocity_table_free(vt);
  free(x);
  return 0;
}
