/*
  The ensemble step (core/ensemble/) against values from outside the
  project:
  - coincident partials beat at |p f_low - q f_high| (Helmholtz 1863),
    each partial placed at f_k = k f0 sqrt(1 + B k^2) (Fletcher 1964);
    every figure is recomputed here from that formula and checked against
    its published value where one is given;
  - the 5-limit just ratios and their cents, 1200 log2(p/q) (Ellis 1885),
    from the standard 5-limit just scale (Barbour 1951, from memory);
  - pairs against the definition, checked by brute force over all pairs;
  - offsets and drift recovered from synthetic sessions built with known
    offsets and a known sag (exact by construction).
*/
#include "plumb_ensemble.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static double et_hz(int midi) {
  return 440.0 * pow(2.0, (midi - 69) / 12.0);
}
static double cents_of(double ratio) {
  return 1200.0 * log2(ratio);
}

/* --------------------------------------------------------------- ratios */

static void test_just_table(void **state) {
  (void)state;
  /* The table, and its compounds one and two octaves up in lowest terms. */
  static const int table[][2] = {{1, 1},  {16, 15}, {9, 8},  {6, 5}, {5, 4},   {4, 3}, {45, 32},
                                 {3, 2},  {8, 5},   {5, 3},  {9, 5}, {15, 8},  {2, 1}, {32, 15},
                                 {9, 4},  {12, 5},  {5, 2},  {8, 3}, {45, 16}, {3, 1}, {16, 5},
                                 {10, 3}, {18, 5},  {15, 4}, {4, 1}};
  for (size_t i = 0; i < sizeof table / sizeof table[0]; ++i) {
    int p = 0, q = 0;
    double c = cents_of((double)table[i][0] / table[i][1]);
    double dev = plumb_just_nearest(c, &p, &q);
    assert_int_equal(p, table[i][0]);
    assert_int_equal(q, table[i][1]);
    assert_true(fabs(dev) < 1e-9);
  }
  /* Equal-tempered intervals and their just neighbours: the tempered
     fifth is 1.955 cents narrow of 3/2, the major third 13.686 cents wide
     of 5/4, the minor third 15.641 narrow of 6/5 (1200 log2, recomputed). */
  int p = 0, q = 0;
  assert_true(fabs(plumb_just_nearest(700.0, &p, &q) - (700.0 - cents_of(1.5))) < 1e-9);
  assert_int_equal(p, 3);
  assert_int_equal(q, 2);
  assert_true(fabs(plumb_just_nearest(400.0, &p, &q) - 13.686) < 1e-3);
  assert_int_equal(p, 5);
  assert_int_equal(q, 4);
  assert_true(fabs(plumb_just_nearest(300.0, &p, &q) + 15.641) < 1e-3);
  assert_int_equal(p, 6);
  assert_int_equal(q, 5);
  assert_true(fabs(plumb_just_nearest(1600.0, &p, &q) - (1600.0 - cents_of(2.5))) < 1e-9);
  assert_int_equal(p, 5);
  assert_int_equal(q, 2);
  assert_true(isnan(plumb_just_nearest(-1.0, &p, &q)));
  assert_int_equal(p, 0);
  assert_true(isnan(plumb_just_nearest(NAN, &p, &q)));
}

static void test_interval_names(void **state) {
  (void)state;
  /* The trade's short forms (common practice, no source). */
  static const char *const names[] = {"P1",  "m2",  "M2",  "m3",  "M3",  "P4",  "TT",  "P5",  "m6",
                                      "M6",  "m7",  "M7",  "P8",  "m9",  "M9",  "m10", "M10", "P11",
                                      "A11", "P12", "m13", "M13", "m14", "M14", "P15"};
  char name[8];
  for (int s = 0; s <= 24; ++s) {
    plumb_interval_name(s, name);
    assert_string_equal(name, names[s]);
  }
  plumb_interval_name(-1, name);
  assert_string_equal(name, "");
}

/* ----------------------------------------------------------------- beats */

