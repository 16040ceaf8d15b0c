/* geometry.c -- source and receiver positions for every trace: layouts, tables, headers.
 *
 * A layout describes a 2D line in line coordinates (along the azimuth from
 * station 0, and to the right of it); positions are turned into map X/Y only
 * at the end, from station 0's coordinates, so every difference of positions
 * (offset, azimuth) is exact to far below a centimetre even when X/Y are
 * projected values of several million metres. A geometry table is kept sorted
 * by (field record, channel) and searched by bisection. A geometry_source wraps
 * the three so the stack and the fold count see one call.
 *
 * Not here: CMP numbering and fold (bins.c), SEG-Y reading (src/io/segy_*.c), the acquisition figures (survey.c).
 */
#include "tzero/geometry.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/fileio.h"
#include "util/json_doc.h"
#include "tzero/table.h"

#define LAYOUT_MAX_BYTES (16u << 20)

/* sin and cos of an angle in degrees, exact at multiples of 90 (so a line due
 * east does not pick up 6e-17 of northing per metre). */
void geometry_sincos_deg(double deg, double *s, double *c)
{
  double r = fmod(deg, 360.0);
  if (r < 0)
    r += 360.0;
  if (r == 0.0) { *s = 0; *c = 1; return; }
  if (r == 90.0) { *s = 1; *c = 0; return; }
  if (r == 180.0) { *s = 0; *c = -1; return; }
  if (r == 270.0) { *s = -1; *c = 0; return; }
  *s = sin(r * M_PI / 180.0);
  *c = cos(r * M_PI / 180.0);
}

void geometry_layout_init(geometry_layout *l)
{
  memset(l, 0, sizeof *l);
  l->azimuth_deg = 90.0;
  l->near_offset_m = NAN;          /* resolved to the receiver interval */
  l->channels_behind = -1;         /* resolved to channels / 2 */
  l->first_field_record = 1;
  l->field_record_step = 1;
  l->first_channel = 1;
  l->first_shot_point = 1;
  l->spread = GEOMETRY_SPREAD_AHEAD;
}

void geometry_layout_free(geometry_layout *l)
{
  if (!l)
    return;
  free(l->skipped);
  free(l->station_elev_m);
  l->skipped = NULL;
  l->station_elev_m = NULL;
  l->nskipped = l->nstation_elev = 0;
}

int geometry_layout_copy(geometry_layout *dst, const geometry_layout *src, tz_err *err)
{
  *dst = *src;
  dst->skipped = NULL;
  dst->station_elev_m = NULL;
  if (src->nskipped) {
    dst->skipped = malloc(src->nskipped * sizeof *dst->skipped);
    if (!dst->skipped)
      return tz_fail(err, TZ_E_NOMEM, "layout copy");
    memcpy(dst->skipped, src->skipped, src->nskipped * sizeof *dst->skipped);
  }
  if (src->nstation_elev) {
    dst->station_elev_m = malloc(src->nstation_elev * sizeof *dst->station_elev_m);
    if (!dst->station_elev_m) {
      free(dst->skipped);
      dst->skipped = NULL;
      return tz_fail(err, TZ_E_NOMEM, "layout copy");
    }
    memcpy(dst->station_elev_m, src->station_elev_m,
           src->nstation_elev * sizeof *dst->station_elev_m);
  }
  return TZ_OK;
}

