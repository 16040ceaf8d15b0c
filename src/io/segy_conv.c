/* segy_conv.c -- SEG-Y sample formats and textual-header character sets.
 *
 * Samples are converted from bytes to float in one tight loop per format:
 * the switch on the format code sits outside the sample loop, and byte
 * reordering for little-endian or pair-swapped files is a separate in-place
 * pass, so the common big-endian path touches each byte once.
 *
 * IBM System/360 hexadecimal floats (format 1) are converted by bit
 * manipulation (the format 1 definition of SEG-Y rev 1 (2002)): normalise the 24-bit fraction with a
 * count-leading-zeros, rebuild an IEEE single from sign, exponent and the
 * shifted fraction. Values beyond the IEEE single range become 0 and are
 * counted as bad samples, as NaN and infinite IEEE values are, so that no
 * huge value reaches a stack; values below it become 0 (underflow, not
 * counted).
 *
 * Not here: file structure (segy_reader.c, segy_writer.c), header fields
 * (segy_map.c).
 */
#include <float.h>
#include <math.h>
#include <string.h>
#ifdef __SSE2__
#include <emmintrin.h>
#endif
#if defined(__x86_64__) && defined(__GNUC__)
#include <immintrin.h>
#define CONV_AVX2 1
#else
#define CONV_AVX2 0
#endif

#include "segy_priv.h"

int segy_format_bytes(int code)
{
  switch (code) {
  case 1: case 2: case 4: case 5: case 10: return 4;
  case 3: case 11: return 2;
  case 6: case 9: case 12: return 8;
  case 7: case 15: return 3;
  case 8: case 16: return 1;
  default: return 0;
  }
}

double segy_apply_scalar(int32_t raw, int16_t scalar)
{
  if (scalar > 0)
    return (double)raw * scalar;
  if (scalar < 0)
    return (double)raw / -(double)scalar;
  return (double)raw;
}

/* IBM -> IEEE single. `*bad` is set to 1 when the value overflowed. */
static inline float ibm_to_float(uint32_t w, int *bad)
{
  uint32_t frac = w & 0x00FFFFFFu;
  uint32_t sign = w & 0x80000000u;
  int lz = frac ? __builtin_clz(frac) - 8 : 0;            /* 0..23 */
  int be = (int)((w >> 24) & 0x7F) * 4 - 130 - lz;        /* IEEE biased exponent */
  if (frac && (unsigned)(be - 1) < 254u) {
    *bad = 0;
    return bits_f32(sign | (uint32_t)be << 23 | ((frac << lz) & 0x007FFFFFu));
  }
  if (!frac || be < 1) {          /* zero, or below the IEEE normal range */
    *bad = 0;
    return 0.0f;
  }
  *bad = 1;                       /* beyond float: counted, and 0 like a NaN */
  return 0.0f;
}

float segy_ibm_to_float(uint32_t ibm)
{
  int bad;
  return ibm_to_float(ibm, &bad);
}

uint32_t segy_float_to_ibm(float v)
{
  uint32_t b = f32_bits(v);
  uint32_t sign = b & 0x80000000u;
  int e = (int)((b >> 23) & 0xFF);
  uint32_t m = b & 0x007FFFFFu;
  if (e == 255) {                 /* Inf -> largest IBM, NaN -> 0 */
    return m ? 0 : sign | 0x7FFFFFFFu;
  }
  if (e == 0) {
    if (!m)
      return 0;
    e = 1;                        /* subnormal: value = m * 2^-149 */
    while (!(m & 0x00800000u)) {
      m <<= 1;
      e--;
    }
  } else {
    m |= 0x00800000u;
  }
  /* value = m * 2^e2 with m in [2^23, 2^24). IBM: F * 2^(4q - 24), F in
   * [2^20, 2^24): choose q = ceil((e2 + 24) / 4), then F = m * 2^r, r in -3..0. */
  int e2 = e - 150;
  int q = (e2 + 27 + 256) / 4 - 64;
  int r = e2 + 24 - 4 * q;
  uint32_t f = r ? (m + (1u << (-r - 1))) >> -r : m;     /* round half away */
  if (f >= 0x01000000u) {
    f >>= 4;
    q++;
  }
  if (q + 64 > 127)
    return sign | 0x7FFFFFFFu;
  if (q + 64 < 0)
    return 0;
  return sign | (uint32_t)(q + 64) << 24 | f;
}

#ifdef __SSE2__
/* IBM -> IEEE four words at a time (SSE2, the x86-64 baseline). For exponents
 * 39..96 (about 1e-37 to 1e38, every ordinary seismic amplitude) the value is
 * exactly (float)fraction * 2^(4E - 280): the 24-bit fraction converts to float
 * without loss and the power of two is built from its bits, so no clz is needed.
 * Zero fractions give 0. Any other group of four takes the scalar path, so the
 * result is bit-identical to ibm_to_float(). Returns the words done. */
