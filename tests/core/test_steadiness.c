/*
  A note's steadiness (measures/steadiness.c) on exact synthetic pitch
  tracks: drift, vibrato rate and extent, the robust centre, the frame
  grid's gap bridging and the spread. The frame pitch of an analysis
  that averages the instantaneous frequency under the squared window
  (Cohen 1995, "Time-Frequency Analysis") sees a vibrato of rate f
  reduced by |W2(f)| / W2(0), W2 the transform of the squared window,
  and by the hop's averaging, sin(pi f hop) / (pi f hop); the tracks here
  are given that reduction, computed by direct summation over the
  window's samples, and the module must undo it.
*/
#include "measures/steadiness.h"
#include "measure_fixture.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <string.h>

#define MAX_N   400

/* |sum w^2(n) e^(-j 2 pi f t_n)| / sum w^2(n) over the periodic Hann
   window, t_n from its centre, times the hop's sinc. */
static double analysis_attenuation(double rate_hz) {
  double re = 0.0, im = 0.0, total = 0.0;
  for (int i = 0; i < FFT; ++i) {
    double w = 0.5 - 0.5 * cos(2.0 * M_PI * i / FFT);
    double t = (i - FFT / 2) / RATE_HZ;
    re += w * w * cos(2.0 * M_PI * rate_hz * t);
    im += w * w * sin(2.0 * M_PI * rate_hz * t);
    total += w * w;
  }
  double x = M_PI * rate_hz * HOP / RATE_HZ;
  return hypot(re, im) / total * fabs(sin(x) / x);
}

/* centre + drift t + extent (as analysed) sin(2 pi rate t + 0.7), 2 s. */
static int vibrato_track(double centre, double drift, double rate_hz, double extent_cents,
                         double *cents) {
  int n = (int)(2.0 / (HOP / RATE_HZ));
  double a = rate_hz > 0.0 ? analysis_attenuation(rate_hz) : 0.0;
  for (int i = 0; i < n; ++i) {
    double t = i * HOP / RATE_HZ;
    cents[i] = centre + drift * t + a * extent_cents * sin(2.0 * M_PI * rate_hz * t + 0.7);
  }
  return n;
}

static void test_vibrato_rate_extent_and_drift(void **state) {
  (void)state;
  /* Rates across the singers' and string players' range (4 to 9 Hz) and
     extents from 10 to 60 cents (Seashore 1938; Prame 1994, from memory),
     with and without a drift of 12 cents a second. Allowed: 0.6 % in
     rate, 1 % in extent, 0.05 cent/s in drift (the grid has 20 to 47
     frames a cycle; crossings are interpolated linearly and extremes by
     parabolas; measured at most 0.39 %, 0.59 % and 0.022 cent/s; common
     practice, no source). */
  measure_context c = context_48k();
  static double cents[MAX_N], scratch[2 * MAX_N];
  const double rates[] = {4.0, 5.5, 7.0, 9.0}, extents[] = {10.0, 30.0, 60.0};
  for (int r = 0; r < 4; ++r)
    for (int e = 0; e < 3; ++e)
      for (int d = 0; d < 2; ++d) {
        double drift = d ? 12.0 : 0.0;
        int n = vibrato_track(3.0, drift, rates[r], extents[e], cents);
        vibrato_reading v;
        double measured_drift = NAN;
        plumb_steadiness_drift_and_vibrato(&c, cents, n, scratch, &v, &measured_drift);
        assert_true(v.present);
        assert_true(fabs(v.rate_hz / rates[r] - 1.0) < 0.006);
        assert_true(fabs(v.extent_cents / extents[e] - 1.0) < 0.01);
        assert_true(fabs(measured_drift - drift) < 0.05);
        /* Without drift the mean over whole cycles is the centre. */
        if (!d) assert_true(fabs(v.centre_cents - 3.0) < 0.01);
      }
}

