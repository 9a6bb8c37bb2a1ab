/*
  The cost of completing a note, by its length: one held 110 Hz tone of 40
  partials (quiet, -20 dBFS: hearing caution) of each length is fed through
  the core in 64-frame blocks at 48 kHz, and the slowest call of the take
  is timed: the one in which the note completes (or a part of it: a note
  longer than the core keeps is closed and goes on as a new one). The note
  measures run there, on the audio thread, in time linear in the note's
  frames. Best of RUNS runs. Prints the figures and one "values:" line.

  usage: bench_longnote [RUNS]
*/
#include "plumb.h"
#include "signal.h"

#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#define FS_HZ 48000.0
#define BLOCK 64

static double now_us(void) {
  struct timespec t;
  clock_gettime(CLOCK_MONOTONIC, &t);
  return t.tv_sec * 1e6 + t.tv_nsec / 1e3;
}

/* The slowest call of the take, in microseconds. */
static double completion_us(const float *x, size_t n) {
  plumb_settings settings;
  plumb_settings_default(&settings, FS_HZ);
  plumb_status status;
  plumb *core = plumb_new(&settings, &status);
  if (!core) return -1.0;
  double worst = 0.0;
  plumb_note note;
  for (size_t i = 0; i + BLOCK <= n; i += BLOCK) {
    double start = now_us();
    plumb_process(core, x + i, BLOCK);
    double took = now_us() - start;
    if (took > worst) worst = took;
    while (plumb_pop_note(core, &note)) {
    }
  }
  plumb_free(core);
  return worst;
}

int main(int argc, char **argv) {
  int runs = argc > 1 ? atoi(argv[1]) : 3;
  if (runs < 1) runs = 1;
  const double lengths_s[] = {2.5, 5.0, 10.0, 20.0, 40.0};
  printf("longnote: a held 110 Hz tone, 64-frame blocks at 48 kHz; a block lasts %.1f us\n",
         1e6 * BLOCK / FS_HZ);
  char values[512] = "values:";
  size_t used = 7;
  for (size_t k = 0; k < sizeof lengths_s / sizeof lengths_s[0]; ++k) {
    double seconds = lengths_s[k];
    size_t lead = (size_t)(0.3 * FS_HZ), length = (size_t)(seconds * FS_HZ);
    size_t n = lead + length + (size_t)(1.0 * FS_HZ);
    float *x = calloc(n, sizeof(float));
    double *f0 = malloc(sizeof(double) * length), *gain = malloc(sizeof(double) * length);
    if (!x || !f0 || !gain) return 2;
    sig_contour_constant(f0, length, 110.0);
    sig_envelope envelope = sig_envelope_gate(0.02);
    sig_envelope_fill(&envelope, seconds - 0.02, 0.1, FS_HZ, gain, length);
    sig_timbre timbre = {40, SIG_AMPS_SAWTOOTH, NULL, 0.0, true, 3};
    sig_tone_add(&timbre, f0, gain, length, FS_HZ, x + lead);
    double best = -1.0;
    for (int r = 0; r < runs; ++r) {
      double us = completion_us(x, n);
      if (best < 0.0 || us < best) best = us;
    }
    printf("longnote: %5.1f s note: the slowest call took %8.1f us\n", seconds, best);
    used += (size_t)snprintf(values + used, sizeof values - used, " note_%.0f_s_us=%.1f",
                             seconds * 10.0, best);
    free(x);
    free(f0);
    free(gain);
  }
  printf("%s\n", values);
  return 0;
}
