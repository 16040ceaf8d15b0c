/* lsq.c -- sparse least squares: row-compressed matrices and LSQR.
 *
 * LSQR follows the algorithm as published by Paige and Saunders (1982, ACM
 * TOMS 8(1) 43-71, section 7 "LSQR" with the damped-problem rotation of
 * section 4 and the stopping rules S1-S3 of section 6). Column scaling solves
 * A D y = b with D = diag(1 / |a_j|) and returns x = D y.
 *
 * Everything is serial and in a fixed order: the same system gives the same
 * bits. Not here: building the systems (refraction.c, residual.c).
 */
#include "tzero/lsq.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

int lsq_matrix_init(lsq_matrix *m, size_t ncols, tz_err *err)
{
  memset(m, 0, sizeof *m);
  if (ncols == 0 || ncols > LSQ_MAX_COLUMNS)
    return tz_fail(err, TZ_E_ARG, "least squares: %zu unknowns (1 to %u allowed)", ncols,
                   LSQ_MAX_COLUMNS);
  m->ncols = ncols;
  m->row_cap = 64;
  m->nz_cap = 256;
  m->row_start = malloc(m->row_cap * sizeof *m->row_start);
  m->col = malloc(m->nz_cap * sizeof *m->col);
  m->val = malloc(m->nz_cap * sizeof *m->val);
  if (!m->row_start || !m->col || !m->val) {
    lsq_matrix_free(m);
    return tz_fail(err, TZ_E_NOMEM, "least squares: matrix of %zu columns", ncols);
  }
  m->row_start[0] = 0;
  return TZ_OK;
}

void lsq_matrix_free(lsq_matrix *m)
{
  if (!m)
    return;
  free(m->row_start);
  free(m->col);
  free(m->val);
  memset(m, 0, sizeof *m);
}

int lsq_matrix_add_row(lsq_matrix *m, size_t n, const size_t *cols, const double *vals,
                       tz_err *err)
{
  for (size_t i = 0; i < n; i++) {
    if (cols[i] >= m->ncols)
      return tz_fail(err, TZ_E_ARG, "least squares: row %zu: column %zu of %zu", m->nrows,
                     cols[i], m->ncols);
    if (!isfinite(vals[i]))
      return tz_fail(err, TZ_E_ARG, "least squares: row %zu: coefficient is not finite",
                     m->nrows);
  }
  if (m->nnz + n > LSQ_MAX_NONZEROS)
    return tz_fail(err, TZ_E_ARG, "least squares: more than %u coefficients",
                   LSQ_MAX_NONZEROS);
  if (m->nrows + 2 > m->row_cap) {
    size_t cap = m->row_cap * 2;
    size_t *r = realloc(m->row_start, cap * sizeof *r);
    if (!r)
      return tz_fail(err, TZ_E_NOMEM, "least squares: %zu rows", cap);
    m->row_start = r;
    m->row_cap = cap;
  }
  if (m->nnz + n > m->nz_cap) {
    size_t cap = m->nz_cap;
    while (cap < m->nnz + n)
      cap *= 2;
    uint32_t *c = realloc(m->col, cap * sizeof *c);
    if (!c)
      return tz_fail(err, TZ_E_NOMEM, "least squares: %zu coefficients", cap);
    m->col = c;
    double *v = realloc(m->val, cap * sizeof *v);
    if (!v)
      return tz_fail(err, TZ_E_NOMEM, "least squares: %zu coefficients", cap);
    m->val = v;
    m->nz_cap = cap;
  }
  for (size_t i = 0; i < n; i++) {
    m->col[m->nnz] = (uint32_t)cols[i];
    m->val[m->nnz] = vals[i];
    m->nnz++;
  }
  m->nrows++;
  m->row_start[m->nrows] = m->nnz;
  return TZ_OK;
}

void lsq_matrix_mul(const lsq_matrix *m, const double *x, double *y)
{
  for (size_t r = 0; r < m->nrows; r++) {
    double s = 0.0;
    for (size_t k = m->row_start[r]; k < m->row_start[r + 1]; k++)
      s += m->val[k] * x[m->col[k]];
    y[r] = s;
  }
}

void lsq_matrix_mul_t(const lsq_matrix *m, const double *x, double *y)
{
  memset(y, 0, m->ncols * sizeof *y);
  for (size_t r = 0; r < m->nrows; r++) {
    double xr = x[r];
    for (size_t k = m->row_start[r]; k < m->row_start[r + 1]; k++)
      y[m->col[k]] += m->val[k] * xr;
  }
}