static void test_beats_unison(void **state) {
  (void)state;
  /* A unison c cents wide at f beats at f (2^(c/1200) - 1): 440 Hz and
     1 cent -> 0.2542 Hz, 5 cents -> 1.2726 Hz (derived). */
  double f = 440.0;
  double one = plumb_beat_hz(f, 0.0, 1, f * pow(2.0, 1.0 / 1200.0), 0.0, 1);
  double five = plumb_beat_hz(f, 0.0, 1, f * pow(2.0, 5.0 / 1200.0), 0.0, 1);
  assert_true(fabs(one - f * (pow(2.0, 1.0 / 1200.0) - 1.0)) < 1e-12);
  assert_true(fabs(one - 0.2542) < 1e-4);
  assert_true(fabs(five - 1.2726) < 1e-4);
  /* Two tones beat at |f1 - f2| (Helmholtz 1863). */
  assert_true(fabs(plumb_beat_hz(440.0, 0.0, 1, 441.5, 0.0, 1) - 1.5) < 1e-12);
}

static void test_beats_tempered(void **state) {
  (void)state;
  /* Tempered fifth A4-E5: 3 fA - 2 fE = 1.490 Hz; A3-E4 half that,
     about 0.745; tempered third C4-E4: 5 fC - 4 fE = 10.38 Hz. */
  double fifth = plumb_beat_hz(et_hz(69), 0.0, 3, et_hz(76), 0.0, 2);
  assert_true(fabs(fifth - fabs(3 * et_hz(69) - 2 * et_hz(76))) < 1e-9);
  assert_true(fabs(fifth - 1.490) < 1e-3);
  double low_fifth = plumb_beat_hz(et_hz(57), 0.0, 3, et_hz(64), 0.0, 2);
  assert_true(fabs(low_fifth - fifth / 2.0) < 1e-9);
  double third = plumb_beat_hz(et_hz(60), 0.0, 5, et_hz(64), 0.0, 4);
  assert_true(fabs(third - 10.38) < 5e-3);
  /* Just intervals of harmonic tones do not beat; a tempered octave of
     harmonic tones does not either. */
  assert_true(plumb_beat_hz(200.0, 0.0, 3, 300.0, 0.0, 2) < 1e-9);
  assert_true(plumb_beat_hz(200.0, 0.0, 5, 250.0, 0.0, 4) < 1e-9);
  assert_true(plumb_beat_hz(et_hz(57), 0.0, 2, et_hz(69), 0.0, 1) < 1e-9);
}

static void test_beats_stiff_string(void **state) {
  (void)state;
  /* An octave A3-A4 of a stiff string with B = 4e-4 on both notes: the
     lower note's second partial sits at 2 f0 sqrt(1 + 4B), the upper's
     first at f0' sqrt(1 + B) (Fletcher 1964), so a pure 2:1 of the model
     f0s beats at 440 (sqrt(1 + 4B) - sqrt(1 + B)) = 0.264 Hz. */
  double b = 4e-4;
  double expected = 440.0 * (sqrt(1.0 + 4.0 * b) - sqrt(1.0 + b));
  double beat = plumb_beat_hz(220.0, b, 2, 440.0, b, 1);
  assert_true(fabs(beat - expected) < 1e-9);
  assert_true(beat > 0.25 && beat < 0.28);
  /* NaN B is read as a harmonic tone. */
  assert_true(plumb_beat_hz(220.0, NAN, 2, 440.0, NAN, 1) < 1e-9);
}

/* -------------------------------------------------------------- sessions */

static plumb_ensemble_note pitched_note(uint32_t index, double start_s, double end_s,
                                        double f0_hz) {
  return (plumb_ensemble_note){index, start_s, end_s, f0_hz, NAN, false, NAN, NAN};
}

static plumb_ensemble_result *run(const plumb_ensemble_track *tracks, size_t count,
                                  plumb_interval_target target) {
  plumb_ensemble_settings settings;
  plumb_ensemble_settings_default(&settings);
  settings.target = target;
  plumb_ensemble_result *result = NULL;
  assert_int_equal(plumb_ensemble_run(tracks, count, &settings, &result), PLUMB_OK);
  assert_non_null(result);
  return result;
}

