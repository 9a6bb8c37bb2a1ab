/*
  The library refuses settings and offsets outside their documented
  ranges (core/include/plumb.h) with a status, so that no caller (the plugin, the
  command, a program of its own) can reach a float-to-int conversion
  that overflows (C11 6.3.1.4: undefined behaviour when the value does
  not fit) or a tuning the plugin would silently drop.

  The hostile values are IEEE 754's own (NaN, the infinities, the largest
  finite magnitudes) and C's INT_MIN / INT_MAX; the range ends are the
  piano's keys A0 = MIDI 21 and C8 = MIDI 108 (MIDI Tuning Standard
  numbering) and the half-octave offset limit of plumb.h (common
  practice, no source).
*/
#include "plumb.h"

#include <limits.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>

#include <cmocka.h>

#define SAMPLE_RATE_HZ 48000.0

static const double hostile_doubles[] = {NAN, INFINITY, -INFINITY, 1e308,  -1e308, -1.0,
                                         0.0, -0.0,     2.1e9,     -2.1e9, 1e-320};
#define HOSTILE_DOUBLES (sizeof hostile_doubles / sizeof hostile_doubles[0])

static const int hostile_ints[] = {INT_MIN, INT_MIN + 1, -1,  0,           20,
                                   109,     127,         128, INT_MAX - 1, INT_MAX};
#define HOSTILE_INTS (sizeof hostile_ints / sizeof hostile_ints[0])

/* plumb_new and plumb_configure must both refuse `settings`. */
static void assert_refused(const plumb_settings *settings, plumb *running, const char *what,
                           double value) {
  plumb_status status = PLUMB_OK;
  plumb *analyser = plumb_new(settings, &status);
  if (analyser || status != PLUMB_ERR_ARGUMENT) {
    print_error("plumb_new accepted %s = %g\n", what, value);
    plumb_free(analyser);
    fail();
  }
  if (plumb_configure(running, settings) != PLUMB_ERR_ARGUMENT) {
    print_error("plumb_configure accepted %s = %g\n", what, value);
    fail();
  }
  assert_int_equal(plumb_settings_check(settings), PLUMB_ERR_ARGUMENT);
}

static void assert_accepted(const plumb_settings *settings, plumb *running) {
  plumb_status status = PLUMB_ERR_MEMORY;
  plumb *analyser = plumb_new(settings, &status);
  assert_non_null(analyser);
  assert_int_equal(status, PLUMB_OK);
  plumb_free(analyser);
  assert_int_equal(plumb_configure(running, settings), PLUMB_OK);
}

static plumb *default_analyser(plumb_settings *settings) {
  plumb_settings_default(settings, SAMPLE_RATE_HZ);
  plumb *analyser = plumb_new(settings, NULL);
  assert_non_null(analyser);
  return analyser;
}

static void test_double_fields_refuse_hostile_values(void **state) {
  (void)state;
  plumb_settings good;
  plumb *running = default_analyser(&good);
  for (size_t i = 0; i < HOSTILE_DOUBLES; ++i) {
    double value = hostile_doubles[i];
    plumb_settings bad = good;
    bad.tolerance_cents = value;
    if (value != 2.1e9 && !(value > 0.0 && value < 1.0)) {
      assert_refused(&bad, running, "tolerance_cents", value);
    }
    bad = good;
    bad.min_note_ms = value;
    assert_refused(&bad, running, "min_note_ms", value);
    bad = good;
    bad.tuning.reference_hz = value;
    assert_refused(&bad, running, "tuning.reference_hz", value);
    if (!isfinite(value) || fabs(value) > 1200.0) {
      for (int pitch_class = 0; pitch_class < 12; ++pitch_class) {
        bad = good;
        bad.tuning.offset_cents[pitch_class] = value;
        assert_refused(&bad, running, "tuning.offset_cents", value);
      }
    }
  }
  /* 2.1e9 cents is 1.75 million octaves: no tolerance means that. */
  plumb_settings bad = good;
  bad.tolerance_cents = 2.1e9;
  assert_refused(&bad, running, "tolerance_cents", 2.1e9);
  plumb_free(running);
}

static void test_sample_rate_refused_in_new(void **state) {
  (void)state;
  for (size_t i = 0; i < HOSTILE_DOUBLES; ++i) {
    plumb_settings settings;
    plumb_settings_default(&settings, hostile_doubles[i]);
    plumb_status status = PLUMB_OK;
    assert_null(plumb_new(&settings, &status));
    assert_int_equal(status, PLUMB_ERR_SAMPLE_RATE);
  }
}

