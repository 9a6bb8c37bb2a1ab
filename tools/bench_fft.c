/*
  bench_fft SAMPLE_RATE_HZ HOPS [RUNS]: time exactly the FFTW transforms
  that HOPS hops of the core need, and nothing else.

  Per hop the core transforms three real frames forward and one back, all
  of plumb_frame_frames() samples (core/spectrum.c: the Hann-windowed
  spectrum; core/yin.c: the segment and the window part forward, their
  cross-spectrum back). The plans are made the way core/fft.c makes them
  (single precision, r2c and c2r, FFTW_ESTIMATE, out of place) and run
  with the new-array interface on separate fftwf_malloc'd arrays, as in
  the core. The inputs are Gaussian noise, so no denormals slow them.
  Prints every run's wall time and the best; "values:" for bench.sh.
*/
#include <fftw3.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#include "plumb.h"
#include "signal.h"

#define FORWARD_PER_HOP 3
#define INVERSE_PER_HOP 1

typedef struct {
  int n;
  float *real[FORWARD_PER_HOP];
  fftwf_complex *bins[FORWARD_PER_HOP];
  float *out;
  fftwf_plan forward, inverse;
} transforms;

static double now_s(void) {
  struct timespec t;
  clock_gettime(CLOCK_MONOTONIC, &t);
  return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static int frame_frames_at(double sample_rate_hz) {
  plumb_settings settings;
  plumb_settings_default(&settings, sample_rate_hz);
  plumb *analyser = plumb_new(&settings, NULL);
  if (!analyser) return -1;
  int n = (int)plumb_frame_frames(analyser);
  plumb_free(analyser);
  return n;
}

static int transforms_init(transforms *t, int n) {
  t->n = n;
  sig_rng rng;
  sig_rng_seed(&rng, 12345);
  for (int k = 0; k < FORWARD_PER_HOP; ++k) {
    t->real[k] = fftwf_alloc_real((size_t)n);
    t->bins[k] = fftwf_alloc_complex((size_t)n / 2 + 1);
    if (!t->real[k] || !t->bins[k]) return -1;
    for (int i = 0; i < n; ++i) t->real[k][i] = (float)(0.1 * sig_rng_gauss(&rng));
  }
  t->out = fftwf_alloc_real((size_t)n);
  if (!t->out) return -1;
  t->forward = fftwf_plan_dft_r2c_1d(n, t->real[0], t->bins[0], FFTW_ESTIMATE);
  t->inverse = fftwf_plan_dft_c2r_1d(n, t->bins[0], t->out, FFTW_ESTIMATE);
  return t->forward && t->inverse ? 0 : -1;
}

static void transforms_free(transforms *t) {
  for (int k = 0; k < FORWARD_PER_HOP; ++k) {
    fftwf_free(t->real[k]);
    fftwf_free(t->bins[k]);
  }
  fftwf_free(t->out);
  if (t->forward) fftwf_destroy_plan(t->forward);
  if (t->inverse) fftwf_destroy_plan(t->inverse);
}

/* The inputs survive (r2c out of place preserves them); the c2r input is
   overwritten by the next hop's forward transform before it is used. */
static double run_once(const transforms *t, long hops) {
  double start_s = now_s();
  for (long h = 0; h < hops; ++h) {
    for (int k = 0; k < FORWARD_PER_HOP; ++k)
      fftwf_execute_dft_r2c(t->forward, t->real[k], t->bins[k]);
    fftwf_execute_dft_c2r(t->inverse, t->bins[FORWARD_PER_HOP - 1], t->out);
  }
  return now_s() - start_s;
}

int main(int argc, char **argv) {
  if (argc < 3) {
    fprintf(stderr, "usage: bench_fft SAMPLE_RATE_HZ HOPS [RUNS]\n");
    return 2;
  }
  double sample_rate_hz = atof(argv[1]);
  long hops = atol(argv[2]);
  int runs = argc > 3 ? atoi(argv[3]) : 3;
  int n = frame_frames_at(sample_rate_hz);
  transforms t = {0};
  if (n <= 0 || hops <= 0 || runs < 1 || transforms_init(&t, n) != 0) {
    fprintf(stderr, "bench_fft: cannot set up %d-point transforms\n", n);
    transforms_free(&t);
    return 1;
  }
  printf("fft: %ld hops x (%d r2c + %d c2r) of %d points, FFTW_ESTIMATE, %d runs:", hops,
         FORWARD_PER_HOP, INVERSE_PER_HOP, n, runs);
  double best_s = 0.0;
  for (int r = 0; r < runs; ++r) {
    double wall_s = run_once(&t, hops);
    printf(" %.3f s", wall_s);
    if (r == 0 || wall_s < best_s) best_s = wall_s;
  }
  printf("\nfft: best %.3f s (%.2f us a hop, %.2f us a transform)\n", best_s,
         1e6 * best_s / (double)hops,
         1e6 * best_s / (double)hops / (FORWARD_PER_HOP + INVERSE_PER_HOP));
  printf("values: fft_best_s=%.6f\n", best_s);
  transforms_free(&t);
  return 0;
}
