/*
  YIN's cumulative-mean-normalised difference function, by FFT
  (de Cheveigné & Kawahara 2002), and its troughs.
*/
#ifndef PLUMB_FRAME_YIN_H
#define PLUMB_FRAME_YIN_H

#include "plumb.h"

#include <fftw3.h>

typedef struct {
  double lag_samples; /* refined by parabolic interpolation */
  double value;       /* cumulative-mean-normalised difference there */
} yin_trough;

typedef struct {
  int fft_size;        /* transform length */
  int window_samples;  /* W, the integration window */
  int lag_max_samples; /* largest lag the buffers allow */
  float *segment;      /* W + lag_max samples, mean removed */
  float *window_part;  /* the first W samples, zero padded */
  float *correlation;  /* inverse transform output */
  float *cmndf;        /* d'(tau), tau = 0 .. lag_max */
  fftwf_complex *spectrum_segment;
  fftwf_complex *spectrum_window;
  fftwf_plan forward;
  fftwf_plan inverse;
} yin_analyser;

plumb_status plumb_yin_init(yin_analyser *yin, int fft_size, int window_samples,
                      int lag_max_samples);
void plumb_yin_destroy(yin_analyser *yin);
/* Offset into a frame of fft_size samples where the segment starts, so
   that the segment is centred on the frame. */
int plumb_yin_segment_offset(const yin_analyser *yin);
/* Compute d'(tau) of the centred segment of `frame` and return up to
   max_troughs local minima with lag in [lag_min, lag_max], in order of lag.
   Returns 0 for a segment with no energy. */
int plumb_yin_analyse(yin_analyser *yin, const float *frame, int lag_min,
                int lag_max, yin_trough *troughs, int max_troughs);

#endif /* PLUMB_FRAME_YIN_H */
