/*
  bench_ensemble [RUNS]: a synthetic session of 24 tracks x 10 minutes
  (notes of 0.2 .. 1.2 s, about 20 000 in all) paired and measured by
  plumb_ensemble_run(); prints the best wall time of RUNS (default 3).
*/
#include "plumb_ensemble.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#define TRACKS 24
#define TAKE_S 600.0

static uint64_t state = 0x9e3779b97f4a7c15ull;
static double uniform(void) {
  state ^= state << 13;
  state ^= state >> 7;
  state ^= state << 17;
  return (double)(state >> 11) / 9007199254740992.0;
}

static double now_s(void) {
  struct timespec t;
  clock_gettime(CLOCK_MONOTONIC, &t);
  return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

int main(int argc, char **argv) {
  int runs = argc > 1 ? atoi(argv[1]) : 3;
  static plumb_ensemble_note notes[TRACKS][2000];
  plumb_ensemble_track tracks[TRACKS];
  size_t total = 0;
  for (int t = 0; t < TRACKS; ++t) {
    size_t n = 0;
    for (double at = uniform(); at < TAKE_S && n < 2000; ++n) {
      double length = 0.2 + 1.0 * uniform();
      int midi = 48 + (int)(24 * uniform());
      notes[t][n] = (plumb_ensemble_note){
          (uint32_t)n,     at,  at + length, 440.0 * pow(2.0, (midi - 69) / 12.0), NAN,
          uniform() < 0.2, NAN, NAN};
      at += length + 0.03 * uniform();
    }
    tracks[t] = (plumb_ensemble_track){"t", notes[t], n};
    total += n;
  }
  plumb_ensemble_settings settings;
  plumb_ensemble_settings_default(&settings);
  double best_s = INFINITY;
  size_t pairs = 0;
  for (int r = 0; r < (runs > 0 ? runs : 1); ++r) {
    plumb_ensemble_result *result = NULL;
    double start = now_s();
    if (plumb_ensemble_run(tracks, TRACKS, &settings, &result) != PLUMB_OK) {
      fprintf(stderr, "bench_ensemble: the ensemble step failed\n");
      return 1;
    }
    best_s = fmin(best_s, now_s() - start);
    pairs = result->pair_count;
    plumb_ensemble_free(result);
  }
  printf("ensemble: %d tracks x %.0f min, %zu notes, %zu pairs: best of %d runs %.3f s\n", TRACKS,
         TAKE_S / 60.0, total, pairs, runs, best_s);
  printf("values: best_s=%.4f notes=%zu pairs=%zu\n", best_s, total, pairs);
  return 0;
}
