/* signal_int.h -- private to src/signal/: the deconvolution and f-k pieces that
 * condition.c binds into a plan (never installed, never seen by the front end). */
#ifndef TZERO_SIGNAL_INT_H
#define TZERO_SIGNAL_INT_H

#include <fftw3.h>
#include <stddef.h>

#include "tzero/condition.h"

/* Smallest 2^a 3^b 5^c >= n (FFTW is fastest on such sizes). */
size_t condition_fast_size(size_t n);

/* ---- deconvolution (decon.c) ---- */

/* Sample range [*i0, *i1) of the design window at |offset_m| (knots linear in
 * between, held outside) on the axis t_i = t_first_s + i dt_s, clipped to [0, ns). */
void condition_decon_window(const condition_step *s, double offset_m, double t_first_s,
                            double dt_s, size_t ns, size_t *i0, size_t *i1);
/* r[l] += sum_i x[i] x[i + l] over i0 <= i, i + l < i1, for l < nlag. */
void condition_decon_acf_add(const float *x, size_t i0, size_t i1, size_t nlag, double *r);
/* x <- pef * x (causal, truncated to ns samples) for pef[0] = 1, pef[1 .. gap-1] = 0,
 * coefficients c[j] = pef[gap + j], j < n. tmp holds ns floats. */
void condition_decon_filter(const float *c, size_t gap, size_t n, float *x, float *tmp,
                            size_t ns);

/* ---- f-k fan filter (fk.c) ---- */

typedef struct condition_fk condition_fk;

/* Grid and fan for one step on ns samples at dt_s, slots round(x / spacing_m) over the
 * line's signed offsets. *out owns it: condition_fk_free(). Not thread-safe (FFTW). */
int condition_fk_new(condition_fk **out, const condition_step *s, size_t step_index,
                     size_t ns, double dt_s, double spacing_m, double offset_min_m,
                     double offset_max_m, tz_err *err);
void condition_fk_free(condition_fk *fk);

/* Per-thread scratch of one f-k step. */
typedef struct condition_fk_work condition_fk_work;
int condition_fk_work_new(condition_fk_work **out, const condition_fk *fk, tz_err *err);
void condition_fk_work_free(condition_fk_work *w);

/* Filters the live traces of one record in place (ntr traces of ns samples); dead
 * ones are neither used nor changed. TZ_E_ARG (err->trace = the trace) when an
 * offset lies outside the grid. */
int condition_fk_apply(const condition_fk *fk, condition_fk_work *w, float *samples,
                       size_t ntr, const condition_trace_info *info, tz_err *err);

/* The fan's weight H(f, k) (exposed for the tests through the driver): 1 - a(f) m(v). */
double condition_fk_weight(const condition_step *s, double f_hz, double k_per_m);

#endif
