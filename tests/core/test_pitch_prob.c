/*
  Pitch candidates with probabilities (frame/pitch_prob.c), after pYIN
  (Mauch & Dixon 2014, "pYIN: a fundamental frequency estimator using
  probabilistic threshold distributions", ICASSP): the YIN threshold is
  drawn from a Beta(2, 18) distribution over 0.01 ... 1.00, and each
  threshold's weight goes to the first trough (in order of lag) below it.
*/
#include "frame/pitch_prob.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>

/* scipy.stats.beta.pdf(x, 2, 18) at x = 0.01, 0.02 ... 0.10 (SciPy 1.10.1,
   Debian 12's python3-scipy), printed with %.17g. */
static const double scipy_beta_pdf[10] = {
    2.8828657213730295, 4.8517608806756227, 6.1131752099913417, 6.8343475290598565,
    7.1498577322479333, 7.1672221810408079, 6.9716290595872836, 6.6299332799453898,
    6.1940154593056462, 5.703596141285967};

static void test_weights_follow_the_beta_density_and_sum_to_one(void **state) {
  (void)state;
  double w[PLUMB_THRESHOLDS];
  plumb_pitch_prob_thresholds(w);
  double total = 0.0;
  for (int i = 0; i < PLUMB_THRESHOLDS; ++i) {
    assert_true(w[i] >= 0.0);
    total += w[i];
  }
  /* A probability distribution over the thresholds. */
  assert_true(fabs(total - 1.0) < 1e-12);
  /* Proportional to the Beta(2, 18) density: the ratios of the weights
     are the ratios of SciPy's density. */
  for (int i = 1; i < 10; ++i)
    assert_true(fabs(w[i] / w[0] - scipy_beta_pdf[i] / scipy_beta_pdf[0]) < 1e-12);
  /* The density's mode is (a - 1) / (a + b - 2) = 1/18 = 0.0556 (the
     Beta distribution's mode, closed form): the heaviest threshold is
     0.06, the grid point nearest it. */
  int heaviest = 0;
  for (int i = 1; i < PLUMB_THRESHOLDS; ++i)
    if (w[i] > w[heaviest]) heaviest = i;
  assert_int_equal(heaviest, 5);
}

static void test_cumulative_weights_track_the_beta_cdf(void **state) {
  (void)state;
  double w[PLUMB_THRESHOLDS];
  plumb_pitch_prob_thresholds(w);
  /* The Beta(2, b) CDF in closed form: I_x(2, b) = 1 - (1 - x)^b (1 + b x)
     (integrating x (1 - x)^(b-1) b (b + 1) by parts). The weights sample
     the density on a 0.01 grid (a rectangle rule), whose cumulative error
     is at most the step times the density's peak, 0.01 x 7.19 = 0.072
     (the rule's error bound on a unimodal integrand). */
  double cumulative = 0.0, mean = 0.0;
  for (int i = 0; i < PLUMB_THRESHOLDS; ++i) {
    double x = (i + 1) / (double)PLUMB_THRESHOLDS;
    cumulative += w[i];
    mean += x * w[i];
    double cdf = 1.0 - pow(1.0 - x, 18.0) * (1.0 + 18.0 * x);
    assert_true(fabs(cumulative - cdf) < 0.072);
  }
  /* The mean of Beta(a, b) is a / (a + b) = 0.1; Beta(2, 17) would give
     0.105, Beta(2, 19) 0.095. The rectangle rule on this smooth density
     moves it by well under 0.001. */
  assert_true(fabs(mean - 0.1) < 0.001);
}

/* The total weight of the thresholds (t + 1) / 100 for t in [from, to). */
static double weight_between(const double *w, int from, int to) {
  double sum = 0.0;
  for (int t = from; t < to; ++t) sum += w[t];
  return sum;
}

static void test_two_troughs_share_the_thresholds(void **state) {
  (void)state;
  double w[PLUMB_THRESHOLDS];
  plumb_pitch_prob_thresholds(w);
  /* Troughs in order of lag: 0.305 at lag 100, 0.105 at lag 200, at
     48 kHz. Thresholds 0.31 ... 1.00 (t = 30 ... 99) meet the first one
     first; 0.11 ... 0.30 (t = 10 ... 29) only the second; 0.01 ... 0.10
     (t = 0 ... 9) none, and go to the global minimum (the second) with
     pYIN's prior of 0.01 (from memory). */
  const yin_trough troughs[2] = {{100.0, 0.305}, {200.0, 0.105}};
  candidate_set out;
  plumb_pitch_prob_candidates(w, troughs, 2, 48000.0, &out);
  double p_first = weight_between(w, 30, 100);
  double p_second = weight_between(w, 10, 30) + 0.01 * weight_between(w, 0, 10);
  assert_int_equal(out.count, 2);
  /* Candidates come most probable first; the frequency is the rate over
     the lag (YIN, de Cheveigne & Kawahara 2002). */
  const int first_is_second = p_second > p_first;
  const pitch_candidate *c_first = &out.candidate[first_is_second ? 1 : 0];
  const pitch_candidate *c_second = &out.candidate[first_is_second ? 0 : 1];
  assert_true(fabs(c_first->frequency_hz - 480.0) < 1e-12);
  assert_true(fabs(c_second->frequency_hz - 240.0) < 1e-12);
  assert_true(fabs(c_first->probability - p_first) < 1e-12);
  assert_true(fabs(c_second->probability - p_second) < 1e-12);
  assert_true(out.candidate[0].probability >= out.candidate[1].probability);
  assert_true(fabs(out.voiced_probability - (p_first + p_second)) < 1e-12);
  /* The Beta(2, 18) CDF at 0.1 is 0.58 (closed form above), so most of the
     weight is on thresholds below 0.3: the deeper trough wins. */
  assert_true(first_is_second);
}