static void test_pair_fields(void **state) {
  (void)state;
  /* A tempered fifth A3-E4 given upper track first, and a drum hit. */
  plumb_ensemble_note upper[] = {pitched_note(0, 1.0, 2.0, et_hz(64))};
  plumb_ensemble_note lower[] = {pitched_note(4, 1.5, 3.0, et_hz(57))};
  plumb_ensemble_note drum[] = {pitched_note(7, 1.6, 1.9, NAN)};
  plumb_ensemble_track tracks[] = {{"upper", upper, 1}, {"lower", lower, 1}, {"drum", drum, 1}};
  plumb_ensemble_result *result = run(tracks, 3, PLUMB_INTERVALS_EQUAL);
  assert_int_equal(result->pair_count, 3);
  const plumb_ensemble_pair *pair = &result->pairs[0];
  assert_int_equal(pair->track_low, 1);
  assert_int_equal(pair->track_high, 0);
  assert_true(fabs(pair->start_s - 1.5) < 1e-12 && fabs(pair->end_s - 2.0) < 1e-12);
  assert_true(fabs(pair->interval_cents - 700.0) < 1e-9);
  assert_int_equal(pair->semitones, 7);
  assert_true(fabs(pair->et_dev_cents) < 1e-9);
  assert_int_equal(pair->just_p, 3);
  assert_int_equal(pair->just_q, 2);
  assert_true(fabs(pair->beat_hz - fabs(3 * et_hz(57) - 2 * et_hz(64))) < 1e-9);
  assert_int_equal(pair->verdict, PLUMB_PAIR_IN_TUNE);
  for (size_t i = 1; i < 3; ++i) { /* the drum's pairs: no verdict */
    assert_int_equal(result->pairs[i].verdict, PLUMB_PAIR_NO_VERDICT);
    assert_true(isnan(result->pairs[i].interval_cents) && isnan(result->pairs[i].beat_hz));
  }
  plumb_ensemble_free(result);
  /* Against just intonation the tempered third is 13.7 cents wide. */
  plumb_ensemble_note c4[] = {pitched_note(0, 0.0, 1.0, et_hz(60))};
  plumb_ensemble_note e4[] = {pitched_note(0, 0.0, 1.0, et_hz(64))};
  plumb_ensemble_track third[] = {{"c", c4, 1}, {"e", e4, 1}};
  result = run(third, 2, PLUMB_INTERVALS_JUST);
  assert_int_equal(result->pairs[0].verdict, PLUMB_PAIR_WIDE);
  assert_int_equal(result->tracks[0].flagged_pairs, 1);
  plumb_ensemble_free(result);
  result = run(third, 2, PLUMB_INTERVALS_EQUAL);
  assert_int_equal(result->pairs[0].verdict, PLUMB_PAIR_IN_TUNE);
  plumb_ensemble_free(result);
}

static void test_vibrato_no_beat(void **state) {
  (void)state;
  plumb_ensemble_note a[] = {pitched_note(0, 0.0, 1.0, 440.0)};
  plumb_ensemble_note b[] = {pitched_note(0, 0.0, 1.0, 441.0)};
  b[0].vibrato = true;
  plumb_ensemble_track tracks[] = {{"a", a, 1}, {"b", b, 1}};
  plumb_ensemble_result *result = run(tracks, 2, PLUMB_INTERVALS_EQUAL);
  assert_int_equal(result->pair_count, 1);
  assert_true(isnan(result->pairs[0].beat_hz));
  assert_true(fabs(result->pairs[0].interval_cents - cents_of(441.0 / 440.0)) < 1e-9);
  plumb_ensemble_free(result);
}

static void test_single_track_and_bad_input(void **state) {
  (void)state;
  plumb_ensemble_note a[] = {pitched_note(0, 0.0, 1.0, 440.0), pitched_note(1, 0.5, 2.0, 550.0)};
  plumb_ensemble_track one[] = {{"a", a, 2}};
  plumb_ensemble_result *result = run(one, 1, PLUMB_INTERVALS_EQUAL);
  assert_int_equal(result->pair_count, 0); /* a track never pairs with itself */
  assert_true(isnan(result->tracks[0].offset_cents));
  plumb_ensemble_free(result);
  result = run(NULL, 0, PLUMB_INTERVALS_EQUAL);
  assert_int_equal(result->track_count, 0);
  plumb_ensemble_free(result);
  plumb_ensemble_free(NULL);
  plumb_ensemble_settings settings;
  plumb_ensemble_settings_default(&settings);
  settings.tolerance_cents = NAN;
  assert_int_equal(plumb_ensemble_run(one, 1, &settings, &result), PLUMB_ERR_ARGUMENT);
  assert_null(result);
  /* A note with no length or a NaN time is left out, not a crash. */
  plumb_ensemble_note odd[] = {pitched_note(0, NAN, 1.0, 440.0), pitched_note(1, 0.5, 0.5, 440.0),
                               pitched_note(2, 0.0, 1.0, 660.0)};
  plumb_ensemble_track two[] = {{"a", a, 2}, {"odd", odd, 3}};
  result = run(two, 2, PLUMB_INTERVALS_EQUAL);
  assert_int_equal(result->pair_count, 2); /* odd[2] with a[0] and a[1] */
  assert_int_equal(result->tracks[1].notes, 3);
  plumb_ensemble_free(result);
}

