/*
  Tests for the tuning module (core/tuning/tuning.c, core/tuning/names.c).

  Every expected number is a published value or is derived (recomputed
  here) from a published formula or construction; the source stands in a
  comment beside each check. Nothing is compared against the code's own
  output.
*/
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <locale.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "plumb.h"

/* ------------------------------------------------------------- helpers */

/* cmocka 1.1.5 compares only floats; these values need doubles. NaN fails. */
#define assert_near(actual, expected, tolerance)                            \
  assert_near_at((actual), (expected), (tolerance), #actual, __FILE__,      \
                 __LINE__)

static void assert_near_at(double actual, double expected, double tolerance,
                           const char *what, const char *file, int line) {
  if (!(fabs(actual - expected) <= tolerance)) {
    print_error("%s:%d: %s = %.6f, expected %.6f +- %g\n", file, line, what,
                actual, expected, tolerance);
    fail();
  }
}

/* The cent, 1200*log2(f2/f1) (Ellis 1885), computed here independently. */
static double ellis_cents(double f_high_hz, double f_low_hz) {
  return 1200.0 * log2(f_high_hz / f_low_hz);
}

/* Equal temperament by the MIDI Tuning Standard formula. */
static double mts_hz(double reference_hz, int midi) {
  return reference_hz * pow(2.0, (midi - 69) / 12.0);
}

static plumb_tuning build(plumb_temperament temperament, int tonic,
                          double reference_hz) {
  plumb_tuning_spec spec;
  plumb_tuning_spec_default(&spec);
  spec.temperament = temperament;
  spec.tonic_pitch_class = tonic;
  spec.reference_hz = reference_hz;
  plumb_tuning tuning;
  assert_int_equal(plumb_tuning_build(&spec, &tuning), PLUMB_OK);
  return tuning;
}

static plumb_tuning build_custom(const double offsets_cents[12], int tonic) {
  plumb_tuning_spec spec;
  plumb_tuning_spec_default(&spec);
  spec.temperament = PLUMB_TEMPERAMENT_CUSTOM;
  spec.tonic_pitch_class = tonic;
  memcpy(spec.custom_offsets_cents, offsets_cents, sizeof(double) * 12);
  plumb_tuning tuning;
  assert_int_equal(plumb_tuning_build(&spec, &tuning), PLUMB_OK);
  return tuning;
}

/* A resolved tuning filled in directly, A4 = 440 Hz: the nearest-target
   search must cope with any offsets a caller puts there, even those that
   plumb_tuning_build() refuses (beyond +-600 cents). With tonic C and
   offset[9] (A) = 0 this is what the build would give. */
static plumb_tuning tuning_as_given(const double offsets_cents[12]) {
  plumb_tuning tuning;
  tuning.reference_hz = 440.0;
  memcpy(tuning.offset_cents, offsets_cents, sizeof(double) * 12);
  return tuning;
}

/* Interval in cents between two notes of a tuning. */
static double interval_cents(const plumb_tuning *tuning, int low_midi,
                             int high_midi) {
  return ellis_cents(plumb_tuning_target_hz(tuning, high_midi),
                     plumb_tuning_target_hz(tuning, low_midi));
}

/* Temperaments as cents from equal temperament, A = 0,
   tonic C, columns C C# D Eb E F F# G G# A Bb B. The rows are derived from
   the constructions; Barbour, Tuning and Temperament (1951) tabulates them
   (from memory). */
static const double pythagorean_row[12] = {-5.87, +7.82, -1.96, -11.73,
                                           +1.96, -7.82, +5.87, -3.91,
                                           +9.78, 0.0,   -9.78, +3.91};
static const double meantone_row[12] = {+10.26, -13.69, +3.42, +20.53,
                                        -3.42,  +13.69, -10.26, +6.84,
                                        -17.11, 0.0,    +17.11, -6.84};
static const double werckmeister3_row[12] = {+11.73, +1.96, +3.91, +5.87,
                                             +1.96,  +9.78, 0.00,  +7.82,
                                             +3.91,  0.0,   +7.82, +3.91};
static const double kirnberger3_row[12] = {+10.26, +0.49, +3.42, +4.40,
                                           -3.42,  +8.31, +0.49, +6.84,
                                           +2.44,  0.0,   +6.35, -1.47};
static const double vallotti_row[12] = {+5.87, 0.00,  +1.96, +3.91,
                                        -1.96, +7.82, -1.96, +3.91,
                                        +1.96, 0.0,   +5.87, -3.91};

/* The table is printed to 0.01 cent: allow the half unit of rounding plus
   a hair: ±0.01 cent. */
#define TABLE_TOLERANCE_CENTS 0.01

static void check_row(plumb_temperament temperament, const double row[12]) {
  plumb_tuning tuning = build(temperament, 0, 440.0);
  for (int pitch_class = 0; pitch_class < 12; pitch_class++) {
    assert_near(tuning.offset_cents[pitch_class], row[pitch_class],
                TABLE_TOLERANCE_CENTS);
    /* The same cell seen through the target frequency of octave 4,
       against the MTS formula for equal temperament. */
    int midi = 60 + pitch_class;
    assert_near(ellis_cents(plumb_tuning_target_hz(&tuning, midi),
                            mts_hz(440.0, midi)),
                row[pitch_class], TABLE_TOLERANCE_CENTS);
  }
}

/* ------------------------------------------------ equal temperament, MTS */