int geometry_layout_check(const geometry_layout *l, tz_err *err)
{
  if (!(l->receiver_interval_m > 0) || !isfinite(l->receiver_interval_m))
    return tz_fail(err, TZ_E_FORMAT, "receiver_interval_m must be > 0");
  if (!(l->source_interval_m > 0) || !isfinite(l->source_interval_m))
    return tz_fail(err, TZ_E_FORMAT, "source_interval_m must be > 0");
  if (l->shot_count < 1 || l->shot_count > GEOMETRY_MAX_SHOTS)
    return tz_fail(err, TZ_E_FORMAT, "shot_count must be 1..%d", GEOMETRY_MAX_SHOTS);
  if (l->channels < 1 || l->channels > GEOMETRY_MAX_CHANNELS)
    return tz_fail(err, TZ_E_FORMAT, "channels must be 1..%d", GEOMETRY_MAX_CHANNELS);
  if (l->spread < GEOMETRY_SPREAD_AHEAD || l->spread > GEOMETRY_SPREAD_SPLIT)
    return tz_fail(err, TZ_E_FORMAT, "spread must be ahead, behind or split");
  if (l->spread == GEOMETRY_SPREAD_SPLIT &&
      (l->channels_behind < 0 || l->channels_behind > l->channels))
    return tz_fail(err, TZ_E_FORMAT, "channels_behind must be 0..channels (%d)", l->channels);
  if (!(l->near_offset_m >= 0) || !isfinite(l->near_offset_m))
    return tz_fail(err, TZ_E_FORMAT, "near_offset_m must be >= 0");
  if (l->field_record_step == 0)
    return tz_fail(err, TZ_E_FORMAT, "field_record_step must not be 0");
  if (!isfinite(l->first_station_x_m) || !isfinite(l->first_station_y_m) ||
      !isfinite(l->azimuth_deg) || !isfinite(l->first_source_m) ||
      !isfinite(l->source_offset_m) || !isfinite(l->source_depth_m))
    return tz_fail(err, TZ_E_FORMAT, "layout positions must be finite numbers");
  if (fabs(l->first_station_x_m) > GEOMETRY_MAX_COORD_M ||
      fabs(l->first_station_y_m) > GEOMETRY_MAX_COORD_M)
    return tz_fail(err, TZ_E_FORMAT, "first_station_x_m and first_station_y_m must be within "
                   "+-%g m", GEOMETRY_MAX_COORD_M);
  if (l->receiver_interval_m < 0.01 || l->source_interval_m < 0.01)
    return tz_fail(err, TZ_E_FORMAT, "receiver_interval_m and source_interval_m must be at "
                   "least 0.01 m");
  double spread = l->near_offset_m + (double)l->channels * l->receiver_interval_m;
  double extent = fabs(l->first_source_m) + (double)(l->shot_count - 1) * l->source_interval_m;
  if (spread > GEOMETRY_MAX_EXTENT_M || extent + spread > GEOMETRY_MAX_EXTENT_M)
    return tz_fail(err, TZ_E_FORMAT, "the line reaches %.6g m from station 0 (first_source_m, "
                   "shot_count x source_interval_m, near_offset_m, channels x "
                   "receiver_interval_m); at most %g m", extent + spread, GEOMETRY_MAX_EXTENT_M);
  if (fabs(l->source_offset_m) > GEOMETRY_MAX_HEIGHT_M || l->source_depth_m < 0 ||
      l->source_depth_m > GEOMETRY_MAX_HEIGHT_M)
    return tz_fail(err, TZ_E_FORMAT, "source_offset_m must be within +-%g m and source_depth_m "
                   "within 0..%g m", GEOMETRY_MAX_HEIGHT_M, GEOMETRY_MAX_HEIGHT_M);
  for (size_t i = 0; i < l->nstation_elev; i++)
    if (fabs(l->station_elev_m[i]) > GEOMETRY_MAX_HEIGHT_M)
      return tz_fail(err, TZ_E_FORMAT, "station_elevations_m[%zu]: %g m is beyond +-%g m", i,
                     l->station_elev_m[i], GEOMETRY_MAX_HEIGHT_M);
  /* Field records and channel numbers must stay inside int32. */
  double last_ffid = (double)l->first_field_record +
                     (double)(l->shot_count - 1) * (double)l->field_record_step;
  if (last_ffid > INT32_MAX || last_ffid < INT32_MIN ||
      (double)l->first_channel + l->channels - 1 > INT32_MAX ||
      (double)l->first_shot_point + l->shot_count - 1 > INT32_MAX)
    return tz_fail(err, TZ_E_FORMAT, "field record, channel or shot point numbers overflow");
  if ((double)l->shot_count * (double)l->channels > (double)INT32_MAX)
    return tz_fail(err, TZ_E_FORMAT, "shot_count x channels exceeds %d traces", INT32_MAX);
  if (geometry_layout_shots(l) == 0)
    return tz_fail(err, TZ_E_FORMAT, "every shot is skipped");
  return TZ_OK;
}

/* ---- layout JSON ---- */

static const char *const layout_keys[] = {
  "receiver_interval_m", "first_station_x_m", "first_station_y_m", "azimuth_deg",
  "source_interval_m", "first_source_m", "shot_count", "spread", "channels",
  "channels_behind", "near_offset_m", "source_offset_m", "source_depth_m", "fixed_spread",
  "first_field_record", "field_record_step", "first_channel", "channel_order",
  "first_shot_point", "skipped_shot_points", "station_elevations_m", "description", NULL,
};

/* A layout number or whole number at "$.key" (json_doc getters). */
static int json_number(const cJSON *it, const char *key, double *out, tz_err *err)
{
  char path[96];
  snprintf(path, sizeof path, "$.%s", key);
  return json_doc_number(it, path, -HUGE_VAL, HUGE_VAL, out, TZ_E_FORMAT, err);
}

static int json_int32(const cJSON *it, const char *key, int32_t *out, tz_err *err)
{
  char path[96];
  int64_t v = 0;
  snprintf(path, sizeof path, "$.%s", key);
  int rc = json_doc_int(it, path, INT32_MIN, INT32_MAX, &v, TZ_E_FORMAT, err);
  if (!rc)
    *out = (int32_t)v;
  return rc;
}

static int cmp_i32(const void *a, const void *b)
{
  int32_t x = *(const int32_t *)a, y = *(const int32_t *)b;
  return (x > y) - (x < y);
}