static size_t ibm_block4(const unsigned char *p, size_t n, float *out, int64_t *nbad)
{
  const __m128i lo = _mm_set1_epi32(38), hi = _mm_set1_epi32(97);
  const __m128i m7f = _mm_set1_epi32(0x7F), mfrac = _mm_set1_epi32(0x00FFFFFF);
  const __m128i msign = _mm_set1_epi32((int)0x80000000u), bias = _mm_set1_epi32(153);
  const __m128i zero = _mm_setzero_si128();
  size_t i = 0;
  for (; i + 4 <= n; i += 4, p += 16) {
    __m128i v = _mm_loadu_si128((const __m128i *)p);
    v = _mm_or_si128(_mm_slli_epi16(v, 8), _mm_srli_epi16(v, 8));      /* bytes in 16 */
    v = _mm_shufflehi_epi16(_mm_shufflelo_epi16(v, 0xB1), 0xB1);        /* 16s in 32 */
    __m128i e = _mm_and_si128(_mm_srli_epi32(v, 24), m7f);
    __m128i frac = _mm_and_si128(v, mfrac);
    __m128i fz = _mm_cmpeq_epi32(frac, zero);
    __m128i in = _mm_and_si128(_mm_cmpgt_epi32(e, lo), _mm_cmplt_epi32(e, hi));
    if (_mm_movemask_epi8(_mm_or_si128(in, fz)) != 0xFFFF) {
      for (int k = 0; k < 4; k++) {
        int bad;
        out[i + (size_t)k] = ibm_to_float(be32_load(p + 4 * k), &bad);
        *nbad += bad;
      }
      continue;
    }
    __m128i scale = _mm_slli_epi32(_mm_sub_epi32(_mm_slli_epi32(e, 2), bias), 23);
    __m128 r = _mm_mul_ps(_mm_cvtepi32_ps(frac), _mm_castsi128_ps(scale));
    r = _mm_or_ps(r, _mm_castsi128_ps(_mm_and_si128(v, msign)));
    r = _mm_andnot_ps(_mm_castsi128_ps(fz), r);
    _mm_storeu_ps(out + i, r);
  }
  return i;
}
#endif

#if CONV_AVX2
/* The same conversion eight words at a time, for CPUs with AVX2 (checked at run
 * time with __builtin_cpu_supports, so the binary runs on any x86-64): one
 * byte shuffle reverses each word, then the arithmetic of ibm_block4() on eight
 * lanes. Same bits as ibm_to_float() (exact integer-to-float conversion and a
 * multiply by a power of two; no rounding choice involved). */
__attribute__((target("avx2")))
static size_t ibm_block8(const unsigned char *p, size_t n, float *out, int64_t *nbad)
{
  const __m256i lo = _mm256_set1_epi32(38), hi = _mm256_set1_epi32(97);
  const __m256i m7f = _mm256_set1_epi32(0x7F), mfrac = _mm256_set1_epi32(0x00FFFFFF);
  const __m256i msign = _mm256_set1_epi32((int)0x80000000u), bias = _mm256_set1_epi32(153);
  const __m256i zero = _mm256_setzero_si256();
  const __m256i swap = _mm256_setr_epi8(3, 2, 1, 0, 7, 6, 5, 4, 11, 10, 9, 8, 15, 14, 13, 12,
                                        3, 2, 1, 0, 7, 6, 5, 4, 11, 10, 9, 8, 15, 14, 13, 12);
  size_t i = 0;
  for (; i + 8 <= n; i += 8, p += 32) {
    __m256i v = _mm256_shuffle_epi8(_mm256_loadu_si256((const __m256i *)p), swap);
    __m256i e = _mm256_and_si256(_mm256_srli_epi32(v, 24), m7f);
    __m256i frac = _mm256_and_si256(v, mfrac);
    __m256i fz = _mm256_cmpeq_epi32(frac, zero);
    __m256i in = _mm256_and_si256(_mm256_cmpgt_epi32(e, lo), _mm256_cmpgt_epi32(hi, e));
    if (_mm256_movemask_epi8(_mm256_or_si256(in, fz)) != -1) {
      for (int k = 0; k < 8; k++) {
        int bad;
        out[i + (size_t)k] = ibm_to_float(be32_load(p + 4 * k), &bad);
        *nbad += bad;
      }
      continue;
    }
    __m256i scale = _mm256_slli_epi32(_mm256_sub_epi32(_mm256_slli_epi32(e, 2), bias), 23);
    __m256 r = _mm256_mul_ps(_mm256_cvtepi32_ps(frac), _mm256_castsi256_ps(scale));
    r = _mm256_or_ps(r, _mm256_castsi256_ps(_mm256_and_si256(v, msign)));
    r = _mm256_andnot_ps(_mm256_castsi256_ps(fz), r);
    _mm256_storeu_ps(out + i, r);
  }
  return i;
}
#endif