/* MIDI Tuning Standard (MMA) formula f = 440*2^((m-69)/12), values
   derived from it: A0 27.5, C4 261.6256, C8 4186.009, 127
   12543.854 Hz; tolerance is half the last printed digit. */
static void test_mts_equal_temperament_table(void **state) {
  (void)state;
  plumb_tuning tuning = build(PLUMB_TEMPERAMENT_EQUAL, 0, 440.0);
  assert_near(plumb_tuning_target_hz(&tuning, 21), 27.5, 1e-9);
  assert_near(plumb_tuning_target_hz(&tuning, 60), 261.6256, 0.00005);
  assert_near(plumb_tuning_target_hz(&tuning, 108), 4186.009, 0.0005);
  assert_near(plumb_tuning_target_hz(&tuning, 127), 12543.854, 0.0005);
  /* ISO 16:1975: A4 = 440 Hz. */
  assert_near(plumb_tuning_target_hz(&tuning, 69), 440.0, 1e-12);
  /* Octaves are exact 2:1 (MTS formula): A-1 (MIDI -3) and A9 (MIDI 129)
     lie outside 0..127 but must still work. */
  assert_near(plumb_tuning_target_hz(&tuning, -3), 440.0 / 64.0, 1e-12);
  assert_near(plumb_tuning_target_hz(&tuning, 129), 440.0 * 32.0, 1e-9);
}

/* ------------------------------------------------------ cents, Ellis 1885 */

/* Just intervals in cents (derived from 1200*log2 of the
   ratio, Ellis 1885): 5/4 386.3137, 3/2 701.9550, 6/5 315.6413,
   4/3 498.0450, 5/3 884.3587. */
static void test_cents_of_just_intervals(void **state) {
  (void)state;
  assert_near(plumb_cents(5.0, 4.0), 386.3137, 0.00005);
  assert_near(plumb_cents(3.0, 2.0), 701.9550, 0.00005);
  assert_near(plumb_cents(6.0, 5.0), 315.6413, 0.00005);
  assert_near(plumb_cents(4.0, 3.0), 498.0450, 0.00005);
  assert_near(plumb_cents(5.0, 3.0), 884.3587, 0.00005);
  /* An octave is 1200 cents by definition (Ellis 1885). */
  assert_near(plumb_cents(880.0, 440.0), 1200.0, 1e-12);
  assert_near(plumb_cents(220.0, 440.0), -1200.0, 1e-12);
}

/* Commas (derived, 1200*log2 of the ratio, Ellis 1885): syntonic 81/80 = 21.5063, Pythagorean
   3^12/2^19 = 23.4600 cents. */
static void test_cents_of_commas(void **state) {
  (void)state;
  assert_near(plumb_cents(81.0, 80.0), 21.5063, 0.00005);
  assert_near(plumb_cents(531441.0, 524288.0), 23.4600, 0.00005);
}

/* The cent is the logarithm of a ratio of two positive frequencies (Ellis
   1885); anything else has no value, and plumb.h says NaN. */
static void test_cents_of_impossible_ratios(void **state) {
  (void)state;
  assert_true(isnan(plumb_cents(0.0, 440.0)));
  assert_true(isnan(plumb_cents(-440.0, 440.0)));
  assert_true(isnan(plumb_cents(440.0, 0.0)));
  assert_true(isnan(plumb_cents(NAN, 440.0)));
  assert_true(isnan(plumb_cents(INFINITY, 440.0)));
}

/* ------------------------------------------ the five historical tunings */

/* Temperament table above, Pythagorean row (pure fifths Eb..G#). */
static void test_pythagorean_table(void **state) {
  (void)state;
  check_row(PLUMB_TEMPERAMENT_PYTHAGOREAN, pythagorean_row);
}

/* Temperament table above, quarter-comma meantone row (Eb..G#). */
static void test_meantone_table(void **state) {
  (void)state;
  check_row(PLUMB_TEMPERAMENT_MEANTONE, meantone_row);
}

/* Temperament table above, Werckmeister III row (C-G-D-A and B-F# narrowed
   by 1/4 Pythagorean comma). */
static void test_werckmeister3_table(void **state) {
  (void)state;
  check_row(PLUMB_TEMPERAMENT_WERCKMEISTER3, werckmeister3_row);
}

/* Temperament table above, Kirnberger III row (C-G-D-A-E narrowed by 1/4
   syntonic comma, F#-C# by a schisma). */
static void test_kirnberger3_table(void **state) {
  (void)state;
  check_row(PLUMB_TEMPERAMENT_KIRNBERGER3, kirnberger3_row);
}

/* Temperament table above, Vallotti row (F-C-G-D-A-E-B narrowed by 1/6
   Pythagorean comma). */
static void test_vallotti_table(void **state) {
  (void)state;
  check_row(PLUMB_TEMPERAMENT_VALLOTTI, vallotti_row);
}

/* A second check on the same constructions (derived): C-E is
   386.314 (meantone), 386.314 (Kirnberger III), 390.225 (Werckmeister
   III), 392.180 (Vallotti), 407.820 (Pythagorean) cents. Checked on every
   tonic: the third above the tonic, rotated, must keep its size. */
