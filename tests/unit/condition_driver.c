/* condition_driver.c -- runs the condition library on raw float32 traces, for the
 * NumPy cross-checks in tests/xcheck (not a Check suite, and not part of tzero).
 *
 * usage: condition_driver [-r OFFSETS SPACING_M OMIN_M OMAX_M] TABLE CMP T_FIRST_S DT_S NS
 *                         IN.f32 OUT.f32 STEP...
 *        condition_driver levinson N  < r_0..r_{N-1} g_0..g_{N-1}   (text; prints a)
 *        condition_driver pef GAP N PCT  < r_0..r_{GAP+N-1}          (text; prints the filter)
 * With -r the traces are one record (condition_apply_record) whose signed offsets are
 * the numbers in the text file OFFSETS, on an f-k grid of SPACING_M over OMIN..OMAX.
 * TABLE is a velocity table file, or "-" for none. IN holds ntr x NS host-order
 * float32 samples; OUT receives them conditioned, every trace at CMP. Steps, in order:
 *   bandpass:F1,F2,F3,F4        corners in Hz
 *   spherical:TREF_S,V_MPS      V_MPS = 0 takes the velocity table
 *   power:EXPONENT,TREF_S
 *   agc:WINDOW_S,rms|mean_abs
 *   decon:OP_MS,GAP_MS,PCT,trace|record,X/T0_MS/T1_MS[,X/T0_MS/T1_MS...]
 *   fkreject:V1,V2,TAPER_PCT,MIN_HZ   fkpass:V1,V2,TAPER_PCT,MIN_HZ
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

static int add_decon(condition_chain *c, char *list, tz_err *e)
{
  double v[3], w[CONDITION_MAX_WINDOW_POINTS][3];
  char *knots[CONDITION_MAX_WINDOW_POINTS + 4];
  size_t n = 0, nw = 0;
  for (char *tok = strtok(list, ","); tok && n < CONDITION_MAX_WINDOW_POINTS + 4;
       tok = strtok(NULL, ","))
    knots[n++] = tok;
  if (n < 5)
    return tz_fail(e, TZ_E_ARG, "decon needs OP,GAP,PCT,ENSEMBLE,KNOT...");
  for (int i = 0; i < 3; i++)
    if (table_parse_f64(knots[i], &v[i]))
      return tz_fail(e, TZ_E_ARG, "decon: bad number '%s'", knots[i]);
  int ens = condition_ensemble_parse(knots[3]);
  for (size_t i = 4; i < n; i++, nw++) {
    char *a = knots[i], *b = strchr(a, '/'), *d = b ? strchr(b + 1, '/') : NULL;
    if (!d)
      return tz_fail(e, TZ_E_ARG, "decon: knot '%s' is not X/T0/T1", a);
    *b = *d = '\0';
    if (table_parse_f64(a, &w[nw][0]) || table_parse_f64(b + 1, &w[nw][1]) ||
        table_parse_f64(d + 1, &w[nw][2]))
      return tz_fail(e, TZ_E_ARG, "decon: bad knot");
    w[nw][1] *= 1e-3;
    w[nw][2] *= 1e-3;
  }
  return condition_chain_add_decon(c, v[0] * 1e-3, v[1] * 1e-3, v[2], (const double(*)[3])w,
                                   nw, ens, e);
}

static int add_step(condition_chain *c, char *arg, tz_err *e)
{
  char *colon = strchr(arg, ':'), *word;
  double v[4];
  if (!colon)
    return tz_fail(e, TZ_E_ARG, "step '%s' has no ':'", arg);
  *colon = '\0';
  if (!strcmp(arg, "decon"))
    return add_decon(c, colon + 1, e);
  int n = numbers(colon + 1, v, 4, &word);
  if (!strcmp(arg, "bandpass") && n == 4)
    return condition_chain_add_bandpass(c, v, e);
  if (!strcmp(arg, "spherical") && n == 2)
    return condition_chain_add_spherical(c, v[0], v[1], e);
  if (!strcmp(arg, "power") && n == 2)
    return condition_chain_add_power(c, v[0], v[1], e);
  if (!strcmp(arg, "agc") && n == 1 && word)
    return condition_chain_add_agc(c, v[0], condition_agc_measure_parse(word), e);
  if ((!strcmp(arg, "fkreject") || !strcmp(arg, "fkpass")) && n == 4)
    return condition_chain_add_fk(c, v, arg[2] == 'p', v[2], v[3], e);
  return tz_fail(e, TZ_E_ARG, "cannot read step '%s'", arg);
}

/* Reads up to max numbers from fp; returns the count. */
static size_t read_numbers(FILE *fp, double *v, size_t max)
{
  size_t n = 0;
  while (n < max && fscanf(fp, "%lf", &v[n]) == 1)
    n++;
  return n;
}

