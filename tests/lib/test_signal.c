/*
  Tests of the shared signal generator (tests/lib/signal.c) against values
  from outside the project. Each check names its source.
*/
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <math.h>
#include <sndfile.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "signal.h"

#define FS_HZ 48000.0

/* ------------------------------------------------------------ helpers */

/* Mean frequency from rising zero crossings, each located by linear
   interpolation between the two samples around it. */
static double zero_crossing_hz(const float *x, size_t n, double fs_hz,
                               double *max_local_hz) {
  double first_s = -1.0, last_s = -1.0, previous_s = -1.0;
  int crossings = 0;
  if (max_local_hz)
    *max_local_hz = 0.0;
  for (size_t i = 1; i < n; ++i) {
    if (!(x[i - 1] < 0.0f && x[i] >= 0.0f))
      continue;
    const double fraction = x[i - 1] / (double)(x[i - 1] - x[i]);
    const double t_s = ((double)(i - 1) + fraction) / fs_hz;
    if (crossings == 0)
      first_s = t_s;
    if (max_local_hz && previous_s >= 0.0)
      *max_local_hz = fmax(*max_local_hz, 1.0 / (t_s - previous_s));
    previous_s = last_s = t_s;
    ++crossings;
  }
  return crossings > 1 ? (crossings - 1) / (last_s - first_s) : 0.0;
}

/* Level in dB of the Hann-windowed DFT of x at any frequency. */
static double level_db_at(const float *x, size_t n, double fs_hz, double f_hz) {
  double re = 0.0, im = 0.0;
  for (size_t i = 0; i < n; ++i) {
    const double w = 0.5 - 0.5 * cos(2.0 * SIG_PI * (double)i / (double)n);
    const double phase = 2.0 * SIG_PI * f_hz * (double)i / fs_hz;
    re += w * x[i] * cos(phase);
    im -= w * x[i] * sin(phase);
  }
  return 10.0 * log10(re * re + im * im + 1e-300);
}

static float *render_constant(const sig_timbre *timbre, double f_hz, size_t n) {
  float *x = calloc(n, sizeof *x);
  double *f0 = malloc(n * sizeof *f0);
  assert_non_null(x);
  assert_non_null(f0);
  sig_contour_constant(f0, n, f_hz);
  assert_true(sig_tone_add(timbre, f0, NULL, n, FS_HZ, x) >= 0);
  free(f0);
  return x;
}

static const sig_timbre sine_timbre = {1, SIG_AMPS_SAWTOOTH, NULL, 0.0, false, 0};

/* Roots of cos x cosh x = 1 near (k + 1/2) pi, by bisection. */
static double beam_root(int k) {
  double lo = (k + 0.5) * SIG_PI - 0.5, hi = (k + 0.5) * SIG_PI + 0.5;
  double f_lo = cos(lo) * cosh(lo) - 1.0;
  for (int i = 0; i < 200; ++i) {
    const double mid = 0.5 * (lo + hi);
    const double f_mid = cos(mid) * cosh(mid) - 1.0;
    if ((f_mid < 0.0) == (f_lo < 0.0)) {
      lo = mid;
      f_lo = f_mid;
    } else {
      hi = mid;
    }
  }
  return 0.5 * (lo + hi);
}

/* ------------------------------------------------------------ modes */

/* Source: scipy.special.jn_zeros (Debian python3-scipy), the Bessel
   zeros j_mk; the membrane's modes sound at j_mk / j_01. */
static void test_membrane_ratios_match_scipy(void **state) {
  (void)state;
  if (system("/usr/bin/python3 -c 'import scipy.special' 2>/dev/null") != 0) {
    fprintf(stderr, "skipping: /usr/bin/python3 with scipy (python3-scipy) not found\n");
    skip();
  }
  FILE *p = popen("/usr/bin/python3 -c 'import scipy.special as s; "
                  "z = sorted(v for m in range(6) for v in s.jn_zeros(m, 4)); "
                  "print(\" \".join(\"%.9f\" % (v / z[0]) for v in z[:9]))'",
                  "r");
  assert_non_null(p);
  for (int k = 0; k < SIG_MEMBRANE_MODES; ++k) {
    double ratio = 0.0;
    assert_int_equal(fscanf(p, "%lf", &ratio), 1);
    assert_float_equal(sig_membrane_ratios[k], ratio, 1e-6);
  }
  assert_int_equal(pclose(p), 0);
}

