/* semblance.h -- Neidell-Taner semblance scans over trial velocities, and automatic picks.
 *
 * Three layers, each usable on its own:
 *   semblance_acc_*   coherence of aligned traces over a sliding window (running sums)
 *   semblance_panel() one CMP (super)gather: per trial velocity, exact NMO of every trace
 *                     by the nmo module (same equation, interpolation and stretch mute as
 *                     the stack), then the windowed semblance; threads over velocities
 *   semblance_autopick() a path through the panel's maxima chosen by dynamic programming
 * Nothing here reads or writes files.
 */
#ifndef TZERO_SEMBLANCE_H
#define TZERO_SEMBLANCE_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"
#include "tzero/nmo.h"
#include "tzero/stack.h"

#define SEMBLANCE_MAX_VELOCITIES 100000u   /* trial velocities in one scan */
/* trial velocities x samples of one panel (panel and power: 1 GB at the cap),
 * checked before the panel is allocated */
#define SEMBLANCE_MAX_PANEL_SAMPLES (1u << 27)
#define SEMBLANCE_MAX_CANDIDATES 4096u     /* panel maxima considered by the picker */
#define SEMBLANCE_MAX_THREADS 256
#define SEMBLANCE_MAX_MIN_FOLD 100000u     /* largest minimum fold */

/* ---- coherence of aligned traces ---- */

/* Accumulates the stack sum_i f_ij, the energy sum_i f_ij^2 and the live count
 * n_j of aligned traces, then gives for every sample j the semblance over the
 * window W(j) = [j - half, j + half] (cut at the trace ends):
 *
 *            sum_{k in W} (sum_i f_ik)^2
 *   S(j) = -------------------------------      (Neidell and Taner 1971)
 *          sum_{k in W} n_k sum_i f_ik^2
 *
 * n_k is the number of traces live at sample k, so with no mutes it is the
 * Neidell & Taner 1971 formula with N traces; 0 <= S <= 1 by Cauchy-Schwarz, and
 * S = 0 where the denominator is 0 (no live energy). Cost O(ns) per trace added
 * and O(ns) for the finish, whatever the window length (prefix sums). */
typedef struct semblance_acc semblance_acc;

int semblance_acc_new(semblance_acc **out, size_t ns, tz_err *err);  /* *out owns it */
void semblance_acc_free(semblance_acc *a);                           /* NULL is a no-op */
void semblance_acc_reset(semblance_acc *a);
/* Reliability floor (0 by default, the plain definition): windows in which
 * fewer than min_live traces are live on average give semblance and power 0.
 * One live trace alone has semblance 1 whatever it holds. Kept across resets. */
void semblance_acc_min_live(semblance_acc *a, double min_live);
/* Fold floor (0 by default): samples with fewer than min_fold live traces (after
 * the mutes) give semblance and power 0, so no pick is made there. Kept across
 * resets. */
void semblance_acc_min_fold(semblance_acc *a, size_t min_fold);
/* The largest live count at any sample, as of the last semblance_acc_finish(). */
size_t semblance_acc_max_live(const semblance_acc *a);
/* One trace of ns samples; only samples in [lo, hi) are added and counted live. */
void semblance_acc_add(semblance_acc *a, const float *s, size_t lo, size_t hi);
/* simd = 0 selects the portable accumulation, 1 (the default) the AVX2 one where
 * the CPU has it; both give the same bits (tests/unit/check_simd.c). Returns 1
 * when the AVX2 path is in use. */
int semblance_acc_simd(semblance_acc *a, int simd);
/* One trace with nmo_apply()'s weight array: a sample counts live where weight > 0
 * (its value already carries any taper factor). */
void semblance_acc_add_weighted(semblance_acc *a, const float *s, const float *weight);
/* Writes the ns semblance values to `out` and, when `power` is not NULL, the
 * window mean of the squared average trace, (1/|W|) sum_{k in W} (sum_i f_ik / n_k)^2
 * (the stack power, Taner and Koehler 1969), which the picker uses to locate
 * events in time. Uses the accumulator's scratch (not const). */
