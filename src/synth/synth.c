/* synth.c -- synthetic shot records: exact layered-earth traveltimes, Ricker wavelets.
 *
 * Kinematics: flat-layer reflections by solving x(p) = offset for the ray
 * parameter (Snell's law through flat layers, Sheriff & Geldart 1995) with a safeguarded Newton iteration; a dipping
 * plane in a homogeneous overburden by the image source (the source mirrored in
 * the plane, t = |R - S'| / v); the direct wave |x| / v1; the head wave of the
 * first interface beyond the critical distance.
 * Amplitudes: normal-incidence reflection coefficients, spherical spreading
 * 1 / (t V_rms^2 / v1) (Newman 1973), scaled by SYNTH_REF_DISTANCE_M.
 * Rendering: each event adds the analytic Ricker wavelet (Ricker 1953) over its
 * support only (|tau| < 5 / (pi fp), where it has fallen below 1e-9), so the
 * cost per trace is events x support, never a full-trace convolution.
 * Noise: Gaussian from a per-trace xoshiro256** generator seeded from
 * (seed, field record, channel); no global state.
 *
 * Not here: SEG-Y encoding (segy_writer.c), layout enumeration (geometry.c),
 * CMP numbering (bins.c).
 */
#include "tzero/synth.h"

#include <cjson/cJSON.h>
#include <dirent.h>
#include <errno.h>
#include <float.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "tzero/bins.h"
#include "tzero/fileio.h"
#include "util/json_doc.h"
#include "tzero/segy.h"
#include "tzero/statics.h"

#define MODEL_MAX_BYTES (4u << 20)

/* ---- model JSON ---- */

static const char *const model_keys[] = { "layers", "dipping_interface", "near_surface",
                                           "description", "diffractors", "faults", NULL };
static const char *const ns_keys[] = { "datum_m", "replacement_velocity_mps", "weathering", NULL };
static const char *const w_keys[] = { "along_m", "thickness_m", "velocity_mps", NULL };
static const char *const diffractor_keys[] = { "x_m", "depth_m", "amplitude", NULL };
static const char *const fault_keys[] = { "x_m", "throw_m", "interface", NULL };
static const char *const layer_keys[] = { "thickness_m", "velocity_mps", "density_kgm3", NULL };
static const char *const dip_keys[] = {
  "depth_m", "along_m", "dip_deg", "velocity_above_mps", "density_above_kgm3",
  "velocity_below_mps", "density_below_kgm3", NULL,
};
#define NKEYS(a) (sizeof a / sizeof a[0])

static int num(const cJSON *it, const char *path, double lo, double hi, double *out,
               tz_err *err)
{
  return json_doc_number(it, path, lo, hi, out, TZ_E_FORMAT, err);
}

static int model_from_json(synth_model *m, const cJSON *root, tz_err *err)
{
  if (!cJSON_IsObject(root))
    return tz_fail(err, TZ_E_FORMAT, "model: expected a JSON object");
  if (json_doc_check_keys(root, "$", model_keys, TZ_E_FORMAT, err))
    return err->status;
  const cJSON *layers = cJSON_GetObjectItemCaseSensitive(root, "layers");
  if (!cJSON_IsArray(layers) || cJSON_GetArraySize(layers) < 1)
    return tz_fail(err, TZ_E_FORMAT, "$.layers: expected an array of at least one layer");
  int n = cJSON_GetArraySize(layers);
  if (n > SYNTH_MAX_LAYERS)
    return tz_fail(err, TZ_E_FORMAT, "$.layers: more than %d layers", SYNTH_MAX_LAYERS);
  int i = 0;
  const cJSON *ly;
  cJSON_ArrayForEach(ly, layers) {
    char path[64];
    snprintf(path, sizeof path, "$.layers[%d]", i);
    if (!cJSON_IsObject(ly))
      return tz_fail(err, TZ_E_FORMAT, "%s: expected an object", path);
    if (json_doc_check_keys(ly, path, layer_keys, TZ_E_FORMAT, err))
      return err->status;
    synth_layer *L = &m->layer[i];
    const cJSON *h = cJSON_GetObjectItemCaseSensitive(ly, "thickness_m");
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(ly, "velocity_mps");
    const cJSON *d = cJSON_GetObjectItemCaseSensitive(ly, "density_kgm3");
    char sub[96];
    if (i < n - 1) {
      snprintf(sub, sizeof sub, "%s.thickness_m", path);
      if (!h)
        return tz_fail(err, TZ_E_FORMAT, "%s: missing (only the last layer, a half-space, "
                       "has no thickness)", sub);
      if (num(h, sub, 1e-3, 1e6, &L->thickness_m, err))
        return err->status;
    } else if (h) {
      return tz_fail(err, TZ_E_FORMAT, "%s.thickness_m: the last layer is a half-space and "
                     "has no thickness", path);
    }
    snprintf(sub, sizeof sub, "%s.velocity_mps", path);
    if (!v)
      return tz_fail(err, TZ_E_FORMAT, "%s: missing", sub);
    if (num(v, sub, 10, 20000, &L->velocity_mps, err))
      return err->status;
    L->density_kgm3 = SYNTH_DEFAULT_DENSITY;
    snprintf(sub, sizeof sub, "%s.density_kgm3", path);
    if (d && num(d, sub, 1, 30000, &L->density_kgm3, err))
      return err->status;
    i++;
  }
  m->nlayers = (size_t)n;
  const cJSON *dp = cJSON_GetObjectItemCaseSensitive(root, "dipping_interface");
  if (dp) {
    if (!cJSON_IsObject(dp))
      return tz_fail(err, TZ_E_FORMAT, "$.dipping_interface: expected an object");
    if (json_doc_check_keys(dp, "$.dipping_interface", dip_keys, TZ_E_FORMAT, err))
      return err->status;
    synth_dip *D = &m->dip;
    D->present = 1;
    D->velocity_above_mps = m->layer[0].velocity_mps;
    D->density_above_kgm3 = m->layer[0].density_kgm3;
    D->density_below_kgm3 = SYNTH_DEFAULT_DENSITY;
    static const struct { const char *k; size_t off; double lo, hi; int req; } f[] = {
      { "depth_m", offsetof(synth_dip, depth_m), 1e-3, 1e6, 1 },
      { "along_m", offsetof(synth_dip, along_m), -1e8, 1e8, 0 },
      { "dip_deg", offsetof(synth_dip, dip_deg), -80, 80, 1 },
      { "velocity_above_mps", offsetof(synth_dip, velocity_above_mps), 10, 20000, 0 },
      { "density_above_kgm3", offsetof(synth_dip, density_above_kgm3), 1, 30000, 0 },
      { "velocity_below_mps", offsetof(synth_dip, velocity_below_mps), 10, 20000, 1 },
      { "density_below_kgm3", offsetof(synth_dip, density_below_kgm3), 1, 30000, 0 },
    };
    for (size_t k = 0; k < NKEYS(f); k++) {
      const cJSON *it = cJSON_GetObjectItemCaseSensitive(dp, f[k].k);
      char sub[96];
      snprintf(sub, sizeof sub, "$.dipping_interface.%s", f[k].k);
      if (!it) {
        if (f[k].req)
          return tz_fail(err, TZ_E_FORMAT, "%s: missing", sub);
        continue;
      }
      if (num(it, sub, f[k].lo, f[k].hi, (double *)((char *)D + f[k].off), err))
        return err->status;
    }
  }
  return TZ_OK;
}