void lsq_opts_init(lsq_opts *o)
{
  memset(o, 0, sizeof *o);
  o->atol = 1e-12;
  o->btol = 1e-12;
  o->conlim = 1e12;
}

static double norm2(const double *v, size_t n)
{
  /* Scaled sum of squares, as the reference BLAS dnrm2 does, so huge or tiny
   * entries neither overflow nor underflow. */
  double scale = 0.0, ssq = 1.0;
  for (size_t i = 0; i < n; i++) {
    double a = fabs(v[i]);
    if (a == 0.0)
      continue;
    if (scale < a) {
      ssq = 1.0 + ssq * (scale / a) * (scale / a);
      scale = a;
    } else {
      ssq += (a / scale) * (a / scale);
    }
  }
  return scale * sqrt(ssq);
}

static void scal(double *v, size_t n, double s)
{
  for (size_t i = 0; i < n; i++)
    v[i] *= s;
}

/* y = (A D) x and y = (A D)^T x with D = diag(d) (d = NULL: identity); tmp has
 * ncols entries. */
static void op_mul(const lsq_matrix *m, const double *d, const double *x, double *y,
                   double *tmp)
{
  if (d) {
    for (size_t j = 0; j < m->ncols; j++)
      tmp[j] = d[j] * x[j];
    lsq_matrix_mul(m, tmp, y);
  } else {
    lsq_matrix_mul(m, x, y);
  }
}

static void op_mul_t(const lsq_matrix *m, const double *d, const double *x, double *y)
{
  lsq_matrix_mul_t(m, x, y);
  if (d)
    for (size_t j = 0; j < m->ncols; j++)
      y[j] *= d[j];
}

