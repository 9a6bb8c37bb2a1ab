/*
  Tests for the session log's row formatting (plugin/formats/note_csv.c).

  The outside reference for every number is the C library's printf in the
  "C" locale (glibc, as Debian ships it): the log format fixes each column
  to a printf conversion (%.4f, %.3e ...), and our formatter must print
  exactly what printf would, but without following the host's locale. The
  header and the empty-field rule are the session-log interface the team
  agreed (docs/log-format.md); note names follow scientific pitch notation
  (Acoustical Society of America: A4 = MIDI 69, C4 = MIDI 60).
*/
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <locale.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "plumb.h"
#include "number_text.h"
#include "note_csv.h"

/* ------------------------------------------------------------- helpers */

/* A small linear congruential generator (Knuth's MMIX constants) so the
   sweep is the same on every run. */
static uint64_t lcg_state = 0x2545F4914F6CDD1Dull;

static double lcg_uniform(void) {
  lcg_state = lcg_state * 6364136223846793005ull + 1442695040888963407ull;
  return (double)(lcg_state >> 11) * 0x1p-53;
}

/* printf in the C locale: the reference. */
static void printf_fixed(double value, int decimals, char *out, size_t n) {
  snprintf(out, n, "%.*f", decimals, value);
}

static void printf_scientific(double value, int decimals, char *out, size_t n) {
  snprintf(out, n, "%.*e", decimals, value);
}

static void check_fixed(double value, int decimals) {
  char expected[512];
  char actual[512];
  printf_fixed(value, decimals, expected, sizeof expected);
  int length = plumb_text_fixed(value, decimals, actual, sizeof actual);
  if (strcmp(expected, actual) != 0 || length != (int)strlen(expected)) {
    print_error("%.17g at %d decimals: printf \"%s\", plumb \"%s\" (%d)\n",
                value, decimals, expected, actual, length);
    fail();
  }
}

static void check_scientific(double value, int decimals) {
  char expected[64];
  char actual[64];
  printf_scientific(value, decimals, expected, sizeof expected);
  int length = plumb_text_scientific(value, decimals, actual, sizeof actual);
  if (strcmp(expected, actual) != 0 || length != (int)strlen(expected)) {
    print_error("%.17g at %d decimals: printf \"%s\", plumb \"%s\" (%d)\n",
                value, decimals, expected, actual, length);
    fail();
  }
}

/* A note where every measurement is present. */
static plumb_note known_note(void) {
  plumb_note note;
  memset(&note, 0, sizeof note);
  note.index = 7;
  note.start_s = 1.23456;
  note.end_s = 2.5;
  note.timeline_s = 62.000049;
  note.midi = 61;
  note.target_hz = 277.1826309768721;
  note.f0_hz = 278.5;
  note.cents = 8.2106;
  note.spread_cents = 1.005;
  note.drift_cents_per_s = -0.4449;
  note.vibrato_hz = 5.5;
  note.vibrato_cents = 23.456;
  note.confidence = 0.98765;
  note.inharmonicity_b = 0.00012345;
  note.partials = 12;
  note.hnr_db = 24.125;
  note.odd_even_db = -3.5;
  note.centroid_hz = 1234.5678;
  note.attack_ms = 35.25;
  note.decay_ms = 120.06;
  note.sustain_db = -6.02;
  note.release_ms = 250.0;
  note.peak_dbfs = -1.5;
  note.verdict = PLUMB_VERDICT_IN_TUNE;
  note.bar = 13.0;
  note.beat = 2.5;
  note.tristimulus[0] = 0.27796;
  note.tristimulus[1] = 0.30112;
  note.tristimulus[2] = 0.42092;
  note.decay_db_per_s = NAN; /* it has a plateau */
  for (int k = 0; k < PLUMB_MAX_PARTIALS; ++k) note.partial_cents[k] = NAN;
  note.partial_cents[0] = 0.69f;
  note.partial_cents[1] = 1.375f;
  note.partial_cents[9] = 33.95f;
  note.partial_cents[10] = -0.004f;
  return note;
}