static int layout_key(geometry_layout *l, const cJSON *it, tz_err *err)
{
  const char *k = it->string;
  if (!strcmp(k, "receiver_interval_m")) return json_number(it, k, &l->receiver_interval_m, err);
  if (!strcmp(k, "first_station_x_m")) return json_number(it, k, &l->first_station_x_m, err);
  if (!strcmp(k, "first_station_y_m")) return json_number(it, k, &l->first_station_y_m, err);
  if (!strcmp(k, "azimuth_deg")) return json_number(it, k, &l->azimuth_deg, err);
  if (!strcmp(k, "source_interval_m")) return json_number(it, k, &l->source_interval_m, err);
  if (!strcmp(k, "first_source_m")) return json_number(it, k, &l->first_source_m, err);
  if (!strcmp(k, "shot_count")) return json_int32(it, k, &l->shot_count, err);
  if (!strcmp(k, "channels")) return json_int32(it, k, &l->channels, err);
  if (!strcmp(k, "channels_behind")) {
    if (json_int32(it, k, &l->channels_behind, err))
      return err->status;
    return l->channels_behind < 0 ? tz_fail(err, TZ_E_FORMAT, "channels_behind must be >= 0")
                                  : TZ_OK;
  }
  if (!strcmp(k, "near_offset_m")) return json_number(it, k, &l->near_offset_m, err);
  if (!strcmp(k, "source_offset_m")) return json_number(it, k, &l->source_offset_m, err);
  if (!strcmp(k, "source_depth_m")) return json_number(it, k, &l->source_depth_m, err);
  if (!strcmp(k, "first_field_record")) return json_int32(it, k, &l->first_field_record, err);
  if (!strcmp(k, "field_record_step")) return json_int32(it, k, &l->field_record_step, err);
  if (!strcmp(k, "first_channel")) return json_int32(it, k, &l->first_channel, err);
  if (!strcmp(k, "first_shot_point")) return json_int32(it, k, &l->first_shot_point, err);
  if (!strcmp(k, "description")) {
    const char *d;
    return cJSON_IsString(it) && !it->valuestring[0]
               ? TZ_OK : json_doc_string(it, "$.description", &d, TZ_E_FORMAT, err);
  }
  if (!strcmp(k, "fixed_spread"))
    return json_doc_bool(it, "$.fixed_spread", &l->fixed_spread, TZ_E_FORMAT, err);
  if (!strcmp(k, "spread")) {
    static const char *const names[] = { "ahead", "behind", "split", NULL };
    static const int values[] = { GEOMETRY_SPREAD_AHEAD, GEOMETRY_SPREAD_BEHIND,
                                  GEOMETRY_SPREAD_SPLIT };
    return json_doc_choice(it, "$.spread", names, values, &l->spread, TZ_E_FORMAT, err);
  }
  if (!strcmp(k, "channel_order")) {
    static const char *const names[] = { "forward", "reverse", NULL };
    static const int values[] = { GEOMETRY_CHANNELS_FORWARD, GEOMETRY_CHANNELS_REVERSE };
    return json_doc_choice(it, "$.channel_order", names, values, &l->channel_order,
                           TZ_E_FORMAT, err);
  }
  if (!strcmp(k, "skipped_shot_points") || !strcmp(k, "station_elevations_m")) {
    int elev = k[0] == 's' && k[1] == 't';
    if (!cJSON_IsArray(it))
      return tz_fail(err, TZ_E_FORMAT, "$.%s: expected an array, got %s", k,
                     json_doc_kind_name(it));
    int n = cJSON_GetArraySize(it);
    if (n > GEOMETRY_MAX_SHOTS)
      return tz_fail(err, TZ_E_FORMAT, "%s: more than %d values", k, GEOMETRY_MAX_SHOTS);
    if (n == 0)
      return TZ_OK;
    void *arr = malloc((size_t)n * (elev ? sizeof(double) : sizeof(int32_t)));
    if (!arr)
      return tz_fail(err, TZ_E_NOMEM, "%s", k);
    int i = 0;
    const cJSON *e;
    cJSON_ArrayForEach(e, it) {
      char name[64];
      snprintf(name, sizeof name, "%s[%d]", k, i);
      int rc = elev ? json_number(e, name, (double *)arr + i, err)
                    : json_int32(e, name, (int32_t *)arr + i, err);
      if (rc) {
        free(arr);
        return rc;
      }
      i++;
    }
    if (elev) {
      free(l->station_elev_m);
      l->station_elev_m = arr;
      l->nstation_elev = (size_t)n;
    } else {
      qsort(arr, (size_t)n, sizeof(int32_t), cmp_i32);
      free(l->skipped);
      l->skipped = arr;
      l->nskipped = (size_t)n;
      for (size_t j = 1; j < l->nskipped; j++)
        if (l->skipped[j] == l->skipped[j - 1])
          return tz_fail(err, TZ_E_FORMAT, "%s: shot point %d listed twice", k,
                         (int)l->skipped[j]);
    }
    return TZ_OK;
  }
  return tz_fail(err, TZ_E_INTERNAL, "$.%s: key not handled", k);   /* listed, not read */
}

int geometry_layout_parse(geometry_layout *l, const char *json, size_t len, const char *name,
                          tz_err *err)
{
  geometry_layout_init(l);
  cJSON *root;
  if (json_doc_parse(&root, json, len, name, "layout", TZ_E_FORMAT, err))
    return err->status;
  int rc = TZ_OK;
  if (!cJSON_IsObject(root)) {
    rc = tz_fail(err, TZ_E_FORMAT, "layout: expected a JSON object");
    goto done;
  }
  if ((rc = json_doc_check_keys(root, "$", layout_keys, TZ_E_FORMAT, err)))
    goto done;
  static const char *const required[] = { "receiver_interval_m", "source_interval_m",
                                          "shot_count", "channels" };
  for (size_t i = 0; i < sizeof required / sizeof required[0]; i++)
    if (!cJSON_GetObjectItemCaseSensitive(root, required[i])) {
      rc = tz_fail(err, TZ_E_FORMAT, "layout: missing key \"%s\"", required[i]);
      goto done;
    }
  const cJSON *it;
  cJSON_ArrayForEach(it, root) {
    if ((rc = layout_key(l, it, err)))
      goto done;
  }
  if (isnan(l->near_offset_m))
    l->near_offset_m = l->receiver_interval_m;
  if (l->channels_behind < 0)
    l->channels_behind = l->spread == GEOMETRY_SPREAD_SPLIT ? l->channels / 2 : 0;
  rc = geometry_layout_check(l, err);
done:
  cJSON_Delete(root);
  if (rc) {
    tz_err_path(err, name);
    geometry_layout_free(l);
  }
  return rc;
}