/* A simple xorshift for reproducible random sessions. */
static uint64_t rng_state = 88172645463325252ull;
static double uniform(void) {
  rng_state ^= rng_state << 13;
  rng_state ^= rng_state >> 7;
  rng_state ^= rng_state << 17;
  return (double)(rng_state >> 11) / 9007199254740992.0;
}

static void test_pairs_match_brute_force(void **state) {
  (void)state;
  enum { TRACKS = 6, NOTES = 300 };
  static plumb_ensemble_note notes[TRACKS][NOTES];
  plumb_ensemble_track tracks[TRACKS];
  for (int t = 0; t < TRACKS; ++t) {
    double at = uniform();
    for (int i = 0; i < NOTES; ++i) {
      double length = 0.02 + 1.5 * uniform();
      notes[t][i] = pitched_note((uint32_t)i, at, at + length, 110.0 * (1.0 + 3.0 * uniform()));
      at += length * (uniform() < 0.3 ? 0.5 : 1.0) + 0.2 * uniform(); /* some overlap */
    }
    tracks[t] = (plumb_ensemble_track){"t", notes[t], NOTES};
  }
  plumb_ensemble_result *result = run(tracks, TRACKS, PLUMB_INTERVALS_EQUAL);
  /* The definition, over every two notes of two tracks. */
  size_t expected = 0;
  for (int a = 0; a < TRACKS; ++a)
    for (int b = a + 1; b < TRACKS; ++b)
      for (int i = 0; i < NOTES; ++i)
        for (int j = 0; j < NOTES; ++j) {
          double overlap = fmin(notes[a][i].end_s, notes[b][j].end_s) -
                           fmax(notes[a][i].start_s, notes[b][j].start_s);
          expected += overlap >= 0.080;
        }
  assert_true(expected > 500);
  assert_int_equal(result->pair_count, expected);
  for (size_t i = 0; i < result->pair_count; ++i) {
    const plumb_ensemble_pair *pair = &result->pairs[i];
    assert_true(pair->end_s - pair->start_s >= 0.080 - 1e-6);
    assert_true(pair->track_low != pair->track_high);
    assert_true(i == 0 || result->pairs[i - 1].start_s <= pair->start_s);
  }
  plumb_ensemble_free(result);
}

/* A four-part session of chords: parts 0..3 play the notes of a
   progression with known offsets (cents) and a linear sag over the take.
   Part 1 sings with vibrato (its centre is what the log gives). */
enum { PARTS = 4, CHORDS = 60 };
static plumb_ensemble_note session[PARTS][CHORDS];

static void make_session(const double offsets_cents[PARTS], double sag_cents_per_min,
                         double take_s) {
  static const int chords[4][PARTS] = {
      {48, 55, 64, 72}, {53, 57, 65, 72}, {55, 59, 62, 67}, {45, 57, 64, 72}};
  double chord_s = take_s / CHORDS;
  for (int c = 0; c < CHORDS; ++c) {
    for (int p = 0; p < PARTS; ++p) {
      double start_s = c * chord_s + 0.01 * p; /* the parts enter unevenly */
      double end_s = (c + 1) * chord_s - 0.05;
      double mid_min = 0.5 * (start_s + end_s) / 60.0;
      double cents = offsets_cents[p] + sag_cents_per_min * mid_min;
      session[p][c] = pitched_note((uint32_t)c, start_s, end_s,
                                   et_hz(chords[c % 4][p]) * pow(2.0, cents / 1200.0));
      session[p][c].vibrato = p == 1;
    }
  }
}

