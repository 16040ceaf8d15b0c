/* endian.h -- load and store big- and little-endian integers in byte buffers.
 *
 * Byte at a time on purpose: no alignment or host byte-order assumptions.
 * Private to the library; never included by the front end.
 */
#ifndef TZERO_ENDIAN_H
#define TZERO_ENDIAN_H

#include <stdint.h>
#include <string.h>

static inline uint16_t be16_load(const unsigned char *p)
{
  return (uint16_t)((unsigned)p[0] << 8 | (unsigned)p[1]);
}
static inline uint32_t be32_load(const unsigned char *p)
{
  return (uint32_t)p[0] << 24 | (uint32_t)p[1] << 16 | (uint32_t)p[2] << 8 | (uint32_t)p[3];
}
static inline uint64_t be64_load(const unsigned char *p)
{
  return (uint64_t)be32_load(p) << 32 | be32_load(p + 4);
}
static inline uint16_t le16_load(const unsigned char *p)
{
  return (uint16_t)((unsigned)p[1] << 8 | (unsigned)p[0]);
}
static inline uint32_t le32_load(const unsigned char *p)
{
  return (uint32_t)p[3] << 24 | (uint32_t)p[2] << 16 | (uint32_t)p[1] << 8 | (uint32_t)p[0];
}
static inline uint64_t le64_load(const unsigned char *p)
{
  return (uint64_t)le32_load(p + 4) << 32 | le32_load(p);
}
/* Portable unsigned -> signed (no implementation-defined conversion). */
static inline int16_t u16_to_i16(uint16_t u)
{
  return u <= INT16_MAX ? (int16_t)u : (int16_t)(-(int32_t)(uint16_t)~u - 1);
}
static inline int32_t u32_to_i32(uint32_t u)
{
  return u <= INT32_MAX ? (int32_t)u : -(int32_t)(~u) - 1;
}
static inline int64_t u64_to_i64(uint64_t u)
{
  return u <= INT64_MAX ? (int64_t)u : -(int64_t)(~u) - 1;
}
static inline void be16_store(unsigned char *p, uint16_t v)
{
  p[0] = (unsigned char)(v >> 8);
  p[1] = (unsigned char)v;
}
static inline void be32_store(unsigned char *p, uint32_t v)
{
  p[0] = (unsigned char)(v >> 24);
  p[1] = (unsigned char)(v >> 16);
  p[2] = (unsigned char)(v >> 8);
  p[3] = (unsigned char)v;
}
static inline void be64_store(unsigned char *p, uint64_t v)
{
  be32_store(p, (uint32_t)(v >> 32));
  be32_store(p + 4, (uint32_t)v);
}
static inline uint32_t f32_bits(float f)
{
  uint32_t u;
  memcpy(&u, &f, sizeof u);
  return u;
}
static inline float bits_f32(uint32_t u)
{
  float f;
  memcpy(&f, &u, sizeof f);
  return f;
}
static inline uint64_t f64_bits(double d)
{
  uint64_t u;
  memcpy(&u, &d, sizeof u);
  return u;
}
static inline double bits_f64(uint64_t u)
{
  double d;
  memcpy(&d, &u, sizeof d);
  return d;
}

#endif