static int near_surface_from_json(synth_near_surface *N, const cJSON *v, tz_err *err)
{
  if (!cJSON_IsObject(v))
    return tz_fail(err, TZ_E_FORMAT, "$.near_surface: expected an object");
  if (json_doc_check_keys(v, "$.near_surface", ns_keys, TZ_E_FORMAT, err))
    return err->status;
  N->present = 1;
  const cJSON *d = cJSON_GetObjectItemCaseSensitive(v, "datum_m");
  const cJSON *r = cJSON_GetObjectItemCaseSensitive(v, "replacement_velocity_mps");
  if (!d || !r)
    return tz_fail(err, TZ_E_FORMAT, "$.near_surface: datum_m and replacement_velocity_mps "
                   "are required");
  if (num(d, "$.near_surface.datum_m", -1e4, 1e4, &N->datum_m, err) ||
      num(r, "$.near_surface.replacement_velocity_mps", 100, 20000,
          &N->replacement_velocity_mps, err))
    return err->status;
  const cJSON *w = cJSON_GetObjectItemCaseSensitive(v, "weathering");
  if (!w)
    return TZ_OK;
  if (!cJSON_IsArray(w) || cJSON_GetArraySize(w) > SYNTH_MAX_NS_POINTS)
    return tz_fail(err, TZ_E_FORMAT, "$.near_surface.weathering: expected an array of at "
                   "most %d points", SYNTH_MAX_NS_POINTS);
  const cJSON *pt;
  size_t i = 0;
  cJSON_ArrayForEach(pt, w) {
    char path[64], sub[96];
    snprintf(path, sizeof path, "$.near_surface.weathering[%zu]", i);
    if (!cJSON_IsObject(pt))
      return tz_fail(err, TZ_E_FORMAT, "%s: expected an object", path);
    if (json_doc_check_keys(pt, path, w_keys, TZ_E_FORMAT, err))
      return err->status;
    double *dst[3] = { &N->along_m[i], &N->thickness_m[i], &N->velocity_mps[i] };
    const double lo[3] = { -1e8, 0, 50 }, hi[3] = { 1e8, 1e4, 20000 };
    for (int k = 0; k < 3; k++) {
      const cJSON *it = cJSON_GetObjectItemCaseSensitive(pt, w_keys[k]);
      snprintf(sub, sizeof sub, "%s.%s", path, w_keys[k]);
      if (!it)
        return tz_fail(err, TZ_E_FORMAT, "%s: missing", sub);
      if (num(it, sub, lo[k], hi[k], dst[k], err))
        return err->status;
    }
    if (N->velocity_mps[i] >= N->replacement_velocity_mps)
      return tz_fail(err, TZ_E_FORMAT, "%s.velocity_mps: %g m/s is not below the replacement "
                     "velocity %g m/s", path, N->velocity_mps[i], N->replacement_velocity_mps);
    if (i && N->along_m[i] <= N->along_m[i - 1])
      return tz_fail(err, TZ_E_FORMAT, "%s.along_m: positions must increase", path);
    i++;
  }
  N->n = i;
  return TZ_OK;
}

/* "diffractors": [{"x_m", "depth_m", "amplitude"}]; "faults": [{"x_m", "throw_m",
 * "interface"}] (x_m along the line in layout coordinates; interface 1-based). */