int geometry_layout_load(geometry_layout *l, const char *path, tz_err *err)
{
  char *text;
  size_t len;
  geometry_layout_init(l);
  int rc = fileio_read_all(path, LAYOUT_MAX_BYTES, &text, &len, err);
  if (rc)
    return rc;
  rc = geometry_layout_parse(l, text, len, path, err);
  free(text);
  return rc;
}

/* ---- layout enumeration ---- */

static size_t skipped_in_range(const geometry_layout *l)
{
  size_t n = 0;
  for (size_t j = 0; j < l->nskipped; j++) {
    int64_t idx = (int64_t)l->skipped[j] - l->first_shot_point;
    if (idx >= 0 && idx < l->shot_count)
      n++;
  }
  return n;
}

size_t geometry_layout_shots(const geometry_layout *l)
{
  if (l->shot_count <= 0)
    return 0;
  return (size_t)l->shot_count - skipped_in_range(l);
}

size_t geometry_layout_channels(const geometry_layout *l)
{
  return l->channels > 0 ? (size_t)l->channels : 0;
}

int geometry_trace_class(int kind)
{
  if (kind == SEGY_KIND_UNKNOWN || kind == SEGY_KIND_SEISMIC || (kind >= 11 && kind <= 17))
    return GEOMETRY_TRACE_DATA;
  if (kind == SEGY_KIND_DEAD || kind == SEGY_KIND_DUMMY)
    return GEOMETRY_TRACE_DEAD;
  return GEOMETRY_TRACE_AUXILIARY;
}

double geometry_layout_nominal_fold(const geometry_layout *l)
{
  return l->channels * l->receiver_interval_m / (2.0 * l->source_interval_m);
}

double geometry_layout_default_bin(const geometry_layout *l)
{
  return l->receiver_interval_m / 2.0;
}

double geometry_layout_elevation(const geometry_layout *l, double along_m)
{
  if (!l->nstation_elev)
    return 0.0;
  double u = along_m / l->receiver_interval_m;
  if (u <= 0 || l->nstation_elev == 1)
    return l->station_elev_m[0];
  if (u >= (double)(l->nstation_elev - 1))
    return l->station_elev_m[l->nstation_elev - 1];
  size_t i = (size_t)u;
  double f = u - (double)i;
  return l->station_elev_m[i] + f * (l->station_elev_m[i + 1] - l->station_elev_m[i]);
}

/* Shot-position index of the k-th recorded shot (skipped ones are sorted). */
static int64_t shot_index(const geometry_layout *l, size_t k)
{
  int64_t i = (int64_t)k;
  for (size_t j = 0; j < l->nskipped; j++) {
    int64_t idx = (int64_t)l->skipped[j] - l->first_shot_point;
    if (idx < 0)
      continue;
    if (idx <= i)
      i++;
    else
      break;
  }
  return i;
}

/* Map X/Y of a point `along` metres along the line and `right` metres to its
 * right, given the sine and cosine of the line's azimuth (ls, lc). */
static void line_to_map(const geometry_layout *l, double ls, double lc, double along,
                        double right, double *x, double *y)
{
  *x = l->first_station_x_m + along * ls + right * lc;
  *y = l->first_station_y_m + along * lc - right * ls;
}

static void layout_shot(const geometry_layout *l, size_t k, double ls, double lc,
                        geometry_shot *sh)
{
  int64_t i = shot_index(l, k);
  sh->field_record = (int32_t)(l->first_field_record + (int64_t)k * l->field_record_step);
  sh->shot_point = (int32_t)(l->first_shot_point + i);
  sh->along_m = l->first_source_m + (double)i * l->source_interval_m;
  line_to_map(l, ls, lc, sh->along_m, l->source_offset_m, &sh->x, &sh->y);
  sh->z = geometry_layout_elevation(l, sh->along_m);
  sh->depth_m = l->source_depth_m;
}

static int check_shot(const geometry_layout *l, size_t k, tz_err *err)
{
  if (k >= geometry_layout_shots(l))
    return tz_fail(err, TZ_E_ARG, "shot %zu: layout has %zu recorded shots", k,
                   geometry_layout_shots(l));
  return TZ_OK;
}

int geometry_layout_shot(const geometry_layout *l, size_t k, geometry_shot *sh, tz_err *err)
{
  if (check_shot(l, k, err))
    return err->status;
  double ls, lc;
  geometry_sincos_deg(l->azimuth_deg, &ls, &lc);
  layout_shot(l, k, ls, lc, sh);
  return TZ_OK;
}