/* Source: the free-free Euler-Bernoulli beam frequency equation
   cos x cosh x = 1; f_k is proportional to x_k^2 (derived). */
static void test_bar_ratios_match_beam_equation(void **state) {
  (void)state;
  const double x1 = beam_root(1);
  assert_float_equal(x1, 4.730041, 1e-6); /* also the printed root, memory */
  for (int k = 0; k < SIG_BAR_MODES; ++k) {
    const double xk = beam_root(k + 1);
    assert_float_equal(sig_bar_ratios[k], (xk / x1) * (xk / x1), 1e-6);
  }
}

/* The rendered strikes put their energy at f1 times the mode ratios
   recomputed above (beam equation) and in the table checked by scipy. */
static void check_strike_peaks(sig_strike_kind kind, const double *ratios,
                               int modes) {
  const size_t n = (size_t)FS_HZ;
  float *x = calloc(n, sizeof *x);
  assert_non_null(x);
  const sig_strike strike = {kind, 200.0, 0.3, 1.0, 11};
  sig_strike_add(&strike, x, n, FS_HZ);
  for (int k = 0; k < modes; ++k) {
    const double f_hz = 200.0 * ratios[k];
    const double peak_db = level_db_at(x, n, FS_HZ, f_hz);
    const double side_db = fmax(level_db_at(x, n, FS_HZ, f_hz - 12.0),
                                level_db_at(x, n, FS_HZ, f_hz + 12.0));
    assert_true(peak_db - side_db > 6.0);
  }
  free(x);
}

static void test_strikes_sound_at_their_modes(void **state) {
  (void)state;
  double bar[SIG_BAR_MODES];
  const double x1 = beam_root(1);
  for (int k = 0; k < SIG_BAR_MODES; ++k)
    bar[k] = pow(beam_root(k + 1) / x1, 2.0);
  check_strike_peaks(SIG_STRIKE_BAR, bar, SIG_BAR_MODES);
  check_strike_peaks(SIG_STRIKE_MEMBRANE, sig_membrane_ratios, SIG_MEMBRANE_MODES);
}

/* ------------------------------------------------------------ pitch */

/* Source: MIDI Tuning Standard formula f = 440 * 2^((m - 69) / 12); the
   values are derived from it. */
static void test_midi_to_hz_matches_tuning_standard(void **state) {
  (void)state;
  assert_float_equal(sig_midi_to_hz(69, 440.0), 440.0, 1e-12);
  assert_float_equal(sig_midi_to_hz(21, 440.0), 27.5, 1e-9);
  assert_float_equal(sig_midi_to_hz(60, 440.0), 261.6256, 1e-4);
  assert_float_equal(sig_midi_to_hz(108, 440.0), 4186.009, 1e-3);
  assert_float_equal(sig_midi_to_hz(127, 440.0), 12543.854, 1e-3);
}

/* Zero crossings are an outside measure of frequency: a sinusoid crosses
   zero upwards once a period (definition of frequency). */
static void test_sine_frequency_by_zero_crossings(void **state) {
  (void)state;
  const size_t n = 2 * (size_t)FS_HZ;
  float *x = render_constant(&sine_timbre, 440.0, n);
  assert_float_equal(zero_crossing_hz(x, n, FS_HZ, NULL), 440.0, 1e-3);
  free(x);
  /* Detune by +25 cents: 440 * 2^(25/1200) (Ellis 1885 cent). */
  double *f0 = malloc(n * sizeof *f0);
  x = calloc(n, sizeof *x);
  assert_non_null(f0);
  assert_non_null(x);
  sig_contour_constant(f0, n, 440.0);
  sig_contour_detune(f0, n, 25.0);
  sig_tone_add(&sine_timbre, f0, NULL, n, FS_HZ, x);
  assert_float_equal(zero_crossing_hz(x, n, FS_HZ, NULL),
                     440.0 * pow(2.0, 25.0 / 1200.0), 1e-3);
  free(x);
  free(f0);
}

/* Source: Fletcher (1964) f_n = n f0 sqrt(1 + B n^2); worked value with
   B = 4e-4, f0 = 261.6256 Hz, n = 5: 1314.652 Hz (derived). */