int lsq_solve(const lsq_matrix *m, const double *b, const lsq_opts *o, double *x,
              lsq_info *info, tz_err *err)
{
  lsq_opts def;
  if (!o) {
    lsq_opts_init(&def);
    o = &def;
  }
  size_t nr = m->nrows, nc = m->ncols;
  if (nr == 0 || nc == 0)
    return tz_fail(err, TZ_E_ARG, "least squares: empty system (%zu rows, %zu unknowns)", nr,
                   nc);
  if (!(o->damp >= 0.0) || !isfinite(o->damp))
    return tz_fail(err, TZ_E_ARG, "least squares: damping %g is not a number >= 0", o->damp);
  for (size_t i = 0; i < nr; i++)
    if (!isfinite(b[i]))
      return tz_fail(err, TZ_E_ARG, "least squares: right-hand side %zu is not finite", i);

  double *u = malloc(nr * sizeof *u);
  double *v = malloc(nc * sizeof *v);
  double *w = malloc(nc * sizeof *w);
  double *t = malloc(nc * sizeof *t);
  double *tu = malloc(nr * sizeof *tu);
  double *d = o->scale_columns ? malloc(nc * sizeof *d) : NULL;
  if (!u || !v || !w || !t || !tu || (o->scale_columns && !d)) {
    free(u), free(v), free(w), free(t), free(tu), free(d);
    return tz_fail(err, TZ_E_NOMEM, "least squares: work space for %zu x %zu", nr, nc);
  }
  if (d) {
    memset(d, 0, nc * sizeof *d);
    for (size_t k = 0; k < m->nnz; k++)
      d[m->col[k]] += m->val[k] * m->val[k];
    for (size_t j = 0; j < nc; j++)
      d[j] = d[j] > 0.0 ? 1.0 / sqrt(d[j]) : 1.0;
  }
  size_t max_iter = o->max_iter ? o->max_iter : 4 * nc + 100;
  double damp = o->damp, dampsq = damp * damp;
  double ctol = o->conlim > 0.0 ? 1.0 / o->conlim : 0.0;

  memset(x, 0, nc * sizeof *x);
  memcpy(u, b, nr * sizeof *u);
  double beta = norm2(u, nr), alpha = 0.0;
  if (beta > 0.0) {
    scal(u, nr, 1.0 / beta);
    op_mul_t(m, d, u, v);
    alpha = norm2(v, nc);
  } else {
    memset(v, 0, nc * sizeof *v);
  }
  if (alpha > 0.0)
    scal(v, nc, 1.0 / alpha);
  memcpy(w, v, nc * sizeof *w);

  double rhobar = alpha, phibar = beta, bnorm = beta, rnorm = beta;
  double anorm = 0.0, acond = 0.0, ddnorm = 0.0, res2 = 0.0, xnorm = 0.0, xxnorm = 0.0;
  double z = 0.0, cs2 = -1.0, sn2 = 0.0, arnorm = alpha * beta;
  int stop = 0;
  size_t itn = 0;
  if (arnorm == 0.0)
    goto finish;            /* x = 0 solves it */

  while (itn < max_iter) {
    itn++;
    /* Bidiagonalisation: beta u = A v - alpha u, alpha v = A^T u - beta v. */
    op_mul(m, d, v, tu, t);
    for (size_t i = 0; i < nr; i++)
      u[i] = tu[i] - alpha * u[i];
    beta = norm2(u, nr);
    if (beta > 0.0) {
      scal(u, nr, 1.0 / beta);
      anorm = sqrt(anorm * anorm + alpha * alpha + beta * beta + dampsq);
      op_mul_t(m, d, u, t);
      for (size_t j = 0; j < nc; j++)
        v[j] = t[j] - beta * v[j];
      alpha = norm2(v, nc);
      if (alpha > 0.0)
        scal(v, nc, 1.0 / alpha);
    }
    /* Plane rotation that eliminates the damping parameter. */
    double rhobar1 = sqrt(rhobar * rhobar + dampsq);
    double cs1 = rhobar / rhobar1, sn1 = damp / rhobar1;
    double psi = sn1 * phibar;
    phibar = cs1 * phibar;
    /* Plane rotation that eliminates the subdiagonal beta. */
    double rho = sqrt(rhobar1 * rhobar1 + beta * beta);
    double cs = rhobar1 / rho, sn = beta / rho;
    double theta = sn * alpha;
    rhobar = -cs * alpha;
    double phi = cs * phibar;
    phibar = sn * phibar;
    double tau = sn * phi;
    /* Update x and w. */
    double t1 = phi / rho, t2 = -theta / rho, dd = 0.0;
    for (size_t j = 0; j < nc; j++) {
      double dk = w[j] / rho;
      dd += dk * dk;
      x[j] += t1 * w[j];
      w[j] = v[j] + t2 * w[j];
    }
    ddnorm += dd;
    /* Norm estimates (section 5 of the paper). */
    double delta = sn2 * rho, gambar = -cs2 * rho, rhs = phi - delta * z;
    double zbar = rhs / gambar;
    xnorm = sqrt(xxnorm + zbar * zbar);
    double gamma = sqrt(gambar * gambar + theta * theta);
    cs2 = gambar / gamma;
    sn2 = theta / gamma;
    z = rhs / gamma;
    xxnorm += z * z;
    acond = anorm * sqrt(ddnorm);
    res2 += psi * psi;
    rnorm = sqrt(phibar * phibar + res2);
    arnorm = alpha * fabs(tau);
    /* Stopping rules S1-S3. */
    double test1 = rnorm / bnorm;
    double test2 = anorm * rnorm > 0.0 ? arnorm / (anorm * rnorm) : 0.0;
    double test3 = acond > 0.0 ? 1.0 / acond : 0.0;
    double tt1 = test1 / (1.0 + anorm * xnorm / bnorm);
    double rtol = o->btol + o->atol * anorm * xnorm / bnorm;
    if (1.0 + test3 <= 1.0) stop = 3;
    if (1.0 + test2 <= 1.0) stop = 2;
    if (1.0 + tt1 <= 1.0) stop = 1;
    if (test3 <= ctol) stop = 3;
    if (test2 <= o->atol) stop = 2;
    if (test1 <= rtol) stop = 1;
    if (stop)
      break;
  }
  if (!stop)
    stop = 7;
finish:
  if (d)
    for (size_t j = 0; j < nc; j++)
      x[j] *= d[j];
  if (info) {
    lsq_matrix_mul(m, x, tu);
    for (size_t i = 0; i < nr; i++)
      tu[i] -= b[i];
    info->iterations = itn;
    info->stop = stop;
    info->residual_norm = norm2(tu, nr);
    info->normal_norm = arnorm;
    info->cond_estimate = acond;
  }
  free(u), free(v), free(w), free(t), free(tu), free(d);
  return TZ_OK;
}