static void test_major_thirds_on_every_tonic(void **state) {
  (void)state;
  static const struct {
    plumb_temperament temperament;
    double third_cents;
  } thirds[] = {
      {PLUMB_TEMPERAMENT_MEANTONE, 386.314},
      {PLUMB_TEMPERAMENT_KIRNBERGER3, 386.314},
      {PLUMB_TEMPERAMENT_WERCKMEISTER3, 390.225},
      {PLUMB_TEMPERAMENT_VALLOTTI, 392.180},
      {PLUMB_TEMPERAMENT_PYTHAGOREAN, 407.820},
      {PLUMB_TEMPERAMENT_EQUAL, 400.0}, /* MTS formula */
  };
  for (size_t i = 0; i < sizeof thirds / sizeof thirds[0]; i++) {
    for (int tonic = 0; tonic < 12; tonic++) {
      plumb_tuning tuning = build(thirds[i].temperament, tonic, 440.0);
      int tonic_midi = 60 + tonic;
      assert_near(interval_cents(&tuning, tonic_midi, tonic_midi + 4),
                  thirds[i].third_cents, 0.01);
    }
  }
}

/* Quarter-comma meantone fifth 696.578 cents (derived;
   Barbour 1951, from memory): every fifth of the chain Eb..G#. */
static void test_meantone_fifths(void **state) {
  (void)state;
  plumb_tuning tuning = build(PLUMB_TEMPERAMENT_MEANTONE, 0, 440.0);
  static const int chain_midi[12] = {63, 70, 65, 60, 67, 62,
                                     69, 64, 71, 66, 61, 68};
  for (int i = 0; i < 11; i++) {
    double fifth = interval_cents(&tuning, chain_midi[i], chain_midi[i + 1]);
    if (fifth < 0.0) {
      fifth += 1200.0; /* the chain folds back into one octave */
    }
    assert_near(fifth, 696.578, 0.001);
  }
}

/* Tonic rotation: meantone on G puts the pure third on G-B, 386.31 cents
   (the thirds above, derived), and the G-A whole tone is half the pure
   third, 5/4 = 386.3137 (derived): G4 = 440*2/sqrt(5) Hz (the mean tone,
   Barbour 1951, from memory). */
static void test_meantone_rotated_to_g(void **state) {
  (void)state;
  plumb_tuning tuning = build(PLUMB_TEMPERAMENT_MEANTONE, 7, 440.0);
  assert_near(interval_cents(&tuning, 67, 71), 386.31, 0.01);
  assert_near(plumb_tuning_target_hz(&tuning, 67), 440.0 * 2.0 / sqrt(5.0),
              1e-9);
  /* The whole chain moves with the tonic: G's offset from A is C's offset
     from D in the tonic-C table row (derived; Barbour 1951, from memory). */
  assert_near(tuning.offset_cents[7], meantone_row[0] - meantone_row[2],
              0.02);
  assert_near(tuning.offset_cents[9], 0.0, 1e-12);
}

/* --------------------------------------------------- just intonation */

/* Just intonation on a D tonic: intervals from D4 are the
   just intervals (derived; Ellis 1885 cents), and the rest recomputed from
   the ratios 16/15 9/8 45/32 8/5 9/5 15/8 (45/32 and 9/5: common practice,
   no source). A is the pure fifth of D, so D4 = 440*2/3 Hz (derived). */
static void test_just_intonation_on_d(void **state) {
  (void)state;
  plumb_tuning tuning = build(PLUMB_TEMPERAMENT_JUST, 2, 440.0);
  int d4 = 62;
  assert_near(interval_cents(&tuning, d4, d4 + 4), 386.3137, 0.0001);
  assert_near(interval_cents(&tuning, d4, d4 + 7), 701.9550, 0.0001);
  assert_near(interval_cents(&tuning, d4, d4 + 3), 315.6413, 0.0001);
  assert_near(interval_cents(&tuning, d4, d4 + 5), 498.0450, 0.0001);
  assert_near(interval_cents(&tuning, d4, d4 + 9), 884.3587, 0.0001);
  static const struct {
    int semitones;
    double ratio;
  } others[] = {{1, 16.0 / 15.0}, {2, 9.0 / 8.0},   {6, 45.0 / 32.0},
                {8, 8.0 / 5.0},   {10, 9.0 / 5.0},  {11, 15.0 / 8.0},
                {12, 2.0}};
  for (size_t i = 0; i < sizeof others / sizeof others[0]; i++) {
    assert_near(interval_cents(&tuning, d4, d4 + others[i].semitones),
                ellis_cents(others[i].ratio, 1.0), 1e-9);
  }
  assert_near(plumb_tuning_target_hz(&tuning, d4), 440.0 * 2.0 / 3.0, 1e-9);
  assert_near(plumb_tuning_target_hz(&tuning, 69), 440.0, 1e-9);
}

/* ---------------------------------------------------------- the A anchor */

/* ISO 16:1975: A4 = 440 Hz, whatever the temperament and tonic (the
   anchor rule of plumb.h). */
static void test_a4_is_440_everywhere(void **state) {
  (void)state;
  for (int t = 0; t < PLUMB_TEMPERAMENT_CUSTOM; t++) {
    for (int tonic = 0; tonic < 12; tonic++) {
      plumb_tuning tuning = build((plumb_temperament)t, tonic, 440.0);
      assert_near(plumb_tuning_target_hz(&tuning, 69), 440.0, 1e-9);
      assert_near(plumb_tuning_target_hz(&tuning, 57), 220.0, 1e-9);
    }
  }
}

/* A = 415 Hz, the usual baroque pitch (common practice, no source): A4 is
   415 in every tuning, and equal temperament follows the MTS formula
   scaled to 415 (C4 = 415*2^(-9/12)). */
