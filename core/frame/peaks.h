/*
  A frame's noise floor and its strongest spectral peaks, whatever their
  relation to a fundamental.
*/
#ifndef PLUMB_FRAME_PEAKS_H
#define PLUMB_FRAME_PEAKS_H

#include "internal.h"

#include <fftw3.h>

/* A bin of white noise exceeds 20 times the median power with probability
   e^(-20 ln 2), about 1e-6. */
#define PLUMB_ABOVE_NOISE 20.0

/* Median power of (at most 64, evenly spread) bins in [first, last]. */
double plumb_spectrum_noise_floor(const fftwf_complex *bins, int first_bin, int last_bin);
/* The strongest local maxima between low_hz and high_hz that stand within
   30 dB of the strongest and PLUMB_ABOVE_NOISE times above noise_power
   (from plumb_spectrum_noise_floor), strongest first. */
int plumb_spectrum_strong_peaks(const fftwf_complex *current, const fftwf_complex *previous,
                          int fft_size, int hop, double sample_rate_hz, double low_hz,
                          double high_hz, double noise_power, spectral_peak *peaks,
                          int max_peaks);

#endif /* PLUMB_FRAME_PEAKS_H */