static int scatterers_from_json(synth_model *m, const cJSON *root, tz_err *err)
{
  const cJSON *a = cJSON_GetObjectItemCaseSensitive(root, "diffractors"), *it;
  char sub[96];
  if (a) {
    if (!cJSON_IsArray(a) || cJSON_GetArraySize(a) > SYNTH_MAX_DIFFRACTORS)
      return tz_fail(err, TZ_E_FORMAT, "$.diffractors: expected an array of at most %d objects",
                     SYNTH_MAX_DIFFRACTORS);
    size_t i = 0;
    cJSON_ArrayForEach(it, a) {
      synth_diffractor *d = &m->diffractor[i];
      snprintf(sub, sizeof sub, "$.diffractors[%zu]", i);
      if (!cJSON_IsObject(it))
        return tz_fail(err, TZ_E_FORMAT, "%s: expected an object", sub);
      if (json_doc_check_keys(it, sub, diffractor_keys, TZ_E_FORMAT, err))
        return err->status;
      d->amplitude = 0.1;
      const char *k[3] = { "x_m", "depth_m", "amplitude" };
      double *dst[3] = { &d->along_m, &d->depth_m, &d->amplitude };
      const double lo[3] = { -1e8, 1e-3, -10 }, hi[3] = { 1e8, 1e6, 10 };
      for (int q = 0; q < 3; q++) {
        const cJSON *v = cJSON_GetObjectItemCaseSensitive(it, k[q]);
        snprintf(sub, sizeof sub, "$.diffractors[%zu].%s", i, k[q]);
        if (!v && q < 2)
          return tz_fail(err, TZ_E_FORMAT, "%s: missing", sub);
        if (v && num(v, sub, lo[q], hi[q], dst[q], err))
          return err->status;
      }
      i++;
    }
    m->ndiffractors = i;
  }
  if ((a = cJSON_GetObjectItemCaseSensitive(root, "faults"))) {
    if (!cJSON_IsArray(a) || cJSON_GetArraySize(a) > SYNTH_MAX_FAULTS)
      return tz_fail(err, TZ_E_FORMAT, "$.faults: expected an array of at most %d objects",
                     SYNTH_MAX_FAULTS);
    size_t i = 0;
    cJSON_ArrayForEach(it, a) {
      synth_fault *f = &m->fault[i];
      snprintf(sub, sizeof sub, "$.faults[%zu]", i);
      if (!cJSON_IsObject(it))
        return tz_fail(err, TZ_E_FORMAT, "%s: expected an object", sub);
      if (json_doc_check_keys(it, sub, fault_keys, TZ_E_FORMAT, err))
        return err->status;
      double iface = 0;
      const char *k[3] = { "x_m", "throw_m", "interface" };
      double *dst[3] = { &f->along_m, &f->throw_m, &iface };
      const double lo[3] = { -1e8, -1e5, 1 }, hi[3] = { 1e8, 1e5, (double)m->nlayers - 1 };
      for (int q = 0; q < 3; q++) {
        const cJSON *v = cJSON_GetObjectItemCaseSensitive(it, k[q]);
        snprintf(sub, sizeof sub, "$.faults[%zu].%s", i, k[q]);
        if (!v)
          return tz_fail(err, TZ_E_FORMAT, "%s: missing", sub);
        if (num(v, sub, lo[q], hi[q], dst[q], err))
          return err->status;
      }
      if (iface != floor(iface))
        return tz_fail(err, TZ_E_FORMAT, "$.faults[%zu].interface: a whole number (1 = the base "
                       "of the first layer)", i);
      f->interface = (size_t)iface - 1;
      /* the thrown interface stays between its neighbours */
      double h_above = m->layer[f->interface].thickness_m;
      double h_below = f->interface + 2 < m->nlayers ? m->layer[f->interface + 1].thickness_m
                                                     : INFINITY;
      if (!(f->throw_m > -h_above && f->throw_m < h_below))
        return tz_fail(err, TZ_E_FORMAT, "$.faults[%zu].throw_m: %g m moves interface %zu past a "
                       "neighbouring interface (layer thicknesses %g and %g m)", i, f->throw_m,
                       f->interface + 1, h_above, h_below);
      i++;
    }
    m->nfaults = i;
  }
  return TZ_OK;
}

int synth_model_parse(synth_model *m, const char *json, size_t len, const char *name,
                      tz_err *err)
{
  memset(m, 0, sizeof *m);
  cJSON *root;
  if (json_doc_parse(&root, json, len, name, "model", TZ_E_FORMAT, err))
    return err->status;
  int rc = model_from_json(m, root, err);
  const cJSON *ns = rc ? NULL : cJSON_GetObjectItemCaseSensitive(root, "near_surface");
  if (ns)
    rc = near_surface_from_json(&m->ns, ns, err);
  if (!rc)
    rc = scatterers_from_json(m, root, err);
  cJSON_Delete(root);
  if (rc)
    tz_err_path(err, name);
  return rc;
}

int synth_model_load(synth_model *m, const char *path, tz_err *err)
{
  char *text;
  size_t len;
  memset(m, 0, sizeof *m);
  if (fileio_read_all(path, MODEL_MAX_BYTES, &text, &len, err))
    return err->status;
  int rc = synth_model_parse(m, text, len, path, err);
  free(text);
  return rc;
}

/* ---- near surface ---- */

void synth_weathering_at(const synth_model *m, double along_m, double *h, double *v)
{
  const synth_near_surface *N = &m->ns;
  *h = 0;
  *v = N->present ? N->replacement_velocity_mps : m->layer[0].velocity_mps;
  if (!N->present || !N->n)
    return;
  if (along_m <= N->along_m[0] || N->n == 1) {
    *h = N->thickness_m[0];
    *v = N->velocity_mps[0];
    return;
  }
  if (along_m >= N->along_m[N->n - 1]) {
    *h = N->thickness_m[N->n - 1];
    *v = N->velocity_mps[N->n - 1];
    return;
  }
  size_t k = 1;
  while (N->along_m[k] < along_m)
    k++;
  double w = (along_m - N->along_m[k - 1]) / (N->along_m[k] - N->along_m[k - 1]);
  *h = N->thickness_m[k - 1] + w * (N->thickness_m[k] - N->thickness_m[k - 1]);
  *v = N->velocity_mps[k - 1] + w * (N->velocity_mps[k] - N->velocity_mps[k - 1]);
}

double synth_station_delay(const synth_model *m, double along_m, double elevation_m,
                           double depth_m)
{
  if (!m->ns.present)
    return 0;
  double h, vw, vr = m->ns.replacement_velocity_mps, D = m->ns.datum_m;
  synth_weathering_at(m, along_m, &h, &vw);
  if (depth_m < h)
    return (h - depth_m) / vw + (elevation_m - h - D) / vr;
  return (elevation_m - depth_m - D) / vr;
}

double synth_uphole_time(const synth_model *m, double along_m, double depth_m)
{
  if (!m->ns.present)
    return 0;
  double h, vw, vr = m->ns.replacement_velocity_mps;
  synth_weathering_at(m, along_m, &h, &vw);
  return depth_m < h ? depth_m / vw : h / vw + (depth_m - h) / vr;
}

/* ---- kinematics ---- */

int synth_ray(const double *h, const double *v, size_t n, double p, double *x, double *t)
{
  double sx = 0, st = 0;
  for (size_t k = 0; k < n; k++) {
    double q = 1.0 - p * p * v[k] * v[k];
    if (!(q > 0) || p < 0)
      return TZ_E_ARG;
    double c = sqrt(q);
    sx += 2.0 * h[k] * p * v[k] / c;
    st += 2.0 * h[k] / (v[k] * c);
  }
  *x = sx;
  *t = st;
  return TZ_OK;
}

