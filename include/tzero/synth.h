/* synth.h -- synthetic shot records from a layered-earth model and a layout.
 *
 * Events: reflections from the bases of flat layers by exact ray tracing
 * (Snell's law through flat layers, Sheriff & Geldart 1995), one optional dipping interface in a homogeneous
 * overburden by the image-source method, the direct wave, the head wave from
 * the first interface, an optional slow linear noise train and random noise.
 * Amplitudes: normal-incidence reflection coefficients with spherical
 * spreading (docs/earth-model.md). Wavelet: zero-phase Ricker (Ricker 1953),
 * rendered analytically over its support around each event only.
 *
 * Everything is a pure function of its inputs: the random noise of a trace is
 * seeded from (seed, field record, channel), so output never depends on order
 * or threads. A synth_model is read-only once parsed and may be shared.
 */
#ifndef TZERO_SYNTH_H
#define TZERO_SYNTH_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"
#include "tzero/geometry.h"

#define SYNTH_MAX_LAYERS 64
#define SYNTH_REF_DISTANCE_M 1000.0   /* amplitude = R * SYNTH_REF_DISTANCE_M / spreading distance */
#define SYNTH_DEFAULT_DENSITY 2000.0  /* kg/m^3 when a layer gives none */

typedef struct synth_layer {
  double thickness_m;        /* 0 for the last layer (a half-space) */
  double velocity_mps;
  double density_kgm3;
} synth_layer;

/* One plane interface dipping along the line, in a homogeneous overburden. */
typedef struct synth_dip {
  int present;
  double depth_m;            /* vertical depth below the surface at along_m */
  double along_m;            /* along-line position (layout line coordinates) */
  double dip_deg;            /* > 0: deepens in the shooting direction; |dip| < 80 */
  double velocity_above_mps, density_above_kgm3;
  double velocity_below_mps, density_below_kgm3;
} synth_dip;

#define SYNTH_MAX_NS_POINTS 256

/* Near-surface model (docs/earth-model.md): the layered earth lies below a flat
 * datum; between the surface (the layout's station elevations) and the datum
 * there is a weathering layer (thickness and velocity linear in the along-line
 * position between control points, held beyond them; none when n = 0) over
 * material of the replacement velocity. Each station delays every reflection
 * by its vertical time to the datum. */
typedef struct synth_near_surface {
  int present;
  double datum_m;
  double replacement_velocity_mps;
  size_t n;
  double along_m[SYNTH_MAX_NS_POINTS];
  double thickness_m[SYNTH_MAX_NS_POINTS];
  double velocity_mps[SYNTH_MAX_NS_POINTS];
} synth_near_surface;
#define SYNTH_MAX_DIFFRACTORS 64
#define SYNTH_MAX_FAULTS 16

/* A point diffractor (a scatterer: a fault edge, a boulder, a pinch-out). */
typedef struct synth_diffractor {
  double along_m, depth_m;   /* along-line position (layout line coordinates), depth */
  double amplitude;          /* scattering strength, as a reflection coefficient */
} synth_diffractor;

/* A vertical fault through one flat interface: beyond along_m (in the shooting
 * direction) the interface lies throw_m deeper (negative: shallower). */
typedef struct synth_fault {
  double along_m, throw_m;
  size_t interface;          /* 0-based flat interface (base of layer `interface`) */
} synth_fault;

typedef struct synth_model {
  size_t nlayers;            /* >= 1; nlayers - 1 flat reflectors */
  synth_layer layer[SYNTH_MAX_LAYERS];
  synth_dip dip;
  synth_near_surface ns;
  size_t ndiffractors;
  synth_diffractor diffractor[SYNTH_MAX_DIFFRACTORS];
  size_t nfaults;
  synth_fault fault[SYNTH_MAX_FAULTS];
} synth_model;

/* Weathering thickness and velocity at an along-line position (0 and the
 * replacement velocity without a weathering layer or near-surface model). */
void synth_weathering_at(const synth_model *m, double along_m, double *thickness_m,
                         double *velocity_mps);