static void test_a4_is_415_for_baroque(void **state) {
  (void)state;
  for (int t = 0; t < PLUMB_TEMPERAMENT_CUSTOM; t++) {
    plumb_tuning tuning = build((plumb_temperament)t, 0, 415.0);
    assert_near(plumb_tuning_target_hz(&tuning, 69), 415.0, 1e-9);
  }
  plumb_tuning equal = build(PLUMB_TEMPERAMENT_EQUAL, 0, 415.0);
  assert_near(plumb_tuning_target_hz(&equal, 60), 415.0 * pow(2.0, -0.75),
              1e-9);
  /* Meantone at 415 keeps the table offsets (A = 0). */
  plumb_tuning meantone = build(PLUMB_TEMPERAMENT_MEANTONE, 0, 415.0);
  assert_near(ellis_cents(plumb_tuning_target_hz(&meantone, 60),
                          mts_hz(415.0, 60)),
              meantone_row[0], TABLE_TOLERANCE_CENTS);
}

/* ------------------------------------------------------- nearest target */

/* MTS formula: every equal-tempered MIDI note from -24 to 151 is its own
   nearest target with 0 cents, and a quarter-tone-minus-a-bit either side
   still finds it. */
static void test_nearest_over_the_whole_range(void **state) {
  (void)state;
  plumb_tuning tuning = build(PLUMB_TEMPERAMENT_EQUAL, 0, 440.0);
  for (int midi = -24; midi <= 151; midi++) {
    double f_hz = mts_hz(440.0, midi);
    double target_hz = 0.0;
    double cents = 0.0;
    assert_int_equal(plumb_tuning_nearest(&tuning, f_hz, &target_hz, &cents),
                     midi);
    assert_near(target_hz, f_hz, f_hz * 1e-12);
    assert_near(cents, 0.0, 1e-9);
    double sharp_hz = f_hz * pow(2.0, 45.0 / 1200.0); /* Ellis cents */
    assert_int_equal(plumb_tuning_nearest(&tuning, sharp_hz, NULL, &cents),
                     midi);
    assert_near(cents, 45.0, 1e-9);
  }
}

/* Near the midpoint between A4 and A#4 in equal temperament (MTS formula,
   Ellis cents): 49.99 cents above A4 is still A4, 50.01 is A#4 at -49.99. */
static void test_nearest_near_the_midpoint(void **state) {
  (void)state;
  plumb_tuning tuning = build(PLUMB_TEMPERAMENT_EQUAL, 0, 440.0);
  double target_hz = 0.0;
  double cents = 0.0;
  double below_hz = 440.0 * pow(2.0, 49.99 / 1200.0);
  assert_int_equal(plumb_tuning_nearest(&tuning, below_hz, &target_hz, &cents),
                   69);
  assert_near(target_hz, 440.0, 1e-9);
  assert_near(cents, 49.99, 1e-9);
  double above_hz = 440.0 * pow(2.0, 50.01 / 1200.0);
  assert_int_equal(plumb_tuning_nearest(&tuning, above_hz, &target_hz, &cents),
                   70);
  assert_near(target_hz, mts_hz(440.0, 70), 1e-9);
  assert_near(cents, -49.99, 1e-9);
}

/* Meantone, table row above: G#4 sits 117.11 cents below A4, so the
   midpoint is 58.56 cents below A4. 55 cents below A4 must still be A4
   (a plain ET rounding would say G#4). */
static void test_nearest_across_a_wide_meantone_gap(void **state) {
  (void)state;
  plumb_tuning tuning = build(PLUMB_TEMPERAMENT_MEANTONE, 0, 440.0);
  double cents = 0.0;
  double f_hz = 440.0 * pow(2.0, -55.0 / 1200.0);
  assert_int_equal(plumb_tuning_nearest(&tuning, f_hz, NULL, &cents), 69);
  assert_near(cents, -55.0, 1e-9);
  /* 62 cents below A4 is 117.11 - 62 = 55.11 cents above G#4. */
  f_hz = 440.0 * pow(2.0, -62.0 / 1200.0);
  double g_sharp4_cents = -100.0 + meantone_row[8]; /* from A4 */
  assert_int_equal(plumb_tuning_nearest(&tuning, f_hz, NULL, &cents), 68);
  assert_near(cents, -62.0 - g_sharp4_cents, 0.01);
}

/* Custom offsets larger than a quarter tone and than an octave (MTS
   formula with the offsets added, Ellis cents). D raised by 80 cents: the
   ET D#4 frequency is 20 cents above D4's target but 0 from D#4; ET D4 +
   60 cents is 20 below D4's target and 40 below D#4. */
static void test_nearest_with_large_custom_offsets(void **state) {
  (void)state;
  double offsets[12] = {0};
  offsets[2] = 80.0;
  plumb_tuning tuning = build_custom(offsets, 0);
  double cents = 0.0;
  assert_int_equal(
      plumb_tuning_nearest(&tuning, mts_hz(440.0, 63), NULL, &cents), 63);
  assert_near(cents, 0.0, 1e-9);
  double f_hz = mts_hz(440.0, 62) * pow(2.0, 60.0 / 1200.0);
  assert_int_equal(plumb_tuning_nearest(&tuning, f_hz, NULL, &cents), 62);
  assert_near(cents, -20.0, 1e-9);
  /* C raised by 1250 cents: C4's target is 50 cents above C5 (ET); the
     ET C5 frequency is then nearest B4 (0 cents) and C5+45 cents is C4. */
  double octave_up[12] = {0};
  octave_up[0] = 1250.0;
  plumb_tuning wild = tuning_as_given(octave_up);
  assert_int_equal(plumb_tuning_nearest(&wild, mts_hz(440.0, 71), NULL,
                                        &cents), 71);
  f_hz = mts_hz(440.0, 72) * pow(2.0, 45.0 / 1200.0);
  assert_int_equal(plumb_tuning_nearest(&wild, f_hz, NULL, &cents), 60);
  assert_near(cents, -5.0, 1e-9);
}