static void test_stiff_string_partial_frequency(void **state) {
  (void)state;
  const double amps[5] = {0, 0, 0, 0, 1};
  const sig_timbre partial5 = {5, SIG_AMPS_EXPLICIT, amps, 4e-4, true, 3};
  const size_t n = 2 * (size_t)FS_HZ;
  float *x = render_constant(&partial5, 261.6256, n);
  assert_float_equal(zero_crossing_hz(x, n, FS_HZ, NULL), 1314.652, 2e-3);
  free(x);
}

/* Vibrato extent is the peak deviation: the fastest local period of a
   440 Hz tone with +-50 cents must be 440 * 2^(50/1200) (Ellis 1885). */
static void test_vibrato_peak_deviation(void **state) {
  (void)state;
  const size_t n = 2 * (size_t)FS_HZ;
  double *f0 = malloc(n * sizeof *f0);
  float *x = calloc(n, sizeof *x);
  assert_non_null(f0);
  assert_non_null(x);
  sig_contour_constant(f0, n, 440.0);
  sig_contour_vibrato(f0, n, FS_HZ, 5.0, 50.0, 0.0);
  sig_tone_add(&sine_timbre, f0, NULL, n, FS_HZ, x);
  double max_local_hz = 0.0;
  zero_crossing_hz(x, n, FS_HZ, &max_local_hz);
  /* One period averages over 1/440 s of a 5 Hz swing: within 0.2 Hz. */
  assert_float_equal(max_local_hz, 440.0 * pow(2.0, 50.0 / 1200.0), 0.2);
  free(x);
  free(f0);
}

/* A glide linear in cents passes the geometric mean of its ends halfway:
   440 -> 880 Hz is at 440 sqrt 2 Hz after half its time (Ellis 1885
   cents are logarithmic in frequency). Held segments keep their pitch. */
static void test_segments_glide_in_cents(void **state) {
  (void)state;
  const sig_segment phrase[3] = {{0.5, 440.0, 440.0}, {0.5, 440.0, 880.0},
                                 {0.5, 880.0, 880.0}};
  const size_t n = (size_t)(1.5 * FS_HZ);
  double *f0 = malloc(n * sizeof *f0);
  float *x = calloc(n, sizeof *x);
  assert_non_null(f0);
  assert_non_null(x);
  sig_contour_segments(f0, n, FS_HZ, phrase, 3);
  sig_tone_add(&sine_timbre, f0, NULL, n, FS_HZ, x);
  const size_t window = (size_t)(0.02 * FS_HZ);
  assert_float_equal(zero_crossing_hz(x + (size_t)(0.1 * FS_HZ), (size_t)(0.3 * FS_HZ),
                                      FS_HZ, NULL), 440.0, 2e-3);
  assert_float_equal(zero_crossing_hz(x + (size_t)(0.74 * FS_HZ), window, FS_HZ, NULL),
                     440.0 * sqrt(2.0), 0.15);
  assert_float_equal(zero_crossing_hz(x + (size_t)(1.1 * FS_HZ), (size_t)(0.3 * FS_HZ),
                                      FS_HZ, NULL), 880.0, 2e-3);
  free(x);
  free(f0);
}

/* Nyquist (Shannon 1949): a partial at 30 kHz would alias to 18 kHz at
   48 kHz. The generator must drop it (it is above 0.45 fs). */
static void test_partials_above_limit_are_dropped(void **state) {
  (void)state;
  const sig_timbre saw3 = {3, SIG_AMPS_SAWTOOTH, NULL, 0.0, false, 0};
  const size_t n = 4800;
  double *f0 = malloc(n * sizeof *f0);
  float *x = calloc(n, sizeof *x);
  assert_non_null(f0);
  assert_non_null(x);
  sig_contour_constant(f0, n, 10000.0);
  assert_int_equal(sig_tone_add(&saw3, f0, NULL, n, FS_HZ, x), 2);
  const double kept_db = level_db_at(x, n, FS_HZ, 20000.0);
  assert_true(kept_db - level_db_at(x, n, FS_HZ, 18000.0) > 100.0);
  free(x);
  free(f0);
}

/* ------------------------------------------------------------ noise */

/* Source: the reference xoshiro256** (Blackman & Vigna 2018) from the
   state {1, 2, 3, 4}: first outputs from memory, confirmed by hand for
   the first two and by a separate Python rewrite. */
static void test_xoshiro_reference_outputs(void **state) {
  (void)state;
  sig_rng rng = {{1, 2, 3, 4}, false, 0.0};
  assert_true(sig_rng_next(&rng) == 11520u);
  assert_true(sig_rng_next(&rng) == 0u);
  assert_true(sig_rng_next(&rng) == 1509978240u);
  assert_true(sig_rng_next(&rng) == 1215971899390074240u);
}