/* Along-line receiver position of channel index c for a source at `src`. */
static double receiver_along(const geometry_layout *l, double src, size_t c)
{
  size_t n = (size_t)l->channels;
  if (l->channel_order == GEOMETRY_CHANNELS_REVERSE)
    c = n - 1 - c;
  double dg = l->receiver_interval_m, gap = l->near_offset_m;
  if (l->fixed_spread)
    return (double)c * dg;
  switch (l->spread) {
  case GEOMETRY_SPREAD_BEHIND:
    return src - gap - (double)(n - 1 - c) * dg;
  case GEOMETRY_SPREAD_SPLIT: {
    size_t nb = (size_t)l->channels_behind;
    if (c < nb)
      return src - gap - (double)(nb - 1 - c) * dg;
    return src + gap + (double)(c - nb) * dg;
  }
  default:
    return src + gap + (double)c * dg;
  }
}

int geometry_layout_trace(const geometry_layout *l, size_t k, size_t c, geometry_trace *g,
                          tz_err *err)
{
  if (check_shot(l, k, err))
    return err->status;
  double ls, lc;   /* once per trace: the source and the receiver share them */
  geometry_sincos_deg(l->azimuth_deg, &ls, &lc);
  geometry_shot sh;
  layout_shot(l, k, ls, lc, &sh);
  if (c >= geometry_layout_channels(l))
    return tz_fail(err, TZ_E_ARG, "channel index %zu: layout has %d channels", c, l->channels);
  memset(g, 0, sizeof *g);
  g->field_record = sh.field_record;
  g->channel = (int32_t)(l->first_channel + (int64_t)c);
  g->source_x = sh.x;
  g->source_y = sh.y;
  g->source_z = sh.z;
  g->source_depth = sh.depth_m;
  double ra = receiver_along(l, sh.along_m, c);
  line_to_map(l, ls, lc, ra, 0.0, &g->receiver_x, &g->receiver_y);
  g->receiver_z = geometry_layout_elevation(l, ra);
  g->live = 1;
  /* Differences in line coordinates are exact; take them before map X/Y. */
  geometry_derive(g, l->azimuth_deg, 0.0);
  return TZ_OK;
}

void geometry_derive(geometry_trace *g, double dir_az_deg, double hint_offset)
{
  double dx = g->receiver_x - g->source_x;
  double dy = g->receiver_y - g->source_y;
  g->midpoint_x = g->source_x + 0.5 * dx;
  g->midpoint_y = g->source_y + 0.5 * dy;
  g->offset_abs = hypot(dx, dy);
  double az = atan2(dx, dy) * 180.0 / M_PI;
  if (az < 0)
    az += 360.0;
  if (az >= 360.0)
    az -= 360.0;
  g->azimuth_deg = g->offset_abs > 0 ? az : 0.0;
  double sign;
  if (isnan(dir_az_deg)) {
    sign = hint_offset < 0 ? -1.0 : 1.0;
  } else {
    double s, c;
    geometry_sincos_deg(dir_az_deg, &s, &c);
    sign = dx * s + dy * c < 0 ? -1.0 : 1.0;
  }
  g->offset = sign * g->offset_abs;
}

/* ---- geometry table ---- */

typedef struct table_row {
  int64_t key;                 /* field_record << 32 | (uint32) channel */
  int64_t line;
  double sx, sy, sz, sd, rx, ry, rz;
} table_row;

struct geometry_table {
  char *name;
  table_row *rows;
  size_t n, cap;
};

static int64_t row_key(int32_t ffid, int32_t ch)
{
  return (int64_t)((uint64_t)(uint32_t)ffid << 32 | (uint32_t)ch);
}

static int cmp_row(const void *a, const void *b)
{
  const table_row *x = a, *y = b;
  return (x->key > y->key) - (x->key < y->key);
}

enum { COL_FFID, COL_CH, COL_SX, COL_SY, COL_SZ, COL_SD, COL_RX, COL_RY, COL_RZ, NCOLS };
static const char *const col_names[NCOLS] = {
  "field_record", "channel", "source_x_m", "source_y_m", "source_z_m", "source_depth_m",
  "receiver_x_m", "receiver_y_m", "receiver_z_m",
};
static const int col_required[NCOLS] = { 1, 1, 1, 1, 0, 0, 1, 1, 0 };