/* A note where nothing but the index and the verdict applies. */
static plumb_note empty_note(void) {
  plumb_note note;
  memset(&note, 0, sizeof note);
  note.index = 0;
  double *measures[] = {&note.start_s,      &note.end_s,
                        &note.timeline_s,   &note.target_hz,
                        &note.f0_hz,        &note.cents,
                        &note.spread_cents, &note.drift_cents_per_s,
                        &note.vibrato_hz,   &note.vibrato_cents,
                        &note.confidence,   &note.inharmonicity_b,
                        &note.hnr_db,       &note.odd_even_db,
                        &note.centroid_hz,  &note.attack_ms,
                        &note.decay_ms,     &note.sustain_db,
                        &note.release_ms,   &note.peak_dbfs,
                        &note.bar,          &note.beat,
                        &note.tristimulus[0], &note.tristimulus[1],
                        &note.tristimulus[2], &note.decay_db_per_s};
  for (size_t i = 0; i < sizeof measures / sizeof measures[0]; ++i) {
    *measures[i] = NAN;
  }
  for (int k = 0; k < PLUMB_MAX_PARTIALS; ++k) note.partial_cents[k] = NAN;
  note.midi = -1;
  note.partials = -1;
  note.verdict = PLUMB_VERDICT_UNPITCHED;
  return note;
}

/* --------------------------------------------------------------- tests */

/* The column list of the session-log interface, typed in from it. */
static void header_is_the_agreed_column_list(void **state) {
  (void)state;
  assert_string_equal(
      plumb_csv_header(),
      "index,start_s,end_s,timeline_s,note,midi,target_hz,f0_hz,cents,"
      "spread_cents,drift_cents_per_s,vibrato_hz,vibrato_cents,confidence,"
      "inharmonicity_b,partials,hnr_db,odd_even_db,centroid_hz,attack_ms,"
      "decay_ms,sustain_db,release_ms,peak_dbfs,verdict,"
      "bar,beat,tristimulus_1,tristimulus_2,tristimulus_3,decay_db_per_s,"
      "partial_cents");
}

/* Reference: glibc printf("%.*f") in the C locale. The list holds exact
   binary ties (0.125, 2.5, 0.375), values just below a tie in binary
   (2.675 is 2.67499999...), carries (0.99996), signs and huge values. */
static void fixed_matches_printf_on_edge_values(void **state) {
  (void)state;
  const double values[] = {0.0,
                           -0.0,
                           0.125,
                           0.375,
                           2.5,
                           3.5,
                           2.675,
                           1.005,
                           0.99996,
                           9.99995,
                           -0.001,
                           -0.004999,
                           1e-300,
                           -1e-300,
                           440.0,
                           1e15,
                           9007199254740991.0,
                           9007199254740993.0,
                           1.5e17,
                           -1e300,
                           123456.78901,
                           0.045};
  for (size_t i = 0; i < sizeof values / sizeof values[0]; ++i) {
    for (int decimals = 0; decimals <= 9; ++decimals) {
      check_fixed(values[i], decimals);
    }
  }
}

/* Reference: glibc printf. Multiples of 1/1024 are exact in binary, so
   many of them sit exactly on a rounding midpoint at some precision; the
   random values cover the magnitudes the log writes (times to hours,
   frequencies to 20 kHz, dB, cents). */
static void fixed_matches_printf_on_a_sweep(void **state) {
  (void)state;
  for (int i = -50000; i <= 50000; i += 7) {
    for (int decimals = 1; decimals <= 4; ++decimals) {
      check_fixed(i / 1024.0, decimals);
    }
  }
  for (int i = 0; i < 200000; ++i) {
    double magnitude = pow(10.0, -4.0 + 9.0 * lcg_uniform());
    double value = lcg_uniform() < 0.5 ? -magnitude : magnitude;
    check_fixed(value, 1 + i % 4);
  }
}

/* Reference: glibc printf("%.3e"), as the log writes B. */
static void scientific_matches_printf(void **state) {
  (void)state;
  const double values[] = {0.0,        -0.0,   1e-5,     1e-4,  9.9995e-4,
                           9.99949e-4, 1.0,    10.0,     0.1,   0.00012345,
                           -2.5e-6,    1e-300, 4.9e-324, 1e300, 123456789.0};
  for (size_t i = 0; i < sizeof values / sizeof values[0]; ++i) {
    for (int decimals = 0; decimals <= 6; ++decimals) {
      check_scientific(values[i], decimals);
    }
  }
  for (int i = 0; i < 200000; ++i) {
    double value = pow(10.0, -8.0 + 8.0 * lcg_uniform());
    check_scientific(lcg_uniform() < 0.1 ? -value : value, 3);
  }
}