/* In-place reorder of n words of w bytes into big-endian. */
static void reorder(int order, unsigned char *p, size_t n, int w)
{
  if (order != SEGY_ORDER_LITTLE && order != SEGY_ORDER_PAIRS)
    return;
  if (w == 1)
    return;
  unsigned char t[8];
  for (size_t i = 0; i < n; i++, p += w) {
    segy_to_be(order, p, w, t);
    memcpy(p, t, (size_t)w);
  }
}

static inline int64_t s24(const unsigned char *p)
{
  uint32_t u = (uint32_t)p[0] << 16 | (uint32_t)p[1] << 8 | p[2];
  return (int64_t)u - ((u & 0x800000u) ? 0x1000000 : 0);
}

int64_t segy_decode_samples(int code, int order, unsigned char *in, size_t n, float *out)
{
  int64_t nbad = 0;
  reorder(order, in, n, segy_format_bytes(code));
  const unsigned char *p = in;
  switch (code) {
  case 1: {
    size_t i = 0;
#if CONV_AVX2
    if (__builtin_cpu_supports("avx2")) {
      i = ibm_block8(p, n, out, &nbad);
      p += 4 * i;
    }
#endif
#ifdef __SSE2__
    size_t i4 = ibm_block4(p, n - i, out + i, &nbad);
    i += i4;
    p += 4 * i4;
#endif
    for (; i < n; i++, p += 4) {
      int bad;
      out[i] = ibm_to_float(be32_load(p), &bad);
      nbad += bad;
    }
    break;
  }
  case 2:
    for (size_t i = 0; i < n; i++, p += 4)
      out[i] = (float)u32_to_i32(be32_load(p));
    break;
  case 3:
    for (size_t i = 0; i < n; i++, p += 2)
      out[i] = (float)u16_to_i16(be16_load(p));
    break;
  case 4:          /* obsolete fixed point with gain: not decoded (rejected at open) */
    memset(out, 0, n * sizeof *out);
    break;
  case 5:
    for (size_t i = 0; i < n; i++, p += 4) {
      uint32_t b = be32_load(p);
      int bad = (b & 0x7F800000u) == 0x7F800000u;
      nbad += bad;
      out[i] = bad ? 0.0f : bits_f32(b);
    }
    break;
  case 6:
    for (size_t i = 0; i < n; i++, p += 8) {
      double d = bits_f64(be64_load(p));
      int bad = !(fabs(d) <= FLT_MAX);       /* NaN, Inf, beyond float */
      nbad += bad;
      out[i] = bad ? 0.0f : (float)d;
    }
    break;
  case 7:
    for (size_t i = 0; i < n; i++, p += 3)
      out[i] = (float)s24(p);
    break;
  case 8:
    for (size_t i = 0; i < n; i++, p++)
      out[i] = (float)((int)p[0] - (p[0] & 0x80 ? 256 : 0));
    break;
  case 9:
    for (size_t i = 0; i < n; i++, p += 8)
      out[i] = (float)u64_to_i64(be64_load(p));
    break;
  case 10:
    for (size_t i = 0; i < n; i++, p += 4)
      out[i] = (float)be32_load(p);
    break;
  case 11:
    for (size_t i = 0; i < n; i++, p += 2)
      out[i] = (float)be16_load(p);
    break;
  case 12:
    for (size_t i = 0; i < n; i++, p += 8)
      out[i] = (float)be64_load(p);
    break;
  case 15:
    for (size_t i = 0; i < n; i++, p += 3)
      out[i] = (float)((uint32_t)p[0] << 16 | (uint32_t)p[1] << 8 | p[2]);
    break;
  case 16:
    for (size_t i = 0; i < n; i++, p++)
      out[i] = (float)p[0];
    break;
  default:
    memset(out, 0, n * sizeof *out);
    break;
  }
  return nbad;
}

/* ---- textual header ---- */

/* Printable ASCII 0x20..0x7E in EBCDIC code page 037 (generated with Python's
 * codecs 'cp037'). */
