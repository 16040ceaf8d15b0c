/* digest.h -- SHA-256 digests of files and buffers for provenance (libcrypto's EVP).
 *
 * Digests are written as 64 lower-case hexadecimal characters. A streaming
 * digest (digest_new / digest_update / digest_final) lets a pass that reads the
 * bytes anyway digest them on the way, instead of a second read of the file.
 * SHA-256 is FIPS 180-4 (NIST 2015); the implementation is OpenSSL's.
 */
#ifndef TZERO_DIGEST_H
#define TZERO_DIGEST_H

#include <stddef.h>
#include "tzero/error.h"

#define DIGEST_HEX_LEN 64            /* hexadecimal characters of a SHA-256 digest */

typedef struct digest_ctx digest_ctx;

/* On success *out owns a new SHA-256 context: release it with digest_free(). */
int digest_new(digest_ctx **out, tz_err *err);
int digest_update(digest_ctx *d, const void *data, size_t n, tz_err *err);
/* Writes the digest as DIGEST_HEX_LEN characters plus a NUL into hex. The
 * context may be reused after digest_reset(). */
int digest_final(digest_ctx *d, char hex[DIGEST_HEX_LEN + 1], tz_err *err);
int digest_reset(digest_ctx *d, tz_err *err);
void digest_free(digest_ctx *d);          /* NULL is a no-op */

/* The digest of n bytes in memory. */
int digest_buffer(const void *data, size_t n, char hex[DIGEST_HEX_LEN + 1], tz_err *err);
/* The digest of every byte of a regular file (TZ_E_NOINPUT when it cannot be
 * opened, TZ_E_IO when a read fails; the error names the path). */
int digest_file(const char *path, char hex[DIGEST_HEX_LEN + 1], tz_err *err);

#endif
