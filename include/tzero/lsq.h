/* lsq.h -- sparse linear least squares: a row-compressed matrix and LSQR.
 *
 * lsq_solve() minimises |A x - b|^2 + damp^2 |x|^2 by LSQR (Paige and Saunders
 * 1982, "LSQR: an algorithm for sparse linear equations and sparse least
 * squares", ACM TOMS 8(1) 43-71), the bidiagonalisation method that is
 * mathematically equal to conjugate gradients on the normal equations but
 * better conditioned. Optional column scaling (each column divided by its
 * norm, the usual diagonal preconditioner) speeds up systems whose unknowns
 * have different units (delays in ms and slownesses in ms/m). The arithmetic
 * is serial and in a fixed order, so results are bitwise reproducible.
 *
 * Rows are appended in order (lsq_matrix_add_row); the matrix owns its arrays.
 */
#ifndef TZERO_LSQ_H
#define TZERO_LSQ_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"

#define LSQ_MAX_COLUMNS 10000000u   /* unknowns one system may have */
#define LSQ_MAX_NONZEROS (1u << 30) /* stored coefficients */

typedef struct lsq_matrix {
  size_t nrows, ncols, nnz;
  size_t *row_start;         /* nrows + 1 entries */
  uint32_t *col;             /* nnz */
  double *val;               /* nnz */
  size_t row_cap, nz_cap;
} lsq_matrix;

/* An empty matrix of ncols columns (0 < ncols <= LSQ_MAX_COLUMNS). On success
 * m owns its arrays: lsq_matrix_free(). */
int lsq_matrix_init(lsq_matrix *m, size_t ncols, tz_err *err);
/* Appends one row of n coefficients (columns in any order; a column repeated
 * is summed as the product would sum it). TZ_E_ARG for a column out of range
 * or a coefficient that is not finite. */
int lsq_matrix_add_row(lsq_matrix *m, size_t n, const size_t *cols, const double *vals,
                       tz_err *err);
void lsq_matrix_free(lsq_matrix *m);     /* NULL and an unused matrix are fine */

/* y = A x (y: nrows) and y = A^T x (y: ncols). */
void lsq_matrix_mul(const lsq_matrix *m, const double *x, double *y);
void lsq_matrix_mul_t(const lsq_matrix *m, const double *x, double *y);

typedef struct lsq_opts {
  double damp;               /* >= 0: Tikhonov damping (0 = plain least squares) */
  double atol, btol;         /* stopping tolerances of LSQR (default 1e-12) */
  double conlim;             /* condition-number limit (default 1e12) */
  size_t max_iter;           /* 0 = 4 * ncols + 100 */
  int scale_columns;         /* 1 = precondition by column norms (default 0) */
} lsq_opts;

void lsq_opts_init(lsq_opts *o);

typedef struct lsq_info {
  size_t iterations;
  int stop;                  /* why LSQR stopped (as Paige and Saunders number it:
                              * 0 x = 0 is exact, 1 Ax = b to atol/btol, 2 least-
                              * squares to atol, 3 condition limit, 7 iteration
                              * limit) */
  double residual_norm;      /* |A x - b| (without the damping term) */
  double normal_norm;        /* |A^T (A x - b) - damp^2 x| estimate */
  double cond_estimate;
} lsq_info;

/* Solves for x (ncols values, overwritten; started from 0). info may be NULL.
 * TZ_E_ARG for an empty system or non-finite b. */
int lsq_solve(const lsq_matrix *m, const double *b, const lsq_opts *o, double *x,
              lsq_info *info, tz_err *err);

#endif
