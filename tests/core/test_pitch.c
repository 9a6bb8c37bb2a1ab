/*
  Pitch precision of the core, against published values and exact
  synthetic signals:
  - the Cramer-Rao bound for one sinusoid in white noise (Rife & Boorstyn
    1974), with worked values derived from its formula;
  - equal temperament from the MIDI Tuning Standard formula for the
    targets of detuned tones at three sample rates;
  - the missing fundamental (harmonics 2-10 of 220 Hz read 220 Hz);
  - sinusoidal vibrato of known rate, extent and centre.
*/
#include "harness.h"
#include "frame/harmonics.h"
#include "frame/peaks.h"
#include "frame/spectrum.h"

#include <fftw3.h>
#include "signal.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

static double cents_from_hz_error(double error_hz, double f_hz) {
  return 1200.0 / log(2.0) * error_hz / f_hz;
}

/* Rife & Boorstyn (1974): var(f) >= 12 fs^2 / ((2 pi)^2 SNR N (N^2 - 1)),
   SNR = A^2 / (2 sigma^2). */
static double crb_sigma_hz(double fs, double snr_db, double n) {
  double snr = pow(10.0, snr_db / 10.0);
  return sqrt(12.0 * fs * fs / (4.0 * M_PI * M_PI * snr * n * (n * n - 1.0)));
}

static void test_crb_formula_matches_worked_values(void **state) {
  (void)state;
  /* Derived from Rife & Boorstyn's bound: N = 2048, 48 kHz, 40 dB -> 0.0112 cent at
     440 Hz; 20 dB -> 0.112 cent; N = 1024, 40 dB -> 0.0318 cent. */
  assert_true(fabs(cents_from_hz_error(crb_sigma_hz(48000, 40, 2048), 440) - 0.0112) < 0.0002);
  assert_true(fabs(cents_from_hz_error(crb_sigma_hz(48000, 20, 2048), 440) - 0.112) < 0.002);
  assert_true(fabs(cents_from_hz_error(crb_sigma_hz(48000, 40, 1024), 440) - 0.0318) < 0.0005);
}

/* The frame estimator on N = 2048 samples: two Hann frames of 1366 samples
   682 apart (together exactly N), phase-vocoder frequency of the peak.
   The spread over 200 noisy trials must not beat the bound (that would be
   a measurement bug) and must stay within 3x of it (the project's target
   for steady tones, a project choice, no source). */
static void test_frame_spread_within_three_times_crb(void **state) {
  (void)state;
  const double fs = 48000.0, f_hz = 440.0, snr_db = 40.0;
  const int n = 2048, frame = 1366, hop = n - frame;
  spectrum_analyser spectrum;
  assert_int_equal(plumb_spectrum_init(&spectrum, frame, fs), PLUMB_OK);
  fftwf_complex *first = fftwf_alloc_complex((size_t)frame / 2 + 1);
  fftwf_complex *second = fftwf_alloc_complex((size_t)frame / 2 + 1);
  float *x = malloc(sizeof(float) * (size_t)n);
  sig_rng rng;
  sig_rng_seed(&rng, 2002);
  double sum = 0.0, sum_squares = 0.0;
  const int trials = 200;
  for (int t = 0; t < trials; ++t) {
    sig_sine_in_noise(x, (size_t)n, fs, f_hz, 0.5, 2.0 * M_PI * sig_rng_uniform(&rng),
                      snr_db, &rng);
    plumb_spectrum_transform(&spectrum, x, first);
    plumb_spectrum_transform(&spectrum, x + hop, second);
    harmonic_set harmonics;
    harmonic_fit fit;
    /* A coarse estimate 0.5 % off, as YIN might give. */
    double noise_power = plumb_spectrum_noise_floor(second, 1, frame / 2 - 1);
    assert_true(plumb_harmonics_refine(second, first, frame, hop, fs, f_hz * 1.005, noise_power,
                                 &harmonics, &fit));
    double error = fit.f0_hz - f_hz;
    sum += error;
    sum_squares += error * error;
  }
  double mean = sum / trials;
  double sigma = sqrt(sum_squares / trials - mean * mean);
  double bound = crb_sigma_hz(fs, snr_db, n);
  print_message("frame spread %.5f cent, bound %.5f cent, ratio %.2f, bias %.5f cent\n",
                cents_from_hz_error(sigma, f_hz), cents_from_hz_error(bound, f_hz),
                sigma / bound, cents_from_hz_error(mean, f_hz));
  assert_true(sigma >= bound);
  assert_true(sigma <= 3.0 * bound);
  /* The phase-vocoder estimate has no bias on a steady sinusoid (Brown &
     Puckette 1993): the mean error is within 3 standard errors. */
  assert_true(fabs(mean) <= 3.0 * sigma / sqrt(trials));
  free(x);
  fftwf_free(first);
  fftwf_free(second);
  plumb_spectrum_destroy(&spectrum);
}