static void test_a_straight_line_is_drift_not_vibrato(void **state) {
  (void)state;
  /* A pitch that only rises, 20 cents a second: no periodicity, and the
     least-squares slope of an exact line is the line's. */
  measure_context c = context_48k();
  static double cents[MAX_N], scratch[2 * MAX_N];
  int n = vibrato_track(-5.0, 20.0, 0.0, 0.0, cents);
  vibrato_reading v;
  double drift = NAN;
  plumb_steadiness_drift_and_vibrato(&c, cents, n, scratch, &v, &drift);
  assert_false(v.present);
  assert_true(fabs(drift - 20.0) < 1e-9);
}

static void test_slow_wander_and_tiny_wobble_are_not_vibrato(void **state) {
  (void)state;
  /* Below 3 Hz a swing is a wander, not a vibrato; under 2 cents a wobble
     is not one either (the module's limits, common practice, no
     source). */
  measure_context c = context_48k();
  static double cents[MAX_N], scratch[2 * MAX_N];
  vibrato_reading v;
  double drift = NAN;
  int n = vibrato_track(0.0, 0.0, 1.5, 30.0, cents);
  plumb_steadiness_drift_and_vibrato(&c, cents, n, scratch, &v, &drift);
  assert_false(v.present);
  n = vibrato_track(0.0, 0.0, 6.0, 1.0, cents);
  plumb_steadiness_drift_and_vibrato(&c, cents, n, scratch, &v, &drift);
  assert_false(v.present);
}

static void test_robust_mean_leaves_outliers_out(void **state) {
  (void)state;
  /* Forty frames at 5 cents and three far off (a slip, a wrong octave's
     1200): the outliers lie beyond 3 scaled MADs (1.4826 MAD estimates a
     normal sigma: 1 / scipy.stats.norm.ppf(0.75)) and the mean is 5. */
  double v[43], scratch[43];
  for (int i = 0; i < 43; ++i) v[i] = 5.0;
  v[3] = 1200.0;
  v[20] = -80.0;
  v[41] = 95.0;
  assert_true(fabs(plumb_steadiness_robust_mean(v, 43, scratch) - 5.0) < 1e-12);
  /* The input is left as it was. */
  assert_true(v[3] == 1200.0 && v[20] == -80.0);
}

static void test_robust_mean_of_a_ramp_is_its_middle(void **state) {
  (void)state;
  /* Under any weights symmetric about the middle (the module's Tukey
     taper is), the weighted mean of an arithmetic sequence is its middle
     value; so 0, 0.5 ... 30 gives 15, odd or even count. */
  double v[61], scratch[61];
  for (int n = 60; n <= 61; ++n) {
    for (int i = 0; i < n; ++i) v[i] = 0.5 * i;
    double middle = 0.5 * 0.5 * (n - 1);
    assert_true(fabs(plumb_steadiness_robust_mean(v, n, scratch) - middle) < 1e-9);
  }
}

static void test_robust_mean_tapers_its_ends(void **state) {
  (void)state;
  /* Forty frames about 5 cents, the first four a cent high (inside the
     taper), one outlier (12) and one stray that stays in (7.5). The
     reference is the definition computed with NumPy and SciPy: median
     5.17, MAD 0.61, kept within max(3 x 1.4826 MAD, 1) = 2.71 (39 of 40
     frames), weighted by scipy.signal.windows.tukey(40, 0.5) (a cosine
     taper over a quarter of the length at each end, Harris 1978):
     5.0554649531098805. Untapered it would be 5.139, unrejected 5.293. */
  const double v[40] = {6,    6.77, 6.41, 5.45, 4.29, 5.17, 5.8,  5.26, 4.34, 4.39,
                        5.34, 5.79, 5.09, 4.26, 4.52, 5.48, 5.74, 4.91, 4.21, 4.66,
                        12,   7.5,  4.74, 4.2,  4.83, 5.71, 5.55, 4.59, 4.23, 5,
                        5.77, 5.41, 4.45, 4.29, 5.17, 5.8,  5.25, 4.34, 4.39, 5.34};
  double scratch[40];
  assert_true(fabs(plumb_steadiness_robust_mean(v, 40, scratch) - 5.0554649531098805) < 1e-12);
}

