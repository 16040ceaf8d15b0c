/* fuzz_util.h -- what the fuzz targets share: a memory file for parsers that
 * read by path, a small valid SEG-Y file, a fixture folder.
 *
 * Each target defines LLVMFuzzerTestOneInput() (the libFuzzer entry point,
 * https://llvm.org/docs/LibFuzzer.html); `make fuzz` links it with libFuzzer,
 * `make check` links it with replay.c to run the saved crashing inputs of
 * tests/data/fuzz-regress/ without libFuzzer. A target must never leak, crash
 * or hang on any input: a parse error is the expected answer to garbage.
 */
#ifndef TZERO_FUZZ_UTIL_H
#define TZERO_FUZZ_UTIL_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/mman.h>
#include <sys/stat.h>
#include <unistd.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

/* The bytes as a file in memory (memfd_create(2)): a regular file the readers
 * open by path as "/proc/self/fd/N". Returns the descriptor (close it), -1 on
 * failure. */
static inline int fuzz_memfile(const void *data, size_t size, char *path, size_t cap)
{
  int fd = memfd_create("tzero-fuzz", MFD_CLOEXEC);
  if (fd < 0)
    return -1;
  const char *p = data;
  size_t done = 0;
  while (done < size) {
    ssize_t k = write(fd, p + done, size - done);
    if (k <= 0) {
      close(fd);
      return -1;
    }
    done += (size_t)k;
  }
  snprintf(path, cap, "/proc/self/fd/%d", fd);
  return fd;
}

static inline void fuzz_be16(unsigned char *p, unsigned v)
{
  p[0] = (unsigned char)(v >> 8);
  p[1] = (unsigned char)v;
}

static inline void fuzz_be32(unsigned char *p, uint32_t v)
{
  p[0] = (unsigned char)(v >> 24);
  p[1] = (unsigned char)(v >> 16);
  p[2] = (unsigned char)(v >> 8);
  p[3] = (unsigned char)v;
}

/* A valid SEG-Y rev 1 file (SEG-Y rev 1, 2002, sections 3-5): EBCDIC blank
 * textual header, 4 traces of 8 IEEE samples (format 5) at 1000 us, fixed
 * length, field record 1, channels 1-4, coordinates with scalar -100. The
 * caller owns the buffer; *size gets its length. */
static inline unsigned char *fuzz_small_segy(size_t *size)
{
  const size_t ns = 8, nt = 4, tl = 240 + 4 * ns;
  size_t n = 3600 + nt * tl;
  unsigned char *b = calloc(1, n);
  if (!b)
    return NULL;
  memset(b, 0x40, 3200);               /* EBCDIC spaces */
  unsigned char *bin = b + 3200;
  fuzz_be16(bin + 16, 1000);           /* 3217-3218 sample interval */
  fuzz_be16(bin + 20, (unsigned)ns);   /* 3221-3222 samples per trace */
  fuzz_be16(bin + 24, 5);              /* 3225-3226 format: IEEE float */
  fuzz_be16(bin + 300, 0x0100);        /* 3501-3502 revision 1.0 */
  fuzz_be16(bin + 302, 1);             /* 3503-3504 fixed-length traces */
  for (size_t t = 0; t < nt; t++) {
    unsigned char *h = b + 3600 + t * tl;
    fuzz_be32(h + 0, (uint32_t)t + 1);     /* line sequence */
    fuzz_be32(h + 8, 1);                   /* field record */
    fuzz_be32(h + 12, (uint32_t)t + 1);    /* channel */
    fuzz_be16(h + 28, 1);                  /* trace kind: seismic */
    fuzz_be32(h + 36, (uint32_t)(t * 10)); /* offset */
    fuzz_be16(h + 70, (unsigned)(uint16_t)-100);   /* coordinate scalar */
    fuzz_be32(h + 72, 100000);             /* source x: 1000.00 m */
    fuzz_be32(h + 80, 100000 + (uint32_t)t * 1000); /* receiver x */
    fuzz_be16(h + 88, 1);                  /* coordinate units: length */
    fuzz_be16(h + 114, (unsigned)ns);
    fuzz_be16(h + 116, 1000);
    for (size_t i = 0; i < ns; i++)
      fuzz_be32(h + 240 + 4 * i, i == 3 ? 0x3F800000u : 0);   /* 1.0 at sample 3 */
  }
  *size = n;
  return b;
}

#endif
