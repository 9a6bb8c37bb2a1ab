/*
  Tests of the sampled-instrument rig (tests/sampled/render.c): what it
  asks fluidsynth for is what fluidsynth plays, measured with numpy.
  Skips cleanly when fluidsynth, the GM soundfont or numpy is missing.
*/
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "render.h"

#define FS_HZ 48000.0
#define GM_VIOLIN 40      /* GM program 41, zero-based */
#define GM_SQUARE_LEAD 80 /* GM program 81: steady, no vibrato */

static char dir[64];

/* Power-weighted mean frequency within +-60 cents of a guess, over
   t0..t1: immune to a sample's own vibrato and to detuned layers that
   all move together. numpy's FFT is the reference (Debian python3-numpy). */
static const char *const mean_hz_script =
    "import sys, warnings\n"
    "warnings.filterwarnings('ignore')\n"
    "import numpy as np, scipy.io.wavfile as w\n"
    "t0, t1 = float(sys.argv[1]), float(sys.argv[2])\n"
    "for arg in sys.argv[3:]:\n"
    "    path, guess = arg.rsplit(':', 1); guess = float(guess)\n"
    "    fs, x = w.read(path); seg = x[int(t0 * fs):int(t1 * fs)].astype(float)\n"
    "    n = len(seg); p = np.abs(np.fft.rfft(seg * np.hanning(n), 4 * n)) ** 2\n"
    "    f = np.fft.rfftfreq(4 * n, 1 / fs)\n"
    "    s = (f > guess * 2 ** (-60 / 1200)) & (f < guess * 2 ** (60 / 1200))\n"
    "    print('%.6f' % (np.sum(f[s] * p[s]) / np.sum(p[s])))\n";

static int setup(void **state) {
  (void)state;
  snprintf(dir, sizeof dir, "/tmp/plumb-sampled-XXXXXX");
  if (!mkdtemp(dir))
    return -1;
  char script[128];
  snprintf(script, sizeof script, "%s/mean_hz.py", dir);
  FILE *f = fopen(script, "w");
  if (!f)
    return -1;
  fputs(mean_hz_script, f);
  return fclose(f);
}

static int teardown(void **state) {
  (void)state;
  char command[128];
  snprintf(command, sizeof command, "rm -rf '%s'", dir); /* our own mkdtemp name */
  return system(command) == 0 ? 0 : -1;
}

static void skip_unless_available(void) {
  if (!sampled_available())
    skip();
  if (system("/usr/bin/python3 -c 'import numpy, scipy' 2>/dev/null") != 0) {
    fprintf(stderr, "skipping: /usr/bin/python3 with numpy and scipy not found\n");
    skip();
  }
}

static void render(int program, const sampled_note *notes, int n, char *path,
                   size_t cap) {
  assert_int_equal(sampled_render(dir, program, notes, n, FS_HZ, path, cap), 0);
}

/* Mean frequency of each file near its guess, t0..t1 seconds. */
static void mean_hz(double t0_s, double t1_s, int count, char paths[][512],
                    const double *guess_hz, double *out_hz) {
  char command[4096];
  int used = snprintf(command, sizeof command, "/usr/bin/python3 %s/mean_hz.py %g %g",
                      dir, t0_s, t1_s);
  for (int i = 0; i < count; ++i)
    used += snprintf(command + used, sizeof command - (size_t)used, " %s:%.3f",
                     paths[i], guess_hz[i]);
  assert_true(used < (int)sizeof command);
  FILE *p = popen(command, "r");
  assert_non_null(p);
  for (int i = 0; i < count; ++i)
    assert_int_equal(fscanf(p, "%lf", &out_hz[i]), 1);
  assert_int_equal(pclose(p), 0);
}

static double cents(double f_hz, double reference_hz) {
  return 1200.0 * log2(f_hz / reference_hz); /* Ellis 1885 */
}

/* Source: MIDI 1.0 pitch bend: 14 bits, centre 8192 (no bend). */
static void test_bend_values(void **state) {
  (void)state;
  assert_int_equal(sampled_bend_value(0.0), 8192);
  assert_int_equal(sampled_bend_value(-1000.0), 0);
  assert_int_equal(sampled_bend_value(1000.0), 16383);
  const double asks[4] = {0.3, 10.3, -24.7, 150.3};
  for (int i = 0; i < 4; ++i) {
    const int value = sampled_bend_value(asks[i]);
    assert_true(fabs(sampled_bend_value_cents(value) - asks[i]) <=
                0.5 * SAMPLED_BEND_STEP_CENTS + 1e-12);
  }
}

/* fluidsynth floors each voice's pitch to whole cents (measured on
   Debian 12, fluidsynth 2.3.1), so
   +0.3 and +10.3 cents on the same violin sample differ by exactly 10
   cents, at every harmonic; the sample's own vibrato cancels. */
