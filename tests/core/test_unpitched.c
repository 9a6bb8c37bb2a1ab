/*
  Sounds with no definite pitch are never flagged: strikes of an ideal
  circular membrane (mode ratios from the Bessel zeros j_mk / j_01) and of
  a free-free bar (roots of cos x cosh x = 1), and noise bursts. The mode
  ratios are those of tests/lib/signal.c, which test_signal.c checks against
  scipy's jn_zeros and a root finder.
*/
#include "harness.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>

typedef struct {
  int hits;
  int unpitched;
  int flagged_out_of_tune; /* sharp or flat: must stay 0 */
} strike_tally;

static void tally_hits(const float *x, size_t n, strike_tally *tally) {
  harness_result result;
  assert_int_equal(harness_run_default(48000.0, x, n, 512, &result), 0);
  for (int i = 0; i < result.count; ++i) {
    tally->hits++;
    tally->unpitched += result.notes[i].verdict == PLUMB_VERDICT_UNPITCHED;
    tally->flagged_out_of_tune += result.notes[i].verdict == PLUMB_VERDICT_SHARP ||
                                  result.notes[i].verdict == PLUMB_VERDICT_FLAT;
  }
}

static void strike_series(sig_strike_kind kind, double low_hz, double high_hz,
                          strike_tally *tally) {
  const double fs = 48000.0;
  const int strikes = 12;
  size_t n = (size_t)(strikes * 0.6 * fs + fs);
  float *x = calloc(n, sizeof(float));
  for (int k = 0; k < strikes; ++k) {
    double f1 = low_hz * pow(high_hz / low_hz, k / (double)(strikes - 1));
    sig_strike strike = {kind, f1, 0.3, 0.25, (uint64_t)(k + 1)};
    size_t at = (size_t)((0.3 + 0.6 * k) * fs);
    sig_strike_add(&strike, x + at, n - at, fs);
  }
  tally_hits(x, n, tally);
  free(x);
}

static void test_membrane_strikes_are_unpitched(void **state) {
  (void)state;
  strike_tally tally = {0, 0, 0};
  strike_series(SIG_STRIKE_MEMBRANE, 60.0, 400.0, &tally);
  print_message("membrane: %d events, %d unpitched, %d sharp/flat\n", tally.hits,
                tally.unpitched, tally.flagged_out_of_tune);
  assert_int_equal(tally.hits, 12); /* one event a strike: none merged, none split */
  assert_int_equal(tally.flagged_out_of_tune, 0);
  /* Project target: at least 90 % of membrane hits reported as unpitched.
     The ideal membrane's modes (1, 1.5933, 2.1355, ..., Bessel zeros,
     derived) fit no harmonic series, so no hit may be judged for pitch
     (none is flagged, above); the 10 % allowance is a project choice, no
     source. */
  assert_true(tally.unpitched >= 0.9 * tally.hits);
}

static void test_bar_strikes_are_never_flagged(void **state) {
  (void)state;
  strike_tally tally = {0, 0, 0};
  strike_series(SIG_STRIKE_BAR, 200.0, 1200.0, &tally);
  print_message("bar: %d events, %d unpitched, %d sharp/flat\n", tally.hits, tally.unpitched,
                tally.flagged_out_of_tune);
  assert_int_equal(tally.flagged_out_of_tune, 0);
  /* A free bar's modes, 1 : 2.7565 : 5.4039 (roots of cos x cosh x = 1,
     derived), fit no harmonic series: every hit comes out unpitched. */
  assert_int_equal(tally.hits, 12);
  assert_int_equal(tally.unpitched, tally.hits);
}

/* A free bar's second mode, 2.7565 times its lowest (the roots of cos x
   cosh x = 1, as tests/lib/test_signal.c checks), sits 1200 log2(2.7565 / 3)
   = -146.5 cents from the third harmonic of the lowest mode, and the log's
   partial_cents puts it there (derived); the third mode, 5.4039,
   sits +134.49 cents from the fifth. */
static void test_bar_modes_read_against_harmonics(void **state) {
  (void)state;
  const double fs = 48000.0;
  size_t n = (size_t)(1.5 * fs);
  float *x = calloc(n, sizeof(float));
  sig_strike strike = {SIG_STRIKE_BAR, 440.0, 0.3, 0.4, 3};
  sig_strike_add(&strike, x + (size_t)(0.3 * fs), n - (size_t)(0.3 * fs), fs);
  harness_result result;
  assert_int_equal(harness_run_default(fs, x, n, 512, &result), 0);
  free(x);
  assert_int_equal(result.count, 1);
  const plumb_note *note = &result.notes[0];
  assert_int_equal(note->verdict, PLUMB_VERDICT_UNPITCHED);
  double expected_3 = 1200.0 * log2(sig_bar_ratios[1] / 3.0);
  double expected_5 = 1200.0 * log2(sig_bar_ratios[2] / 5.0);
  print_message("bar: partial 3 %+.2f cents (expected %+.2f), 5 %+.2f (expected %+.2f)\n",
                note->partial_cents[2], expected_3, note->partial_cents[4], expected_5);
  assert_true(fabs(expected_3 + 146.5) < 0.05);
  assert_true(fabs(note->partial_cents[2] - expected_3) <= 0.2);
  assert_true(fabs(note->partial_cents[4] - expected_5) <= 0.2);
}

static void test_noise_bursts_are_unpitched(void **state) {
  (void)state;
  const double fs = 48000.0;
  size_t n = (size_t)(10 * 0.5 * fs + fs);
  float *x = calloc(n, sizeof(float));
  sig_rng rng;
  sig_rng_seed(&rng, 5);
  for (int k = 0; k < 10; ++k) {
    size_t at = (size_t)((0.3 + 0.5 * k) * fs);
    sig_noise_burst_add(x + at, n - at, fs, 0.3, 0.08, &rng);
  }
  strike_tally tally = {0, 0, 0};
  tally_hits(x, n, &tally);
  print_message("noise: %d events, %d unpitched\n", tally.hits, tally.unpitched);
  assert_int_equal(tally.hits, 10); /* one event a burst */
  assert_int_equal(tally.unpitched, tally.hits);
  free(x);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_membrane_strikes_are_unpitched),
      cmocka_unit_test(test_bar_strikes_are_never_flagged),
      cmocka_unit_test(test_bar_modes_read_against_harmonics),
      cmocka_unit_test(test_noise_bursts_are_unpitched),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