static void test_midi_range_refuses_hostile_values(void **state) {
  (void)state;
  plumb_settings good;
  plumb *running = default_analyser(&good);
  for (size_t i = 0; i < HOSTILE_INTS; ++i) {
    int value = hostile_ints[i];
    plumb_settings bad = good;
    bad.lowest_midi = value;
    bad.highest_midi = value < 21 ? 96 : value;
    assert_refused(&bad, running, "lowest_midi", value);
    bad = good;
    bad.highest_midi = value;
    bad.lowest_midi = value > 108 ? 28 : value;
    assert_refused(&bad, running, "highest_midi", value);
  }
  plumb_settings upside_down = good;
  upside_down.lowest_midi = 60;
  upside_down.highest_midi = 59;
  assert_refused(&upside_down, running, "lowest_midi above highest", 60);
  plumb_free(running);
}

/* The ends of each documented range are inside it. */
static void test_range_ends_are_accepted(void **state) {
  (void)state;
  plumb_settings good;
  plumb *running = default_analyser(&good);
  plumb_settings edge = good;
  edge.lowest_midi = 21;   /* A0 */
  edge.highest_midi = 108; /* C8 */
  assert_accepted(&edge, running);
  edge.lowest_midi = edge.highest_midi = 69;
  assert_accepted(&edge, running);
  edge = good;
  edge.min_note_ms = PLUMB_SETTINGS_MIN_NOTE_MS;
  assert_accepted(&edge, running);
  edge.min_note_ms = PLUMB_SETTINGS_MAX_NOTE_MS;
  assert_accepted(&edge, running);
  edge = good;
  edge.tolerance_cents = PLUMB_SETTINGS_MAX_TOLERANCE_CENTS;
  assert_accepted(&edge, running);
  edge.tuning.reference_hz = PLUMB_SETTINGS_MIN_REFERENCE_HZ;
  assert_accepted(&edge, running);
  edge.tuning.reference_hz = PLUMB_SETTINGS_MAX_REFERENCE_HZ;
  assert_accepted(&edge, running);
  /* A custom offset of -600 on degree 0 with +600 on A anchors to -1200 */
  plumb_tuning_spec spec;
  plumb_tuning_spec_default(&spec);
  spec.temperament = PLUMB_TEMPERAMENT_CUSTOM;
  spec.custom_offsets_cents[0] = -600.0;
  spec.custom_offsets_cents[9] = 600.0;
  assert_int_equal(plumb_tuning_build(&spec, &edge.tuning), PLUMB_OK);
  assert_true(fabs(edge.tuning.offset_cents[0] + 1200.0) < 1e-9);
  assert_accepted(&edge, running);
  plumb_free(running);
}

/* A refused configure keeps the previous settings: a 440 Hz tone 13 cents
   sharp (Ellis 1885 cents) is flagged with a 10-cent tolerance before
   and after a refused change to a NaN tolerance. */
static void test_refused_configure_keeps_settings(void **state) {
  (void)state;
  plumb_settings settings;
  plumb *analyser = default_analyser(&settings);
  plumb_settings bad = settings;
  bad.tolerance_cents = NAN;
  bad.min_note_ms = 1e308;
  assert_int_equal(plumb_configure(analyser, &bad), PLUMB_ERR_ARGUMENT);
  size_t n = (size_t)(0.6 * SAMPLE_RATE_HZ);
  float *tone = malloc(n * sizeof(float));
  assert_non_null(tone);
  double f_hz = 440.0 * pow(2.0, 13.0 / 1200.0);
  for (size_t i = 0; i < n; ++i) {
    tone[i] = (float)(0.2 * sin(2.0 * M_PI * f_hz * (double)i / SAMPLE_RATE_HZ));
  }
  plumb_process(analyser, tone, n);
  plumb_finish(analyser);
  free(tone);
  plumb_note note;
  assert_true(plumb_pop_note(analyser, &note));
  assert_int_equal(note.verdict, PLUMB_VERDICT_SHARP);
  assert_int_equal(note.midi, 69);
  plumb_free(analyser);
}

/* plumb_tuning_build: custom offsets within +-600 cents only, the ends
   included. */