/* Vertical time (s) from a point `depth_m` below the surface at elevation
 * `elevation_m`, along-line position along_m, down to the datum: (h - d) / v_w +
 * (E - h - D) / v_r above the weathering base, (E - d - D) / v_r below it; 0
 * without a near-surface model. The station's true static is minus this. */
double synth_station_delay(const synth_model *m, double along_m, double elevation_m,
                           double depth_m);
/* Vertical time (s) from a source at depth d up to the surface: d / v_w inside the
 * weathering, h / v_w + (d - h) / v_r below it. */
double synth_uphole_time(const synth_model *m, double along_m, double depth_m);

/* Parses model JSON (NUL-terminated; docs/earth-model.md). Unknown keys are
 * TZ_E_FORMAT naming the key and the nearest known one. */
int synth_model_parse(synth_model *m, const char *json, size_t len, const char *name,
                      tz_err *err);
int synth_model_load(synth_model *m, const char *path, tz_err *err);

/* ---- kinematics and amplitudes ---- */

/* x(p) and t(p) for a reflection from the base of layer n (h, v: n layers), ray
 * parameter p in s/m, 0 <= p < 1/max(v) (Snell's law through flat layers, Sheriff & Geldart 1995). TZ_E_ARG if not. */
int synth_ray(const double *h, const double *v, size_t n, double p, double *x, double *t);
/* Exact two-way time at horizontal offset x of the reflection from flat
 * interface k (the base of layer k, 0-based, k < nlayers - 1): solves
 * x(p) = |x| for p (safeguarded Newton), to 1e-9 m. p_out may be NULL. */
int synth_flat_time(const synth_model *m, size_t k, double offset_m, double *t, double *p_out);
/* Zero-offset two-way time and exact RMS velocity (Taner and Koehler 1969)
 * down to interface k. */
double synth_t0(const synth_model *m, size_t k);
/* Two-way time from source (sa, sr) to a point scatterer and back up to the receiver
 * (ra, rr) (along-line and cross-line coordinates, metres), along straight rays at the
 * RMS velocity of the flat layers down to the depth of the scatterer (an approximation for
 * layered media; exact in a homogeneous one). *v_out (may be NULL) gets that velocity. */
double synth_diffraction_time(const synth_model *m, const synth_diffractor *d, double sa,
                              double sr, double ra, double rr, double *v_out);
/* The RMS velocity of the flat layers down to depth z (vertical two-way time). */
double synth_vrms_to_depth(const synth_model *m, double z_m);
double synth_vrms(const synth_model *m, size_t k);
/* Normal-incidence reflection coefficient (Z2 - Z1) / (Z2 + Z1), Z = density * v. */
double synth_reflection(const synth_model *m, size_t k);
/* Dipping interface: two-way time from a source to a receiver given in line
 * coordinates (along, right; metres). Negative if the source is below it. */
double synth_dip_time(const synth_model *m, double src_along, double src_right,
                      double rec_along, double rec_right);
/* Head wave from the first interface: 1 and *t when |x| is beyond the critical
 * distance (and v2 > v1), else 0. */
int synth_head_time(const synth_model *m, double offset_m, double *t);
/* Zero-phase Ricker wavelet of peak frequency fp_hz at time t_s (Ricker 1953). */
double synth_ricker(double fp_hz, double t_s);

/* ---- random numbers: xoshiro256** (Blackman and Vigna 2018) in a struct ---- */
typedef struct synth_rng { uint64_t s[4]; } synth_rng;
void synth_rng_seed(synth_rng *r, uint64_t seed);   /* splitmix64 expansion */
uint64_t synth_rng_next(synth_rng *r);
double synth_rng_gauss(synth_rng *r);               /* standard normal (polar method) */

/* ---- traces and surveys ---- */
typedef enum {
  SYNTH_WAVELET_RICKER = 0,        /* zero-phase Ricker (default) */
  SYNTH_WAVELET_MINIMUM_PHASE      /* causal damped resonance (synth_min_phase()) */
} synth_wavelet;