/* Ties (no outside source; the rule of docs/tuning.md): C lowered by 100
   cents makes C5's target the ET B4 (MTS formula), so ET B4 is exactly as
   near C5 as B4; the lower note, B4, wins. */
static void test_nearest_tie_goes_to_the_lower_note(void **state) {
  (void)state;
  double offsets[12] = {0};
  offsets[0] = -100.0;
  plumb_tuning tuning = build_custom(offsets, 0);
  double target_hz = 0.0;
  double cents = 1.0;
  assert_int_equal(plumb_tuning_nearest(&tuning, mts_hz(440.0, 71),
                                        &target_hz, &cents), 71);
  assert_near(target_hz, mts_hz(440.0, 71), 1e-9);
  assert_near(cents, 0.0, 1e-9);
}

/* Finite but absurd offsets (which the build refuses, but a caller may
   fill into a plumb_tuning itself) put that pitch class's notes far
   outside any int MIDI number. Raising Eb by 10^9
   octaves makes ET Eb4 the exact target of "MIDI 63 - 1.2*10^10"; the
   search must skip such notes, not overflow an int (plumb.h contract; MTS
   formula for the others: D4 and E4 are 100 cents away). */
static void test_nearest_skips_unreachable_notes(void **state) {
  (void)state;
  const double absurd_cents[] = {1.2e12, 1e300}; /* 10^9 octaves, more */
  for (size_t i = 0; i < 2; i++) {
    double offsets[12] = {0};
    offsets[3] = absurd_cents[i];
    plumb_tuning tuning = tuning_as_given(offsets);
    double cents = 1.0;
    assert_int_equal(plumb_tuning_nearest(&tuning, 440.0, NULL, &cents), 69);
    assert_near(cents, 0.0, 1e-9);
    int midi = plumb_tuning_nearest(&tuning, mts_hz(440.0, 63), NULL, &cents);
    assert_true(midi == 62 || midi == 64);
    assert_near(fabs(cents), 100.0, 1e-9);
  }
}

/* plumb.h contract: -1 and NaN outputs for a frequency that is not
   positive and finite (a cent needs a positive ratio, Ellis 1885). */
static void test_nearest_rejects_impossible_frequencies(void **state) {
  (void)state;
  plumb_tuning tuning = build(PLUMB_TEMPERAMENT_EQUAL, 0, 440.0);
  const double bad_hz[] = {0.0, -0.0, -440.0, NAN, INFINITY, -INFINITY};
  for (size_t i = 0; i < sizeof bad_hz / sizeof bad_hz[0]; i++) {
    double target_hz = 1.0;
    double cents = 1.0;
    assert_int_equal(
        plumb_tuning_nearest(&tuning, bad_hz[i], &target_hz, &cents), -1);
    assert_true(isnan(target_hz));
    assert_true(isnan(cents));
  }
  assert_int_equal(plumb_tuning_nearest(NULL, 440.0, NULL, NULL), -1);
}

/* --------------------------------------------------- spec and validation */

/* ISO 16:1975 default: A4 = 440 Hz, equal temperament, tonic C. */
static void test_spec_default_is_iso_equal(void **state) {
  (void)state;
  plumb_tuning_spec spec;
  memset(&spec, 0x55, sizeof spec);
  plumb_tuning_spec_default(&spec);
  assert_near(spec.reference_hz, 440.0, 0.0);
  assert_int_equal(spec.temperament, PLUMB_TEMPERAMENT_EQUAL);
  assert_int_equal(spec.tonic_pitch_class, 0);
  plumb_tuning tuning;
  assert_int_equal(plumb_tuning_build(&spec, &tuning), PLUMB_OK);
  for (int pitch_class = 0; pitch_class < 12; pitch_class++) {
    assert_near(tuning.offset_cents[pitch_class], 0.0, 0.0);
  }
}

/* plumb.h contract (no outside source): a spec out of range is refused
   with PLUMB_ERR_ARGUMENT and the tuning is left as it was. */
static void test_build_rejects_bad_specs(void **state) {
  (void)state;
  plumb_tuning_spec good;
  plumb_tuning_spec_default(&good);
  plumb_tuning tuning = build(PLUMB_TEMPERAMENT_MEANTONE, 0, 440.0);
  const double bad_reference_hz[] = {0.0, -440.0, NAN, INFINITY};
  for (size_t i = 0; i < 4; i++) {
    plumb_tuning_spec spec = good;
    spec.reference_hz = bad_reference_hz[i];
    assert_int_equal(plumb_tuning_build(&spec, &tuning), PLUMB_ERR_ARGUMENT);
  }
  const int bad_tonic[] = {-1, 12, 1000};
  for (size_t i = 0; i < 3; i++) {
    plumb_tuning_spec spec = good;
    spec.tonic_pitch_class = bad_tonic[i];
    assert_int_equal(plumb_tuning_build(&spec, &tuning), PLUMB_ERR_ARGUMENT);
  }
  plumb_tuning_spec spec = good;
  spec.temperament = PLUMB_TEMPERAMENT_COUNT;
  assert_int_equal(plumb_tuning_build(&spec, &tuning), PLUMB_ERR_ARGUMENT);
  spec = good;
  spec.temperament = PLUMB_TEMPERAMENT_CUSTOM;
  spec.custom_offsets_cents[5] = NAN;
  assert_int_equal(plumb_tuning_build(&spec, &tuning), PLUMB_ERR_ARGUMENT);
  spec.custom_offsets_cents[5] = -INFINITY;
  assert_int_equal(plumb_tuning_build(&spec, &tuning), PLUMB_ERR_ARGUMENT);
  assert_int_equal(plumb_tuning_build(NULL, &tuning), PLUMB_ERR_ARGUMENT);
  assert_int_equal(plumb_tuning_build(&good, NULL), PLUMB_ERR_ARGUMENT);
  /* Untouched: still meantone (table row above). */
  assert_near(tuning.offset_cents[0], meantone_row[0], TABLE_TOLERANCE_CENTS);
}