int synth_flat_time(const synth_model *m, size_t k, double offset_m, double *t, double *p_out)
{
  if (k + 1 >= m->nlayers)
    return TZ_E_ARG;
  size_t n = k + 1;
  double vmax = 0;
  for (size_t i = 0; i < n; i++)
    if (m->layer[i].velocity_mps > vmax)
      vmax = m->layer[i].velocity_mps;
  double X = fabs(offset_m);
  double lo = 0, hi = 1.0 / vmax, p = 0;
  /* Start from the straight-ray guess with the RMS velocity, kept in the bracket. */
  double vr = synth_vrms(m, k), t0 = synth_t0(m, k);
  p = X / (vr * vr * sqrt(t0 * t0 + X * X / (vr * vr)));
  if (!(p < hi))
    p = 0.5 * hi;
  for (int it = 0; it < 200; it++) {
    double x = 0, tt = 0, dx = 0;
    for (size_t i = 0; i < n; i++) {
      double vi = m->layer[i].velocity_mps, hh = m->layer[i].thickness_m;
      double q = 1.0 - p * p * vi * vi, c = sqrt(q);
      x += 2.0 * hh * p * vi / c;
      tt += 2.0 * hh / (vi * c);
      dx += 2.0 * hh * vi / (q * c);
    }
    double f = x - X;
    if (fabs(f) < 1e-9) {
      *t = tt;
      if (p_out)
        *p_out = p;
      return TZ_OK;
    }
    if (f > 0)
      hi = p;
    else
      lo = p;
    double np = p - f / dx;
    p = (np > lo && np < hi) ? np : 0.5 * (lo + hi);
    if (hi - lo < 1e-18 * (1.0 / vmax)) {
      *t = tt;
      if (p_out)
        *p_out = p;
      return TZ_OK;
    }
  }
  return TZ_E_INTERNAL;             /* not reached: bisection converges within 200 steps */
}

double synth_t0(const synth_model *m, size_t k)
{
  double t = 0;
  for (size_t i = 0; i <= k && i < m->nlayers; i++)
    t += 2.0 * m->layer[i].thickness_m / m->layer[i].velocity_mps;
  return t;
}

double synth_vrms(const synth_model *m, size_t k)
{
  double s = 0, t = 0;
  for (size_t i = 0; i <= k && i < m->nlayers; i++) {
    double dt = 2.0 * m->layer[i].thickness_m / m->layer[i].velocity_mps;
    s += m->layer[i].velocity_mps * m->layer[i].velocity_mps * dt;
    t += dt;
  }
  return t > 0 ? sqrt(s / t) : m->layer[0].velocity_mps;
}

/* Normal-incidence reflection coefficient (Z2 - Z1) / (Z2 + Z1), Z = velocity x density. */
static double reflection_coefficient(double v1, double d1, double v2, double d2)
{
  double z1 = v1 * d1, z2 = v2 * d2;
  return (z2 - z1) / (z2 + z1);
}

double synth_reflection(const synth_model *m, size_t k)
{
  if (k + 1 >= m->nlayers)
    return 0;
  return reflection_coefficient(m->layer[k].velocity_mps, m->layer[k].density_kgm3,
                                m->layer[k + 1].velocity_mps, m->layer[k + 1].density_kgm3);
}

double synth_dip_time(const synth_model *m, double sa, double sr, double ra, double rr)
{
  const synth_dip *d = &m->dip;
  double phi = d->dip_deg * M_PI / 180.0;
  double nx = -sin(phi), nz = cos(phi);  /* unit normal (along, depth), pointing down */
  /* Signed distance from the source (depth 0) to the plane, positive above it. */
  double h = nx * (d->along_m - sa) + nz * d->depth_m;
  if (h <= 0)
    return -1.0;
  double ia = sa + 2.0 * h * nx, iz = 2.0 * h * nz;   /* image source */
  double da = ra - ia, dr = rr - sr, dz = iz;
  return sqrt(da * da + dr * dr + dz * dz) / d->velocity_above_mps;
}

double synth_vrms_to_depth(const synth_model *m, double z_m)
{
  double z = 0, t = 0, v2t = 0;
  for (size_t k = 0; k < m->nlayers && z < z_m; k++) {
    double v = m->layer[k].velocity_mps;
    double h = k + 1 < m->nlayers ? m->layer[k].thickness_m : INFINITY;
    double part = z_m - z < h ? z_m - z : h;
    t += 2 * part / v;
    v2t += 2 * part * v;                  /* v^2 * (2 part / v) */
    z += part;
  }
  return t > 0 ? sqrt(v2t / t) : m->layer[0].velocity_mps;
}

double synth_diffraction_time(const synth_model *m, const synth_diffractor *d, double sa,
                              double sr, double ra, double rr, double *v_out)
{
  double v = synth_vrms_to_depth(m, d->depth_m), z2 = d->depth_m * d->depth_m;
  double rs = sqrt((sa - d->along_m) * (sa - d->along_m) + sr * sr + z2);
  double rv = sqrt((ra - d->along_m) * (ra - d->along_m) + rr * rr + z2);
  if (v_out)
    *v_out = v;
  return (rs + rv) / v;
}

int synth_head_time(const synth_model *m, double offset_m, double *t)
{
  if (m->nlayers < 2)
    return 0;
  double v1 = m->layer[0].velocity_mps, v2 = m->layer[1].velocity_mps;
  double h = m->layer[0].thickness_m;
  if (!(v2 > v1))
    return 0;
  double s = v1 / v2, c = sqrt(1.0 - s * s);
  double xc = 2.0 * h * s / c;
  double x = fabs(offset_m);
  if (x < xc)
    return 0;
  *t = x / v2 + 2.0 * h * c / v1;
  return 1;
}

double synth_ricker(double fp, double t)
{
  double a = M_PI * fp * t;
  a *= a;
  return (1.0 - 2.0 * a) * exp(-a);
}

/* ---- random numbers ---- */

static uint64_t splitmix(uint64_t *x)
{
  uint64_t z = (*x += 0x9E3779B97F4A7C15ull);
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ull;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBull;
  return z ^ (z >> 31);
}

void synth_rng_seed(synth_rng *r, uint64_t seed)
{
  for (int i = 0; i < 4; i++)
    r->s[i] = splitmix(&seed);
}

static uint64_t rotl(uint64_t x, int k) { return (x << k) | (x >> (64 - k)); }

uint64_t synth_rng_next(synth_rng *r)
{
  uint64_t *s = r->s;
  uint64_t out = rotl(s[1] * 5, 7) * 9, t = s[1] << 17;
  s[2] ^= s[0];
  s[3] ^= s[1];
  s[1] ^= s[2];
  s[0] ^= s[3];
  s[2] ^= t;
  s[3] = rotl(s[3], 45);
  return out;
}