static int run_wiener(int argc, char **argv)
{
  enum { MAXN = 4096 };
  static double r[2 * MAXN], a[2 * MAXN], work[4 * MAXN];
  tz_err e;
  tz_err_init(&e);
  if (!strcmp(argv[1], "levinson") && argc == 3) {
    size_t n = (size_t)strtoul(argv[2], NULL, 10);
    if (n < 1 || n > MAXN || read_numbers(stdin, r, 2 * n) != 2 * n)
      return fail("levinson: bad N or input");
    if (condition_levinson(r, r + n, n, a, work, &e))
      return fail(e.msg);
    for (size_t i = 0; i < n; i++)
      printf("%.17g\n", a[i]);
    return 0;
  }
  if (!strcmp(argv[1], "pef") && argc == 5) {
    size_t g = (size_t)strtoul(argv[2], NULL, 10), n = (size_t)strtoul(argv[3], NULL, 10);
    double pct = strtod(argv[4], NULL);
    if (g + n < 1 || g + n > MAXN || read_numbers(stdin, r, g + n) != g + n)
      return fail("pef: bad sizes or input");
    if (condition_wiener_pef(r, g, n, pct, a, work, &e))
      return fail(e.msg);
    for (size_t i = 0; i < g + n; i++)
      printf("%.17g\n", a[i]);
    return 0;
  }
  return fail("usage: levinson N | pef GAP N PCT");
}

int main(int argc, char **argv)
{
  if (argc >= 2 && (!strcmp(argv[1], "levinson") || !strcmp(argv[1], "pef")))
    return run_wiener(argc, argv);
  const char *offsets = NULL;
  double spacing = 0, omin = 0, omax = 0;
  if (argc >= 6 && !strcmp(argv[1], "-r")) {
    offsets = argv[2];
    if (table_parse_f64(argv[3], &spacing) || table_parse_f64(argv[4], &omin) ||
        table_parse_f64(argv[5], &omax))
      return fail("bad -r numbers");
    argv += 5;
    argc -= 5;
  }
  if (argc < 9)
    return fail("usage: [-r OFFSETS SPACING OMIN OMAX] TABLE|- CMP T_FIRST_S DT_S NS IN OUT "
                "STEP...");
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
  if (condition_plan_new(&p, &c, tf, dt, ns, vt, &e) ||
      (offsets && condition_plan_set_offsets(p, spacing, omin, omax, &e)) ||
      condition_workspace_new(&ws, p, &e))
    return fail(e.msg);
  if (offsets) {
    size_t ntr = n / ns;
    double *off = malloc(ntr * sizeof *off);
    FILE *fo = fopen(offsets, "r");
    if (!off || !fo || read_numbers(fo, off, ntr) != ntr)
      return fail("cannot read one offset per trace");
    fclose(fo);
    condition_trace_info *ti = calloc(ntr, sizeof *ti);
    if (!ti)
      return fail("out of memory");
    for (size_t j = 0; j < ntr; j++) {
      ti[j].cmp = cmp;
      ti[j].offset_m = off[j];
      ti[j].live = 1;
    }
    if (condition_apply_record(p, ws, x, ntr, ti, &e))
      return fail(e.msg);
    free(ti);
    free(off);
  } else {
    for (size_t j = 0; j < n / ns; j++)
      if (condition_apply(p, ws, cmp, NULL, x + j * ns, &e))
        return fail(e.msg);
  }
  FILE *fp = fopen(argv[7], "wb");
  if (!fp || fwrite(x, sizeof *x, n, fp) != n || fclose(fp))
    return fail("cannot write the output");
  condition_workspace_free(ws);
  condition_plan_free(p);
  velocity_table_free(vt);
  free(x);
  return 0;
}
