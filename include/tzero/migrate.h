/* migrate.h -- post-stack time migration of a stacked section: phase shift and Kirchhoff.
 *
 * A stacked section is modelled as the zero-offset wavefield of the exploding-reflector
 * model (Loewenthal, Lu, Roberson & Sherwood 1976): every reflector fires at t = 0 in a
 * medium of half the velocity; migration runs the wavefield back to t = 0, moving dipping
 * events updip and collapsing diffractions to their apexes. Both methods work in
 * two-way vertical time (time migration, not depth imaging):
 *
 *   phase shift (Gazdag 1978, Geophysics 43, 1342-1351): the section in (omega, k_x),
 *     stepped down in vertical time tau with
 *       P(tau + dtau) = P(tau) exp(i dtau sqrt(omega^2 - (v k_x / 2)^2)),
 *     v the interval velocity at tau (Dix 1955 from the RMS table), evanescent energy
 *     dropped; the image at tau is the sum over omega. Exact for v(tau); the table's
 *     functions are averaged along the line into one v(tau), and the spread is reported.
 *   Kirchhoff (Schneider 1978, Geophysics 43, 49-76): every output sample (x0, tau) is
 *     the sum of the input along its diffraction curve t^2 = tau^2 + 4 (x - x0)^2 / v^2,
 *     v the RMS velocity of the output CMP at tau, after a half-derivative filter with
 *     the 2D phase (sqrt(-i omega)), with the obliquity and 2D spreading weight
 *     (tau / t) / sqrt(t) and the factor dx sqrt(2/pi) / v that makes a flat event keep
 *     its amplitude (stationary phase); aperture and dip limit with cosine tapers;
 *     operator anti-aliasing by triangle filtering of the input at the local slope of
 *     the curve (Lumley, Claerbout & Bevc 1994).
 *
 * Threads: phase shift over wavenumbers, Kirchhoff over output CMPs; each output value is
 * summed by one thread in a fixed order, so the result is bitwise identical for any
 * thread count.
 */
#ifndef TZERO_MIGRATE_H
#define TZERO_MIGRATE_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"
#include "tzero/segy.h"
#include "tzero/velocity.h"

#define MIGRATE_MAX_TRACES 1000000     /* traces of one section */
#define MIGRATE_MAX_GRID 4000000       /* CMP positions between the first and last trace */
#define MIGRATE_MAX_CELLS (1u << 30)   /* padded CMPs x padded samples of the transforms */
#define MIGRATE_MIN_PCT 10.0           /* --velocity-pct limits */
#define MIGRATE_MAX_PCT 300.0

enum migrate_method { MIGRATE_PHASE_SHIFT = 0, MIGRATE_KIRCHHOFF };

/* A post-stack section in memory: one trace per CMP, CMP numbers increasing. */
typedef struct migrate_section {
  size_t ntraces, ns;
  double dt_s, t0_s;              /* sample interval, time of the first sample */
  uint32_t interval_us;
  int format_code;                /* of the file (the output keeps it) */
  int16_t polarity;               /* binary header 3257-3258 of the file (kept too) */
  int32_t cmp_step;               /* CMP numbers advance by multiples of this */
  double cmp_interval_m;          /* distance between consecutive CMP numbers */
  int interval_from_headers;      /* 1 = from the CMP X/Y, 0 = given */
  segy_trace_header *headers;     /* ntraces, as read */
  float *samples;                 /* ntraces x ns */
  char text[SEGY_TEXT_BYTES + 1]; /* textual header of the input */
} migrate_section;

/* Reads a post-stack section. CMP numbers (bytes 21-24) must increase from trace to
 * trace (two traces of one CMP: "a prestack file, not a stacked section"); the CMP
 * interval comes from the CMP X/Y (181-188) unless cmp_interval_m > 0 is given, and a
 * section without coordinates needs it. TZ_E_FORMAT naming the trace otherwise. On
 * success *out owns the section: migrate_section_free(). */
int migrate_section_load(migrate_section **out, const char *path, double cmp_interval_m,
                         tz_err *err);
void migrate_section_free(migrate_section *s);   /* NULL is a no-op */

typedef struct migrate_params {
  int method;                     /* enum migrate_method (default phase shift) */
  double velocity_pct;            /* scale of the table's velocities (default 100) */
  double aperture_m;              /* Kirchhoff: largest distance from the output CMP
                                   * (0 = the whole line) */
  double max_dip_deg;             /* Kirchhoff: steepest dip migrated (default 80) */
  double max_hz;                  /* highest frequency kept (0 = Nyquist) */
  int antialias;                  /* Kirchhoff operator anti-aliasing (default 1) */
  int threads;                    /* 0 = the machine's online cores */
  int32_t first_cmp, last_cmp;    /* output CMPs (init: every trace) */
  int simd;                       /* -1 = portable kernels only (tests); 0 = AVX2 where
                                   * the CPU has it (same bits either way) */
} migrate_params;

void migrate_params_init(migrate_params *p);
const char *migrate_method_name(int method);   /* "phase-shift", "kirchhoff" */
int migrate_method_parse(const char *s);       /* -1 when unknown */

/* What a run found and did. */
typedef struct migrate_info {
  int64_t velocity_cmp_min, velocity_cmp_max; /* control CMPs of the table */
  double lateral_variation_pct;   /* largest (max - min) / mean of V_rms across the
                                   * section's CMPs at one time */
  int one_function;               /* phase shift: one v(tau) for the whole line */
  size_t imaginary_intervals;     /* Dix intervals held at the velocity above */
  size_t padded_cmps, padded_samples;
  double seconds;
} migrate_info;

/* Migrates the section's traces with the RMS table (velocity_pct applied). The table
 * must have a control CMP within the section's CMP range. out receives, for every trace
 * of the section with a CMP in [first_cmp, last_cmp], ns samples (trace order); *nout
 * their count. On success *out owns the samples (free()). */
int migrate_run(const migrate_section *s, const velocity_table *v, const migrate_params *p,
                float **out, size_t *nout, migrate_info *info, tz_err *err);

/* The textual header of a migrated section (lines separated by '\n'): method and its
 * source, velocity table, percentage or the scanned ones, input, CMP interval. */
void migrate_describe(const migrate_section *s, const migrate_params *p, const char *velocity,
                      const char *input, const double *scan_pct, size_t nscan, char *buf,
                      size_t cap);

/* Writes migrated traces (those of migrate_run, in order) with the input's trace headers
 * and format; `text` (lines separated by '\n') goes into the textual header. When
 * panel_pct is not NULL, trace i carries panel_pct[i / traces_per_panel] x 100 as a
 * 32-bit integer in bytes 233-236 (unassigned in SEG-Y rev 1), so pictures can label
 * each panel of a velocity scan. Written under a temporary name, renamed on success. */
int migrate_write(const migrate_section *s, const migrate_params *p, const float *samples,
                  size_t ntraces, const double *panel_pct, size_t traces_per_panel,
                  const char *text, const char *path, tz_err *err);

#endif
