/*
  A frame's partials, found from a coarse fundamental and read by
  phase-vocoder instantaneous frequency (Brown & Puckette 1993), with a
  weighted fit of the fundamental.
*/
#ifndef PLUMB_FRAME_HARMONICS_H
#define PLUMB_FRAME_HARMONICS_H

#include "internal.h"

#include <fftw3.h>
#include <stdbool.h>

typedef struct {
  double f0_hz;           /* weighted fit over the harmonics */
  double harmonic_ratio;  /* energy in harmonic peaks / all energy */
  int found;              /* harmonics found */
  /* For the harmonic-to-noise ratio: the power of the bins of the found
     harmonics' lobes and how many bins they are, and the same of every bin
     of the band searched (from half the fundamental to the last window). */
  double lobe_power;
  int lobe_bins;
  double band_power;
  int band_bins;
} harmonic_fit;

/* Refine a coarse f0 from the harmonic peaks of two consecutive spectra
   `hop` samples apart, by phase-vocoder instantaneous frequency (Brown &
   Puckette 1993). Returns false when too little harmonic energy is found. */
bool plumb_harmonics_refine(const fftwf_complex *current,
                      const fftwf_complex *previous, int fft_size, int hop,
                      double sample_rate_hz, double f0_coarse_hz, double noise_power,
                      harmonic_set *harmonics, harmonic_fit *fit);

#endif /* PLUMB_FRAME_HARMONICS_H */