/* Custom offsets are degrees from the tonic: the meantone row given as a
   user tuning on tonic G must give meantone on G, with its pure G-B third
   of 386.31 cents (the thirds above, derived). */
static void test_custom_offsets_rotate_like_temperaments(void **state) {
  (void)state;
  plumb_tuning custom = build_custom(meantone_row, 7);
  assert_near(interval_cents(&custom, 67, 71), 386.31, 0.02);
  assert_near(plumb_tuning_target_hz(&custom, 69), 440.0, 1e-9);
  assert_near(plumb_tuning_target_hz(&custom, 67), 440.0 * 2.0 / sqrt(5.0),
              440.0 * 0.02 / 1200.0);
}

/* --------------------------------------------------------- tuning files */

/* The file format of plumb.h with the Werckmeister III row of the
   table above written out: it must build back to that row. */
static void test_parse_a_good_file(void **state) {
  (void)state;
  const char *text =
      "# Werckmeister III, tonic C, cents from ET (Barbour 1951)\n"
      "+11.73, 1.96, 3.91, 5.87   # C C# D Eb\n"
      "1.96\t9.78 0.00 7.82\r\n"
      "  3.91, 0 ,7.82e0,\n"
      "391e-2";
  double offsets[12];
  assert_int_equal(plumb_tuning_parse_offsets(text, offsets), PLUMB_OK);
  for (int degree = 0; degree < 12; degree++) {
    assert_near(offsets[degree], werckmeister3_row[degree], 1e-12);
  }
  plumb_tuning tuning = build_custom(offsets, 0);
  for (int pitch_class = 0; pitch_class < 12; pitch_class++) {
    assert_near(tuning.offset_cents[pitch_class],
                werckmeister3_row[pitch_class], 1e-12);
  }
}

/* Decimal input is exact where IEEE 754 allows: 0.1 and friends must be
   the nearest doubles (Clinger 1990's fast path) and signs and leading
   zeros must work. The comparison values are C's own decimal literals. */
static void test_parse_decimal_forms(void **state) {
  (void)state;
  const char *text = "0.1 -0.25 .5 5. 007 -0 1e2 2.5E-1 -1.5e+1 "
                     "123.456789123456789 -600 -0.000001";
  const double expected[12] = {0.1, -0.25, 0.5, 5.0, 7.0, -0.0, 100.0,
                               0.25, -15.0, 123.456789123456789, -600.0,
                               -0.000001};
  double offsets[12];
  assert_int_equal(plumb_tuning_parse_offsets(text, offsets), PLUMB_OK);
  for (int i = 0; i < 12; i++) {
    assert_near(offsets[i], expected[i], fabs(expected[i]) * 1e-15);
  }
}

/* Strictness (plumb.h format): exactly twelve finite numbers, nothing
   else. Each text below is wrong, and the output must stay untouched. */
static void test_parse_rejects_bad_files(void **state) {
  (void)state;
  const char *bad[] = {
      "",
      "# only a comment\n",
      "0 0 0 0 0 0 0 0 0 0 0",           /* eleven */
      "0 0 0 0 0 0 0 0 0 0 0 0 0",       /* thirteen */
      "0 0 0 0 0 0 0 0 0 0 0 12abc",     /* trailing junk */
      "0 0 0 0 0 0 0 0 0 0 0 1.2.3",     /* two points */
      "0 0 0 0 0 0 0 0 0 0 0 nan",       /* not a number */
      "0 0 0 0 0 0 0 0 0 0 0 inf",       /* not finite */
      "0 0 0 0 0 0 0 0 0 0 0 1e999",     /* overflows to infinity */
      "0 0 0 0 0 0 0 0 0 0 0 0x10",      /* no hexadecimal */
      "0 0 0 0 0 0 0 0 0 0 0 1e",        /* exponent without digits */
      "0 0 0 0 0 0 0 0 0 0 0 .",         /* no digits */
      "0 0 0 0 0 0 0 0 0 0 0 -",         /* sign alone */
      "0 0 0 0 0 0 0 0 0 0 0 1,5",       /* decimal comma = 13 numbers */
      "0 0 0 0 0 0 0 0 0 0,,0 0",        /* a missing value */
      ",0 0 0 0 0 0 0 0 0 0 0 0",        /* leading comma */
      "0 0 0 0 0 0 0 0 0 0 0 0,",        /* trailing comma */
      "0 0 0 0 0 0 0 0 0 0 0 +-1",       /* two signs */
      "0 0 0 0 0 0 0 0 0 0 0 0;",        /* unknown separator */
      "0 0 0 0 0 0 0 0 0 0 1.2.3",       /* "1.2" ".3" glued together */
      "0 0 0 0 0 0 0 0 0 0 1-2",         /* "1" "-2" glued together */
  };
  for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
    double offsets[12];
    for (int degree = 0; degree < 12; degree++) {
      offsets[degree] = 42.0;
    }
    if (plumb_tuning_parse_offsets(bad[i], offsets) != PLUMB_ERR_PARSE) {
      print_error("accepted bad text \"%s\"\n", bad[i]);
      fail();
    }
    assert_near(offsets[0], 42.0, 0.0);
  }
  double offsets[12];
  assert_int_equal(plumb_tuning_parse_offsets(NULL, offsets),
                   PLUMB_ERR_ARGUMENT);
  assert_int_equal(plumb_tuning_parse_offsets("0", NULL), PLUMB_ERR_ARGUMENT);
}