static const unsigned char ebcdic_of_ascii[95] = {
  0x40, 0x5a, 0x7f, 0x7b, 0x5b, 0x6c, 0x50, 0x7d, 0x4d, 0x5d, 0x5c, 0x4e, 0x6b, 0x60, 0x4b, 0x61,
  0xf0, 0xf1, 0xf2, 0xf3, 0xf4, 0xf5, 0xf6, 0xf7, 0xf8, 0xf9, 0x7a, 0x5e, 0x4c, 0x7e, 0x6e, 0x6f,
  0x7c, 0xc1, 0xc2, 0xc3, 0xc4, 0xc5, 0xc6, 0xc7, 0xc8, 0xc9, 0xd1, 0xd2, 0xd3, 0xd4, 0xd5, 0xd6,
  0xd7, 0xd8, 0xd9, 0xe2, 0xe3, 0xe4, 0xe5, 0xe6, 0xe7, 0xe8, 0xe9, 0xba, 0xe0, 0xbb, 0xb0, 0x6d,
  0x79, 0x81, 0x82, 0x83, 0x84, 0x85, 0x86, 0x87, 0x88, 0x89, 0x91, 0x92, 0x93, 0x94, 0x95, 0x96,
  0x97, 0x98, 0x99, 0xa2, 0xa3, 0xa4, 0xa5, 0xa6, 0xa7, 0xa8, 0xa9, 0xc0, 0x4f, 0xd0, 0xa1,
};

unsigned char segy_ascii_to_ebcdic(unsigned char c)
{
  return c >= 0x20 && c < 0x7F ? ebcdic_of_ascii[c - 0x20] : 0x40;
}

/* Non-printable bytes become '.', NUL and blanks a space; never stops at NUL. */
void segy_text_decode(const unsigned char *in, size_t n, int encoding, char *out)
{
  unsigned char inv[256];
  if (encoding == SEGY_TEXT_EBCDIC) {
    memset(inv, '.', sizeof inv);
    for (int a = 0x20; a < 0x7F; a++)
      inv[ebcdic_of_ascii[a - 0x20]] = (unsigned char)a;
    inv[0x00] = ' ';
    inv[0x6A] = '|';        /* broken bar: some writers use it for '|' */
  } else {
    for (int b = 0; b < 256; b++)
      inv[b] = b >= 0x20 && b < 0x7F ? (unsigned char)b : '.';
    inv[0x00] = inv['\r'] = inv['\n'] = inv['\t'] = ' ';
  }
  for (size_t i = 0; i < n; i++)
    out[i] = (char)inv[in[i]];
  out[n] = '\0';
}

/* Common practice: whichever blank (EBCDIC 0x40, ASCII 0x20) and
 * letter/digit set dominates decides; ties go to EBCDIC, the rev 0 rule. */
int segy_text_detect(const unsigned char *in, size_t n)
{
  long e = 0, a = 0;
  for (size_t i = 0; i < n; i++) {
    unsigned c = in[i];
    if (c == 0x40)
      e += 2;
    else if (c == 0x20)
      a += 2;
    if ((c >= 0x81 && c <= 0xA9) || (c >= 0xC1 && c <= 0xE9) || (c >= 0xF0 && c <= 0xF9))
      e++;
    else if ((c >= '0' && c <= '9') || (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z'))
      a++;
  }
  return a > e ? SEGY_TEXT_ASCII : SEGY_TEXT_EBCDIC;
}

int segy_text_likely(const unsigned char *in, size_t n)
{
  unsigned char ebc[256];
  memset(ebc, 0, sizeof ebc);
  for (int a = 0x20; a < 0x7F; a++)
    ebc[ebcdic_of_ascii[a - 0x20]] = 1;
  size_t used = 0, asc = 0, eb = 0;
  for (size_t i = 0; i < n; i++) {
    unsigned c = in[i];
    if (!c)
      continue;
    used++;
    asc += (c >= 0x20 && c < 0x7F) || c == '\r' || c == '\n' || c == '\t';
    eb += ebc[c];
  }
  return used >= 16 && (asc * 10 >= used * 9 || eb * 10 >= used * 9);
}

const char *segy_format_name(int code)
{
  switch (code) {
  case 1: return "IBM hexadecimal float";
  case 2: return "32-bit signed integer";
  case 3: return "16-bit signed integer";
  case 4: return "fixed point with gain (obsolete)";
  case 5: return "IEEE 754 single float";
  case 6: return "IEEE 754 double float";
  case 7: return "24-bit signed integer";
  case 8: return "8-bit signed integer";
  case 9: return "64-bit signed integer";
  case 10: return "32-bit unsigned integer";
  case 11: return "16-bit unsigned integer";
  case 12: return "64-bit unsigned integer";
  case 15: return "24-bit unsigned integer";
  case 16: return "8-bit unsigned integer";
  default: return "undefined";
  }
}

int64_t segy_binary_value(const segy_info *in, int pos, int width)
{
  if (pos < 3201 || pos > 3600 || width < 1 || width > 3601 - pos)
    return 0;
  const unsigned char *p = in->binary + (pos - 3201);
  switch (width) {
  case 2: return u16_to_i16(segy_ld16(in->byte_order, p));
  case 4: return u32_to_i32(segy_ld32(in->byte_order, p));
  case 8: return (int64_t)segy_ld64(in->byte_order, p);
  default: return 0;
  }
}