static int table_read(geometry_table *gt, table_reader *tr, tz_err *err)
{
  size_t nf;
  int col[NCOLS];
  for (int i = 0; i < NCOLS; i++)
    col[i] = -1;
  if (table_next(tr, &nf, err))
    return err->status;
  if (nf == 0)
    return tz_fail(err, TZ_E_FORMAT, "geometry table is empty (expected a header row)");
  int64_t hline = table_line(tr);
  for (size_t f = 0; f < nf; f++) {
    const char *h = table_field(tr, f);
    int found = -1;
    for (int i = 0; i < NCOLS; i++)
      if (!strcmp(h, col_names[i]))
        found = i;
    if (found < 0)
      return tz_fail_line(err, TZ_E_FORMAT, hline,
                          "unknown column \"%s\" (did you mean \"%s\"?)", h,
                          json_doc_nearest(h, col_names, NCOLS));
    if (col[found] >= 0)
      return tz_fail_line(err, TZ_E_FORMAT, hline, "column \"%s\" appears twice", h);
    col[found] = (int)f;
  }
  for (int i = 0; i < NCOLS; i++)
    if (col_required[i] && col[i] < 0)
      return tz_fail_line(err, TZ_E_FORMAT, hline, "missing column \"%s\"", col_names[i]);
  for (;;) {
    if (table_next(tr, &nf, err))
      return err->status;
    if (nf == 0)
      break;
    int64_t line = table_line(tr);
    int maxc = 0;
    for (int i = 0; i < NCOLS; i++)
      if (col[i] > maxc)
        maxc = col[i];
    if (nf <= (size_t)maxc)
      return tz_fail_line(err, TZ_E_FORMAT, line, "expected %d fields, got %zu", maxc + 1, nf);
    int64_t ffid, ch;
    double v[NCOLS] = { 0 };
    if (table_field_i64(tr, (size_t)col[COL_FFID], col_names[COL_FFID], &ffid, err) ||
        table_field_i64(tr, (size_t)col[COL_CH], col_names[COL_CH], &ch, err))
      return err->status;
    if (ffid < INT32_MIN || ffid > INT32_MAX || ch < INT32_MIN || ch > INT32_MAX)
      return tz_fail_line(err, TZ_E_FORMAT, line, "field record or channel out of range");
    for (int i = COL_SX; i < NCOLS; i++) {
      if (col[i] >= 0 && table_field_f64(tr, (size_t)col[i], col_names[i], &v[i], err))
        return err->status;
      int xy = i == COL_SX || i == COL_SY || i == COL_RX || i == COL_RY;
      double lim = xy ? GEOMETRY_MAX_COORD_M + GEOMETRY_MAX_EXTENT_M : GEOMETRY_MAX_HEIGHT_M;
      if (fabs(v[i]) > lim)
        return tz_fail_line(err, TZ_E_FORMAT, line, "column %s: %g m is beyond +-%g m",
                            col_names[i], v[i], lim);
    }
    geometry_trace g = { .field_record = (int32_t)ffid, .channel = (int32_t)ch,
                         .source_x = v[COL_SX], .source_y = v[COL_SY], .source_z = v[COL_SZ],
                         .source_depth = v[COL_SD], .receiver_x = v[COL_RX],
                         .receiver_y = v[COL_RY], .receiver_z = v[COL_RZ] };
    if (geometry_table_add(gt, &g, line, err))
      return err->status;
  }
  return geometry_table_seal(gt, err);
}

int geometry_table_seal(geometry_table *gt, tz_err *err)
{
  if (gt->n == 0)
    return tz_fail(err, TZ_E_FORMAT, "geometry table has no rows");
  qsort(gt->rows, gt->n, sizeof *gt->rows, cmp_row);
  for (size_t i = 1; i < gt->n; i++)
    if (gt->rows[i].key == gt->rows[i - 1].key) {
      int64_t a = gt->rows[i - 1].line, b = gt->rows[i].line;
      return tz_fail_line(err, TZ_E_FORMAT, a > b ? a : b,
                          "field record %d channel %d already given on line %lld",
                          (int)(int32_t)(uint32_t)((uint64_t)gt->rows[i].key >> 32),
                          (int)(int32_t)(uint32_t)gt->rows[i].key,
                          (long long)(a < b ? a : b));
    }
  return TZ_OK;
}

int geometry_table_new(geometry_table **out, const char *name, tz_err *err)
{
  geometry_table *gt = calloc(1, sizeof *gt);
  if (!gt || !(gt->name = strdup(name ? name : ""))) {
    free(gt);
    return tz_fail(err, TZ_E_NOMEM, "geometry table");
  }
  *out = gt;
  return TZ_OK;
}

int geometry_table_add(geometry_table *gt, const geometry_trace *g, int64_t line, tz_err *err)
{
  if (gt->n == gt->cap) {
    if (gt->cap >= GEOMETRY_MAX_TABLE_ROWS)
      return tz_fail_line(err, TZ_E_FORMAT, line, "more than %d rows", GEOMETRY_MAX_TABLE_ROWS);
    size_t nc = gt->cap ? gt->cap * 2 : 1024;
    table_row *nr = realloc(gt->rows, nc * sizeof *nr);
    if (!nr)
      return tz_fail(err, TZ_E_NOMEM, "geometry table rows");
    gt->rows = nr;
    gt->cap = nc;
  }
  table_row *r = &gt->rows[gt->n++];
  r->key = row_key(g->field_record, g->channel);
  r->line = line;
  r->sx = g->source_x;
  r->sy = g->source_y;
  r->sz = g->source_z;
  r->sd = g->source_depth;
  r->rx = g->receiver_x;
  r->ry = g->receiver_y;
  r->rz = g->receiver_z;
  return TZ_OK;
}

static int table_finish(geometry_table **out, const char *name, table_reader *tr, tz_err *err)
{
  geometry_table *gt = calloc(1, sizeof *gt);
  if (!gt || !(gt->name = strdup(name ? name : ""))) {
    free(gt);
    table_close(tr);
    return tz_fail(err, TZ_E_NOMEM, "geometry table");
  }
  int rc = table_read(gt, tr, err);
  table_close(tr);
  if (rc) {
    tz_err_path(err, name);
    geometry_table_free(gt);
    return rc;
  }
  *out = gt;
  return TZ_OK;
}

int geometry_table_load(geometry_table **out, const char *path, tz_err *err)
{
  table_reader *tr;
  if (table_open(&tr, path, err))
    return err->status;
  return table_finish(out, path, tr, err);
}

int geometry_table_parse(geometry_table **out, const char *name, const char *text, size_t len,
                         tz_err *err)
{
  table_reader *tr;
  if (table_open_mem(&tr, name, text, len, err))
    return err->status;
  return table_finish(out, name, tr, err);
}