static void test_offsets_recovered(void **state) {
  (void)state;
  const double offsets[PARTS] = {0.0, 8.0, -3.0, 2.5};
  make_session(offsets, 0.0, 60.0);
  plumb_ensemble_track tracks[PARTS];
  for (int p = 0; p < PARTS; ++p) tracks[p] = (plumb_ensemble_track){"p", session[p], CHORDS};
  plumb_ensemble_result *result = run(tracks, PARTS, PLUMB_INTERVALS_EQUAL);
  assert_int_equal(result->pair_count, CHORDS * PARTS * (PARTS - 1) / 2);
  double mean = 0.0;
  for (int p = 0; p < PARTS; ++p) mean += offsets[p] / PARTS;
  double sum = 0.0;
  for (int p = 0; p < PARTS; ++p) {
    /* Zero mean over the tracks: each offset is its own less the mean. */
    assert_true(fabs(result->tracks[p].offset_cents - (offsets[p] - mean)) < 0.01);
    sum += result->tracks[p].offset_cents;
    assert_true(fabs(result->tracks[p].drift_cents_per_min) < 0.05);
  }
  assert_true(fabs(sum) < 1e-9);
  assert_true(fabs(result->drift_cents_per_min) < 0.05);
  assert_true(isnan(result->pairs[0].beat_hz) || result->pairs[0].track_low != 1);
  plumb_ensemble_free(result);
}

static void test_offsets_robust_to_a_wrong_note(void **state) {
  (void)state;
  const double offsets[PARTS] = {0.0, 0.0, 6.0, 0.0};
  make_session(offsets, 0.0, 60.0);
  session[3][10].f0_hz *= pow(2.0, 40.0 / 1200.0); /* one note 40 cents out */
  plumb_ensemble_track tracks[PARTS];
  for (int p = 0; p < PARTS; ++p) tracks[p] = (plumb_ensemble_track){"p", session[p], CHORDS};
  plumb_ensemble_result *result = run(tracks, PARTS, PLUMB_INTERVALS_EQUAL);
  double d = result->tracks[2].offset_cents - result->tracks[0].offset_cents;
  assert_true(fabs(d - 6.0) < 0.1);
  assert_true(fabs(result->tracks[3].offset_cents - result->tracks[0].offset_cents) < 0.2);
  plumb_ensemble_free(result);
}

static void test_sag_recovered(void **state) {
  (void)state;
  /* A choir that sags 20 cents over a 1-minute take, one part 5 cents
     sharp, another with vibrato; and a sag that crosses the half
     semitone (60 cents over 2 minutes, from -20 to -80). */
  const double offsets[PARTS] = {0.0, -2.0, 5.0, 0.0};
  make_session(offsets, -20.0, 60.0);
  plumb_ensemble_track tracks[PARTS];
  for (int p = 0; p < PARTS; ++p) tracks[p] = (plumb_ensemble_track){"p", session[p], CHORDS};
  plumb_ensemble_result *result = run(tracks, PARTS, PLUMB_INTERVALS_EQUAL);
  assert_true(fabs(result->drift_cents_per_min + 20.0) < 0.1);
  for (int p = 0; p < PARTS; ++p)
    assert_true(fabs(result->tracks[p].drift_cents_per_min + 20.0) < 0.1);
  assert_true(fabs(result->tracks[2].offset_cents - result->tracks[0].offset_cents - 5.0) < 0.05);
  plumb_ensemble_free(result);
  const double high[PARTS] = {-20.0, -20.0, -20.0, -20.0};
  make_session(high, -30.0, 120.0);
  result = run(tracks, PARTS, PLUMB_INTERVALS_EQUAL);
  assert_true(fabs(result->drift_cents_per_min + 30.0) < 0.5);
  plumb_ensemble_free(result);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_just_table),
      cmocka_unit_test(test_interval_names),
      cmocka_unit_test(test_beats_unison),
      cmocka_unit_test(test_beats_tempered),
      cmocka_unit_test(test_beats_stiff_string),
      cmocka_unit_test(test_pair_fields),
      cmocka_unit_test(test_vibrato_no_beat),
      cmocka_unit_test(test_single_track_and_bad_input),
      cmocka_unit_test(test_pairs_match_brute_force),
      cmocka_unit_test(test_offsets_recovered),
      cmocka_unit_test(test_offsets_robust_to_a_wrong_note),
      cmocka_unit_test(test_sag_recovered),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
