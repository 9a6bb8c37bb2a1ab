/*
  Timbre balance of exact synthetic tones (docs/methods.md, section 8):
  - tristimulus of the 20-harmonic 1/n sawtooth: T1 = 1/H20 = 0.278, T2 =
    (1/2 + 1/3 + 1/4)/H20 = 0.301, T3 = 0.421 (Pollard & Jansson 1982's
    definition on partial amplitudes; H20 the 20th harmonic number);
  - its amplitude-weighted centroid at 220 Hz: 220 * 20 / H20 = 1222.99 Hz;
  - its odd/even balance, derived from the definition: 10 log10(sum over
    odd n >= 3 of 1/n^2 / sum over even n of 1/n^2);
  - odd-only tones at least 20 dB above all-harmonic ones;
  - the harmonic-to-noise ratio of a periodic tone in white noise at
    99 : 1 and 90 : 10 energy, 10 log10(99) = 19.96 dB and 10 log10(9) =
    9.54 dB, within 0.5 dB; and the same within 0.5 dB of Boersma's
    (1993) autocorrelation form, computed here on the same signal.
*/
#include "harness.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>

#define FS_HZ 48000.0
#define LEAD_S 0.3
#define TONE_S 1.5

typedef struct {
  float *x;
  size_t n, lead, length;
} take;

/* A steady tone of `timbre` at f0_hz, -20 dBFS-ish (quiet: hearing
   caution), with 10 ms raised-cosine ends, and white noise at snr_db over
   the tone (none when snr_db is infinite). */
static take make_tone(const sig_timbre *timbre, double f0_hz, double snr_db, uint64_t seed) {
  take t;
  t.lead = (size_t)(LEAD_S * FS_HZ);
  t.length = (size_t)(TONE_S * FS_HZ);
  t.n = t.length + 2 * t.lead;
  t.x = calloc(t.n, sizeof(float));
  double *f0 = malloc(sizeof(double) * t.length), *gain = malloc(sizeof(double) * t.length);
  sig_contour_constant(f0, t.length, f0_hz);
  sig_envelope envelope = sig_envelope_gate(0.01);
  sig_envelope_fill(&envelope, TONE_S - 0.01, 0.1, FS_HZ, gain, t.length);
  sig_tone_add(timbre, f0, gain, t.length, FS_HZ, t.x + t.lead);
  if (isfinite(snr_db)) {
    sig_rng rng;
    sig_rng_seed(&rng, seed);
    sig_add_noise_snr(t.x + t.lead, t.length, snr_db, &rng);
  }
  free(f0);
  free(gain);
  return t;
}

static plumb_note read_one(const take *t) {
  static harness_result result;
  assert_int_equal(harness_run_default(FS_HZ, t->x, t->n, 1024, &result), 0);
  if (result.count != 1) harness_print(&result);
  assert_int_equal(result.count, 1);
  return result.notes[0];
}

static double harmonic_number(int n) {
  double h = 0.0;
  for (int k = 1; k <= n; ++k) h += 1.0 / k;
  return h;
}

static void test_sawtooth_tristimulus_and_centroid(void **state) {
  (void)state;
  sig_timbre saw = {20, SIG_AMPS_SAWTOOTH, NULL, 0.0, true, 3};
  take t = make_tone(&saw, 220.0, INFINITY, 0);
  plumb_note note = read_one(&t);
  free(t.x);
  double h20 = harmonic_number(20);
  print_message("tristimulus %.4f %.4f %.4f, centroid %.2f Hz\n", note.tristimulus[0],
                note.tristimulus[1], note.tristimulus[2], note.centroid_hz);
  /* Pollard & Jansson (1982) tristimulus of the 20-harmonic 1/n sawtooth,
     derived: 0.278 / 0.301 / 0.421, to their three decimals. */
  assert_true(fabs(note.tristimulus[0] - 0.278) <= 0.0015);
  assert_true(fabs(note.tristimulus[1] - 0.301) <= 0.0015);
  assert_true(fabs(note.tristimulus[2] - 0.421) <= 0.0015);
  assert_true(fabs(note.tristimulus[0] - 1.0 / h20) <= 0.0015);
  /* 1222.99 Hz (derived, sum f a / sum a) within 0.5 % (a project choice,
     no source). */
  assert_true(fabs(note.centroid_hz - 220.0 * 20.0 / h20) <= 0.005 * 1222.99);
  assert_true(fabs(note.centroid_hz - 1222.99) <= 0.005 * 1222.99);
}

