/* poststack_int.h -- private to src/signal/: the f-x prediction part of a post-stack
 * plan (poststack_fx.c), bound into the plan by poststack.c. */
#ifndef TZERO_POSTSTACK_INT_H
#define TZERO_POSTSTACK_INT_H

#include <stddef.h>

#include "tzero/poststack.h"

typedef struct poststack_fx poststack_fx;

/* Windows, tapers, transforms and scratch for one f-x step on a section of ntr
 * traces of ns samples at dt_s. `path` is the step's JSON path for messages.
 * Not thread-safe (FFTW planner). */
int poststack_fx_new(poststack_fx **out, const poststack_step *s, const char *path,
                     size_t ns, double dt_s, size_t ntr, tz_err *err);
void poststack_fx_free(poststack_fx *fx);

/* Filters the section in place (ntr x ns, trace-major); dead traces (live[i] = 0)
 * enter as zero traces and are left as they were. Allocates nothing. */
void poststack_fx_apply(poststack_fx *fx, float *samples, const unsigned char *live);

#endif
