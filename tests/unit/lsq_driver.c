/* lsq_driver.c -- solves a sparse least-squares system with lsq_solve(), for the
 * SciPy cross-check tests/xcheck/test_lsq_scipy.py (not a Check suite, and not
 * part of tzero).
 *
 * usage: lsq_driver SYSTEM.txt DAMP SCALE
 * SYSTEM.txt: first line "nrows ncols"; then one line per row:
 * "b k col_1 val_1 ... col_k val_k". Prints the solution, one value per line
 * (%.17g), then "iterations N" and "residual R". Exit 0 on success, 1 on failure.
 */
#include <stdio.h>
#include <stdlib.h>

#include "tzero/lsq.h"
#include "tzero/table.h"

static int fail(const char *what)
{
  fprintf(stderr, "lsq_driver: %s\n", what);
  return 1;
}

int main(int argc, char **argv)
{
  if (argc != 4)
    return fail("usage: SYSTEM DAMP SCALE");
  double damp;
  int64_t scale;
  if (table_parse_f64(argv[2], &damp) || table_parse_i64(argv[3], &scale))
    return fail("bad DAMP or SCALE");
  FILE *fp = fopen(argv[1], "r");
  if (!fp)
    return fail("cannot open the system");
  size_t nr, nc;
  if (fscanf(fp, "%zu %zu", &nr, &nc) != 2 || nr == 0 || nr > 1000000 || nc == 0 ||
      nc > 1000000) {
    fclose(fp);
    return fail("bad first line");
  }
  lsq_matrix m;
  tz_err e;
  tz_err_init(&e);
  if (lsq_matrix_init(&m, nc, &e)) {
    fclose(fp);
    return fail(e.msg);
  }
  double *b = malloc(nr * sizeof *b), *x = malloc(nc * sizeof *x);
  size_t *cols = malloc(nc * sizeof *cols);
  double *vals = malloc(nc * sizeof *vals);
  int rc = 1;
  if (!b || !x || !cols || !vals)
    goto done;
  for (size_t r = 0; r < nr; r++) {
    size_t k;
    if (fscanf(fp, "%lf %zu", &b[r], &k) != 2 || k > nc) {
      fail("bad row");
      goto done;
    }
    for (size_t j = 0; j < k; j++)
      if (fscanf(fp, "%zu %lf", &cols[j], &vals[j]) != 2) {
        fail("bad coefficient");
        goto done;
      }
    if (lsq_matrix_add_row(&m, k, cols, vals, &e)) {
      fail(e.msg);
      goto done;
    }
  }
  lsq_opts o;
  lsq_opts_init(&o);
  o.damp = damp;
  o.scale_columns = (int)scale;
  lsq_info info;
  if (lsq_solve(&m, b, &o, x, &info, &e)) {
    fail(e.msg);
    goto done;
  }
  for (size_t j = 0; j < nc; j++)
    printf("%.17g\n", x[j]);
  printf("iterations %zu\nresidual %.17g\n", info.iterations, info.residual_norm);
  rc = 0;
done:
  fclose(fp);
  free(b), free(x), free(cols), free(vals);
  lsq_matrix_free(&m);
  return rc;
}
