/* segy_map.c -- the trace header field table: decode, encode, header maps.
 *
 * One const table lists every decoded field with its standard byte position,
 * width and how it is scaled (SEG-Y rev 1 (2002) trace header).
 * Decoding, encoding and the JSON header map all walk that table, so a field
 * is described once. A header map overrides the position and width of named
 * fields (and may mark a slot as holding an IEEE float, as some writers store them: common practice).
 *
 * Not here: the file structure (segy_reader.c), sample conversion (segy_conv.c).
 */
#include <cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "segy_priv.h"
#include "tzero/fileio.h"
#include "util/json_doc.h"

/* In byte order. Decoding takes two passes: the scaled kinds need the scalars.
 * The list is expanded twice: into the table below (maps, encoding, names) and
 * into the straight-line decoder of standard headers (segy_header_decode). */
#define SEGY_FIELD_LIST(F) \
  F(line_seq, 1, 4, SEGY_K_I32) \
  F(file_seq, 5, 4, SEGY_K_I32) \
  F(field_record, 9, 4, SEGY_K_I32) \
  F(channel, 13, 4, SEGY_K_I32) \
  F(source_point, 17, 4, SEGY_K_I32) \
  F(cmp, 21, 4, SEGY_K_I32) \
  F(cmp_trace, 25, 4, SEGY_K_I32) \
  F(kind, 29, 2, SEGY_K_I16) \
  F(vertical_sum, 31, 2, SEGY_K_I16) \
  F(stacked_traces, 33, 2, SEGY_K_I16) \
  F(data_use, 35, 2, SEGY_K_I16) \
  F(offset, 37, 4, SEGY_K_RAW) \
  F(receiver_elev, 41, 4, SEGY_K_ELEV) \
  F(source_elev, 45, 4, SEGY_K_ELEV) \
  F(source_depth, 49, 4, SEGY_K_ELEV) \
  F(receiver_datum, 53, 4, SEGY_K_ELEV) \
  F(source_datum, 57, 4, SEGY_K_ELEV) \
  F(source_water_depth, 61, 4, SEGY_K_ELEV) \
  F(receiver_water_depth, 65, 4, SEGY_K_ELEV) \
  F(elev_scalar, 69, 2, SEGY_K_I16) \
  F(coord_scalar, 71, 2, SEGY_K_I16) \
  F(source_x, 73, 4, SEGY_K_COORD) \
  F(source_y, 77, 4, SEGY_K_COORD) \
  F(receiver_x, 81, 4, SEGY_K_COORD) \
  F(receiver_y, 85, 4, SEGY_K_COORD) \
  F(coord_units, 89, 2, SEGY_K_I16) \
  F(uphole_source_ms, 95, 2, SEGY_K_TIMED) \
  F(uphole_receiver_ms, 97, 2, SEGY_K_TIMED) \
  F(source_static_ms, 99, 2, SEGY_K_TIMED) \
  F(receiver_static_ms, 101, 2, SEGY_K_TIMED) \
  F(total_static_ms, 103, 2, SEGY_K_TIMED) \
  F(delay_ms, 109, 2, SEGY_K_TIME) \
  F(mute_start_ms, 111, 2, SEGY_K_TIME) \
  F(mute_end_ms, 113, 2, SEGY_K_TIME) \
  F(samples, 115, 2, SEGY_K_U16) \
  F(interval_us, 117, 2, SEGY_K_U16) \
  F(cmp_x, 181, 4, SEGY_K_COORD) \
  F(cmp_y, 185, 4, SEGY_K_COORD) \
  F(inline_no, 189, 4, SEGY_K_I32) \
  F(crossline_no, 193, 4, SEGY_K_I32) \
  F(shotpoint, 197, 4, SEGY_K_I32) \
  F(shotpoint_scalar, 201, 2, SEGY_K_I16) \
  F(time_scalar, 215, 2, SEGY_K_I16)