/* A harmonic tone of `partials` sawtooth partials, gated, into a buffer
   with `lead_s` of silence around it. */
static float *make_tone(double fs, double f0_hz, double seconds, double lead_s,
                        int partials, size_t *n_out) {
  size_t n = (size_t)((seconds + 2.0 * lead_s) * fs);
  size_t lead = (size_t)(lead_s * fs), length = (size_t)(seconds * fs);
  float *x = calloc(n, sizeof(float));
  double *f0 = malloc(sizeof(double) * length);
  double *gain = malloc(sizeof(double) * length);
  sig_contour_constant(f0, length, f0_hz);
  sig_envelope envelope = sig_envelope_gate(0.01);
  sig_envelope_fill(&envelope, seconds - 0.01, 0.25, fs, gain, length);
  sig_timbre timbre = {partials, SIG_AMPS_SAWTOOTH, NULL, 0.0, true, 7};
  sig_tone_add(&timbre, f0, gain, length, fs, x + lead);
  free(f0);
  free(gain);
  *n_out = n;
  return x;
}

static void check_detuned_tones(double fs) {
  /* Targets from the MIDI Tuning Standard formula f = 440 2^((m-69)/12). */
  const int midi[] = {40, 52, 57, 64, 69, 76, 83};
  const double detune[] = {-37.3, -12.5, 3.3, 23.7, -4.1, 41.0, -0.7};
  for (size_t i = 0; i < sizeof midi / sizeof midi[0]; ++i) {
    double target = 440.0 * pow(2.0, (midi[i] - 69) / 12.0);
    size_t n;
    float *x = make_tone(fs, target * pow(2.0, detune[i] / 1200.0), 0.8, 0.2, 10, &n);
    harness_result result;
    assert_int_equal(harness_run_default(fs, x, n, 1024, &result), 0);
    if (result.count != 1) harness_print(&result);
    assert_int_equal(result.count, 1);
    assert_int_equal(result.notes[0].midi, midi[i]);
    double error = result.notes[0].cents - detune[i];
    if (fabs(error) > 0.1)
      print_message("fs %.0f midi %d detune %.2f read %.3f\n", fs, midi[i], detune[i],
                    result.notes[0].cents);
    assert_true(fabs(error) <= 0.1);
    free(x);
  }
}

static void test_detuned_tones_44k1(void **state) { (void)state; check_detuned_tones(44100.0); }
static void test_detuned_tones_48k(void **state) { (void)state; check_detuned_tones(48000.0); }
static void test_detuned_tones_96k(void **state) { (void)state; check_detuned_tones(96000.0); }

static void test_missing_fundamental(void **state) {
  (void)state;
  /* Exact synthetic signal: harmonics 2-10 of 220 Hz repeat exactly every
     1/220 s, so they must read 220 Hz (the missing fundamental), with no
     octave error; +-1 cent is common practice, no source. */
  const double fs = 48000.0, seconds = 1.0;
  size_t length = (size_t)(seconds * fs), lead = (size_t)(0.2 * fs);
  size_t n = length + 2 * lead;
  float *x = calloc(n, sizeof(float));
  double amps[10] = {0.0, 1, 1, 1, 1, 1, 1, 1, 1, 1};
  double *f0 = malloc(sizeof(double) * length), *gain = malloc(sizeof(double) * length);
  sig_contour_constant(f0, length, 220.0);
  sig_envelope envelope = sig_envelope_gate(0.01);
  sig_envelope_fill(&envelope, seconds - 0.01, 0.05, fs, gain, length);
  sig_timbre timbre = {10, SIG_AMPS_EXPLICIT, amps, 0.0, true, 11};
  sig_tone_add(&timbre, f0, gain, length, fs, x + lead);
  harness_result result;
  assert_int_equal(harness_run_default(fs, x, n, 512, &result), 0);
  assert_int_equal(result.count, 1);
  assert_int_equal(result.notes[0].midi, 57);
  assert_true(fabs(harness_cents(result.notes[0].f0_hz, 220.0)) <= 1.0);
  free(x);
  free(f0);
  free(gain);
}

