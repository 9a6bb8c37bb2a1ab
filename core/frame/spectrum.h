/*
  The Hann-windowed spectrum of a frame, its band levels (for the onset
  function) and its level in dBFS.
*/
#ifndef PLUMB_FRAME_SPECTRUM_H
#define PLUMB_FRAME_SPECTRUM_H

#include "internal.h"

#include <fftw3.h>

typedef struct {
  int fft_size;
  double sample_rate_hz;
  float *window;        /* Hann */
  float *windowed;
  fftwf_plan forward;   /* executed with the new-array interface */
  int band_count;
  int band_first_bin[PLUMB_BANDS_MAX + 1];
  double window_power;  /* sum of window^2, for dBFS */
  double windowed_energy; /* of the last frame transformed */
} spectrum_analyser;

plumb_status plumb_spectrum_init(spectrum_analyser *spectrum, int fft_size,
                           double sample_rate_hz);
void plumb_spectrum_destroy(spectrum_analyser *spectrum);
/* Window `frame` and transform it into `out` (fft_size/2 + 1 bins, from
   fftwf_alloc_complex). */
void plumb_spectrum_transform(spectrum_analyser *spectrum, const float *frame,
                        fftwf_complex *out);
/* Band levels in dB (floored) and the frame level in dBFS, of the frame
   plumb_spectrum_transform() made last. */
void plumb_spectrum_levels(const spectrum_analyser *spectrum,
                     const fftwf_complex *bins, float *band_db,
                     double *frame_dbfs);

/* How long before a sudden start a Hann-windowed frame's level is
   level_db below its full value (level_db < 0). */
double plumb_window_step_lead_s(double level_db, double frame_s);

#endif /* PLUMB_FRAME_SPECTRUM_H */