/* Source: moments of the standard normal distribution (mean 0, variance
   1, fourth moment 3) and P(|x| < 1) = erf(1/sqrt 2) (C99 erf). The
   tolerances are about 5 standard errors for 200000 draws. */
static void test_gaussian_moments(void **state) {
  (void)state;
  const int n = 200000;
  sig_rng rng;
  sig_rng_seed(&rng, 2024);
  double sum = 0.0, sum2 = 0.0, sum4 = 0.0;
  int inside = 0;
  for (int i = 0; i < n; ++i) {
    const double g = sig_rng_gauss(&rng);
    sum += g;
    sum2 += g * g;
    sum4 += g * g * g * g;
    inside += fabs(g) < 1.0;
  }
  assert_float_equal(sum / n, 0.0, 0.011);
  assert_float_equal(sum2 / n, 1.0, 0.016);
  assert_float_equal(sum4 / n, 3.0, 0.11);
  assert_float_equal((double)inside / n, erf(1.0 / sqrt(2.0)), 0.005);
}

/* SNR = signal power / noise power over the tone's samples, in dB. */
static void test_noise_snr_measured_back(void **state) {
  (void)state;
  const sig_timbre saw = {10, SIG_AMPS_SAWTOOTH, NULL, 0.0, true, 5};
  const size_t n = (size_t)FS_HZ;
  const double snrs_db[3] = {0.0, 20.0, 40.0};
  for (int k = 0; k < 3; ++k) {
    float *clean = render_constant(&saw, 220.0, n);
    float *noisy = malloc(n * sizeof *noisy);
    assert_non_null(noisy);
    memcpy(noisy, clean, n * sizeof *noisy);
    sig_rng rng;
    sig_rng_seed(&rng, 77 + (uint64_t)k);
    sig_add_noise_snr(noisy, n, snrs_db[k], &rng);
    for (size_t i = 0; i < n; ++i)
      noisy[i] -= clean[i]; /* what is left is the noise */
    const double measured_db = 10.0 * log10(sig_power(clean, n) / sig_power(noisy, n));
    assert_float_equal(measured_db, snrs_db[k], 0.2);
    free(clean);
    free(noisy);
  }
}

/* Rife & Boorstyn (1974) define SNR = A^2 / (2 sigma^2) for one sinusoid. */
static void test_sine_in_noise_variance(void **state) {
  (void)state;
  const size_t n = 100000;
  float *x = malloc(n * sizeof *x);
  assert_non_null(x);
  sig_rng rng;
  sig_rng_seed(&rng, 9);
  sig_sine_in_noise(x, n, FS_HZ, 440.0, 0.5, 0.3, 30.0, &rng);
  double sum2 = 0.0;
  for (size_t i = 0; i < n; ++i) {
    const double clean = 0.5 * sin(2.0 * SIG_PI * 440.0 * (double)i / FS_HZ + 0.3);
    sum2 += (x[i] - clean) * (x[i] - clean);
  }
  const double expected = 0.25 / (2.0 * 1000.0);
  assert_float_equal(sum2 / (double)n / expected, 1.0, 0.03);
  free(x);
}

static void test_same_seed_same_samples(void **state) {
  (void)state;
  const sig_timbre saw = {8, SIG_AMPS_SAWTOOTH, NULL, 1e-4, true, 42};
  const size_t n = 9600;
  float *a = render_constant(&saw, 330.0, n);
  float *b = render_constant(&saw, 330.0, n);
  sig_rng ra, rb;
  sig_rng_seed(&ra, 7);
  sig_rng_seed(&rb, 7);
  sig_add_noise_snr(a, n, 10.0, &ra);
  sig_add_noise_snr(b, n, 10.0, &rb);
  assert_memory_equal(a, b, n * sizeof *a);
  sig_rng_seed(&rb, 8);
  float *c = render_constant(&saw, 330.0, n);
  sig_add_noise_snr(c, n, 10.0, &rb);
  assert_memory_not_equal(a, c, n * sizeof *a);
  free(a);
  free(b);
  free(c);
}

/* ------------------------------------------------------------ envelope */

/* Source: a linear ramp of length T crosses 10 % at 0.1 T and 90 % at
   0.9 T, a 10-90 % rise of 0.8 T (derived). */