void geometry_table_free(geometry_table *t)
{
  if (!t)
    return;
  free(t->rows);
  free(t->name);
  free(t);
}

size_t geometry_table_rows(const geometry_table *t) { return t->n; }

static int table_lookup(const geometry_table *t, int32_t ffid, int32_t ch, int64_t trace,
                        geometry_trace *g, tz_err *err)
{
  int64_t key = row_key(ffid, ch);
  size_t lo = 0, hi = t->n;
  while (lo < hi) {
    size_t mid = lo + (hi - lo) / 2;
    if (t->rows[mid].key < key)
      lo = mid + 1;
    else
      hi = mid;
  }
  if (lo == t->n || t->rows[lo].key != key)
    return tz_fail_at(err, TZ_E_FORMAT, trace, -1,
                      "field record %d channel %d: not in geometry table %s", (int)ffid,
                      (int)ch, t->name);
  const table_row *r = &t->rows[lo];
  memset(g, 0, sizeof *g);
  g->field_record = ffid;
  g->channel = ch;
  g->source_x = r->sx;
  g->source_y = r->sy;
  g->source_z = r->sz;
  g->source_depth = r->sd;
  g->receiver_x = r->rx;
  g->receiver_y = r->ry;
  g->receiver_z = r->rz;
  g->live = 1;
  return TZ_OK;
}

int geometry_table_find(const geometry_table *t, int32_t field_record, int32_t channel,
                        geometry_trace *g, tz_err *err)
{
  return table_lookup(t, field_record, channel, -1, g, err);
}

/* ---- geometry source ---- */

struct geometry_source {
  int kind;
  double direction;            /* shooting direction, NaN if unknown */
  geometry_layout layout;      /* owned copy (layout kind) */
  geometry_table *table;       /* owned (table kind) */
};

static int source_new(geometry_source **out, int kind, tz_err *err)
{
  geometry_source *s = calloc(1, sizeof *s);
  if (!s)
    return tz_fail(err, TZ_E_NOMEM, "geometry source");
  s->kind = kind;
  s->direction = NAN;
  geometry_layout_init(&s->layout);
  *out = s;
  return TZ_OK;
}

int geometry_source_headers(geometry_source **out, tz_err *err)
{
  return source_new(out, GEOMETRY_FROM_HEADERS, err);
}

int geometry_source_layout(geometry_source **out, const geometry_layout *l, tz_err *err)
{
  if (geometry_layout_check(l, err))
    return err->status;
  geometry_source *s = NULL;
  if (source_new(&s, GEOMETRY_FROM_LAYOUT, err))
    return err->status;
  if (geometry_layout_copy(&s->layout, l, err)) {
    free(s);
    return err->status;
  }
  s->direction = l->azimuth_deg;
  *out = s;
  return TZ_OK;
}

int geometry_source_table(geometry_source **out, geometry_table *t, tz_err *err)
{
  geometry_source *s = NULL;
  if (source_new(&s, GEOMETRY_FROM_TABLE, err)) {
    geometry_table_free(t);
    return err->status;
  }
  s->table = t;
  *out = s;
  return TZ_OK;
}

void geometry_source_free(geometry_source *s)
{
  if (!s)
    return;
  geometry_layout_free(&s->layout);
  geometry_table_free(s->table);
  free(s);
}

int geometry_source_kind(const geometry_source *s) { return s->kind; }

const geometry_layout *geometry_source_get_layout(const geometry_source *s)
{
  return s->kind == GEOMETRY_FROM_LAYOUT ? &s->layout : NULL;
}

void geometry_source_set_direction(geometry_source *s, double azimuth_deg)
{
  s->direction = azimuth_deg;
}

double geometry_source_direction(const geometry_source *s) { return s->direction; }

static int layout_lookup(const geometry_layout *l, int32_t ffid, int32_t ch, int64_t trace,
                         geometry_trace *g, tz_err *err)
{
  int64_t d = (int64_t)ffid - l->first_field_record;
  int64_t k = d / l->field_record_step;
  int64_t c = (int64_t)ch - l->first_channel;
  if (d % l->field_record_step != 0 || k < 0 || k >= (int64_t)geometry_layout_shots(l))
    return tz_fail_at(err, TZ_E_FORMAT, trace, -1,
                      "field record %d channel %d: the layout has no such field record "
                      "(records %d to %lld step %d)",
                      (int)ffid, (int)ch, (int)l->first_field_record,
                      (long long)(l->first_field_record +
                                  ((int64_t)geometry_layout_shots(l) - 1) * l->field_record_step),
                      (int)l->field_record_step);
  if (c < 0 || c >= l->channels)
    return tz_fail_at(err, TZ_E_FORMAT, trace, -1,
                      "field record %d channel %d: the layout has channels %d to %lld",
                      (int)ffid, (int)ch, (int)l->first_channel,
                      (long long)l->first_channel + l->channels - 1);
  return geometry_layout_trace(l, (size_t)k, (size_t)c, g, err);
}