double synth_rng_gauss(synth_rng *r)
{
  for (;;) {
    double u = (double)(synth_rng_next(r) >> 11) * 0x1p-52 - 1.0;
    double v = (double)(synth_rng_next(r) >> 11) * 0x1p-52 - 1.0;
    double s = u * u + v * v;
    if (s > 0 && s < 1)
      return u * sqrt(-2.0 * log(s) / s);
  }
}

/* ---- rendering ---- */

void synth_params_init(synth_params *p)
{
  memset(p, 0, sizeof *p);
  p->peak_hz = 30;
  p->samples = 1001;
  p->interval_us = 1000;
  p->format_code = 1;
  p->reflections = p->dipping = p->direct = p->head = 1;
  p->direct_scale = 0.2;
  p->head_scale = 0.05;
  p->seed = 1;
  p->train_velocity_mps = 300;
  p->train_peak_hz = 8;
  p->first_cmp = 1;
}

/* Adds amp * ricker(t - te) over the wavelet's support. */
static void add_wavelet(float *out, size_t ns, double dt, double fp, double te, double amp)
{
  double half = 5.0 / (M_PI * fp);
  double a = (te - half) / dt, b = (te + half) / dt;
  if (b < 0 || a > (double)(ns - 1) || !isfinite(te))
    return;
  size_t i0 = a < 0 ? 0 : (size_t)ceil(a);
  size_t i1 = b > (double)(ns - 1) ? ns - 1 : (size_t)floor(b);
  double k = M_PI * fp;
  for (size_t i = i0; i <= i1; i++) {
    double u = k * ((double)i * dt - te);
    u *= u;
    out[i] += (float)(amp * (1.0 - 2.0 * u) * exp(-u));
  }
}

double synth_min_phase(double fp, double t)
{
  if (t < 0)
    return 0.0;
  /* peak of exp(-pi f t) sin(2 pi f t): where tan(2 pi f t) = 2, value 0.514198 */
  return exp(-M_PI * fp * t) * sin(2.0 * M_PI * fp * t) / 0.51419838006;
}

void synth_reverberate(float *x, size_t ns, size_t period, double c)
{
  for (size_t i = period; period && i < ns; i++)
    x[i] = (float)((double)x[i] - c * (double)x[i - period]);
}

double synth_train_velocity(double vmin, double vmax, double fp, double f)
{
  double lo = 0.5 * fp, hi = 2.0 * fp;
  if (f <= lo)
    return vmax;
  if (f >= hi)
    return vmin;
  return vmax + (vmin - vmax) * (f - lo) / (hi - lo);
}

/* Adds amp * synth_min_phase(t - te) over 8 decay times after te. */
static void add_causal(float *out, size_t ns, double dt, double fp, double te, double amp)
{
  double a = te / dt, b = (te + 8.0 / (M_PI * fp)) / dt;
  if (b < 0 || a > (double)(ns - 1) || !isfinite(te))
    return;
  size_t i0 = a < 0 ? 0 : (size_t)ceil(a);
  size_t i1 = b > (double)(ns - 1) ? ns - 1 : (size_t)floor(b);
  for (size_t i = i0; i <= i1; i++)
    out[i] += (float)(amp * synth_min_phase(fp, (double)i * dt - te));
}

/* A body-wave event in the chosen source wavelet. */
static void add_body(const synth_params *p, float *out, size_t ns, double dt, double fp,
                     double te, double amp)
{
  if (p->wavelet == SYNTH_WAVELET_MINIMUM_PHASE)
    add_causal(out, ns, dt, fp, te, amp);
  else
    add_wavelet(out, ns, dt, fp, te, amp);
}

/* Dispersive noise train: the sum over frequencies f_k = k df (df = 0.25 Hz, up to
 * 3 fp) of R(f_k) cos(2 pi f_k (t - x / v(f_k))), R the Ricker amplitude spectrum
 * f^2 exp(-f^2 / fp^2), scaled so that at x = 0 it is amp times a Ricker-like pulse
 * of peak 1 at t = 0. Cosines by rotation (no trig per sample). */
static void add_dispersive(float *out, size_t ns, double dt, const synth_params *p, double x)
{
  double fp = p->train_peak_hz, df = 0.25, norm = 0;
  size_t nk = (size_t)(3.0 * fp / df);
  for (size_t k = 1; k <= nk; k++) {
    double f = (double)k * df;
    norm += f * f * exp(-f * f / (fp * fp));
  }
  for (size_t k = 1; k <= nk; k++) {
    double f = (double)k * df, R = f * f * exp(-f * f / (fp * fp)) / norm * p->train_amplitude;
    double v = synth_train_velocity(p->train_velocity_mps, p->train_velocity_max_mps, fp, f);
    double ph = -2.0 * M_PI * f * (x / v), w = 2.0 * M_PI * f * dt;
    double c = cos(ph), s = sin(ph), cw = cos(w), sw = sin(w);
    for (size_t i = 0; i < ns; i++) {
      out[i] += (float)(R * c);
      double c2 = c * cw - s * sw;
      s = s * cw + c * sw;
      c = c2;
    }
  }
}

