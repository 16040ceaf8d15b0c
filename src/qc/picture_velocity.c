/* picture_velocity.c -- a picture of a velocity field: RMS and interval velocity,
 * CMP by time, with the table's control points.
 *
 * Two panels side by side share the time axis and one colour scale (the
 * sequential map from the lowest to the highest velocity of either panel). The
 * RMS panel is the table as the stack reads it (velocity_sample: linear in
 * time between knots and in CMP between control CMPs, held outside); the
 * interval panel is Dix's equation (Dix 1955) between consecutive samples of
 * that RMS function, V_int^2 = (V_k^2 t_k - V_{k-1}^2 t_{k-1}) / (t_k - t_{k-1}),
 * grey where V_int^2 <= 0 (imaginary). Each knot of each control CMP is a dot.
 *
 * Not here: reading the table (velocity.c), the command line (src/cli/picture.c).
 */
#include "tzero/picture.h"
#include "tzero/velocity.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#define VF_MARGIN_LEFT 80
#define VF_MARGIN_TOP 72
#define VF_MARGIN_RIGHT 110
#define VF_MARGIN_BOTTOM 48
#define VF_GAP 40

static const unsigned char black[3] = { 0, 0, 0 }, white[3] = { 255, 255, 255 },
                           grey[3] = { 190, 190, 190 };

/* Colour of v on the scale lo..hi (sequential map). */
static void vcolour(double v, double lo, double hi, unsigned char rgb[3])
{
  double span = hi > lo ? hi - lo : 1;
  picture_colour(PICTURE_MAP_SEQUENTIAL, v - lo, span, rgb);
}