/* C11 7.11.1.1: setlocale(LC_NUMERIC) changes strtod's decimal point. The
   parser must read '.' anyway. Tries some comma locales (LOCPATH may point
   at one made with localedef); without any, the check still runs in "C". */
static void test_parse_ignores_lc_numeric(void **state) {
  (void)state;
  static const char *comma_locales[] = {"de_DE.UTF-8", "de_DE.utf8",
                                        "fr_FR.UTF-8", "nl_NL.UTF-8",
                                        "ru_RU.UTF-8"};
  const char *used = NULL;
  for (size_t i = 0; i < sizeof comma_locales / sizeof comma_locales[0];
       i++) {
    if (setlocale(LC_NUMERIC, comma_locales[i]) &&
        strcmp(localeconv()->decimal_point, ",") == 0) {
      used = comma_locales[i];
      break;
    }
  }
  if (!used) {
    print_message("    (no comma locale installed; checked in \"C\")\n");
  }
  double offsets[12];
  plumb_status status = plumb_tuning_parse_offsets(
      "1.5 -2.25 0 0 0 0 0 0 0 0 0 0.125", offsets);
  setlocale(LC_NUMERIC, "C");
  assert_int_equal(status, PLUMB_OK);
  assert_near(offsets[0], 1.5, 0.0);
  assert_near(offsets[1], -2.25, 0.0);
  assert_near(offsets[11], 0.125, 0.0);
}

/* ----------------------------------------------------------------- names */

/* The temperament names fixed for the command line and TTL (project
   interface, no outside source); each must round-trip. */
static void test_temperament_names_round_trip(void **state) {
  (void)state;
  static const char *names[PLUMB_TEMPERAMENT_COUNT] = {
      "equal",         "just",        "pythagorean", "meantone",
      "werckmeister3", "kirnberger3", "vallotti",    "custom"};
  for (int t = 0; t < PLUMB_TEMPERAMENT_COUNT; t++) {
    assert_string_equal(plumb_temperament_name((plumb_temperament)t),
                        names[t]);
    plumb_temperament parsed = PLUMB_TEMPERAMENT_COUNT;
    assert_int_equal(plumb_temperament_from_name(names[t], &parsed),
                     PLUMB_OK);
    assert_int_equal(parsed, t);
  }
  assert_null(plumb_temperament_name(PLUMB_TEMPERAMENT_COUNT));
  plumb_temperament parsed = PLUMB_TEMPERAMENT_JUST;
  assert_int_equal(plumb_temperament_from_name("Equal", &parsed),
                   PLUMB_ERR_UNKNOWN_NAME);
  assert_int_equal(plumb_temperament_from_name("", &parsed),
                   PLUMB_ERR_UNKNOWN_NAME);
  assert_int_equal(plumb_temperament_from_name("meantone ", &parsed),
                   PLUMB_ERR_UNKNOWN_NAME);
  assert_int_equal(parsed, PLUMB_TEMPERAMENT_JUST);
  assert_int_equal(plumb_temperament_from_name(NULL, &parsed),
                   PLUMB_ERR_ARGUMENT);
  assert_int_equal(plumb_temperament_from_name("just", NULL),
                   PLUMB_ERR_ARGUMENT);
}

/* Pitch-class spelling of common practice (no source): C=0 .. B=11, the
   five black keys as sharps or flats, either letter case. */
static void test_pitch_class_names(void **state) {
  (void)state;
  static const struct {
    const char *name;
    int pitch_class;
  } good[] = {{"C", 0},  {"C#", 1}, {"Db", 1},  {"D", 2},   {"D#", 3},
              {"Eb", 3}, {"E", 4},  {"F", 5},   {"F#", 6},  {"Gb", 6},
              {"G", 7},  {"G#", 8}, {"Ab", 8},  {"A", 9},   {"A#", 10},
              {"Bb", 10}, {"B", 11}, {"c", 0},  {"c#", 1},  {"db", 1},
              {"eb", 3},  {"f#", 6}, {"gb", 6}, {"ab", 8},  {"bb", 10},
              {"b", 11}};
  for (size_t i = 0; i < sizeof good / sizeof good[0]; i++) {
    assert_int_equal(plumb_pitch_class_from_name(good[i].name),
                     good[i].pitch_class);
  }
  static const char *bad[] = {"",   "H",  "E#", "Fb",  "B#", "Cb", "C##",
                              "Dbb", "C ", " C", "CB", "Do", "X",  "#"};
  for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
    assert_int_equal(plumb_pitch_class_from_name(bad[i]), -1);
  }
  assert_int_equal(plumb_pitch_class_from_name(NULL), -1);
}