void synth_render(const synth_model *m, const synth_params *p, const synth_frame *f,
                  const geometry_trace *g, float *out)
{
  size_t ns = p->samples;
  double dt = p->interval_us * 1e-6, fp = p->peak_hz;
  memset(out, 0, ns * sizeof *out);
  double x = g->offset_abs, v1 = m->layer[0].velocity_mps;
  /* near surface: each station's vertical time to the datum delays every event
   * from below it (zero without a near-surface model) */
  double su0, cu0;
  geometry_sincos_deg(f->azimuth_deg, &su0, &cu0);
  double s_al = (g->source_x - f->x0) * su0 + (g->source_y - f->y0) * cu0;
  double r_al = (g->receiver_x - f->x0) * su0 + (g->receiver_y - f->y0) * cu0;
  double delay = synth_station_delay(m, s_al, g->source_z, g->source_depth) +
                 synth_station_delay(m, r_al, g->receiver_z, 0);
  /* along-line (a) and cross-line (r) coordinates of source and receiver */
  double sa = s_al, sr = (g->source_x - f->x0) * cu0 - (g->source_y - f->y0) * su0;
  double ra = r_al, rr = (g->receiver_x - f->x0) * cu0 - (g->receiver_y - f->y0) * su0;
  /* faults: past a fault (by the midpoint, where a flat reflector reflects) its
   * interface lies deeper by the throw */
  synth_model faulted;
  const synth_model *mm = m;
  for (size_t i = 0; i < m->nfaults; i++)
    if (0.5 * (sa + ra) >= m->fault[i].along_m) {
      if (mm == m) {
        faulted = *m;
        mm = &faulted;
      }
      size_t k = m->fault[i].interface;
      faulted.layer[k].thickness_m += m->fault[i].throw_m;
      if (k + 2 < m->nlayers)
        faulted.layer[k + 1].thickness_m -= m->fault[i].throw_m;
    }
  if (p->reflections)
    for (size_t k = 0; k + 1 < m->nlayers; k++) {
      double t;
      if (synth_flat_time(mm, k, x, &t, NULL))
        continue;
      double vr = synth_vrms(mm, k);
      double dist = t * vr * vr / v1;                 /* Newman (1973) divergence */
      add_body(p, out, ns, dt, fp, t + delay,
               synth_reflection(m, k) * SYNTH_REF_DISTANCE_M / dist);
    }
  /* diffractors, and the two edges of every fault (the broken interface's ends) */
  if (p->reflections) {
    for (size_t i = 0; i < m->ndiffractors; i++) {
      double v, t = synth_diffraction_time(m, &m->diffractor[i], sa, sr, ra, rr, &v);
      add_body(p, out, ns, dt, fp, t + delay,
               m->diffractor[i].amplitude * SYNTH_REF_DISTANCE_M / (t * v));
    }
    for (size_t i = 0; i < m->nfaults; i++) {
      const synth_fault *fl = &m->fault[i];
      double z = 0;
      for (size_t k = 0; k <= fl->interface; k++)
        z += m->layer[k].thickness_m;
      for (int e = 0; e < 2; e++) {
        synth_diffractor d = { fl->along_m, z + (e ? fl->throw_m : 0),
                               0.5 * synth_reflection(m, fl->interface) };
        double v, t = synth_diffraction_time(m, &d, sa, sr, ra, rr, &v);
        add_body(p, out, ns, dt, fp, t + delay, d.amplitude * SYNTH_REF_DISTANCE_M / (t * v));
      }
    }
  }
  if (p->dipping && m->dip.present) {
    double t = synth_dip_time(m, sa, sr, ra, rr);
    const synth_dip *d = &m->dip;
    if (t > 0)
      add_body(p, out, ns, dt, fp, t + delay,
               reflection_coefficient(d->velocity_above_mps, d->density_above_kgm3,
                                      d->velocity_below_mps, d->density_below_kgm3) *
                   SYNTH_REF_DISTANCE_M / (t * d->velocity_above_mps));
  }
  if (m->ns.present) {
    /* first arrivals: the direct wave in the weathering (mean slowness of the two
     * ends) and the head wave along the weathering base (time-term form, Sheriff
     * and Geldart 1995: t = x / v_r + delta_s + delta_r, delta = h cos(i_c) / v_w) */
    double hs, vs, hr, vrc, vr = m->ns.replacement_velocity_mps;
    synth_weathering_at(m, s_al, &hs, &vs);
    synth_weathering_at(m, r_al, &hr, &vrc);
    hs = hs > g->source_depth ? hs - g->source_depth : 0;
    if (p->direct && x > 0) {
      double slow = (hs > 0 ? 1.0 / vs : 1.0 / vr) + (hr > 0 ? 1.0 / vrc : 1.0 / vr);
      add_body(p, out, ns, dt, fp, 0.5 * x * slow, p->direct_scale * SYNTH_REF_DISTANCE_M / x);
    }
    if (p->head && (hs > 0 || hr > 0)) {
      double cs = sqrt(1 - (vs / vr) * (vs / vr)), cr = sqrt(1 - (vrc / vr) * (vrc / vr));
      double xc = hs * (vs / vr) / cs + hr * (vrc / vr) / cr;   /* h tan(i_c) at each end */
      double th = x / vr + hs * cs / vs + hr * cr / vrc;
      if (x > xc)
        add_body(p, out, ns, dt, fp, th, p->head_scale * SYNTH_REF_DISTANCE_M / (vr * th));
    }
  } else {
    if (p->direct && x > 0)
      add_body(p, out, ns, dt, fp, x / v1, p->direct_scale * SYNTH_REF_DISTANCE_M / x);
    double th;
    if (p->head && synth_head_time(m, x, &th))
      add_body(p, out, ns, dt, fp, th, p->head_scale * SYNTH_REF_DISTANCE_M / (v1 * th));
  }
  if (p->reverb_period_s > 0 && p->reverb_coefficient != 0)   /* body waves only */
    synth_reverberate(out, ns, (size_t)floor(p->reverb_period_s / dt + 0.5), p->reverb_coefficient);
  if (p->train_amplitude != 0 && p->train_velocity_mps > 0) {
    if (p->train_velocity_max_mps > p->train_velocity_mps)
      add_dispersive(out, ns, dt, p, x);
    else
      add_wavelet(out, ns, dt, p->train_peak_hz, x / p->train_velocity_mps, p->train_amplitude);
  }
  if (p->noise_rms > 0) {
    synth_rng r;
    uint64_t key = p->seed ^ ((uint64_t)(uint32_t)g->field_record << 32 | (uint32_t)g->channel);
    synth_rng_seed(&r, key * 0x9E3779B97F4A7C15ull + p->seed);
    for (size_t i = 0; i < ns; i++)
      out[i] += (float)(p->noise_rms * synth_rng_gauss(&r));
  }
}

/* ---- surveys ---- */

