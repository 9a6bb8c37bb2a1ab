/*
  The half-band decimator (frame/halfband.c) against its design: a
  31-tap windowed-sinc lowpass with its cutoff at a quarter of the input
  rate and a Blackman window (Oppenheim & Schafer, "Discrete-Time Signal
  Processing", window method). The reference values are SciPy's for the
  same design: scipy.signal.firwin(31, 0.5, window='blackman') for the
  taps and scipy.signal.freqz over those taps for the response (SciPy
  1.10.1, Debian 12's python3-scipy).
*/
#include "frame/halfband.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define HISTORY (PLUMB_HALFBAND_TAPS - 1)

/* scipy.signal.firwin(31, 0.5, window='blackman'), printed with %.17g. */
static const double scipy_taps[PLUMB_HALFBAND_TAPS] = {
    2.9449853528236671e-19, 7.8155878394335324e-20, 0.00041032287080936545, -7.8379050640788414e-19,
    -0.0022302855185240434, 2.5338351921943237e-18, 0.007100857132041432,   -5.6423434323296087e-18,
    -0.017917030421899408,  9.9362814605681026e-18, 0.040107417651266825,   -1.4544272985382549e-17,
    -0.090106922079616902,  1.8132576385607491e-17, 0.31263332162053092,    0.5000046374907835,
    0.31263332162053092,    1.8132576385607491e-17, -0.090106922079616902,  -1.4544272985382552e-17,
    0.040107417651266845,   9.9362814605681026e-18, -0.017917030421899422,  -5.6423434323296133e-18,
    0.007100857132041432,   2.5338351921943291e-18, -0.002230285518524046,  -7.8379050640788414e-19,
    0.00041032287080936545, 7.8155878394334783e-20, 2.9449853528236671e-19};

static void test_taps_match_the_window_design(void **state) {
  (void)state;
  halfband_filter filter;
  plumb_halfband_init(&filter);
  for (int k = 0; k < PLUMB_HALFBAND_TAPS; ++k)
    assert_true(fabs(filter.taps[k] - scipy_taps[k]) < 1e-15);
  /* A half-band filter's taps at even distances from the centre are zero
     (Oppenheim & Schafer: sin(pi m / 2) = 0 for even m), and a linear-phase
     FIR's taps are symmetric. */
  const int centre = PLUMB_HALFBAND_TAPS / 2;
  for (int m = 2; m <= centre; m += 2) assert_true(fabs(filter.taps[centre + m]) < 1e-15);
  for (int m = 1; m <= centre; ++m)
    assert_true(fabs(filter.taps[centre + m] - filter.taps[centre - m]) < 1e-16);
}

/* Decimate `pairs` * 2 samples of x(n) = amplitude * sin(2 pi f n + phase),
   history included. */
static void decimate_sine(double f, double phase, int pairs, float *out) {
  int n_in = HISTORY + 2 * pairs;
  float *in = malloc((size_t)n_in * sizeof *in);
  assert_non_null(in);
  for (int i = 0; i < n_in; ++i) in[i] = (float)sin(2.0 * M_PI * f * (i - HISTORY) + phase);
  halfband_filter filter;
  plumb_halfband_init(&filter);
  plumb_halfband_decimate(&filter, in + HISTORY, 2 * pairs, out);
  free(in);
}

static void test_dc_gain_is_exactly_one(void **state) {
  (void)state;
  /* The design is normalised to unity at DC (firwin's scale=True; the sum
     of the SciPy taps above is 1.0): a constant comes out unchanged, to
     the last bit of a float. */
  float in[HISTORY + 64];
  float out[32];
  for (int i = 0; i < HISTORY + 64; ++i) in[i] = 0.25f;
  halfband_filter filter;
  plumb_halfband_init(&filter);
  plumb_halfband_decimate(&filter, in + HISTORY, 64, out);
  for (int j = 0; j < 32; ++j) assert_true(out[j] == 0.25f);
}

static void test_impulse_is_delayed_by_fifteen_samples(void **state) {
  (void)state;
  /* A symmetric FIR of N taps delays by (N - 1) / 2 = 15 samples (linear
     phase; Oppenheim & Schafer). Output j belongs to input 2 j + 1, the
     newest of its pair, so an impulse at input n0 shows the tap
     2 j + 1 - n0: at an even n0 only the centre tap (every other odd one
     is zero), 15 samples later. */
  enum { PAIRS = 40 };
  for (int n0 = 10; n0 <= 11; ++n0) {
    float in[HISTORY + 2 * PAIRS] = {0};
    float out[PAIRS];
    in[HISTORY + n0] = 1.0f;
    halfband_filter filter;
    plumb_halfband_init(&filter);
    plumb_halfband_decimate(&filter, in + HISTORY, 2 * PAIRS, out);
    for (int j = 0; j < PAIRS; ++j) {
      int k = 2 * j + 1 - n0;
      double expected = k >= 0 && k < PLUMB_HALFBAND_TAPS ? scipy_taps[k] : 0.0;
      assert_true(fabs(out[j] - expected) < 1e-7);
    }
    if (n0 % 2 == 0) {
      int j_peak = (n0 + 15 - 1) / 2;
      assert_true(fabs(out[j_peak] - 0.5000046374907835) < 1e-7);
    }
  }
}