/* Frames at 440 Hz x 2^(cents / 1200), with a cached model that gives
   each frame exactly that pitch. */
static void cached_frames(frame_record *frames, double *f0_hz, const double *cents,
                          const bool *voiced, int n, partial_model *model, steady_part *part) {
  memset(frames, 0, sizeof(frame_record) * (size_t)n);
  memset(model, 0, sizeof *model);
  for (int i = 0; i < n; ++i) {
    frames[i].voiced = voiced[i];
    f0_hz[i] = 440.0 * pow(2.0, cents[i] / 1200.0);
    frames[i].f0_hz = voiced[i] ? f0_hz[i] : NAN;
    frames[i].voiced_probability = 0.9;
    frames[i].harmonic_ratio = 0.8;
  }
  model->cached_frames = frames;
  model->cached_f0_hz = f0_hz;
  model->cached_count = n;
  part->first = 0;
  part->last = n - 1;
  part->reference_hz = 440.0;
  part->band_cents = 50.0;
}

static void test_uniform_cents_bridge_gaps_linearly(void **state) {
  (void)state;
  /* Frames 0, 1, 5 and 6 carry the pitch (10, 12, 20, 22 cents); 2, 3, 4
     are unvoiced and take the straight line from 12 to 20: 14, 16, 18. */
  const double cents_in[7] = {10, 12, 0, 0, 0, 20, 22};
  const bool voiced[7] = {true, true, false, false, false, true, true};
  frame_record frames[7];
  double f0_hz[7], out[7];
  partial_model model;
  steady_part part;
  cached_frames(frames, f0_hz, cents_in, voiced, 7, &model, &part);
  assert_int_equal(plumb_steadiness_uniform_cents(frames, &part, &model, out), 7);
  const double expected[7] = {10, 12, 14, 16, 18, 20, 22};
  for (int i = 0; i < 7; ++i) assert_true(fabs(out[i] - expected[i]) < 1e-9);
}

static void test_spread_is_the_sample_deviation(void **state) {
  (void)state;
  /* numpy.std([2, 4, 4, 4, 5, 5, 7, 9], ddof=1) = 2.138089935299395
     (about the mean 5); the one unvoiced frame and the one outside the
     band (80 cents) do not count. */
  const double cents_in[10] = {2, 4, 4, 4, 0, 5, 5, 7, 9, 80};
  const bool voiced[10] = {true, true, true, true, false, true, true, true, true, true};
  frame_record frames[10];
  double f0_hz[10];
  partial_model model;
  steady_part part;
  cached_frames(frames, f0_hz, cents_in, voiced, 10, &model, &part);
  double sum_probability = 0.0, sum_ratio = 0.0;
  int counted = 0;
  double spread =
      plumb_steadiness_spread(frames, &part, &model, 5.0, &sum_probability, &sum_ratio, &counted);
  assert_int_equal(counted, 8);
  assert_true(fabs(spread - 2.138089935299395) < 1e-9);
  assert_true(fabs(sum_probability - 8 * 0.9) < 1e-12);
  assert_true(fabs(sum_ratio - 8 * 0.8) < 1e-12);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_vibrato_rate_extent_and_drift),
      cmocka_unit_test(test_a_straight_line_is_drift_not_vibrato),
      cmocka_unit_test(test_slow_wander_and_tiny_wobble_are_not_vibrato),
      cmocka_unit_test(test_robust_mean_leaves_outliers_out),
      cmocka_unit_test(test_robust_mean_of_a_ramp_is_its_middle),
      cmocka_unit_test(test_robust_mean_tapers_its_ends),
      cmocka_unit_test(test_uniform_cents_bridge_gaps_linearly),
      cmocka_unit_test(test_spread_is_the_sample_deviation),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