/* Moves every file of tmp into dir (dir exists) and removes tmp. */
static int move_files(const char *tmp, const char *dir, tz_err *err)
{
  DIR *d = opendir(tmp);
  if (!d) {
    int e = errno;
    tz_err_path(err, tmp);
    return tz_fail_os(err, TZ_E_IO, e, "cannot read temporary folder");
  }
  struct dirent *e;
  char from[4096], to[4096];
  int rcode = TZ_OK;
  while ((e = readdir(d))) {
    if (!strcmp(e->d_name, ".") || !strcmp(e->d_name, ".."))
      continue;
    int n1 = snprintf(from, sizeof from, "%s/%s", tmp, e->d_name);
    int n2 = snprintf(to, sizeof to, "%s/%s", dir, e->d_name);
    if (n1 < 0 || n2 < 0 || (size_t)n1 >= sizeof from || (size_t)n2 >= sizeof to ||
        rename(from, to) != 0) {
      int os = errno;
      tz_err_path(err, to);
      rcode = tz_fail_os(err, TZ_E_CREATE, os, "cannot move output into place");
      break;
    }
  }
  closedir(d);
  return rcode ? rcode : fileio_sync_folder(dir, err);
}

static void card_text(char *buf, size_t cap, const synth_model *m, const geometry_layout *l,
                      const synth_params *p, const geometry_shot *sh)
{
  int n = snprintf(buf, cap,
                   "SYNTHETIC SHOT RECORD WRITTEN BY TZERO SYNTH\n"
                   "LINE %s\n"
                   "FIELD RECORD %d SHOT POINT %d\n"
                   "CHANNELS %d RECEIVER INTERVAL %.3f M SOURCE INTERVAL %.3f M\n"
                   "RICKER PEAK %.2f HZ SAMPLE INTERVAL %u US SAMPLES %u\n"
                   "LAYERED EARTH: %zu LAYERS, EXACT RAY TRACING\n",
                   p->line_name && *p->line_name ? p->line_name : "UNNAMED",
                   (int)sh->field_record, (int)sh->shot_point, (int)l->channels,
                   l->receiver_interval_m, l->source_interval_m, p->peak_hz,
                   (unsigned)p->interval_us, (unsigned)p->samples, m->nlayers);
  if (n < 0 || (size_t)n >= cap)
    buf[cap - 1] = '\0';
}

int synth_survey(const synth_model *m, const geometry_layout *l, const synth_params *p,
                 const char *dir, synth_summary *sum, tz_err *err)
{
  if (geometry_layout_check(l, err))
    return err->status;
  if (!(p->peak_hz > 0) || p->samples < 1 || p->samples > 65535 || p->interval_us < 1 ||
      p->interval_us > 65535)
    return tz_fail(err, TZ_E_ARG, "samples must be 1..65535, interval 1..65535 us, peak > 0");
  if (p->format_code != 1 && p->format_code != 5)
    return tz_fail(err, TZ_E_ARG, "sample format must be 1 (IBM) or 5 (IEEE)");
  bins_params bp;
  bins_line *line = NULL;
  if (bins_params_from_layout(l, p->bin_size_m, p->first_cmp, &bp, err) ||
      bins_line_straight(&line, &bp, err))
    return err->status;
  synth_frame fr = { l->first_station_x_m, l->first_station_y_m, l->azimuth_deg };

  /* Temporary folder beside dir. */
  size_t dl = strlen(dir);
  while (dl > 1 && dir[dl - 1] == '/')
    dl--;
  char target[4096];
  if (dl + 40 >= sizeof target) {
    bins_line_free(line);
    return tz_fail(err, TZ_E_ARG, "output folder name too long");
  }
  memcpy(target, dir, dl);
  target[dl] = '\0';
  /* registered: a signal removes it, and a run killed outright leaves it to the
   * next run's sweep */
  fileio_tmpdir *td = NULL;
  if (fileio_tmpdir_create(&td, target, err)) {
    bins_line_free(line);
    return err->status;
  }
  const char *tmp = fileio_tmpdir_path(td);
  size_t nsh = geometry_layout_shots(l), nch = geometry_layout_channels(l);
  float *buf = malloc(p->samples * sizeof *buf);
  int rcode = TZ_OK;
  synth_summary s = { 0 };
  s.first_cmp = 0;
  s.last_cmp = -1;
  int64_t seq = 0;
  char text[1024];
  if (!buf) {
    rcode = tz_fail(err, TZ_E_NOMEM, "trace buffer");
    goto fail;
  }
  for (size_t k = 0; k < nsh; k++) {
    geometry_shot sh;
    if ((rcode = geometry_layout_shot(l, k, &sh, err)))
      goto fail;
    char path[4200];
    int pn = snprintf(path, sizeof path, "%s/shot_%06lld.sgy", tmp, (long long)sh.field_record);
    if (pn < 0 || (size_t)pn >= sizeof path) {
      rcode = tz_fail(err, TZ_E_ARG, "output folder name too long");
      goto fail;
    }
    card_text(text, sizeof text, m, l, p, &sh);
    segy_writer_opts wo = { .revision = 1, .format_code = p->format_code,
                           .samples = p->samples, .interval_us = p->interval_us,
                           .sorting_code = 1, .traces_per_ensemble = (int16_t)(nch > 32767 ? 32767 : nch),
                           .ensemble_fold = (int16_t)fmin(32767, floor(geometry_layout_nominal_fold(l) + 0.5)),
                           .measurement_system = 1, .text = text };
    segy_writer *w = NULL;
    if ((rcode = segy_writer_open(&w, path, &wo, err)))
      goto fail;
    for (size_t c = 0; c < nch; c++) {
      geometry_trace g;
      if ((rcode = geometry_layout_trace(l, k, c, &g, err))) {
        segy_writer_abort(w);
        goto fail;
      }
      synth_render(m, p, &fr, &g, buf);
      segy_trace_header h;
      memset(&h, 0, sizeof h);
      h.line_seq = (int32_t)++seq;
      h.file_seq = (int32_t)(c + 1);
      h.field_record = g.field_record;
      h.channel = g.channel;
      h.kind = SEGY_KIND_SEISMIC;
      h.vertical_sum = 1;
      h.stacked_traces = 1;
      h.data_use = 1;
      h.samples = p->samples;
      h.interval_us = p->interval_us;
      h.coord_scalar = -100;
      h.elev_scalar = -100;
      if (!p->bare_headers) {
        geometry_to_header(&g, &h);
        h.source_point = sh.shot_point;
        if (m->ns.present && g.source_depth > 0) {
          double su1, cu1;
          geometry_sincos_deg(fr.azimuth_deg, &su1, &cu1);
          double al = (g.source_x - fr.x0) * su1 + (g.source_y - fr.y0) * cu1;
          h.uphole_source_ms = synth_uphole_time(m, al, g.source_depth) * 1e3;
          h.time_scalar = -100;     /* hundredths of a millisecond */
        }
        bins_loc loc;
        if (bins_locate(line, g.midpoint_x, g.midpoint_y, &loc) == BINS_OUT_OF_RANGE) {
          segy_writer_abort(w);
          rcode = tz_fail(err, TZ_E_ARG, "CMP numbers out of range: bin size %g m too small",
                          bp.size_m);
          goto fail;
        }
        h.cmp = loc.cmp;
        h.cmp_x = loc.centre_x;
        h.cmp_y = loc.centre_y;
        if (s.last_cmp < s.first_cmp) {
          s.first_cmp = s.last_cmp = loc.cmp;
        } else {
          if (loc.cmp < s.first_cmp) s.first_cmp = loc.cmp;
          if (loc.cmp > s.last_cmp) s.last_cmp = loc.cmp;
        }
      }
      if ((rcode = segy_trace_write(w, &h, buf, err))) {
        segy_writer_abort(w);
        goto fail;
      }
    }
    if ((rcode = segy_writer_finish(w, err)))
      goto fail;
    if (k == 0)
      s.first_field_record = sh.field_record;
    s.last_field_record = sh.field_record;
    s.files++;
    s.traces += (int64_t)nch;
    s.bytes += 3600 + (int64_t)nch * (240 + 4 * (int64_t)p->samples);
  }
  free(buf);
  buf = NULL;
  bins_line_free(line);
  line = NULL;
  struct stat st;
  if (stat(target, &st) != 0) {
    /* the folder has 0777 less the umask already (fileio_tmpdir_create) */
    if ((rcode = fileio_tmpdir_commit(td, target, err)))
      return rcode;   /* the handle is taken */
    td = NULL;
  } else if (!S_ISDIR(st.st_mode)) {
    tz_err_path(err, target);
    rcode = tz_fail(err, TZ_E_CREATE, "exists and is not a folder");
    goto fail;
  } else {
    rcode = move_files(tmp, target, err);
    fileio_tmpdir_remove(td);
    if (rcode)
      return rcode;
  }
  if (sum)
    *sum = s;
  return TZ_OK;
fail:
  free(buf);
  bins_line_free(line);
  fileio_tmpdir_remove(td);
  return rcode;
}