static void test_linear_attack_crossings(void **state) {
  (void)state;
  const sig_envelope e = {SIG_RAMP_LINEAR, 0.050, 0.0, 0.0, SIG_RAMP_LINEAR, 0.01};
  const size_t n = 4800;
  double gain[4800];
  sig_envelope_fill(&e, 1.0, 1.0, FS_HZ, gain, n);
  /* First sample at or above each level, allowing for the rounding of
     i / fs / T in doubles. */
  const double rounding = 1e-12;
  size_t at10 = 0, at90 = 0;
  while (at10 < n && gain[at10] < 0.1 - rounding)
    ++at10;
  while (at90 < n && gain[at90] < 0.9 - rounding)
    ++at90;
  assert_int_equal(at10, 240);  /* 0.1 * 50 ms * 48 kHz */
  assert_int_equal(at90, 2160); /* 0.9 * 50 ms * 48 kHz */
  assert_int_equal(at90 - at10, 1920); /* 0.8 T */
}

/* Source: 1 - e^(-t/tau) rises 10-90 % in tau ln 9; e^(-t/tau) falls
   60 dB in tau ln 1000 = 6.908 tau (derived). */
static void test_exponential_attack_and_release(void **state) {
  (void)state;
  const double tau_s = 0.02;
  const sig_envelope e = {SIG_RAMP_EXP, tau_s, 0.0, 0.0, SIG_RAMP_EXP, tau_s};
  const double t10 = -tau_s * log(0.9), t90 = -tau_s * log(0.1);
  assert_float_equal(sig_envelope_gain(&e, t10, 1.0), 0.1, 1e-12);
  assert_float_equal(sig_envelope_gain(&e, t90, 1.0), 0.9, 1e-12);
  assert_float_equal(t90 - t10, 2.197 * tau_s, 1e-5);
  const double before = sig_envelope_gain(&e, 1.0, 1.0);
  const double after = sig_envelope_gain(&e, 1.0 + 6.9078 * tau_s, 1.0);
  assert_float_equal(20.0 * log10(after / before), -60.0, 0.01);
}

static void test_decay_plateau_and_gate(void **state) {
  (void)state;
  const sig_envelope e = {SIG_RAMP_LINEAR, 0.01, 0.2, -12.0, SIG_RAMP_EXP, 0.1};
  assert_float_equal(sig_envelope_gain(&e, 0.01, 5.0), 1.0, 1e-12);
  assert_float_equal(sig_envelope_gain(&e, 0.11, 5.0), pow(10.0, -6.0 / 20.0), 1e-12);
  assert_float_equal(sig_envelope_gain(&e, 2.0, 5.0), pow(10.0, -12.0 / 20.0), 1e-12);
  const sig_envelope gate = sig_envelope_gate(0.004);
  assert_float_equal(sig_envelope_gain(&gate, 0.002, 1.0), 0.5, 1e-12);
  assert_float_equal(sig_envelope_gain(&gate, 0.5, 1.0), 1.0, 1e-12);
  assert_float_equal(sig_envelope_gain(&gate, 1.002, 1.0), 0.5, 1e-12);
  assert_float_equal(sig_envelope_gain(&gate, 1.004, 1.0), 0.0, 1e-12);
}

/* ------------------------------------------------------------ notes */

static size_t at(double t_s) { return (size_t)(t_s * FS_HZ); }

/* A note, a gap, a detuned note and a legato glide into a third: each
   held pitch must match the tuning standard formula, the gap must be
   silent and the legato join must not dip. */
static void test_render_notes_gap_and_legato(void **state) {
  (void)state;
  const sig_note notes[3] = {
      {0.1, 0.6, 69, 0.0, 0, 0, 0, 0},
      {1.0, 1.5, 72, 18.0, 0, 0, 0, 0},
      {1.5, 2.0, 76, 0.0, 0, 0, 0.05, 0},
  };
  const sig_voice voice = {sine_timbre, sig_envelope_gate(0.005), 440.0, 0.5};
  const size_t n = at(2.2);
  float *x = calloc(n, sizeof *x);
  assert_non_null(x);
  assert_int_equal(sig_render_notes(&voice, notes, 3, FS_HZ, x, n), 0);
  assert_float_equal(zero_crossing_hz(x + at(0.2), at(0.3), FS_HZ, NULL), 440.0, 2e-3);
  assert_float_equal(zero_crossing_hz(x + at(1.1), at(0.3), FS_HZ, NULL),
                     sig_midi_to_hz(72, 440.0) * pow(2.0, 18.0 / 1200.0), 2e-3);
  assert_float_equal(zero_crossing_hz(x + at(1.6), at(0.3), FS_HZ, NULL),
                     sig_midi_to_hz(76, 440.0), 2e-3);
  assert_true(sig_peak(x + at(0.606), at(0.39)) == 0.0);
  for (double t_s = 1.40; t_s < 1.60; t_s += 0.01) /* rms of a sine: A/sqrt 2 */
    assert_true(sqrt(sig_power(x + at(t_s), at(0.01))) > 0.3);
  free(x);
}

