/*
  Definite pitch or not (measures/definite_pitch.c) on frames whose
  spectral peaks are placed at known mode frequencies: a harmonic tone,
  a stiff string f_n = n f0 sqrt(1 + B n^2) (Fletcher 1964), a free bar
  (Euler-Bernoulli beam: modes in the ratio of the squared roots of
  cos x cosh x = 1, 1 : 2.756539 : 5.403918 : 8.932950, computed with
  scipy.optimize.brentq) and an ideal membrane (modes in the ratio of the
  Bessel zeros j_01 : j_11 : j_21 : j_02 : j_31 : j_12, 1 : 1.593341 :
  2.135549 : 2.295417 : 2.653066 : 2.917295, from scipy.special.jn_zeros).
  Bars and membranes have no definite pitch; strings and pipes do
  (Fletcher & Rossing, "The Physics of Musical Instruments", 1998).
*/
#include "measures/definite_pitch.h"
#include "measure_fixture.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <string.h>

#define FRAMES 20
#define F0_HZ  220.0

static frame_record frames[FRAMES];
static double f0_cache[FRAMES];

/* Every frame: voiced at F0_HZ (through a cached model), level -12 dBFS,
   peaks at F0_HZ x ratio[k] with amplitude amplitude[k] (strongest first,
   as the frame analysis lists them). */
static partial_model frames_with_modes(const double *ratio, const double *amplitude, int modes) {
  memset(frames, 0, sizeof frames);
  for (int i = 0; i < FRAMES; ++i) {
    frames[i].voiced = true;
    frames[i].f0_hz = F0_HZ;
    frames[i].level_dbfs = -12.0;
    frames[i].peak_count = modes < PLUMB_FRAME_PEAKS ? modes : PLUMB_FRAME_PEAKS;
    for (int k = 0; k < frames[i].peak_count; ++k) {
      frames[i].peaks[k].frequency_hz = (float)(F0_HZ * ratio[k]);
      frames[i].peaks[k].power = (float)(amplitude[k] * amplitude[k]);
    }
    f0_cache[i] = F0_HZ;
  }
  partial_model model;
  memset(&model, 0, sizeof model);
  model.b = NAN;
  model.cached_frames = frames;
  model.cached_f0_hz = f0_cache;
  model.cached_count = FRAMES;
  return model;
}

static void test_a_harmonic_tone_has_a_pitch(void **state) {
  (void)state;
  /* Eight harmonics with a sawtooth's 1/n amplitudes. */
  double ratio[8], amplitude[8];
  for (int n = 1; n <= 8; ++n) {
    ratio[n - 1] = n;
    amplitude[n - 1] = 1.0 / n;
  }
  measure_context c = context_48k();
  partial_model model = frames_with_modes(ratio, amplitude, 8);
  assert_false(plumb_definite_pitch_fits_no_series(&c, frames, FRAMES, F0_HZ, &model));
}

static void test_a_free_bar_has_none(void **state) {
  (void)state;
  const double ratio[4] = {1.0, 2.756539, 5.403918, 8.932950};
  const double amplitude[4] = {1.0, 0.8, 0.6, 0.4};
  measure_context c = context_48k();
  partial_model model = frames_with_modes(ratio, amplitude, 4);
  assert_true(plumb_definite_pitch_fits_no_series(&c, frames, FRAMES, F0_HZ, &model));
}

static void test_a_membrane_has_none(void **state) {
  (void)state;
  const double ratio[6] = {1.0, 1.593341, 2.135549, 2.295417, 2.653066, 2.917295};
  const double amplitude[6] = {1.0, 0.9, 0.7, 0.6, 0.5, 0.4};
  measure_context c = context_48k();
  partial_model model = frames_with_modes(ratio, amplitude, 6);
  assert_true(plumb_definite_pitch_fits_no_series(&c, frames, FRAMES, F0_HZ, &model));
}

static void test_a_stiff_string_has_one_under_its_model(void **state) {
  (void)state;
  /* B = 0.002 (a stiff wire): partial 5 is already 42 cents sharp of 5 f0
     and partial 8 is 104 cents sharp. Under the fitted stiff model the
     partials are on their series: pitched. Read as a harmonic series
     they stray: the model is what tells them apart. */
  const double b = 0.002;
  double ratio[8], amplitude[8];
  for (int n = 1; n <= 8; ++n) {
    ratio[n - 1] = n * sqrt(1.0 + b * n * n);
    amplitude[n - 1] = 1.0 / n;
  }
  measure_context c = context_48k();
  partial_model model = frames_with_modes(ratio, amplitude, 8);
  model.stiff = true;
  model.b = b;
  assert_false(plumb_definite_pitch_fits_no_series(&c, frames, FRAMES, F0_HZ, &model));
  model.stiff = false;
  assert_true(plumb_definite_pitch_fits_no_series(&c, frames, FRAMES, F0_HZ, &model));
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_a_harmonic_tone_has_a_pitch),
      cmocka_unit_test(test_a_free_bar_has_none),
      cmocka_unit_test(test_a_membrane_has_none),
      cmocka_unit_test(test_a_stiff_string_has_one_under_its_model),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