int synth_write_rms_table(const synth_model *m, int32_t first_cmp, int32_t last_cmp,
                          const char *path, tz_err *err)
{
  fileio_out *o;
  if (fileio_create(&o, path, err))
    return err->status;
  FILE *fp = fileio_stream(o);
  fprintf(fp, "# exact RMS velocities of the flat layers (Taner and Koehler 1969):\n"
              "# V_rms^2 = sum v_k^2 dtau_k / t0, written by tzero synth\n"
              "cmp,time_ms,velocity_mps\n");
  int32_t cmps[2] = { first_cmp, last_cmp };
  int n = first_cmp == last_cmp ? 1 : 2;
  for (int c = 0; c < n; c++) {
    fprintf(fp, "%d,0,%.3f\n", (int)cmps[c], m->layer[0].velocity_mps);
    for (size_t k = 0; k + 1 < m->nlayers; k++)
      fprintf(fp, "%d,%.6f,%.6f\n", (int)cmps[c], synth_t0(m, k) * 1000.0, synth_vrms(m, k));
  }
  return fileio_commit(o, err);
}

/* One station of the true statics table, kept unique by (kind, number). */
static int add_true(statics_row **v, size_t *n, size_t *cap, int kind, int32_t st, double x,
                    double y, double z, double ms, tz_err *err)
{
  for (size_t i = *n; i-- > 0;)
    if ((*v)[i].kind == kind && (*v)[i].station == st)
      return TZ_OK;
  if (*n == *cap) {
    size_t nc = *cap ? *cap * 2 : 256;
    statics_row *r = realloc(*v, nc * sizeof *r);
    if (!r)
      return tz_fail(err, TZ_E_NOMEM, "true statics table");
    *v = r;
    *cap = nc;
  }
  statics_row *r = &(*v)[(*n)++];
  memset(r, 0, sizeof *r);
  r->kind = kind;
  r->station = st;
  r->x_m = x;
  r->y_m = y;
  r->elevation_m = z;
  r->static_ms = ms;
  return TZ_OK;
}

int synth_write_true_statics(const synth_model *m, const geometry_layout *l, const char *path,
                             tz_err *err)
{
  if (!m->ns.present)
    return tz_fail(err, TZ_E_ARG, "the model has no near_surface object");
  double su, cu, dg = l->receiver_interval_m;
  geometry_sincos_deg(l->azimuth_deg, &su, &cu);
  size_t nsh = geometry_layout_shots(l), nch = geometry_layout_channels(l), n = 0, cap = 0;
  statics_row *v = NULL;
  int rc = TZ_OK;
  for (size_t k = 0; k < nsh && !rc; k++)
    for (size_t c = 0; c < nch && !rc; c++) {
      geometry_trace g;
      if ((rc = geometry_layout_trace(l, k, c, &g, err)))
        break;
      double sa = (g.source_x - l->first_station_x_m) * su + (g.source_y - l->first_station_y_m) * cu;
      double ra = (g.receiver_x - l->first_station_x_m) * su +
                  (g.receiver_y - l->first_station_y_m) * cu;
      if (c == 0)
        rc = add_true(&v, &n, &cap, STATICS_SOURCE, (int32_t)floor(sa / dg + 0.5 + 1e-9),
                      g.source_x, g.source_y, g.source_z,
                      -synth_station_delay(m, sa, g.source_z, g.source_depth) * 1e3, err);
      if (!rc)
        rc = add_true(&v, &n, &cap, STATICS_RECEIVER, (int32_t)floor(ra / dg + 0.5 + 1e-9),
                      g.receiver_x, g.receiver_y, g.receiver_z,
                      -synth_station_delay(m, ra, g.receiver_z, 0) * 1e3, err);
    }
  if (!rc) {
    char note[200];
    snprintf(note, sizeof note, "true station statics of the near-surface model (tzero synth)\n"
             "datum %g m, replacement velocity %g m/s", m->ns.datum_m,
             m->ns.replacement_velocity_mps);
    rc = statics_table_write(path, v, n, note, err);
  }
  free(v);
  return rc;
}