/* The minimum-phase source wavelet at time t_s after the event (0 before it):
 * w(t) = exp(-pi f t) sin(2 pi f t) / 0.514198, the impulse response of a damped
 * two-pole resonance at fp_hz (poles in the left half-plane, no zeros: minimum
 * phase in continuous time), scaled to a peak of 1. */
double synth_min_phase(double fp_hz, double t_s);
/* The reverberation filter 1 / (1 + c z^P) applied in place: y_n = x_n - c y_{n-P}
 * (a multiple train of period P samples, each bounce times -c; |c| < 1). */
void synth_reverberate(float *x, size_t ns, size_t period, double c);
/* Phase velocity of the dispersive noise train at f_hz: vmax at and below 0.5 fp,
 * vmin at and above 2 fp, linear in between (docs/earth-model.md). */
double synth_train_velocity(double vmin, double vmax, double fp_hz, double f_hz);

typedef struct synth_params {
  double peak_hz;            /* Ricker peak frequency (default 30) */
  uint32_t samples;          /* per trace (default 1001) */
  uint32_t interval_us;      /* default 1000 */
  int format_code;           /* 1 IBM (default) or 5 IEEE */
  int reflections, dipping, direct, head;  /* events to include (default all 1) */
  double direct_scale;       /* direct-wave amplitude factor (default 0.2) */
  double head_scale;         /* head-wave amplitude factor (default 0.05) */
  double noise_rms;          /* random noise RMS, trace units (default 0) */
  uint64_t seed;             /* default 1 */
  double train_velocity_mps; /* linear noise train (ground-roll-like) */
  double train_amplitude;    /* 0 = none (default) */
  double train_peak_hz;      /* default 8 */
  double train_velocity_max_mps; /* > train_velocity_mps: dispersive train, phase velocity
                              * from this (low frequencies) down to train_velocity_mps;
                              * 0 = not dispersive (default) */
  int wavelet;               /* synth_wavelet of the body waves (default Ricker) */
  double reverb_period_s;    /* > 0: body waves through 1 / (1 + c z^P) (default 0) */
  double reverb_coefficient; /* c, |c| < 1 */
  int bare_headers;          /* 1: no geometry in the headers */
  double bin_size_m;         /* CMP numbering (bins_params_from_layout); <= 0 = default */
  int32_t first_cmp;         /* default 1 */
  const char *line_name;     /* for the textual header; borrowed, may be NULL */
} synth_params;

void synth_params_init(synth_params *p);

/* Renders one trace (p->samples values into out, zeroed first). The frame
 * (x0, y0, azimuth) turns map positions into line coordinates for the dipping
 * interface. */
typedef struct synth_frame { double x0, y0, azimuth_deg; } synth_frame;
void synth_render(const synth_model *m, const synth_params *p, const synth_frame *f,
                  const geometry_trace *g, float *out);

typedef struct synth_summary {
  size_t files;
  int64_t traces;
  int64_t bytes;
  int32_t first_field_record, last_field_record;
  int32_t first_cmp, last_cmp;   /* CMP range written (0, -1 with bare headers) */
} synth_summary;

/* Writes one SEG-Y file per recorded shot of the layout into folder `dir`
 * (named shot_NNNNNN.sgy by field record). Files are made in a hidden temporary
 * folder beside `dir` and moved in only when all are complete; on failure
 * nothing new appears. sum may be NULL. */
int synth_survey(const synth_model *m, const geometry_layout *l, const synth_params *p,
                 const char *dir, synth_summary *sum, tz_err *err);

/* Writes the model's exact RMS velocity table (flat layers; docs/velocity-table.md format,
 * header cmp,time_ms,velocity_mps) for control CMPs first_cmp and last_cmp
 * (one CMP when they are equal), through a temporary file. */
/* Writes the true station statics of the layout under the near-surface model
 * (docs/statics.md table format; static = -delay, stations numbered
 * floor(along / receiver interval + 1/2) from the layout's station 0). */
int synth_write_true_statics(const synth_model *m, const geometry_layout *l, const char *path,
                             tz_err *err);

int synth_write_rms_table(const synth_model *m, int32_t first_cmp, int32_t last_cmp,
                          const char *path, tz_err *err);

#endif