static void test_build_refuses_offsets_beyond_the_limit(void **state) {
  (void)state;
  const double bad[] = {600.000001, -600.000001, 601.0, 1e308, -1e308, 1200.0, NAN, INFINITY};
  for (size_t i = 0; i < sizeof bad / sizeof bad[0]; ++i) {
    for (int degree = 0; degree < 12; ++degree) {
      plumb_tuning_spec spec;
      plumb_tuning_spec_default(&spec);
      spec.temperament = PLUMB_TEMPERAMENT_CUSTOM;
      spec.custom_offsets_cents[degree] = bad[i];
      plumb_tuning tuning = {1.0, {7.0}};
      assert_int_equal(plumb_tuning_build(&spec, &tuning), PLUMB_ERR_ARGUMENT);
      assert_true(tuning.reference_hz == 1.0 && tuning.offset_cents[0] == 7.0);
      assert_int_equal(plumb_tuning_offsets_beyond_limit(spec.custom_offsets_cents), degree);
      /* Only custom offsets are used, so only they are checked. */
      spec.temperament = PLUMB_TEMPERAMENT_EQUAL;
      assert_int_equal(plumb_tuning_build(&spec, &tuning), PLUMB_OK);
    }
  }
  plumb_tuning_spec spec;
  plumb_tuning_spec_default(&spec);
  spec.temperament = PLUMB_TEMPERAMENT_CUSTOM;
  spec.custom_offsets_cents[3] = 600.0;
  spec.custom_offsets_cents[4] = -600.0;
  plumb_tuning tuning;
  assert_int_equal(plumb_tuning_build(&spec, &tuning), PLUMB_OK);
  assert_int_equal(plumb_tuning_offsets_beyond_limit(spec.custom_offsets_cents), -1);
}

/* A tuning file of twelve well-formed numbers, one beyond the limit:
   refused with PLUMB_ERR_ARGUMENT (not PLUMB_ERR_PARSE, so a caller can
   say what is wrong), the output untouched, and the number found. */
static void test_parse_refuses_offsets_beyond_the_limit(void **state) {
  (void)state;
  const struct {
    const char *text;
    int position;
    double value;
  } cases[] = {
      {"0 0 0 0 0 0 0 0 0 0 0 601", 11, 601.0},
      {"0 0 0 0 0 0 0 0 0 0 0 1e308", 11, 1e308},
      {"-600.5, 0 0 0 0 0 0 0 0 0 0 0", 0, -600.5},
      {"# c\n0 0 0 0 0 1200 0 0 0 0 0 -9999", 5, 1200.0},
  };
  for (size_t i = 0; i < sizeof cases / sizeof cases[0]; ++i) {
    double offsets[12];
    for (int degree = 0; degree < 12; ++degree) {
      offsets[degree] = 42.0;
    }
    assert_int_equal(plumb_tuning_parse_offsets(cases[i].text, offsets), PLUMB_ERR_ARGUMENT);
    assert_true(offsets[0] == 42.0 && offsets[11] == 42.0);
    double found = 0.0;
    assert_int_equal(plumb_tuning_parse_find_beyond_limit(cases[i].text, &found),
                     cases[i].position);
    assert_true(found == cases[i].value);
  }
  double offsets[12];
  assert_int_equal(plumb_tuning_parse_offsets("600 -600 0 0 0 0 0 0 0 0 0 0", offsets), PLUMB_OK);
  assert_true(offsets[0] == 600.0 && offsets[1] == -600.0);
  assert_int_equal(plumb_tuning_parse_find_beyond_limit("600 0 0 0 0 0 0 0 0 0 0 0", NULL), -1);
  assert_int_equal(plumb_tuning_parse_find_beyond_limit("0 0 nan", NULL), -1);
  assert_int_equal(plumb_tuning_parse_offsets("0 0 0 0 0 0 0 0 0 0 0 1e999", offsets),
                   PLUMB_ERR_PARSE); /* overflow stays a parse error */
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_double_fields_refuse_hostile_values),
      cmocka_unit_test(test_sample_rate_refused_in_new),
      cmocka_unit_test(test_midi_range_refuses_hostile_values),
      cmocka_unit_test(test_range_ends_are_accepted),
      cmocka_unit_test(test_refused_configure_keeps_settings),
      cmocka_unit_test(test_build_refuses_offsets_beyond_the_limit),
      cmocka_unit_test(test_parse_refuses_offsets_beyond_the_limit),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
