/* fft_size.h -- the transform length FFTW is fastest on. Private to the library. */
#ifndef TZERO_FFT_SIZE_H
#define TZERO_FFT_SIZE_H

#include <stddef.h>

/* Smallest 2^a 3^b 5^c >= n (FFTW's plans are fastest on such lengths). */
static inline size_t tz_fft_size(size_t n)
{
  for (;; n++) {
    size_t m = n;
    while (m % 2 == 0)
      m /= 2;
    while (m % 3 == 0)
      m /= 3;
    while (m % 5 == 0)
      m /= 5;
    if (m == 1)
      return n;
  }
}

#endif
