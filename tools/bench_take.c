/*
  bench_take PATH [SECONDS]: write the benchmark's long take, a mono
  48 kHz float WAV (default 600 s), and print how many notes it holds.

  The take is a chain of 30 s random takes from the test harness (seeded
  melodies of harmonic tones with rests, legato and vibrato, white noise
  at 40 dB SNR), so it is the same signal family the tests score, and the
  same bytes on every run.
*/
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness.h"

#define SAMPLE_RATE_HZ 48000
#define PIECE_S 30.0
#define SNR_DB 40.0
#define FIRST_SEED 7001u

/* Render piece `index` into out[0..piece_frames). Returns its notes, -1 on
   failure. */
static int render_piece(int index, float *out, size_t piece_frames) {
  harness_take_spec spec = {SAMPLE_RATE_HZ, SNR_DB, PIECE_S, true, true,
                            FIRST_SEED + (uint64_t)index};
  harness_take *take = malloc(sizeof *take);
  if (!take || harness_random_take(&spec, take) != 0) {
    free(take);
    return -1;
  }
  size_t n = take->n < piece_frames ? take->n : piece_frames;
  memcpy(out, take->samples, sizeof(float) * n);
  int count = take->count;
  harness_take_free(take);
  free(take);
  return count;
}

int main(int argc, char **argv) {
  if (argc < 2 || argc > 3) {
    fprintf(stderr, "usage: bench_take PATH [SECONDS]\n");
    return 2;
  }
  double seconds = argc > 2 ? atof(argv[2]) : 600.0;
  int pieces = (int)(seconds / PIECE_S + 0.5);
  if (pieces < 1) pieces = 1;
  size_t piece_frames = (size_t)(PIECE_S * SAMPLE_RATE_HZ);
  size_t n = piece_frames * (size_t)pieces;
  float *samples = calloc(n, sizeof(float));
  if (!samples) {
    fprintf(stderr, "bench_take: no memory for %zu samples\n", n);
    return 1;
  }
  int notes = 0;
  for (int i = 0; i < pieces; ++i) {
    int count = render_piece(i, samples + piece_frames * (size_t)i, piece_frames);
    if (count < 0) {
      fprintf(stderr, "bench_take: cannot render piece %d\n", i);
      free(samples);
      return 1;
    }
    notes += count;
  }
  int status = sig_write_wav(argv[1], samples, n, 1, SAMPLE_RATE_HZ);
  free(samples);
  if (status != 0) return 1;
  printf("take: %s, %.1f s mono %d Hz float WAV, %d notes (%d pieces of %.0f s, "
         "SNR %.0f dB, vibrato and legato)\n",
         argv[1], (double)n / SAMPLE_RATE_HZ, SAMPLE_RATE_HZ, notes, pieces, PIECE_S,
         SNR_DB);
  printf("values: take_notes=%d take_s=%.3f\n", notes, (double)n / SAMPLE_RATE_HZ);
  return 0;
}
