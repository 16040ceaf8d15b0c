/* digest.c -- SHA-256 through libcrypto's EVP interface (FIPS 180-4).
 *
 * A thin wrapper: the context is OpenSSL's EVP_MD_CTX, the result is printed as
 * lower-case hexadecimal. Files are read in 1 MiB pieces. No state outside
 * the context, so contexts may be used on different threads at once.
 *
 * Not here: what is digested (the QC report and the merge decide that).
 */
#include "tzero/digest.h"

#include <errno.h>
#include <fcntl.h>
#include <stdlib.h>
#include <sys/stat.h>
#include <unistd.h>
#include <openssl/evp.h>

struct digest_ctx {
  EVP_MD_CTX *md;
};

int digest_new(digest_ctx **out, tz_err *err)
{
  digest_ctx *d = calloc(1, sizeof *d);
  if (!d || !(d->md = EVP_MD_CTX_new())) {
    free(d);
    return tz_fail(err, TZ_E_NOMEM, "SHA-256 context");
  }
  if (EVP_DigestInit_ex(d->md, EVP_sha256(), NULL) != 1) {
    digest_free(d);
    return tz_fail(err, TZ_E_INTERNAL, "SHA-256: EVP_DigestInit_ex failed");
  }
  *out = d;
  return TZ_OK;
}

int digest_reset(digest_ctx *d, tz_err *err)
{
  if (EVP_DigestInit_ex(d->md, EVP_sha256(), NULL) != 1)
    return tz_fail(err, TZ_E_INTERNAL, "SHA-256: EVP_DigestInit_ex failed");
  return TZ_OK;
}

int digest_update(digest_ctx *d, const void *data, size_t n, tz_err *err)
{
  if (n && EVP_DigestUpdate(d->md, data, n) != 1)
    return tz_fail(err, TZ_E_INTERNAL, "SHA-256: EVP_DigestUpdate failed");
  return TZ_OK;
}

int digest_final(digest_ctx *d, char hex[DIGEST_HEX_LEN + 1], tz_err *err)
{
  static const char digits[] = "0123456789abcdef";
  unsigned char md[EVP_MAX_MD_SIZE];
  unsigned int n = 0;
  if (EVP_DigestFinal_ex(d->md, md, &n) != 1 || n * 2 != DIGEST_HEX_LEN)
    return tz_fail(err, TZ_E_INTERNAL, "SHA-256: EVP_DigestFinal_ex failed");
  for (unsigned int i = 0; i < n; i++) {
    hex[2 * i] = digits[md[i] >> 4];
    hex[2 * i + 1] = digits[md[i] & 15];
  }
  hex[DIGEST_HEX_LEN] = '\0';
  return TZ_OK;
}

void digest_free(digest_ctx *d)
{
  if (!d)
    return;
  EVP_MD_CTX_free(d->md);
  free(d);
}

int digest_buffer(const void *data, size_t n, char hex[DIGEST_HEX_LEN + 1], tz_err *err)
{
  digest_ctx *d = NULL;
  int rc = digest_new(&d, err);
  if (!rc)
    rc = digest_update(d, data, n, err);
  if (!rc)
    rc = digest_final(d, hex, err);
  digest_free(d);
  return rc;
}

int digest_file(const char *path, char hex[DIGEST_HEX_LEN + 1], tz_err *err)
{
  enum { PIECE = 1 << 20 };
  int fd = open(path, O_RDONLY | O_NONBLOCK | O_CLOEXEC);
  if (fd < 0) {
    int e = errno;
    tz_fail_os(err, TZ_E_NOINPUT, e, "cannot open");
    return tz_err_path(err, path);
  }
  struct stat st;
  if (fstat(fd, &st) != 0 || !S_ISREG(st.st_mode)) {
    close(fd);
    tz_fail(err, TZ_E_NOINPUT, "not a regular file");
    return tz_err_path(err, path);
  }
  unsigned char *buf = malloc(PIECE);
  digest_ctx *d = NULL;
  int rc = buf ? digest_new(&d, err) : tz_fail(err, TZ_E_NOMEM, "digest buffer");
  int64_t at = 0;
  while (!rc) {
    ssize_t n = read(fd, buf, PIECE);
    if (n < 0 && errno == EINTR)
      continue;
    if (n < 0) {
      int e = errno;
      rc = tz_fail_os(err, TZ_E_IO, e, "read failed at byte %lld", (long long)at);
      tz_err_path(err, path);
      break;
    }
    if (n == 0)
      break;
    rc = digest_update(d, buf, (size_t)n, err);
    at += n;
  }
  if (!rc)
    rc = digest_final(d, hex, err);
  digest_free(d);
  free(buf);
  close(fd);
  return rc;
}