static void not_a_number_writes_nothing(void **state) {
  (void)state;
  char text[16] = "x";
  assert_int_equal(plumb_text_fixed(NAN, 2, text, sizeof text), 0);
  assert_string_equal(text, "");
  assert_int_equal(plumb_text_fixed(INFINITY, 2, text, sizeof text), 0);
  assert_int_equal(plumb_text_scientific(-INFINITY, 3, text, sizeof text), 0);
  assert_string_equal(text, "");
}

/* The interface: a value that does not apply is an empty field, never 0;
   31 commas separate the 32 columns. */
static void empty_fields_for_values_that_do_not_apply(void **state) {
  (void)state;
  plumb_note note = empty_note();
  char row[PLUMB_CSV_ROW_MAX];
  int length = plumb_note_to_csv(&note, row, sizeof row);
  assert_string_equal(row, "0,,,,,,,,,,,,,,,,,,,,,,,,unpitched,,,,,,,");
  assert_int_equal(length, (int)strlen(row));
}

/* Every field of a full note, typed in by hand from printf's rules (the
   C locale); C#4 is MIDI 61 in scientific pitch notation. */
static void known_row_is_formatted_as_expected(void **state) {
  (void)state;
  plumb_note note = known_note();
  char row[PLUMB_CSV_ROW_MAX];
  plumb_note_to_csv(&note, row, sizeof row);
  assert_string_equal(row,
                      "7,1.2346,2.5000,62.0000,C#4,61,277.183,278.500,8.21,"
                      "1.00,-0.44,5.50,23.46,0.988,1.234e-04,12,24.12,"
                      "-3.50,1234.568,35.2,120.1,-6.02,250.0,-1.50,in-tune,"
                      "13,2.500,0.2780,0.3011,0.4209,,"
                      "1:+0.69 2:+1.38 10:+33.95 11:-0.00");
}

/* The same row, field by field, against printf in the C locale. */
static void known_row_agrees_with_printf(void **state) {
  (void)state;
  plumb_note n = known_note();
  char name[8];
  plumb_note_name(n.midi, name);
  char expected[PLUMB_CSV_ROW_MAX];
  snprintf(expected, sizeof expected,
           "%u,%.4f,%.4f,%.4f,%s,%d,%.3f,%.3f,%.2f,%.2f,%.2f,%.2f,%.2f,"
           "%.3f,%.3e,%d,%.2f,%.2f,%.3f,%.1f,%.1f,%.2f,%.1f,%.2f,%s,"
           "%.0f,%.3f,%.4f,%.4f,%.4f,,1:%+.2f 2:%+.2f 10:%+.2f 11:%+.2f",
           (unsigned)n.index, n.start_s, n.end_s, n.timeline_s, name, n.midi,
           n.target_hz, n.f0_hz, n.cents, n.spread_cents, n.drift_cents_per_s,
           n.vibrato_hz, n.vibrato_cents, n.confidence, n.inharmonicity_b,
           n.partials, n.hnr_db, n.odd_even_db, n.centroid_hz, n.attack_ms,
           n.decay_ms, n.sustain_db, n.release_ms, n.peak_dbfs,
           plumb_verdict_name(n.verdict), n.bar, n.beat, n.tristimulus[0],
           n.tristimulus[1], n.tristimulus[2], (double)n.partial_cents[0],
           (double)n.partial_cents[1], (double)n.partial_cents[9],
           (double)n.partial_cents[10]);
  char row[PLUMB_CSV_ROW_MAX];
  plumb_note_to_csv(&n, row, sizeof row);
  assert_string_equal(row, expected);
}

/* Like snprintf: a short buffer gets a terminated prefix, and the return
   value is the full length. */