void semblance_acc_finish(semblance_acc *a, size_t half, float *out, float *power);

/* ---- one panel ---- */

typedef struct semblance_params {
  double velocity_min_mps;     /* first trial velocity. Default 1400 */
  double velocity_max_mps;     /* last trial velocity (inclusive when on the step). Default 4500 */
  double velocity_step_mps;    /* Default 20 */
  double window_ms;            /* full window length, centred on t0. Default 40 */
  double min_live_fraction;    /* semblance is 0 where fewer than this fraction of the
                                  gather's traces (and fewer than 2) are live, on
                                  average over the window (after the mutes).
                                  Default 0.25 */
  size_t min_fold;             /* semblance is 0 at every sample where fewer than this
                                  many traces are live (after the mutes, at that trial
                                  velocity): too few to pick from. Default 0 (off;
                                  `tzero semblance --min-fold` sets 6) */
  nmo_params nmo;              /* the stack's NMO parameters (stretch mute, interpolation) */
  const nmo_top_mute *mute;    /* borrowed; NULL = no top mute */
  int threads;                 /* worker threads over velocities; <= 1 = serial */
} semblance_params;

void semblance_params_init(semblance_params *p);
/* Checks ranges; TZ_E_ARG naming the parameter. Fills *nvel with the number of
 * trial velocities v_k = min + k step, k = 0..nvel-1, v_k <= max (+1e-9 step). */
int semblance_params_check(const semblance_params *p, size_t *nvel, tz_err *err);

/* The data's own window (common practice: a semblance window of about one to
 * two dominant periods resolves events without chasing noise). The dominant
 * frequency of a gather is where the mean amplitude spectrum of its traces
 * (whole traces, 10 % cosine taper at each end, FFTW), smoothed by a running
 * mean over +-SEMBLANCE_SPECTRUM_SMOOTH_HZ (at most a quarter of the raw peak),
 * peaks, refined by a parabola through the peak bin and its neighbours; the
 * 0 Hz bin is skipped.
 * *hz is 0 when the gather has no energy. TZ_E_FFT, TZ_E_NOMEM. Plans with
 * FFTW: call it from one thread at a time. */
#define SEMBLANCE_WINDOW_PERIODS 1.5       /* default window, dominant periods */
#define SEMBLANCE_WINDOW_MIN_MS 4.0        /* bounds of the derived window */
#define SEMBLANCE_WINDOW_MAX_MS 120.0
#define SEMBLANCE_SPECTRUM_SMOOTH_HZ 10.0  /* half-width of the spectrum's running mean */
struct semblance_gather;
int semblance_dominant_hz(const struct semblance_gather *g, double *hz, tz_err *err);
/* SEMBLANCE_WINDOW_PERIODS periods of hz in ms, within SEMBLANCE_WINDOW_MIN_MS
 * (and 3 samples of dt_s) and SEMBLANCE_WINDOW_MAX_MS; the old fixed 40 ms
 * when hz is not positive. */
double semblance_window_for_hz(double hz, double dt_s);

/* A (super)gather: the traces of one or more neighbouring CMPs, borrowed. */
typedef struct semblance_gather {
  size_t ntraces;
  nmo_axis axis;               /* shared by all traces */
  const float *samples;        /* ntraces * axis.ns, trace after trace */
  const double *offset_m;      /* ntraces signed offsets */
  const double *mute_ms;       /* NULL, or per trace the STACK_MUTE_LINES mute times
                                * (top, inner start, inner end, bottom; ms, NAN: none)
                                * that replace the parameters' top mute */
  double mute_taper_ms;        /* their taper */
} semblance_gather;

/* The job's mutes for the traces of semblance_supergather (same traces, same order):
 * STACK_MUTE_LINES values per trace from mute_eval; *out NULL (no array needed) when
 * `m` is only a single top polyline, which the parameters' top mute already is.
 * *out is the caller's (free()). */
int semblance_supergather_mutes(const stack_gathers *gs, int32_t first_cmp, int32_t last_cmp,
                                const mute_set *m, double **out, tz_err *err);