int geometry_source_trace(const geometry_source *s, const segy_trace_header *h, int64_t trace,
                          geometry_trace *g, tz_err *err)
{
  int rc = TZ_OK;
  switch (s->kind) {
  case GEOMETRY_FROM_LAYOUT:
    rc = layout_lookup(&s->layout, h->field_record, h->channel, trace, g, err);
    break;
  case GEOMETRY_FROM_TABLE:
    rc = table_lookup(s->table, h->field_record, h->channel, trace, g, err);
    break;
  default:
    if (h->coord_units >= 2 && h->coord_units <= 4)
      return tz_fail_at(err, TZ_E_FORMAT, trace, 88,
                        "coordinate units %d (angles, not lengths): project the coordinates "
                        "first or give a layout or geometry table",
                        (int)h->coord_units);
    /* Coordinates decoded with the trace's own scalars (bytes 69-72) may be
     * absurd (a scalar of 32767): refused here, naming the input file and
     * trace, rather than when an output header cannot hold them. Heights get
     * the coordinate bound too: junk in an unused elevation field is common. */
    {
      static const struct { const char *name; int byte; int height; } chk[] = {
        { "source x", 73, 0 }, { "source y", 77, 0 }, { "receiver x", 81, 0 },
        { "receiver y", 85, 0 }, { "receiver elevation", 41, 1 },
        { "source elevation", 45, 1 }, { "source depth", 49, 1 },
      };
      const double v[] = { h->source_x, h->source_y, h->receiver_x, h->receiver_y,
                           h->receiver_elev, h->source_elev, h->source_depth };
      for (size_t i = 0; i < sizeof chk / sizeof chk[0]; i++) {
        double lim = GEOMETRY_MAX_COORD_M;   /* fits the output's scalar -100 */
        if (!(fabs(v[i]) <= lim))
          return tz_fail_at(err, TZ_E_FORMAT, trace, chk[i].byte - 1,
                            "%s %.6g m (bytes %d-%d with scalar %d) is beyond %g m",
                            chk[i].name, v[i], chk[i].byte, chk[i].byte + 3,
                            (int)(chk[i].height ? h->elev_scalar : h->coord_scalar), lim);
      }
    }
    memset(g, 0, sizeof *g);
    g->field_record = h->field_record;
    g->channel = h->channel;
    g->source_x = h->source_x;
    g->source_y = h->source_y;
    g->source_z = h->source_elev;
    g->source_depth = h->source_depth;
    g->receiver_x = h->receiver_x;
    g->receiver_y = h->receiver_y;
    g->receiver_z = h->receiver_elev;
    break;
  }
  if (rc)
    return rc;
  g->live = h->kind != SEGY_KIND_DEAD && h->kind != SEGY_KIND_DUMMY;
  if (s->kind != GEOMETRY_FROM_LAYOUT || s->direction != s->layout.azimuth_deg)
    geometry_derive(g, s->direction, h->offset);
  return TZ_OK;
}

void geometry_to_header(const geometry_trace *g, segy_trace_header *h)
{
  h->field_record = g->field_record;
  h->channel = g->channel;
  h->source_x = g->source_x;
  h->source_y = g->source_y;
  h->receiver_x = g->receiver_x;
  h->receiver_y = g->receiver_y;
  h->source_elev = g->source_z;
  h->receiver_elev = g->receiver_z;
  h->source_depth = g->source_depth;
  h->offset = round(g->offset);
  h->coord_scalar = -100;
  h->elev_scalar = -100;
  h->coord_units = 1;
}

/* ---- units of length ---- */

void geometry_units_init(geometry_units *u, int job_unit)
{
  memset(u, 0, sizeof *u);
  u->job = job_unit == GEOMETRY_UNIT_METRES || job_unit == GEOMETRY_UNIT_FEET ? job_unit : 0;
}

const char *geometry_unit_name(int unit) { return unit == GEOMETRY_UNIT_FEET ? "feet" : "metres"; }
const char *geometry_unit_symbol(int unit) { return unit == GEOMETRY_UNIT_FEET ? "ft" : "m"; }

int geometry_units_file(geometry_units *u, int code, const char *path, tz_err *err)
{
  if (code != GEOMETRY_UNIT_METRES && code != GEOMETRY_UNIT_FEET)
    return TZ_OK;                       /* 0 or another value: the file does not say */
  if (u->job && code != u->job) {
    tz_fail_at(err, TZ_E_FORMAT, -1, 3254, "binary header bytes 3255-3256 give measurement "
               "system %d (%s), but the line's units are set to %s (the job's \"units\" or "
               "--units): a line is processed in one unit (convert the files, or set %s)", code,
               geometry_unit_name(code), geometry_unit_name(u->job), geometry_unit_name(code));
    return tz_err_path(err, path);
  }
  if (u->files && code != u->files) {
    tz_fail_at(err, TZ_E_FORMAT, -1, 3254, "binary header bytes 3255-3256 give measurement "
               "system %d (%s), but %s gives %d (%s): the files mix units, which cannot be "
               "resolved (convert them to one unit; the job's \"units\" names it)", code,
               geometry_unit_name(code), u->first_path, u->files, geometry_unit_name(u->files));
    return tz_err_path(err, path);
  }
  if (!u->files) {
    u->files = code;
    snprintf(u->first_path, sizeof u->first_path, "%s", path ? path : "");
  }
  return TZ_OK;
}

int geometry_units_resolved(const geometry_units *u)
{
  return u->job ? u->job : u->files ? u->files : GEOMETRY_UNIT_METRES;
}

const char *geometry_units_source(const geometry_units *u)
{
  return u->job ? "job" : u->files ? "binary header" : "default";
}
