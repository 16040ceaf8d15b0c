/* check_endian.c -- src/util/endian.h byte loads and stores, and the SEG-Y byte-order
 * reordering built on them (src/io/segy_priv.h).
 *
 * Sources: two's-complement and big-endian (network) byte order as C11 and
 * POSIX define them (common practice); the SEG-Y rev 2 byte-order constant
 * 0x01020304 seen as 01 02 03 04 / 04 03 02 01 / 02 01 04 03 (SEG-Y rev 2.0 (2017), byte-order constant (check value 6 of docs/references.md));
 * IEEE 754 single 1.0 = 0x3F800000 and double 1.0 = 0x3FF0000000000000
 * (IEEE 754-2008 binary32/binary64 encodings).
 */
#include <stdint.h>
#include <string.h>

#include "util/endian.h"
#include "io/segy_priv.h"
#include "unit.h"

static const struct { unsigned char b[4]; int32_t want; } i32_cases[] = {
  { { 0x00, 0x00, 0x0e, 0x10 }, 3600 },
  { { 0xff, 0xff, 0xff, 0xff }, -1 },
  { { 0x80, 0x00, 0x00, 0x00 }, INT32_MIN },
  { { 0x7f, 0xff, 0xff, 0xff }, INT32_MAX },
  { { 0xff, 0xff, 0xfe, 0x0c }, -500 },
};

START_TEST(test_be32_signed)
{
  ck_assert_int_eq(u32_to_i32(be32_load(i32_cases[_i].b)), i32_cases[_i].want);
  unsigned char out[4];
  be32_store(out, (uint32_t)i32_cases[_i].want);
  ck_assert_mem_eq(out, i32_cases[_i].b, 4);
}
END_TEST

START_TEST(test_16_and_64)
{
  const unsigned char b[8] = { 0x01, 0x02, 0x03, 0x04, 0x05, 0x06, 0x07, 0x08 };
  ck_assert_uint_eq(be16_load(b), 0x0102);
  ck_assert_uint_eq(le16_load(b), 0x0201);
  ck_assert_uint_eq(le32_load(b), 0x04030201u);
  ck_assert(be64_load(b) == 0x0102030405060708ull);
  ck_assert(le64_load(b) == 0x0807060504030201ull);
  ck_assert_int_eq(u16_to_i16(0x8000), INT16_MIN);
  ck_assert_int_eq(u16_to_i16(0xFFFF), -1);
  ck_assert_int_eq(u16_to_i16(0x7FFF), INT16_MAX);
  ck_assert(u64_to_i64(0xFFFFFFFFFFFFFFFFull) == -1);
  ck_assert(u64_to_i64(0x8000000000000000ull) == INT64_MIN);
  unsigned char o[8];
  be16_store(o, 0xBEEF);
  ck_assert(o[0] == 0xBE && o[1] == 0xEF);
  be64_store(o, 0x0102030405060708ull);
  ck_assert_mem_eq(o, b, 8);
}
END_TEST

START_TEST(test_float_bits)
{
  ck_assert_uint_eq(f32_bits(1.0f), 0x3F800000u);
  ck_assert_float_eq(bits_f32(0xC0000000u), -2.0f);
  ck_assert(f64_bits(1.0) == 0x3FF0000000000000ull);
  ck_assert_double_eq(bits_f64(0x4000000000000000ull), 2.0);
}
END_TEST

/* SEG-Y rev 2.0 (2017), byte-order constant (check value 6 of docs/references.md): the constant 16909060 as stored by each byte order. */
START_TEST(test_segy_orders)
{
  const unsigned char big[4] = { 1, 2, 3, 4 }, little[4] = { 4, 3, 2, 1 }, pairs[4] = { 2, 1, 4, 3 };
  ck_assert_uint_eq(segy_ld32(SEGY_ORDER_BIG, big), 16909060u);
  ck_assert_uint_eq(segy_ld32(SEGY_ORDER_LITTLE, little), 16909060u);
  ck_assert_uint_eq(segy_ld32(SEGY_ORDER_PAIRS, pairs), 16909060u);
  ck_assert_uint_eq(be32_load(little), 67305985u);
  ck_assert_uint_eq(be32_load(pairs), 33620995u);
  const unsigned char s[2] = { 0x0e, 0x10 };
  ck_assert_uint_eq(segy_ld16(SEGY_ORDER_LITTLE, s), 0x100e);
  const unsigned char d[8] = { 8, 7, 6, 5, 4, 3, 2, 1 };
  ck_assert(segy_ld64(SEGY_ORDER_LITTLE, d) == 0x0102030405060708ull);
}
END_TEST

static Suite *endian_suite(void)
{
  Suite *s = suite_create("endian");
  TCase *tc = tcase_create("core");
  tcase_add_loop_test(tc, test_be32_signed, 0, sizeof i32_cases / sizeof i32_cases[0]);
  tcase_add_test(tc, test_16_and_64);
  tcase_add_test(tc, test_float_bits);
  tcase_add_test(tc, test_segy_orders);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(endian_suite)