/* Least squares of the decimated sine over sin and cos of the phase it
   would have 15 input samples late: y_j = a sin(theta_j) + b cos(theta_j),
   theta_j = 2 pi f (2 j + 1 - 15) + phase. A linear-phase filter of that
   delay gives a = A(f) and b = 0 (aliasing above a quarter of the rate
   does not matter: the phase is taken at the input instants). */
static void fit_sine(double f, double phase, const float *out, int pairs, double *a, double *b) {
  double ss = 0, sc = 0, cc = 0, ys = 0, yc = 0;
  for (int j = 0; j < pairs; ++j) {
    double theta = 2.0 * M_PI * f * (2 * j + 1 - 15) + phase;
    double s = sin(theta), c = cos(theta);
    ss += s * s;
    sc += s * c;
    cc += c * c;
    ys += out[j] * s;
    yc += out[j] * c;
  }
  double det = ss * cc - sc * sc;
  if (det < 1e-9 * ss * cc) {
    /* At a quarter of the rate the instants fall a half cycle apart: sin
       and cos of theta are proportional and only the projection is
       defined. */
    *a = ys / ss;
    *b = 0.0;
    return;
  }
  *a = (ys * cc - yc * sc) / det;
  *b = (yc * ss - ys * sc) / det;
}

/* The amplitude response A(f) = H(f) exp(j 2 pi f 15) (real for a linear-
   phase filter) of the SciPy design, from scipy.signal.freqz. */
static const struct {
  double f; /* cycles per input sample */
  double amplitude;
} scipy_response[] = {
    {0.05, 1.0000575043986804},      /* passband, +0.0005 dB */
    {0.10, 1.0000307737658776},      /* passband */
    {0.15, 0.99989526303254217},     /* passband edge, -0.001 dB */
    {0.20, 0.95057018076760302},     /* transition, -0.44 dB */
    {0.25, 0.5000046374907835},      /* a quarter of the rate: the centre tap */
    {0.30, 0.049439094213963655},    /* transition, -26.1 dB */
    {0.35, 0.00011401194902489787},  /* stopband edge, -78.9 dB */
    {0.40, -2.1498784310447947e-05}, /* stopband, -93.4 dB */
    {0.45, -4.8229417113911223e-05}, /* stopband, -86.3 dB */
};

static void test_sine_response_matches_the_design(void **state) {
  (void)state;
  /* Each sine comes out as A(f) sin(2 pi f (n - 15) + phase) at the
     decimated instants n = 2 j + 1. */
  enum { PAIRS = 4096 };
  static float out[PAIRS];
  for (size_t r = 0; r < sizeof scipy_response / sizeof scipy_response[0]; ++r) {
    double f = scipy_response[r].f, a, b;
    decimate_sine(f, 0.3, PAIRS, out);
    fit_sine(f, 0.3, out, PAIRS, &a, &b);
    /* The output is rounded to float (2^-24 relative); averaged over
       4096 samples the fit is good to well under 1e-6. */
    assert_true(fabs(a - scipy_response[r].amplitude) < 1e-6);
    assert_true(fabs(b) < 1e-6);
  }
}

static void test_ripple_and_attenuation_at_the_band_edges(void **state) {
  (void)state;
  /* What the pitch search relies on, from the Blackman window's published
     figures (Oppenheim & Schafer, table of window properties: peak
     approximation error about -74 dB; from memory): below 0.15 of the
     input rate the gain is within 0.01 dB of one, above 0.35 at least
     74 dB down. Measured on sines, as above, in amplitude. */
  enum { PAIRS = 4096 };
  static float out[PAIRS];
  const double freqs[] = {0.02, 0.07, 0.12, 0.15, 0.35, 0.38, 0.42, 0.47};
  for (size_t r = 0; r < sizeof freqs / sizeof freqs[0]; ++r) {
    double a, b;
    decimate_sine(freqs[r], 0.0, PAIRS, out);
    fit_sine(freqs[r], 0.0, out, PAIRS, &a, &b);
    double gain_db = 20.0 * log10(hypot(a, b));
    if (freqs[r] <= 0.15)
      assert_true(fabs(gain_db) < 0.01);
    else
      assert_true(gain_db < -74.0);
  }
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_taps_match_the_window_design),
      cmocka_unit_test(test_dc_gain_is_exactly_one),
      cmocka_unit_test(test_impulse_is_delayed_by_fifteen_samples),
      cmocka_unit_test(test_sine_response_matches_the_design),
      cmocka_unit_test(test_ripple_and_attenuation_at_the_band_edges),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
