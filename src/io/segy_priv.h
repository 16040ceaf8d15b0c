/* segy_priv.h -- what the SEG-Y source files share: the trace header field
 * table, byte-order aware loads and the sample converters.
 *
 * Private to the library (never installed, never included by the front end).
 * Every name here that is not static carries the segy_ prefix so that
 * `make check-symbols` stays green.
 */
#ifndef TZERO_SEGY_PRIV_H
#define TZERO_SEGY_PRIV_H

#include <stddef.h>
#include <stdint.h>

#include "util/endian.h"
#include "tzero/segy.h"

/* How a trace header field is stored in segy_trace_header. */
enum segy_kind {
  SEGY_K_I32,      /* int32_t member from a signed 4-byte slot */
  SEGY_K_I16,      /* int16_t member from a signed 2-byte slot */
  SEGY_K_U16,      /* uint32_t member from an unsigned 2-byte slot */
  SEGY_K_RAW,      /* double member, not scaled */
  SEGY_K_ELEV,     /* double member, scaled by 69-70 */
  SEGY_K_COORD,    /* double member, scaled by 71-72 */
  SEGY_K_TIME,     /* int16_t member, scaled by 215-216 */
  SEGY_K_TIMED     /* double member, scaled by 215-216 (statics and uphole times, which
                    * must keep their fractions of a millisecond) */
};

typedef struct segy_field {
  const char *name;   /* struct member name, also the header-map key */
  int byte;           /* 1-based position in the 240-byte header */
  int width;          /* 2 or 4 */
  int kind;           /* enum segy_kind */
  size_t off;         /* offsetof(segy_trace_header, member) */
} segy_field;

/* The field table (segy_map.c); NULL for an unknown name. */
const segy_field *segy_field_find(const char *name);

/* Reorders `w` bytes of `p` in byte order `order` into big-endian in `out`. */
static inline void segy_to_be(int order, const unsigned char *p, int w, unsigned char *out)
{
  if (order == SEGY_ORDER_LITTLE) {
    for (int i = 0; i < w; i++)
      out[i] = p[w - 1 - i];
  } else if (order == SEGY_ORDER_PAIRS && w >= 2) {
    for (int i = 0; i + 1 < w; i += 2) {
      out[i] = p[i + 1];
      out[i + 1] = p[i];
    }
    if (w & 1)
      out[w - 1] = p[w - 1];
  } else {
    memcpy(out, p, (size_t)w);
  }
}
static inline uint16_t segy_ld16(int order, const unsigned char *p)
{
  unsigned char b[2];
  segy_to_be(order, p, 2, b);
  return be16_load(b);
}
static inline uint32_t segy_ld32(int order, const unsigned char *p)
{
  unsigned char b[4];
  segy_to_be(order, p, 4, b);
  return be32_load(b);
}
static inline uint64_t segy_ld64(int order, const unsigned char *p)
{
  unsigned char b[8];
  segy_to_be(order, p, 8, b);
  return be64_load(b);
}

/* Decodes a 240-byte header (file byte order `order`) into h, applying the
 * header map when given. h->raw gets a copy of the bytes. */
void segy_header_decode(const unsigned char *raw, int order, const segy_header_map *map,
                        segy_trace_header *h);
/* Encodes h into big-endian bytes at out (starting from h->raw). Fails with
 * TZ_E_ARG when a value does not fit its slot with the chosen scalar. */
int segy_header_encode(const segy_trace_header *h, uint32_t samples, uint32_t interval_us,
                       unsigned char *out, tz_err *err);

/* Converts n samples of format `code`, stored in byte order `order`, to float.
 * The bytes at `in` may be rewritten (byte swapping happens in place).
 * Returns the number of non-finite or out-of-range values replaced. */
int64_t segy_decode_samples(int code, int order, unsigned char *in, size_t n, float *out);

/* Sample bytes (reordered to big-endian) of the trace the last successful
 * segy_trace_read() returned; borrowed until the next call on the handle. */
const unsigned char *segy_last_sample_bytes(const segy_file *f);

/* EBCDIC (code page 037) <-> ASCII for the textual header. */
unsigned char segy_ascii_to_ebcdic(unsigned char c);
void segy_text_decode(const unsigned char *in, size_t n, int encoding, char *out);
int segy_text_detect(const unsigned char *in, size_t n);
/* 1 when n bytes read as text in ASCII or EBCDIC: at least 16 bytes other than
 * NUL, and 90 % of those printable in one of the two (a record of extended
 * textual header, as opposed to trace header and sample bytes). */
int segy_text_likely(const unsigned char *in, size_t n);

#endif