/* Scientific pitch notation with MIDI 60 = C4 and A4 = 69 (MIDI Tuning
   Standard numbering; octave names from memory): named examples, then a
   round trip of every note's letter through the pitch-class parser. */
static void test_note_names(void **state) {
  (void)state;
  char name[8];
  static const struct {
    int midi;
    const char *name;
  } known[] = {{60, "C4"}, {61, "C#4"}, {21, "A0"},  {69, "A4"},
               {0, "C-1"}, {11, "B-1"}, {108, "C8"}, {127, "G9"}};
  for (size_t i = 0; i < sizeof known / sizeof known[0]; i++) {
    plumb_note_name(known[i].midi, name);
    assert_string_equal(name, known[i].name);
  }
  for (int midi = 0; midi <= 127; midi++) {
    plumb_note_name(midi, name);
    char letter[3] = {name[0], name[1] == '#' ? '#' : '\0', '\0'};
    assert_int_equal(plumb_pitch_class_from_name(letter), midi % 12);
    int octave = 0;
    assert_int_equal(sscanf(name + strlen(letter), "%d", &octave), 1);
    assert_int_equal(octave, midi / 12 - 1);
  }
  plumb_note_name(-1, name);
  assert_string_equal(name, "");
  plumb_note_name(128, name);
  assert_string_equal(name, "");
}

/* plumb.h: one static sentence for every status, never NULL, even for a
   number that is not a status (as serd's serd_strerror does). */
static void test_strerror_for_every_status(void **state) {
  (void)state;
  const int statuses[] = {PLUMB_OK,
                          PLUMB_ERR_ARGUMENT,
                          PLUMB_ERR_MEMORY,
                          PLUMB_ERR_FFT,
                          PLUMB_ERR_SAMPLE_RATE,
                          PLUMB_ERR_PARSE,
                          PLUMB_ERR_UNKNOWN_NAME,
                          PLUMB_ERR_UNKNOWN_NAME + 1,
                          -1,
                          1000};
  const size_t count = sizeof statuses / sizeof statuses[0];
  for (size_t i = 0; i < count; i++) {
    const char *text = plumb_strerror((plumb_status)statuses[i]);
    assert_non_null(text);
    size_t length = strlen(text);
    assert_true(length > 10);
    assert_int_equal(text[length - 1], '.');
    for (size_t j = 0; j < i && j < 7; j++) {
      assert_string_not_equal(text,
                              plumb_strerror((plumb_status)statuses[j]));
    }
  }
}

/* plumb.h: verdict names, and only sharp, flat and unsteady count as
   flagged; unpitched sounds (drums) never do. */
static void test_verdicts(void **state) {
  (void)state;
  static const char *names[PLUMB_VERDICT_COUNT] = {
      "in-tune", "sharp", "flat", "unsteady", "unpitched"};
  static const bool flagged[PLUMB_VERDICT_COUNT] = {false, true, true, true,
                                                     false};
  for (int v = 0; v < PLUMB_VERDICT_COUNT; v++) {
    assert_string_equal(plumb_verdict_name((plumb_verdict)v), names[v]);
    assert_int_equal(plumb_verdict_is_flagged((plumb_verdict)v), flagged[v]);
  }
  assert_null(plumb_verdict_name(PLUMB_VERDICT_COUNT));
  assert_false(plumb_verdict_is_flagged(PLUMB_VERDICT_COUNT));
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_mts_equal_temperament_table),
      cmocka_unit_test(test_cents_of_just_intervals),
      cmocka_unit_test(test_cents_of_commas),
      cmocka_unit_test(test_cents_of_impossible_ratios),
      cmocka_unit_test(test_pythagorean_table),
      cmocka_unit_test(test_meantone_table),
      cmocka_unit_test(test_werckmeister3_table),
      cmocka_unit_test(test_kirnberger3_table),
      cmocka_unit_test(test_vallotti_table),
      cmocka_unit_test(test_major_thirds_on_every_tonic),
      cmocka_unit_test(test_meantone_fifths),
      cmocka_unit_test(test_meantone_rotated_to_g),
      cmocka_unit_test(test_just_intonation_on_d),
      cmocka_unit_test(test_a4_is_440_everywhere),
      cmocka_unit_test(test_a4_is_415_for_baroque),
      cmocka_unit_test(test_nearest_over_the_whole_range),
      cmocka_unit_test(test_nearest_near_the_midpoint),
      cmocka_unit_test(test_nearest_across_a_wide_meantone_gap),
      cmocka_unit_test(test_nearest_with_large_custom_offsets),
      cmocka_unit_test(test_nearest_tie_goes_to_the_lower_note),
      cmocka_unit_test(test_nearest_skips_unreachable_notes),
      cmocka_unit_test(test_nearest_rejects_impossible_frequencies),
      cmocka_unit_test(test_spec_default_is_iso_equal),
      cmocka_unit_test(test_build_rejects_bad_specs),
      cmocka_unit_test(test_custom_offsets_rotate_like_temperaments),
      cmocka_unit_test(test_parse_a_good_file),
      cmocka_unit_test(test_parse_decimal_forms),
      cmocka_unit_test(test_parse_rejects_bad_files),
      cmocka_unit_test(test_parse_ignores_lc_numeric),
      cmocka_unit_test(test_temperament_names_round_trip),
      cmocka_unit_test(test_pitch_class_names),
      cmocka_unit_test(test_note_names),
      cmocka_unit_test(test_strerror_for_every_status),
      cmocka_unit_test(test_verdicts),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