static void test_sawtooth_odd_even_matches_definition(void **state) {
  (void)state;
  double odd = 0.0, even = 0.0;
  for (int n = 2; n <= 20; ++n) {
    if (n % 2) odd += 1.0 / (n * n);
    else even += 1.0 / (n * n);
  }
  double derived_db = 10.0 * log10(odd / even); /* -2.69 dB */
  const double pitches_hz[] = {110.0, 220.0, 440.0};
  for (int i = 0; i < 3; ++i) {
    sig_timbre saw = {20, SIG_AMPS_SAWTOOTH, NULL, 0.0, true, 5 + (uint64_t)i};
    take t = make_tone(&saw, pitches_hz[i], 60.0, 11 + (uint64_t)i);
    plumb_note note = read_one(&t);
    free(t.x);
    print_message("%.0f Hz: odd/even %.3f dB (derived %.3f)\n", pitches_hz[i],
                  note.odd_even_db, derived_db);
    assert_true(fabs(note.odd_even_db - derived_db) <= 0.1);
  }
}

static void test_odd_only_tones_stand_20_db_above(void **state) {
  (void)state;
  /* Odd-only harmonic tones at least 20 dB above all-harmonic ones, here at
     40 dB SNR (a project choice, no source: an odd-only tone has no even
     energy at all, so only the noise limits its reading). */
  const double pitches_hz[] = {98.0, 196.0, 392.0, 784.0};
  for (int i = 0; i < 4; ++i) {
    sig_timbre odd = {19, SIG_AMPS_ODD, NULL, 0.0, true, 21 + (uint64_t)i};
    sig_timbre all = {19, SIG_AMPS_SAWTOOTH, NULL, 0.0, true, 31 + (uint64_t)i};
    take t_odd = make_tone(&odd, pitches_hz[i], 40.0, 41 + (uint64_t)i);
    take t_all = make_tone(&all, pitches_hz[i], 40.0, 51 + (uint64_t)i);
    plumb_note n_odd = read_one(&t_odd), n_all = read_one(&t_all);
    free(t_odd.x);
    free(t_all.x);
    print_message("%.0f Hz: odd-only %.2f dB, all %.2f dB\n", pitches_hz[i], n_odd.odd_even_db,
                  n_all.odd_even_db);
    assert_true(n_odd.odd_even_db - n_all.odd_even_db >= 20.0);
  }
}

/*
  Boersma (1993), "Accurate short-term analysis of the fundamental
  frequency and the harmonics-to-noise ratio of a sampled sound": the
  autocorrelation of a Hann-windowed segment divided by the window's own
  autocorrelation, normalised at lag 0, read at the period; HNR = 10
  log10(r / (1 - r)). The period here is a whole number of samples, so no
  interpolation is needed. Segments of 6 periods (Boersma's choice for
  HNR), r averaged over segments across the tone's middle.
*/
static double boersma_hnr_db(const float *x, size_t n, int period) {
  int length = 6 * period;
  double *w = malloc(sizeof(double) * (size_t)length);
  double *a = malloc(sizeof(double) * (size_t)length);
  for (int i = 0; i < length; ++i) w[i] = 0.5 - 0.5 * cos(2.0 * M_PI * (i + 0.5) / length);
  double r_w0 = 0.0, r_wt = 0.0;
  for (int i = 0; i < length; ++i) r_w0 += w[i] * w[i];
  for (int i = 0; i + period < length; ++i) r_wt += w[i] * w[i + period];
  double r_sum = 0.0;
  int segments = 0;
  for (size_t start = 0; start + (size_t)length <= n; start += (size_t)length / 2) {
    double mean = 0.0;
    for (int i = 0; i < length; ++i) mean += x[start + (size_t)i];
    mean /= length;
    for (int i = 0; i < length; ++i) a[i] = (x[start + (size_t)i] - mean) * w[i];
    double r0 = 0.0, rt = 0.0;
    for (int i = 0; i < length; ++i) r0 += a[i] * a[i];
    for (int i = 0; i + period < length; ++i) rt += a[i] * a[i + period];
    r_sum += (rt / r_wt) / (r0 / r_w0);
    segments++;
  }
  free(w);
  free(a);
  double r = r_sum / segments;
  return 10.0 * log10(r / (1.0 - r));
}