static void test_violin_relative_detune(void **state) {
  (void)state;
  skip_unless_available();
  const double bends[2] = {0.3, 10.3};
  char paths[2][512];
  for (int i = 0; i < 2; ++i) {
    const sampled_note a4 = {69, 100, 0.0, 6.0, bends[i]};
    render(GM_VIOLIN, &a4, 1, paths[i], sizeof paths[i]);
  }
  for (int harmonic = 1; harmonic <= 3; ++harmonic) {
    const double guess[2] = {440.0 * harmonic, 442.5 * harmonic};
    double f_hz[2];
    mean_hz(1.0, 5.0, 2, paths, guess, f_hz);
    assert_float_equal(cents(f_hz[1], f_hz[0]), 10.0, 0.05);
  }
}

/* The bend range: fluidsynth plays a semitone of RPN 0 sensitivity as
   12700/128 cents (SoundFont 2.01 default modulator); render.c allows
   for it, so +100.3 against +0.3 must sound 100 cents apart, not 99. */
static void test_large_bend_is_exact(void **state) {
  (void)state;
  skip_unless_available();
  const double bends[3] = {0.3, 100.3, -50.7};
  char paths[3][512];
  double guess[3], f_hz[3];
  for (int i = 0; i < 3; ++i) {
    const sampled_note a4 = {69, 100, 0.0, 3.0, bends[i]};
    render(GM_SQUARE_LEAD, &a4, 1, paths[i], sizeof paths[i]);
    guess[i] = 441.0 * pow(2.0, bends[i] / 1200.0);
  }
  mean_hz(0.5, 2.5, 3, paths, guess, f_hz);
  assert_float_equal(cents(f_hz[1], f_hz[0]), 100.0, 0.05);
  assert_float_equal(cents(f_hz[2], f_hz[0]), -51.0, 0.05);
}

/* Each note has a channel of its own: a detuned C#5 sounding with the
   A4 must not move the A4 (compared with the A4 alone). */
static void test_overlapping_notes_keep_their_bends(void **state) {
  (void)state;
  skip_unless_available();
  const sampled_note alone[1] = {{69, 100, 0.0, 3.0, 0.3}};
  const sampled_note chord[2] = {{69, 100, 0.0, 3.0, 0.3}, {73, 100, 0.0, 3.0, 40.3}};
  char paths[2][512];
  render(GM_SQUARE_LEAD, alone, 1, paths[0], sizeof paths[0]);
  render(GM_SQUARE_LEAD, chord, 2, paths[1], sizeof paths[1]);
  const double guess[2] = {441.0, 441.0};
  double f_hz[2];
  mean_hz(0.5, 2.5, 2, paths, guess, f_hz);
  assert_float_equal(cents(f_hz[1], f_hz[0]), 0.0, 0.05);
}

/* Timing: one tick is 1 ms (480 ticks a quarter at 480000 us a quarter,
   SMF 1.0), so a note at 0.5 s starts there, give or take fluidsynth's
   64-sample block (1.3 ms at 48 kHz). The output is mono. */
static void test_onset_time_and_mono(void **state) {
  (void)state;
  skip_unless_available();
  const sampled_note note = {69, 100, 0.5, 1.0, 0.3};
  char path[512];
  render(GM_SQUARE_LEAD, &note, 1, path, sizeof path);
  size_t n = 0;
  int rate_hz = 0;
  float *x = sampled_read_mono(path, &n, &rate_hz);
  assert_non_null(x);
  assert_int_equal(rate_hz, 48000);
  size_t first = 0;
  while (first < n && x[first] == 0.0f)
    ++first;
  assert_true(first >= (size_t)(0.500 * FS_HZ) && first <= (size_t)(0.505 * FS_HZ));
  assert_true(n >= (size_t)((1.5 + SAMPLED_TAIL_S) * FS_HZ));
  free(x);
}

static void test_bad_arguments(void **state) {
  (void)state;
  const sampled_note bad = {128, 100, 0.0, 1.0, 0.0};
  const sampled_note far = {69, 100, 0.0, 1.0, 250.0};
  const sampled_note good = {69, 100, 0.0, 1.0, 0.0};
  char path[512];
  assert_int_equal(sampled_render(dir, 40, &bad, 1, FS_HZ, path, sizeof path), -1);
  assert_int_equal(sampled_render(dir, 40, &far, 1, FS_HZ, path, sizeof path), -1);
  assert_int_equal(sampled_render(dir, 40, &good, 1, 1000.0, path, sizeof path), -1);
  assert_int_equal(sampled_render(dir, 40, &good, 1, FS_HZ, path, 4), -1);
  assert_int_equal(sampled_render(dir, 128, &good, 1, FS_HZ, path, sizeof path), -1);
  assert_null(sampled_read_mono("/nonexistent-dir/x.wav", NULL, NULL));
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_bend_values),
      cmocka_unit_test(test_violin_relative_detune),
      cmocka_unit_test(test_large_bend_is_exact),
      cmocka_unit_test(test_overlapping_notes_keep_their_bends),
      cmocka_unit_test(test_onset_time_and_mono),
      cmocka_unit_test(test_bad_arguments),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
