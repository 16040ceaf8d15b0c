/* check_digest.c -- SHA-256 of buffers and files.
 *
 * Expected digests: the "abc" and 448-bit message examples of FIPS 180-2
 * (NIST 2002), appendix B.1 and B.2, and the digest of the empty message
 * (the same standard's algorithm; Python's hashlib.sha256(b"").hexdigest() gives it
 * independently). The file check compares with the buffer digest of the same bytes. */
#include <stdio.h>
#include <string.h>
#include <unistd.h>

#include "tzero/digest.h"
#include "unit.h"

static const struct { const char *msg, *hex; } vectors[] = {
  { "abc", "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad" },
  { "abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq",
    "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1" },
  { "", "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855" },
};

START_TEST(test_buffer_vectors)
{
  char hex[DIGEST_HEX_LEN + 1];
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(digest_buffer(vectors[_i].msg, strlen(vectors[_i].msg), hex, &e), TZ_OK);
  ck_assert_str_eq(hex, vectors[_i].hex);
}
END_TEST

START_TEST(test_streaming_equals_whole)
{
  /* "abc" fed one byte at a time, then the context reused for the 448-bit message */
  digest_ctx *d = NULL;
  char hex[DIGEST_HEX_LEN + 1];
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(digest_new(&d, &e), TZ_OK);
  for (int i = 0; i < 3; i++)
    ck_assert_int_eq(digest_update(d, "abc" + i, 1, &e), TZ_OK);
  ck_assert_int_eq(digest_final(d, hex, &e), TZ_OK);
  ck_assert_str_eq(hex, vectors[0].hex);
  ck_assert_int_eq(digest_reset(d, &e), TZ_OK);
  ck_assert_int_eq(digest_update(d, vectors[1].msg, 20, &e), TZ_OK);
  ck_assert_int_eq(digest_update(d, vectors[1].msg + 20, strlen(vectors[1].msg) - 20, &e), TZ_OK);
  ck_assert_int_eq(digest_final(d, hex, &e), TZ_OK);
  ck_assert_str_eq(hex, vectors[1].hex);
  digest_free(d);
}
END_TEST

START_TEST(test_file_digest)
{
  char path[] = "/tmp/tzero-digest-XXXXXX";
  int fd = mkstemp(path);
  ck_assert_int_ge(fd, 0);
  /* 3 MiB of a known pattern: more than one read piece */
  static unsigned char buf[3u << 20];
  for (size_t i = 0; i < sizeof buf; i++)
    buf[i] = (unsigned char)(i * 2654435761u >> 13);
  ck_assert_int_eq(write(fd, buf, sizeof buf), (ssize_t)sizeof buf);
  close(fd);
  char a[DIGEST_HEX_LEN + 1], b[DIGEST_HEX_LEN + 1];
  tz_err e;
  tz_err_init(&e);
  ck_assert_int_eq(digest_file(path, a, &e), TZ_OK);
  ck_assert_int_eq(digest_buffer(buf, sizeof buf, b, &e), TZ_OK);
  ck_assert_str_eq(a, b);
  unlink(path);
  tz_err_init(&e);
  ck_assert_int_eq(digest_file(path, a, &e), TZ_E_NOINPUT);
  ck_assert_str_eq(e.path, path);
  tz_err_init(&e);
  ck_assert_int_eq(digest_file("/tmp", a, &e), TZ_E_NOINPUT);
}
END_TEST

static Suite *digest_suite(void)
{
  Suite *s = suite_create("digest");
  TCase *tc = tcase_create("sha256");
  tcase_add_loop_test(tc, test_buffer_vectors, 0, 3);
  tcase_add_test(tc, test_streaming_equals_whole);
  tcase_add_test(tc, test_file_digest);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(digest_suite)