static void check_hnr(double periodic_share, double expected_db) {
  const int period = 218; /* samples: 220.18 Hz at 48 kHz */
  const double f0_hz = FS_HZ / period;
  double snr_db = 10.0 * log10(periodic_share / (1.0 - periodic_share));
  sig_timbre tone = {10, SIG_AMPS_SAWTOOTH, NULL, 0.0, true, 61};
  take t = make_tone(&tone, f0_hz, snr_db, 71);
  plumb_note note = read_one(&t);
  /* Boersma's form over the tone's middle second. */
  size_t middle = t.lead + (size_t)(0.25 * FS_HZ);
  double boersma_db = boersma_hnr_db(t.x + middle, (size_t)FS_HZ, period);
  free(t.x);
  print_message("%.0f : %.0f: plumb %.2f dB, Boersma %.2f dB, expected %.2f dB\n",
                100.0 * periodic_share, 100.0 * (1.0 - periodic_share), note.hnr_db,
                boersma_db, expected_db);
  assert_true(fabs(note.hnr_db - expected_db) <= 0.5);
  assert_true(fabs(boersma_db - expected_db) <= 0.5); /* the reference holds */
  assert_true(fabs(note.hnr_db - boersma_db) <= 0.5);
}

/* A tone with no noise at all, with partials up to the top of the band
   (more than the 40 followed), is all harmonic: its ratio must read well
   above the 99 : 1 case. There is no noise, so the reading is the spectral
   form's own floor: the Hann window's leakage between partials, highest
   where they are closest (about 29 dB at 110 Hz, 9 bins apart; common
   practice, no source, for the 25 dB asked here). */
static void test_hnr_of_a_noiseless_bright_tone(void **state) {
  (void)state;
  const double pitches_hz[] = {110.0, 440.0, 880.0};
  for (int i = 0; i < 3; ++i) {
    sig_timbre saw = {200, SIG_AMPS_SAWTOOTH, NULL, 0.0, true, 81 + (uint64_t)i};
    take t = make_tone(&saw, pitches_hz[i], INFINITY, 0);
    plumb_note note = read_one(&t);
    free(t.x);
    print_message("%.0f Hz, partials to 0.45 fs, no noise: HNR %.2f dB, %d partials\n",
                  pitches_hz[i], note.hnr_db, note.partials);
    assert_true(note.hnr_db >= 25.0);
  }
}

/* With three partials there is nothing from the fifth up: T3 is 0 (the
   leakage's stray peaks aside), never negative (Pollard & Jansson's
   definition: a sum of amplitudes). */
static void test_tristimulus_of_three_partials(void **state) {
  (void)state;
  sig_timbre three = {3, SIG_AMPS_SAWTOOTH, NULL, 0.0, true, 91};
  take t = make_tone(&three, 330.0, INFINITY, 0);
  plumb_note note = read_one(&t);
  free(t.x);
  double sum = 1.0 + 1.0 / 2.0 + 1.0 / 3.0; /* a_n = 1/n */
  print_message("three partials: T %.4f %.4f %.4f\n", note.tristimulus[0], note.tristimulus[1],
                note.tristimulus[2]);
  assert_true(fabs(note.tristimulus[0] - 1.0 / sum) <= 0.0015);
  assert_true(fabs(note.tristimulus[1] - (1.0 / 2.0 + 1.0 / 3.0) / sum) <= 0.0015);
  assert_true(note.tristimulus[2] >= 0.0 && !signbit(note.tristimulus[2]));
  assert_true(note.tristimulus[2] <= 0.001);
}

static void test_hnr_99_to_1(void **state) {
  (void)state;
  check_hnr(0.99, 20.0); /* Boersma (1993): 20 dB (derived), +- 0.5 dB */
}

static void test_hnr_90_to_10(void **state) {
  (void)state;
  check_hnr(0.90, 9.5); /* Boersma (1993): 9.5 dB (derived), +- 0.5 dB */
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_sawtooth_tristimulus_and_centroid),
      cmocka_unit_test(test_sawtooth_odd_even_matches_definition),
      cmocka_unit_test(test_odd_only_tones_stand_20_db_above),
      cmocka_unit_test(test_hnr_of_a_noiseless_bright_tone),
      cmocka_unit_test(test_tristimulus_of_three_partials),
      cmocka_unit_test(test_hnr_99_to_1),
      cmocka_unit_test(test_hnr_90_to_10),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