static void test_a_deep_trough_takes_everything(void **state) {
  (void)state;
  double w[PLUMB_THRESHOLDS];
  plumb_pitch_prob_thresholds(w);
  /* One trough below every threshold: all the weight, probability 1. */
  const yin_trough deep = {96.0, 0.001};
  candidate_set out;
  plumb_pitch_prob_candidates(w, &deep, 1, 48000.0, &out);
  assert_int_equal(out.count, 1);
  assert_true(fabs(out.candidate[0].frequency_hz - 500.0) < 1e-12);
  assert_true(fabs(out.candidate[0].probability - 1.0) < 1e-12);
  assert_true(fabs(out.voiced_probability - 1.0) < 1e-12);
}

static void test_a_shallow_trough_gets_only_the_prior(void **state) {
  (void)state;
  double w[PLUMB_THRESHOLDS];
  plumb_pitch_prob_thresholds(w);
  /* A trough above every threshold (an aperiodic frame): each threshold
     falls back on it with pYIN's prior, 0.01 of its weight (from memory),
     so the frame is 1 % voiced. */
  const yin_trough shallow = {120.0, 1.5};
  candidate_set out;
  plumb_pitch_prob_candidates(w, &shallow, 1, 44100.0, &out);
  assert_int_equal(out.count, 1);
  assert_true(fabs(out.candidate[0].frequency_hz - 367.5) < 1e-12);
  assert_true(fabs(out.voiced_probability - 0.01) < 1e-12);
}

static void test_no_trough_no_candidate(void **state) {
  (void)state;
  double w[PLUMB_THRESHOLDS];
  plumb_pitch_prob_thresholds(w);
  candidate_set out;
  out.count = 5;
  plumb_pitch_prob_candidates(w, NULL, 0, 48000.0, &out);
  assert_int_equal(out.count, 0);
  assert_true(out.voiced_probability == 0.0);
}

static void test_at_most_the_candidate_limit(void **state) {
  (void)state;
  double w[PLUMB_THRESHOLDS];
  plumb_pitch_prob_thresholds(w);
  /* Twelve troughs, each deeper than the one before, every one first
     below some threshold: only the PLUMB_CANDIDATES_MAX most probable are
     kept, most probable first, and the kept ones' sum is the voiced
     probability. */
  yin_trough troughs[12];
  for (int i = 0; i < 12; ++i) {
    troughs[i].lag_samples = 50.0 + 10.0 * i;
    troughs[i].value = 0.9 - 0.07 * i; /* 0.90, 0.83 ... 0.13 */
  }
  candidate_set out;
  plumb_pitch_prob_candidates(w, troughs, 12, 48000.0, &out);
  assert_int_equal(out.count, PLUMB_CANDIDATES_MAX);
  double sum = 0.0;
  for (int i = 0; i < out.count; ++i) {
    sum += out.candidate[i].probability;
    if (i) assert_true(out.candidate[i].probability <= out.candidate[i - 1].probability);
  }
  assert_true(fabs(out.voiced_probability - sum) < 1e-12);
  /* The deepest trough (lag 160) gathers the thresholds 0.14 ... 0.20 and
     the prior's share of 0.01 ... 0.13; it must be among them. */
  int found = 0;
  for (int i = 0; i < out.count; ++i)
    if (fabs(out.candidate[i].frequency_hz - 300.0) < 1e-9) found = 1;
  assert_true(found);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_weights_follow_the_beta_density_and_sum_to_one),
      cmocka_unit_test(test_cumulative_weights_track_the_beta_cdf),
      cmocka_unit_test(test_two_troughs_share_the_thresholds),
      cmocka_unit_test(test_a_deep_trough_takes_everything),
      cmocka_unit_test(test_a_shallow_trough_gets_only_the_prior),
      cmocka_unit_test(test_no_trough_no_candidate),
      cmocka_unit_test(test_at_most_the_candidate_limit),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