#define F(name, byte, width, kind) \
  { #name, byte, width, kind, offsetof(segy_trace_header, name) },
static const segy_field segy_fields[] = { SEGY_FIELD_LIST(F) };
#undef F
static const size_t segy_nfields = sizeof segy_fields / sizeof segy_fields[0];

const segy_field *segy_field_find(const char *name)
{
  for (size_t i = 0; i < segy_nfields; i++)
    if (!strcmp(segy_fields[i].name, name))
      return &segy_fields[i];
  return NULL;
}

static double scaled(double v, int16_t scalar)
{
  if (scalar > 0)
    return v * scalar;
  if (scalar < 0)
    return v / -(double)scalar;
  return v;
}

static int16_t clamp16(double v)
{
  v = nearbyint(v);
  return (int16_t)(v > INT16_MAX ? INT16_MAX : v < INT16_MIN ? INT16_MIN : v);
}

static int32_t clamp32(double v)
{
  v = nearbyint(v);
  return (int32_t)(v > INT32_MAX ? INT32_MAX : v < INT32_MIN ? INT32_MIN : v);
}

static inline __attribute__((always_inline)) void set_field(segy_trace_header *h, const segy_field *fd, double v, int is_float)
{
  char *m = (char *)h + fd->off;
  switch (fd->kind) {
  case SEGY_K_I32: {
    int32_t x = clamp32(v);
    memcpy(m, &x, sizeof x);
    break;
  }
  case SEGY_K_I16: {
    int16_t x = clamp16(v);
    memcpy(m, &x, sizeof x);
    break;
  }
  case SEGY_K_TIME: {
    int16_t x = clamp16(scaled(v, h->time_scalar));
    memcpy(m, &x, sizeof x);
    break;
  }
  case SEGY_K_U16: {
    uint32_t x = v < 0 ? 0 : v > UINT32_MAX ? UINT32_MAX : (uint32_t)v;
    memcpy(m, &x, sizeof x);
    break;
  }
  case SEGY_K_RAW:
    memcpy(m, &v, sizeof v);
    break;
  case SEGY_K_TIMED: {
    double x = is_float ? v : scaled(v, h->time_scalar);
    memcpy(m, &x, sizeof x);
    break;
  }
  case SEGY_K_ELEV:
  case SEGY_K_COORD: {
    double x = is_float ? v : scaled(v, fd->kind == SEGY_K_ELEV ? h->elev_scalar
                                                                : h->coord_scalar);
    memcpy(m, &x, sizeof x);
    break;
  }
  }
}

/* The value a slot holds, as the table-driven decoder reads it. */
static inline __attribute__((always_inline)) double slot_value(const unsigned char *p, int order, int width, int kind)
{
  if (width == 4)
    return kind == SEGY_K_U16 ? (double)segy_ld32(order, p) : (double)u32_to_i32(segy_ld32(order, p));
  return kind == SEGY_K_U16 ? (double)segy_ld16(order, p) : (double)u16_to_i16(segy_ld16(order, p));
}

static inline int scaled_kind(int kind)
{
  return kind == SEGY_K_ELEV || kind == SEGY_K_COORD || kind == SEGY_K_TIME ||
         kind == SEGY_K_TIMED;
}

/* Standard positions (no header map): the field list expanded into straight
 * code, each field's kind and width known at compile time, so a header costs
 * some forty loads and stores instead of a table walk. Same values, bit for
 * bit, as the table walk (set_field on the same doubles). */
static void decode_standard(const unsigned char *raw, int order, segy_trace_header *h)
{
#define DEC(pass, name, byte, width, kind) \
  if (scaled_kind(kind) == (pass)) { \
    static const segy_field fd_ = { #name, byte, width, kind, offsetof(segy_trace_header, name) }; \
    set_field(h, &fd_, slot_value(raw + (byte) - 1, order, width, kind), 0); \
  }
#define PASS0(name, byte, width, kind) DEC(0, name, byte, width, kind)
#define PASS1(name, byte, width, kind) DEC(1, name, byte, width, kind)
  SEGY_FIELD_LIST(PASS0)
  SEGY_FIELD_LIST(PASS1)
#undef PASS0
#undef PASS1
#undef DEC
}

void segy_header_decode(const unsigned char *raw, int order, const segy_header_map *map,
                        segy_trace_header *h)
{
  memset(h, 0, sizeof *h);
  memcpy(h->raw, raw, SEGY_TRACE_HEADER_BYTES);
  if (!map || map->n == 0) {
    decode_standard(raw, order, h);
    return;
  }
  for (size_t j = 0; j < 2 * segy_nfields; j++) {
    const segy_field *fd = &segy_fields[j % segy_nfields];
    int scaled_kind = fd->kind == SEGY_K_ELEV || fd->kind == SEGY_K_COORD ||
                      fd->kind == SEGY_K_TIME || fd->kind == SEGY_K_TIMED;
    if (scaled_kind != (j >= segy_nfields))
      continue;
    int byte = fd->byte, width = fd->width, is_float = 0;
    for (int k = 0; map && k < map->n; k++)
      if (!strcmp(map->f[k].field, fd->name) && map->f[k].byte >= 1 &&
          (map->f[k].width == 2 || map->f[k].width == 4) &&
          map->f[k].byte <= SEGY_TRACE_HEADER_BYTES - map->f[k].width + 1) {
        byte = map->f[k].byte;
        width = map->f[k].width;
        is_float = map->f[k].is_float;
      }
    const unsigned char *p = raw + byte - 1;
    double v;
    if (is_float)
      v = bits_f32(segy_ld32(order, p));
    else if (width == 4)
      v = fd->kind == SEGY_K_U16 ? (double)segy_ld32(order, p)
                                 : (double)u32_to_i32(segy_ld32(order, p));
    else
      v = fd->kind == SEGY_K_U16 ? (double)segy_ld16(order, p)
                                 : (double)u16_to_i16(segy_ld16(order, p));
    if (is_float && !isfinite(v))
      v = 0;
    set_field(h, fd, v, is_float);
  }
}

/* Stored integer for a scaled value: the inverse of the scalar rule. */
static int remove_scalar(double v, int16_t scalar, double *out)
{
  double s = scalar > 0 ? v / scalar : scalar < 0 ? v * -(double)scalar : v;
  s = nearbyint(s);
  *out = s;
  return isfinite(s) && s >= INT32_MIN && s <= INT32_MAX;
}

int segy_header_encode(const segy_trace_header *h, uint32_t samples, uint32_t interval_us,
                       unsigned char *out, tz_err *err)
{
  memcpy(out, h->raw, SEGY_TRACE_HEADER_BYTES);
  int16_t es = h->elev_scalar ? h->elev_scalar : -100;
  int16_t cs = h->coord_scalar ? h->coord_scalar : -100;
  for (size_t i = 0; i < segy_nfields; i++) {
    const segy_field *fd = &segy_fields[i];
    const char *m = (const char *)h + fd->off;
    double v = 0;
    int16_t i16;
    int32_t i32;
    switch (fd->kind) {
    case SEGY_K_I32:
      memcpy(&i32, m, sizeof i32);
      v = i32;
      break;
    case SEGY_K_I16:
      memcpy(&i16, m, sizeof i16);
      v = !strcmp(fd->name, "elev_scalar") ? es : !strcmp(fd->name, "coord_scalar") ? cs : i16;
      break;
    case SEGY_K_TIME:
      memcpy(&i16, m, sizeof i16);
      remove_scalar(i16, h->time_scalar, &v);
      break;
    case SEGY_K_U16:
      v = !strcmp(fd->name, "samples") ? samples : interval_us;
      break;
    case SEGY_K_TIMED: {
      double d;
      memcpy(&d, m, sizeof d);
      if (!remove_scalar(d, h->time_scalar, &v) || v < INT16_MIN || v > INT16_MAX)
        return tz_fail(err, TZ_E_ARG,
                       "%s = %g ms does not fit trace header bytes %d-%d with time scalar %d",
                       fd->name, d, fd->byte, fd->byte + 1, h->time_scalar);
      break;
    }
    case SEGY_K_RAW:
    case SEGY_K_ELEV:
    case SEGY_K_COORD: {
      double d;
      memcpy(&d, m, sizeof d);
      if (!remove_scalar(d, fd->kind == SEGY_K_RAW ? 1 : fd->kind == SEGY_K_ELEV ? es : cs, &v))
        return tz_fail(err, TZ_E_ARG,
                       "%s = %g does not fit trace header bytes %d-%d with scalar %d",
                       fd->name, d, fd->byte, fd->byte + 3,
                       fd->kind == SEGY_K_RAW ? 1 : fd->kind == SEGY_K_ELEV ? es : cs);
      break;
    }
    }
    unsigned char *p = out + fd->byte - 1;
    if (fd->width == 4)
      be32_store(p, (uint32_t)(int32_t)v);
    else if (fd->kind == SEGY_K_U16)
      be16_store(p, (uint16_t)v);
    else
      be16_store(p, (uint16_t)clamp16(v));
  }
  return TZ_OK;
}

/* ---- header map (JSON) ---- */

int segy_header_map_parse(segy_header_map *map, const char *json, const char *name,
                          tz_err *err)
{
  memset(map, 0, sizeof *map);
  cJSON *root = NULL;
  if (json_doc_parse(&root, json, strlen(json), name, "header map", TZ_E_FORMAT, err))
    return err->status;
  int rc = TZ_OK;
  if (!cJSON_IsObject(root)) {
    rc = tz_fail(err, TZ_E_FORMAT, "header map: expected a JSON object of fields");
    goto done;
  }
  for (const cJSON *it = root->child; it; it = it->next) {
    const segy_field *fd = segy_field_find(it->string);
    if (!fd) {
      rc = tz_fail(err, TZ_E_FORMAT, "header map: $.%s: unknown trace header field",
                   it->string);
      goto done;
    }
    if (!cJSON_IsObject(it)) {
      rc = tz_fail(err, TZ_E_FORMAT, "header map: $.%s: expected an object with byte and width",
                   it->string);
      goto done;
    }
    if (map->n >= (int)(sizeof map->f / sizeof map->f[0])) {
      rc = tz_fail(err, TZ_E_FORMAT, "header map: too many fields");
      goto done;
    }
    segy_field_override *o = &map->f[map->n];
    snprintf(o->field, sizeof o->field, "%s", fd->name);
    /* Numbers are range-checked as doubles before any conversion to int: a
     * value beyond int's range (or a byte near INT_MAX, whose end position
     * would overflow) never reaches the conversion. */
    double byte = 0, width = fd->width;
    for (const cJSON *k = it->child; k; k = k->next) {
      if (!strcmp(k->string, "byte") && cJSON_IsNumber(k) && k->valuedouble == floor(k->valuedouble))
        byte = k->valuedouble;
      else if (!strcmp(k->string, "width") && cJSON_IsNumber(k))
        width = k->valuedouble;
      else if (!strcmp(k->string, "float") && cJSON_IsBool(k))
        o->is_float = cJSON_IsTrue(k);
      else {
        rc = tz_fail(err, TZ_E_FORMAT,
                     "header map: $.%s.%s: unknown key or wrong type (byte: integer, "
                     "width: 2 or 4, float: true/false)", it->string, k->string);
        goto done;
      }
    }
    if (width != 2 && width != 4) {
      rc = tz_fail(err, TZ_E_FORMAT, "header map: $.%s.width: must be 2 or 4", it->string);
      goto done;
    }
    o->width = (int)width;
    if (o->is_float && o->width != 4) {
      rc = tz_fail(err, TZ_E_FORMAT, "header map: $.%s: a float slot is 4 bytes wide",
                   it->string);
      goto done;
    }
    if (!(byte >= 1 && byte <= SEGY_TRACE_HEADER_BYTES - o->width + 1)) {
      rc = tz_fail(err, TZ_E_FORMAT, "header map: $.%s.byte: must be 1..%d for width %d",
                   it->string, SEGY_TRACE_HEADER_BYTES - o->width + 1, o->width);
      goto done;
    }
    o->byte = (int)byte;
    map->n++;
  }
done:
  if (rc)
    tz_err_path(err, name);
  cJSON_Delete(root);
  return rc;
}

int segy_header_map_load(segy_header_map *map, const char *path, tz_err *err)
{
  char *text = NULL;
  size_t len = 0;
  int rc = fileio_read_all(path, 1u << 20, &text, &len, err);
  if (rc)
    return rc;
  rc = segy_header_map_parse(map, text, path, err);
  free(text);
  return rc;
}

/* ---- fields by index ---- */

size_t segy_field_count(void) { return segy_nfields; }
const char *segy_field_name(size_t i) { return i < segy_nfields ? segy_fields[i].name : ""; }
int segy_field_byte(size_t i) { return i < segy_nfields ? segy_fields[i].byte : 0; }
int segy_field_width(size_t i) { return i < segy_nfields ? segy_fields[i].width : 0; }

double segy_field_value(const segy_trace_header *h, size_t i)
{
  if (i >= segy_nfields)
    return 0;
  const char *m = (const char *)h + segy_fields[i].off;
  int16_t a;
  int32_t b;
  uint32_t c;
  double d;
  switch (segy_fields[i].kind) {
  case SEGY_K_I32: memcpy(&b, m, sizeof b); return b;
  case SEGY_K_I16:
  case SEGY_K_TIME: memcpy(&a, m, sizeof a); return a;
  case SEGY_K_U16: memcpy(&c, m, sizeof c); return c;
  default: memcpy(&d, m, sizeof d); return d;
  }
}

/* ---- rev 2 trace header extension 1 ---- */

/* Positions and types from SEG-Y rev 2.0 (2017), trace header extension 1;
 * the names are tzero's own. */
enum { X_U64, X_I64, X_F64, X_U32, X_I32, X_U16, X_I16 };
static const struct { const char *name; int byte, width, type; } ext1_fields[] = {
  { "ext_line_seq", 1, 8, X_U64 },
  { "ext_file_seq", 9, 8, X_U64 },
  { "ext_field_record", 17, 8, X_I64 },
  { "ext_cmp", 25, 8, X_I64 },
  { "ext_receiver_elev", 33, 8, X_F64 },
  { "receiver_depth", 41, 8, X_F64 },
  { "ext_source_elev", 49, 8, X_F64 },
  { "ext_source_depth", 57, 8, X_F64 },
  { "ext_receiver_datum", 65, 8, X_F64 },
  { "ext_source_datum", 73, 8, X_F64 },
  { "ext_source_water_depth", 81, 8, X_F64 },
  { "ext_receiver_water_depth", 89, 8, X_F64 },
  { "ext_source_x", 97, 8, X_F64 },
  { "ext_source_y", 105, 8, X_F64 },
  { "ext_receiver_x", 113, 8, X_F64 },
  { "ext_receiver_y", 121, 8, X_F64 },
  { "ext_offset", 129, 8, X_F64 },
  { "ext_samples", 137, 4, X_U32 },
  { "nanoseconds", 141, 4, X_I32 },
  { "ext_interval", 145, 8, X_F64 },
  { "cable_number", 153, 4, X_I32 },
  { "header_blocks", 157, 2, X_U16 },
  { "last_trace_flag", 159, 2, X_I16 },
  { "ext_cmp_x", 161, 8, X_F64 },
  { "ext_cmp_y", 169, 8, X_F64 },
};
#define NEXT1 (sizeof ext1_fields / sizeof ext1_fields[0])

size_t segy_ext1_field_count(void) { return NEXT1; }
const char *segy_ext1_field_name(size_t i) { return i < NEXT1 ? ext1_fields[i].name : ""; }
int segy_ext1_field_byte(size_t i) { return i < NEXT1 ? ext1_fields[i].byte : 0; }
int segy_ext1_field_width(size_t i) { return i < NEXT1 ? ext1_fields[i].width : 0; }

double segy_ext1_field_value(const unsigned char *ext, int order, size_t i)
{
  if (i >= NEXT1)
    return 0;
  const unsigned char *p = ext + ext1_fields[i].byte - 1;
  switch (ext1_fields[i].type) {
  case X_U64: return (double)segy_ld64(order, p);
  case X_I64: return (double)u64_to_i64(segy_ld64(order, p));
  case X_F64: {
    double d = bits_f64(segy_ld64(order, p));
    return isfinite(d) ? d : 0;
  }
  case X_U32: return segy_ld32(order, p);
  case X_I32: return u32_to_i32(segy_ld32(order, p));
  case X_U16: return segy_ld16(order, p);
  default: return u16_to_i16(segy_ld16(order, p));
  }
}

void segy_block_name(const unsigned char *block, char out[9])
{
  const unsigned char *p = block + 232;
  int enc = SEGY_TEXT_ASCII;
  for (int k = 0; k < 8; k++)
    if (p[k] >= 0xC1)             /* EBCDIC letters and digits are 0xC1-0xF9 */
      enc = SEGY_TEXT_EBCDIC;
  char t[9];
  segy_text_decode(p, 8, enc, t);
  int end = 8;
  while (end > 0 && t[end - 1] == ' ')
    end--;
  memcpy(out, t, (size_t)end);
  out[end] = '\0';
}