static void check_vibrato(double fs, double centre_hz, double rate_hz, double extent_cents) {
  const double seconds = 2.0;
  size_t length = (size_t)(seconds * fs), lead = (size_t)(0.2 * fs);
  size_t n = length + 2 * lead;
  float *x = calloc(n, sizeof(float));
  double *f0 = malloc(sizeof(double) * length), *gain = malloc(sizeof(double) * length);
  sig_contour_constant(f0, length, centre_hz);
  sig_contour_vibrato(f0, length, fs, rate_hz, extent_cents, 0.3);
  sig_envelope envelope = sig_envelope_gate(0.02);
  sig_envelope_fill(&envelope, seconds - 0.02, 0.25, fs, gain, length);
  sig_timbre timbre = {8, SIG_AMPS_SAWTOOTH, NULL, 0.0, true, 5};
  sig_tone_add(&timbre, f0, gain, length, fs, x + lead);
  harness_result result;
  assert_int_equal(harness_run_default(fs, x, n, 256, &result), 0);
  if (result.count != 1) harness_print(&result);
  assert_int_equal(result.count, 1);
  const plumb_note *note = &result.notes[0];
  double centre_error = harness_cents(note->f0_hz, centre_hz);
  print_message("vibrato %.1f Hz %.0f c at %.1f Hz: read %.3f Hz %.2f c, centre %+.3f c\n",
                rate_hz, extent_cents, centre_hz, note->vibrato_hz, note->vibrato_cents,
                centre_error);
  /* Project targets (a project choice, no source): centre within 1 cent,
     rate within 0.1 Hz, extent within 2 cents of the synthesised values,
     small beside real vibrato: 5.5-8 Hz, 0.2-0.35 semitone peak to peak
     for strings and 0.6-2 for singers (Timmers & Desain 2000). */
  assert_true(fabs(centre_error) <= 1.0);
  assert_true(fabs(note->vibrato_hz - rate_hz) <= 0.1);
  assert_true(fabs(note->vibrato_cents - extent_cents) <= 2.0);
  free(x);
  free(f0);
  free(gain);
}

static void test_vibrato_singer(void **state) {
  (void)state;
  /* Singers: 5.5-8 Hz, 0.6-2 semitones peak to peak (Timmers & Desain
     2000); here 5.5 Hz and +-50 cents. */
  check_vibrato(48000.0, 392.0, 5.5, 50.0);
}

static void test_vibrato_strings(void **state) {
  (void)state;
  /* Strings: 0.2-0.35 semitone peak to peak (Timmers & Desain 2000);
     here 6.5 Hz and +-15 cents. */
  check_vibrato(48000.0, 659.26, 6.5, 15.0);
}

static void test_vibrato_wide_and_slow(void **state) {
  (void)state;
  check_vibrato(44100.0, 220.0, 4.8, 80.0);
}

static void test_vibrato_fast_narrow(void **state) {
  (void)state;
  check_vibrato(96000.0, 880.0, 7.5, 8.0);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_crb_formula_matches_worked_values),
      cmocka_unit_test(test_frame_spread_within_three_times_crb),
      cmocka_unit_test(test_detuned_tones_44k1),
      cmocka_unit_test(test_detuned_tones_48k),
      cmocka_unit_test(test_detuned_tones_96k),
      cmocka_unit_test(test_missing_fundamental),
      cmocka_unit_test(test_vibrato_singer),
      cmocka_unit_test(test_vibrato_strings),
      cmocka_unit_test(test_vibrato_wide_and_slow),
      cmocka_unit_test(test_vibrato_fast_narrow),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
