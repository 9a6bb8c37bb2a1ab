/*
  bench_fft SAMPLE_RATE_HZ HOPS [RUNS]: time exactly the FFTW transforms
  that HOPS hops of the core need, and nothing else.

  Per hop the core transforms one real frame of plumb_frame_frames()
  samples forward (core/frame/spectrum.c: the Hann-windowed spectrum) and, at
  half the sample rate (core/frame/halfband.c), two frames of half that length
  forward and one back (core/frame/yin.c: the segment and the window part
  forward, their cross-spectrum back). The plans are made the way core/frame/fft.c makes them
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

#define FORWARD_MAX 2

/* One size of transform: `forward` r2c and `inverse` c2r per hop. */
typedef struct {
  int n, forward_count, inverse_count;
  float *real[FORWARD_MAX];
  fftwf_complex *bins[FORWARD_MAX];
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

static int transforms_init(transforms *t, int n, int forward_count, int inverse_count) {
  t->n = n;
  t->forward_count = forward_count;
  t->inverse_count = inverse_count;
  sig_rng rng;
  sig_rng_seed(&rng, 12345);
  for (int k = 0; k < forward_count; ++k) {
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
  for (int k = 0; k < FORWARD_MAX; ++k) {
    fftwf_free(t->real[k]);
    fftwf_free(t->bins[k]);
  }
  fftwf_free(t->out);
  if (t->forward) fftwf_destroy_plan(t->forward);
  if (t->inverse) fftwf_destroy_plan(t->inverse);
}

/* The inputs survive (r2c out of place preserves them); the c2r input is
   overwritten by the next hop's forward transform before it is used. */
static void run_hop(const transforms *t) {
  for (int k = 0; k < t->forward_count; ++k)
    fftwf_execute_dft_r2c(t->forward, t->real[k], t->bins[k]);
  for (int k = 0; k < t->inverse_count; ++k)
    fftwf_execute_dft_c2r(t->inverse, t->bins[t->forward_count - 1], t->out);
}

static double run_once(const transforms *frame, const transforms *pitch, long hops) {
  double start_s = now_s();
  for (long h = 0; h < hops; ++h) {
    run_hop(frame);
    run_hop(pitch);
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
  transforms frame = {0}, pitch = {0};
  if (n <= 0 || hops <= 0 || runs < 1 || transforms_init(&frame, n, 1, 0) != 0 ||
      transforms_init(&pitch, n / 2, 2, 1) != 0) {
    fprintf(stderr, "bench_fft: cannot set up %d-point transforms\n", n);
    transforms_free(&frame);
    transforms_free(&pitch);
    return 1;
  }
  printf("fft: %ld hops x (1 r2c of %d + 2 r2c and 1 c2r of %d points), FFTW_ESTIMATE, "
         "%d runs:", hops, n, n / 2, runs);
  double best_s = 0.0;
  for (int r = 0; r < runs; ++r) {
    double wall_s = run_once(&frame, &pitch, hops);
    printf(" %.3f s", wall_s);
    if (r == 0 || wall_s < best_s) best_s = wall_s;
  }
  printf("\nfft: best %.3f s (%.2f us a hop)\n", best_s, 1e6 * best_s / (double)hops);
  printf("values: fft_best_s=%.6f\n", best_s);
  transforms_free(&frame);
  transforms_free(&pitch);
  return 0;
}