static void short_buffer_is_cut_and_terminated(void **state) {
  (void)state;
  plumb_note note = known_note();
  char full[PLUMB_CSV_ROW_MAX];
  int full_length = plumb_note_to_csv(&note, full, sizeof full);
  char small[10];
  memset(small, 'x', sizeof small);
  assert_int_equal(plumb_note_to_csv(&note, small, sizeof small), full_length);
  assert_int_equal(strlen(small), sizeof small - 1);
  assert_memory_equal(small, full, sizeof small - 1);
  assert_int_equal(plumb_note_to_csv(&note, NULL, 0), full_length);
  assert_int_equal(plumb_note_to_csv(NULL, full, sizeof full), -1);
}

/* When no comma locale is installed, builds de_DE.UTF-8 into a temporary
   folder with localedef (Debian: libc-bin, with the sources from the
   `locales` package) and points LOCPATH at it; glibc reads LOCPATH on
   every setlocale(). Returns the locale's name, or NULL. */
static char comma_locale_folder[64];

static const char *build_comma_locale(void) {
  snprintf(comma_locale_folder, sizeof comma_locale_folder,
           "/tmp/plumb-locale.XXXXXX");
  if (!mkdtemp(comma_locale_folder)) {
    return NULL;
  }
  char command[256];
  snprintf(command, sizeof command,
           "localedef -i de_DE -f UTF-8 %s/de_DE.UTF-8 >/dev/null 2>&1",
           comma_locale_folder);
  if (system(command) != 0) {
    return NULL;
  }
  setenv("LOCPATH", comma_locale_folder, 1);
  return setlocale(LC_ALL, "de_DE.UTF-8");
}

static const char *choose_comma_locale(void) {
  const char *installed[] = {"de_DE.UTF-8", "de_DE.utf8", "de_DE",
                             "fr_FR.UTF-8", "nl_NL.UTF-8"};
  for (size_t i = 0; i < sizeof installed / sizeof installed[0]; ++i) {
    const char *chosen = setlocale(LC_ALL, installed[i]);
    if (chosen) {
      return chosen;
    }
  }
  return build_comma_locale();
}

static void remove_built_locale(void) {
  if (comma_locale_folder[0]) {
    char command[128];
    snprintf(command, sizeof command, "rm -rf %s", comma_locale_folder);
    if (system(command) != 0) {
      print_message("could not remove %s\n", comma_locale_folder);
    }
  }
}

/* A host that runs in a language with a decimal comma must still get
   '.' in the log. printf itself is the witness that the locale took
   effect ("1,50"); skipped only when no comma locale can be had. */
static void rows_do_not_follow_the_locale(void **state) {
  (void)state;
  plumb_note note = known_note();
  char in_c_locale[PLUMB_CSV_ROW_MAX];
  plumb_note_to_csv(&note, in_c_locale, sizeof in_c_locale);

  const char *chosen = choose_comma_locale();
  char probe[16];
  snprintf(probe, sizeof probe, "%.2f", 1.5);
  if (!chosen || strcmp(probe, "1,50") != 0) {
    setlocale(LC_ALL, "C");
    remove_built_locale();
    skip(); /* no locale with a decimal comma on this machine */
  }
  char in_comma_locale[PLUMB_CSV_ROW_MAX];
  plumb_note_to_csv(&note, in_comma_locale, sizeof in_comma_locale);
  char fixed[16];
  plumb_text_fixed(1.5, 2, fixed, sizeof fixed);
  setlocale(LC_ALL, "C");
  remove_built_locale();
  assert_string_equal(in_comma_locale, in_c_locale);
  assert_string_equal(fixed, "1.50");
}

int main(void) {
  setlocale(LC_ALL, "C");
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(header_is_the_agreed_column_list),
      cmocka_unit_test(fixed_matches_printf_on_edge_values),
      cmocka_unit_test(fixed_matches_printf_on_a_sweep),
      cmocka_unit_test(scientific_matches_printf),
      cmocka_unit_test(not_a_number_writes_nothing),
      cmocka_unit_test(empty_fields_for_values_that_do_not_apply),
      cmocka_unit_test(known_row_is_formatted_as_expected),
      cmocka_unit_test(known_row_agrees_with_printf),
      cmocka_unit_test(short_buffer_is_cut_and_terminated),
      cmocka_unit_test(rows_do_not_follow_the_locale),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
