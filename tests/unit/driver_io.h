/* driver_io.h -- raw float32 file input/output for the small test drivers that
 * the NumPy cross-checks run (nmo_driver, condition_driver). Header-only. */
#ifndef TZERO_DRIVER_IO_H
#define TZERO_DRIVER_IO_H

#include <stdio.h>
#include <stdlib.h>

/* Reads a whole file of host-order float32; caller owns the result (free()).
 * NULL (and *n = 0) when the file is missing, empty or unreadable. */
static inline float *driver_slurp(const char *path, size_t *n)
{
  FILE *fp = fopen(path, "rb");
  *n = 0;
  if (!fp)
    return NULL;
  fseek(fp, 0, SEEK_END);
  long sz = ftell(fp);
  fseek(fp, 0, SEEK_SET);
  float *b = sz > 0 ? malloc((size_t)sz) : NULL;
  if (b && fread(b, 1, (size_t)sz, fp) != (size_t)sz) {
    free(b);
    b = NULL;
  }
  fclose(fp);
  *n = b ? (size_t)sz / sizeof(float) : 0;
  return b;
}

/* Writes n host-order float32 values; 0 on success, -1 on failure. */
static inline int driver_spill(const char *path, const float *b, size_t n)
{
  FILE *fp = fopen(path, "wb");
  if (!fp)
    return -1;
  size_t w = fwrite(b, sizeof *b, n, fp);
  return fclose(fp) == 0 && w == n ? 0 : -1;
}

#endif