int picture_draw_velocity_field(const picture_velocity_field *f, const char *title,
                                uint32_t width, uint32_t height, int format, picture_ctx **out,
                                tz_err *err)
{
  *out = NULL;
  const velocity_table *t = f->table;
  if (!t || velocity_table_ncmps(t) == 0)
    return tz_fail(err, TZ_E_ARG, "velocity field: no control CMP");
  if (f->cmp_last < f->cmp_first || !(f->time_max_s > 0))
    return tz_fail(err, TZ_E_ARG, "velocity field: empty CMP or time range");
  if (!width)
    width = 1200;
  if (!height)
    height = 720;
  if (width < PICTURE_MIN_WIDTH + VF_GAP || height < PICTURE_MIN_HEIGHT ||
      width > PICTURE_MAX_SIDE || height > PICTURE_MAX_SIDE)
    return tz_fail(err, TZ_E_ARG, "velocity field: %u x %u px is outside %u-%u x %u-%u",
                   width, height, PICTURE_MIN_WIDTH + VF_GAP, PICTURE_MAX_SIDE,
                   PICTURE_MIN_HEIGHT, PICTURE_MAX_SIDE);
  double pw = floor(((double)width - VF_MARGIN_LEFT - VF_MARGIN_RIGHT - VF_GAP) / 2);
  double ph = (double)height - VF_MARGIN_TOP - VF_MARGIN_BOTTOM;
  if (pw < 40 || ph < 40)
    return tz_fail(err, TZ_E_ARG, "velocity field: %u x %u px leaves no room to draw", width,
                   height);
  size_t nx = (size_t)pw, ny = (size_t)ph;
  double c0 = (double)f->cmp_first - 0.5, c1 = (double)f->cmp_last + 0.5;
  double dt = f->time_max_s / (double)ny;
  float *rms = malloc(nx * ny * sizeof *rms), *col = malloc(ny * sizeof *col);
  double *vint = malloc(nx * ny * sizeof *vint);
  picture_image img[2] = { { (uint32_t)nx, (uint32_t)ny, malloc(3 * nx * ny) },
                           { (uint32_t)nx, (uint32_t)ny, malloc(3 * nx * ny) } };
  int rc = TZ_OK;
  if (!rms || !col || !vint || !img[0].rgb || !img[1].rgb) {
    rc = tz_fail(err, TZ_E_NOMEM, "velocity field of %zu x %zu samples", nx, ny);
    goto done;
  }
  /* sample each pixel column at its centre CMP, each row at its centre time */
  double lo = INFINITY, hi = -INFINITY;
  for (size_t i = 0; i < nx; i++) {
    int64_t cmp = (int64_t)llround(c0 + ((double)i + 0.5) * (c1 - c0) / (double)nx);
    velocity_sample(t, cmp, 0.5 * dt, dt, ny, col, NULL);
    for (size_t k = 0; k < ny; k++) {
      rms[k * nx + i] = col[k];
      double tk = ((double)k + 0.5) * dt, vk = col[k], v2;
      if (k == 0) {
        v2 = vk * vk;   /* the surface to the first sample */
      } else {
        double tp = tk - dt, vp = col[k - 1];
        v2 = (vk * vk * tk - vp * vp * tp) / dt;
      }
      vint[k * nx + i] = v2 > 0 ? sqrt(v2) : NAN;
      lo = fmin(lo, vk);
      hi = fmax(hi, vk);
      if (v2 > 0) {
        lo = fmin(lo, sqrt(v2));
        hi = fmax(hi, sqrt(v2));
      }
    }
  }
  for (size_t q = 0; q < nx * ny; q++) {
    vcolour(rms[q], lo, hi, img[0].rgb + 3 * q);
    if (isfinite(vint[q]))
      vcolour(vint[q], lo, hi, img[1].rgb + 3 * q);
    else
      for (int b = 0; b < 3; b++)
        img[1].rgb[3 * q + (size_t)b] = grey[b];
  }
  picture_ctx *c = NULL;
  if ((rc = picture_ctx_new(&c, format, width, height, err)))
    goto done;
  char sub[200];
  snprintf(sub, sizeof sub, "RMS (left) and Dix interval (right) velocity, %.0f-%.0f m/s; "
           "dots: the table's %zu control CMPs; grey: imaginary interval velocity", lo, hi,
           velocity_table_ncmps(t));
  picture_title(c, title, sub);
  static const char *const names[2] = { "CMP (RMS velocity)", "CMP (interval velocity)" };
  for (int p = 0; p < 2; p++) {
    picture_frame fr = { .x = VF_MARGIN_LEFT + p * (pw + VF_GAP), .y = VF_MARGIN_TOP, .w = pw,
                         .h = ph, .x0 = c0, .x1 = c1, .y0 = f->time_max_s * 1e3, .y1 = 0 };
    picture_ctx_group(c, p ? "class=\"interval\"" : "class=\"rms\"");
    if ((rc = picture_ctx_image(c, &img[p], fr.x, fr.y, fr.w, fr.h, err))) {
      picture_ctx_group_end(c);
      picture_ctx_free(c);
      goto done;
    }
    for (size_t i = 0; i < velocity_table_ncmps(t); i++) {
      double x = picture_frame_px(&fr, (double)velocity_table_cmp(t, i));
      if (x < fr.x || x > fr.x + fr.w)
        continue;
      for (size_t k = 0; k < velocity_table_nknots(t, i); k++) {
        double ts, vs;
        velocity_table_knot(t, i, k, &ts, &vs, NULL);
        if (ts > f->time_max_s)
          continue;
        double y = picture_frame_py(&fr, ts * 1e3);
        picture_ctx_attrs(c, "data-cmp=\"%lld\" data-time-ms=\"%.6g\" data-rms-mps=\"%.6g\"",
                          (long long)velocity_table_cmp(t, i), ts * 1e3, vs);
        picture_ctx_dot(c, x, y, 3.5, white);
        picture_ctx_dot(c, x, y, 2.2, black);
      }
    }
    picture_ctx_group_end(c);
    picture_frame_draw(c, &fr);
    picture_axis_x(c, &fr, PICTURE_SIDE_BOTTOM, names[p], 1);
    picture_axis_x(c, &fr, PICTURE_SIDE_TOP, NULL, 1);
    if (p == 0)
      picture_axis_y(c, &fr, PICTURE_SIDE_LEFT, "Time (ms)", 0);
  }
  /* the colour scale: lo at the bottom, hi at the top */
  double bx = VF_MARGIN_LEFT + 2 * pw + VF_GAP + 24, bh = fmin(ph, 280), bw = 14;
  for (int r = 0; r < (int)bh; r++) {
    unsigned char rgb[3];
    vcolour(hi - (hi - lo) * ((double)r + 0.5) / bh, lo, hi, rgb);
    picture_ctx_fill_rect(c, bx, VF_MARGIN_TOP + r, bw, 1, rgb);
  }
  picture_ctx_stroke_rect(c, bx, VF_MARGIN_TOP, bw, bh, 1, black);
  char lab[32];
  for (int q = 0; q < 3; q++) {
    double v = lo + (hi - lo) * (2 - q) / 2.0;
    snprintf(lab, sizeof lab, "%.0f", v);
    picture_ctx_text(c, bx + bw + 4, VF_MARGIN_TOP + bh * q / 2.0 + 4, lab, 11,
                     PICTURE_ANCHOR_LEFT, 0, 0, black);
  }
  picture_ctx_text(c, bx + bw + 50, VF_MARGIN_TOP + bh / 2, "Velocity (m/s)", 12,
                   PICTURE_ANCHOR_CENTRE, 0, 1, black);
  *out = c;
done:
  free(rms);
  free(col);
  free(vint);
  free(img[0].rgb);
  free(img[1].rgb);
  return rc;
}
