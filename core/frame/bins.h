/*
  Reading a real transform's bins: band limits cut to the transform,
  bin power, and a bin's instantaneous frequency by the phase vocoder
  (Flanagan & Golden 1966; Brown & Puckette 1993).
*/
#ifndef PLUMB_FRAME_BINS_H
#define PLUMB_FRAME_BINS_H

#include <fftw3.h>
#include <math.h>
#include <stdbool.h>

/* The bins of a band low_hz … high_hz, cut to the bins that have both
   neighbours (1 … fft_size / 2 - 1): at a low sample rate a band limit
   in Hz can lie past Nyquist. False when the band holds no bin. */
static inline bool band_bins(double low_hz, double high_hz, double bin_hz, int fft_size,
                             int *first, int *last) {
  double first_bin = ceil(low_hz / bin_hz), last_bin = floor(high_hz / bin_hz);
  const int top_bin = fft_size / 2 - 1; /* fft_size is even */
  double top = top_bin;
  *first = first_bin < 1.0 ? 1 : first_bin > top ? (int)top : (int)first_bin;
  *last = last_bin > top ? (int)top : last_bin < 1.0 ? 1 : (int)last_bin;
  return *first <= *last && first_bin <= last_bin;
}

/* |X_k|^2 */
static inline double bin_power(const fftwf_complex *bins, int k) {
  return (double)bins[k][0] * bins[k][0] + (double)bins[k][1] * bins[k][1];
}
/* Instantaneous frequency of bin k, in bins, from its phase advance over a
   hop (the phase vocoder). */
double plumb_vocoder_frequency_bins(const fftwf_complex *current,
                              const fftwf_complex *previous, int k, int fft_size,
                              int hop);

#endif /* PLUMB_FRAME_BINS_H */
