/* FFTW planning under one process-wide lock (FFTW's planner is not
   thread-safe, and a host may instantiate plugins on several threads). */
#include "frame/fft.h"

#include <pthread.h>

static pthread_mutex_t planner_lock = PTHREAD_MUTEX_INITIALIZER;

/* FFTW_ESTIMATE keeps plumb_new() fast and deterministic: FFTW_MEASURE
   would time transforms and could pick different algorithms on different
   runs, which changes the last bits of the results. */
fftwf_plan plumb_fft_plan_r2c(int n, float *in, fftwf_complex *out) {
  pthread_mutex_lock(&planner_lock);
  fftwf_plan plan = fftwf_plan_dft_r2c_1d(n, in, out, FFTW_ESTIMATE);
  pthread_mutex_unlock(&planner_lock);
  return plan;
}

fftwf_plan plumb_fft_plan_c2r(int n, fftwf_complex *in, float *out) {
  pthread_mutex_lock(&planner_lock);
  fftwf_plan plan = fftwf_plan_dft_c2r_1d(n, in, out, FFTW_ESTIMATE);
  pthread_mutex_unlock(&planner_lock);
  return plan;
}

void plumb_fft_destroy(fftwf_plan plan) {
  if (!plan) return;
  pthread_mutex_lock(&planner_lock);
  fftwf_destroy_plan(plan);
  pthread_mutex_unlock(&planner_lock);
}
