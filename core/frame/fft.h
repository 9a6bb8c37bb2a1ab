/*
  FFTW plans, made under one process-wide lock.
*/
#ifndef PLUMB_FRAME_FFT_H
#define PLUMB_FRAME_FFT_H

#include <fftw3.h>

/* FFTW's planner is not thread-safe, and other plugins in the same host
   plan too: every plan is made under one process-wide lock. */
fftwf_plan plumb_fft_plan_r2c(int n, float *in, fftwf_complex *out);
fftwf_plan plumb_fft_plan_c2r(int n, fftwf_complex *in, float *out);
void plumb_fft_destroy(fftwf_plan plan);

#endif /* PLUMB_FRAME_FFT_H */