/* Concatenates the traces of the collected gathers whose CMP lies in
 * [first_cmp, last_cmp] (a supergather), in gather order. On success *samples
 * (ntraces * axis.ns) and *offsets (|offset| per trace) are owned by the
 * caller (free()); both are NULL when no trace qualifies (*ntraces = 0). */
int semblance_supergather(const stack_gathers *gs, int32_t first_cmp, int32_t last_cmp,
                          float **samples, double **offsets, size_t *ntraces, tz_err *err);

/* Fills panel[k * ns + j] = semblance at trial velocity k, output sample j
 * (t0 = axis.t_first_s + j dt), and power[k * ns + j] (same layout; NULL to
 * skip) = the stack power of semblance_acc_finish(). nvel from
 * semblance_params_check(). The result is bitwise the same for any thread
 * count. Dead traces must be left out by the caller. TZ_E_ARG for bad
 * parameters, TZ_E_NOMEM. */
int semblance_panel(const semblance_gather *g, const semblance_params *p, float *panel,
                    float *power, tz_err *err);
/* semblance_panel, also giving in *max_live (NULL to skip) the largest number of
 * live traces at any sample and trial velocity: below p->min_fold everywhere
 * means the gather can give no pick for lack of fold. */
int semblance_panel_live(const semblance_gather *g, const semblance_params *p, float *panel,
                         float *power, size_t *max_live, tz_err *err);

/* ---- automatic picking ---- */

typedef struct semblance_pick_params {
  double min_semblance;        /* maxima below this are ignored. Default 0.3 */
  double min_relative_power;   /* ... and those whose stack power is below this fraction
                                  of the panel's largest (ignored without a power
                                  panel). Default 0.001 (about -30 dB) */
  double min_separation_ms;    /* least time between consecutive picks. Default 60 */
  double interval_min_mps;     /* Dix interval velocity bounds between picks (and from */
  double interval_max_mps;     /* the surface to the first pick). Defaults 300, 7000 */
  int allow_inversions;        /* 0: velocity must not decrease with time. Default 0 */
  double time_min_ms;          /* picks restricted to [time_min, time_max]; */
  double time_max_ms;          /* time_max <= 0 means the end of the trace. Defaults 0 */
} semblance_pick_params;

void semblance_pick_params_init(semblance_pick_params *p);

typedef struct semblance_pick {
  double time_s;               /* t0, refined by a parabola through the maximum */
  double velocity_mps;         /* refined the same way along velocity */
  double semblance;            /* panel value at the grid maximum */
  double interval_mps;         /* Dix interval velocity from the previous pick (or the
                                  surface) down to this one */
} semblance_pick;

/* Picks one panel (layout of semblance_panel, velocities v_k = velocity_min +
 * k step). Candidates are the local maxima (neighbourhood: one velocity step
 * and the window half-length in time) of semblance x stack power (power NULL:
 * of semblance alone) whose semblance is at least min_semblance. Semblance is
 * a ratio, so on clean data it stays near 1 over the whole wavelet and its
 * tails; the power term puts the pick at the event's centre. Among
 * them the time-ordered chain with the largest total semblance is chosen by
 * dynamic programming, subject to the separation, monotonicity and Dix
 * interval-velocity rules (Dix interval velocities from velocity_dix()).
 * On success *out owns an array of *n picks in time order (free(); NULL when
 * none qualify, which is not an error). */
int semblance_autopick(const float *panel, const float *power, size_t nvel, const nmo_axis *ax,
                       const semblance_params *sp, const semblance_pick_params *pp,
                       semblance_pick **out, size_t *n, tz_err *err);

/* ---- velocity lists (constant-velocity stacks) ---- */

/* Parses a comma-separated list of velocities in m/s: "1500", "1500,1800",
 * "1500-3000:100" (first, last, step; the last included when on the step).
 * Values must be positive; order kept as written. On success *out owns an
 * array of *n values (free()). TZ_E_ARG naming the item; at most
 * SEMBLANCE_MAX_VELOCITIES values. */
int semblance_parse_velocities(const char *text, double **out, size_t *n, tz_err *err);

#endif