/* ------------------------------------------------------------ files */

static void test_wav_round_trip_and_errors(void **state) {
  (void)state;
  char path[64];
  snprintf(path, sizeof path, "/tmp/plumb-test-signal-%ld.wav", (long)getpid());
  float frames[2 * 1000];
  for (int i = 0; i < 2000; ++i)
    frames[i] = (float)sin(0.01 * i) * 0.25f;
  assert_int_equal(sig_write_wav(path, frames, 1000, 2, 44100), 0);
  SF_INFO info;
  memset(&info, 0, sizeof info);
  SNDFILE *file = sf_open(path, SFM_READ, &info);
  assert_non_null(file);
  assert_int_equal(info.channels, 2);
  assert_int_equal(info.samplerate, 44100);
  assert_int_equal(info.frames, 1000);
  assert_int_equal(info.format, SF_FORMAT_WAV | SF_FORMAT_FLOAT);
  float back[2 * 1000];
  assert_int_equal(sf_readf_float(file, back, 1000), 1000);
  sf_close(file);
  assert_memory_equal(frames, back, sizeof frames);
  remove(path);
  assert_int_equal(sig_write_wav("/nonexistent-dir/x.wav", frames, 1000, 2, 44100), -1);
  assert_int_equal(sig_write_wav(path, frames, 1000, 0, 44100), -1);
  assert_int_equal(sig_write_wav(NULL, frames, 1000, 1, 44100), -1);
}

static void test_truth_csv(void **state) {
  (void)state;
  char path[64];
  snprintf(path, sizeof path, "/tmp/plumb-test-truth-%ld.csv", (long)getpid());
  const sig_note notes[2] = {{0.5, 1.25, 64, -25.0, 0, 0, 0, 0},
                             {2.0, 2.1, -1, 0.0, 0, 0, 0, 0}};
  assert_int_equal(sig_write_truth_csv(path, notes, 2), 0);
  FILE *f = fopen(path, "r");
  assert_non_null(f);
  char text[256] = {0};
  assert_true(fread(text, 1, sizeof text - 1, f) > 0);
  fclose(f);
  remove(path);
  assert_string_equal(text, "start_s,end_s,midi,detune_cents\n"
                            "0.500000,1.250000,64,-25.000\n"
                            "2.000000,2.100000,,\n");
  assert_int_equal(sig_write_truth_csv("/nonexistent-dir/t.csv", notes, 2), -1);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_membrane_ratios_match_scipy),
      cmocka_unit_test(test_bar_ratios_match_beam_equation),
      cmocka_unit_test(test_strikes_sound_at_their_modes),
      cmocka_unit_test(test_midi_to_hz_matches_tuning_standard),
      cmocka_unit_test(test_sine_frequency_by_zero_crossings),
      cmocka_unit_test(test_stiff_string_partial_frequency),
      cmocka_unit_test(test_vibrato_peak_deviation),
      cmocka_unit_test(test_segments_glide_in_cents),
      cmocka_unit_test(test_partials_above_limit_are_dropped),
      cmocka_unit_test(test_xoshiro_reference_outputs),
      cmocka_unit_test(test_gaussian_moments),
      cmocka_unit_test(test_noise_snr_measured_back),
      cmocka_unit_test(test_sine_in_noise_variance),
      cmocka_unit_test(test_same_seed_same_samples),
      cmocka_unit_test(test_linear_attack_crossings),
      cmocka_unit_test(test_exponential_attack_and_release),
      cmocka_unit_test(test_decay_plateau_and_gate),
      cmocka_unit_test(test_render_notes_gap_and_legato),
      cmocka_unit_test(test_wav_round_trip_and_errors),
      cmocka_unit_test(test_truth_csv),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
