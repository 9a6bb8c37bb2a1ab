/*
  Harmonicity and envelope of real sampled instruments, rendered at test
  time by fluidsynth with Debian's fluid-soundfont-gm (chorus and reverb
  off; tests/sampled/render.h):
  - the piano's B lies in the range published for its register: at C4
    about 3.5e-4 (Young 1952: partial 2 about 1.2 cents sharp; B derived),
    lowest about two octaves below middle C (Schuck & Young 1943) and
    rising towards the treble; the ranges per note below are from memory
    (a factor of about 2 either side of the usual values);
  - the clarinet's odd/even balance lies clearly above the violin's and the
    trumpet's at the same pitch (common practice: the low register of a
    closed-open pipe favours odd harmonics);
  - the guitar and the piano have no plateau (a free decay rate, no
    sustain level); the organ has one.
*/
#include "harness.h"
#include "render.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#define FS_HZ 48000.0
#define NOTE_S 1.6
#define GAP_S 0.8
#define MAX_NOTES 8

/* GM programs (General MIDI 1, zero-based). */
enum { PIANO = 0, CHURCH_ORGAN = 19, NYLON_GUITAR = 24, VIOLIN = 40, TRUMPET = 56, CLARINET = 71 };

static char work_dir[64];
static bool have_renderer;

static int setup(void **state) {
  (void)state;
  snprintf(work_dir, sizeof work_dir, "/tmp/plumb-timbre-XXXXXX");
  if (!mkdtemp(work_dir)) return -1;
  have_renderer = sampled_available();
  return 0;
}

static int teardown(void **state) {
  (void)state;
  if (getenv("PLUMB_TEST_KEEP")) return 0;
  char command[128];
  snprintf(command, sizeof command, "rm -rf '%s'", work_dir);
  return system(command) == 0 ? 0 : -1;
}

/* Render one note of each pitch and return the note found for each
   (the pitched note starting within 100 ms of it); false when rendering
   is not possible (the test skips). */
static void read_notes(int program, const int *pitches, int count, plumb_note *found) {
  if (!have_renderer) {
    print_message("fluidsynth or the GM soundfont missing: skipped\n");
    skip();
  }
  sampled_note notes[MAX_NOTES];
  double t = 0.4;
  for (int i = 0; i < count; ++i) {
    notes[i] = (sampled_note){pitches[i], 100, t, NOTE_S, 0.3};
    t += NOTE_S + GAP_S;
  }
  char wav[512];
  assert_int_equal(sampled_render(work_dir, program, notes, count, FS_HZ, wav, sizeof wav), 0);
  size_t frames;
  int rate;
  float *x = sampled_read_mono(wav, &frames, &rate);
  assert_non_null(x);
  static harness_result result;
  assert_int_equal(harness_run_default(rate, x, frames, 1024, &result), 0);
  free(x);
  for (int i = 0; i < count; ++i) {
    const plumb_note *best = NULL;
    for (int r = 0; r < result.count; ++r) {
      const plumb_note *e = &result.notes[r];
      if (e->verdict == PLUMB_VERDICT_UNPITCHED || e->midi != pitches[i]) continue;
      if (fabs(e->start_s - notes[i].start_s) > 0.1) continue;
      best = e;
      break;
    }
    if (!best) harness_print(&result);
    assert_non_null(best);
    found[i] = *best;
  }
}

static void test_piano_b_in_published_range(void **state) {
  (void)state;
  /* (MIDI, lowest B, highest B): A2 near the minimum of the curve, C4
     around Young's 3.5e-4, C5 and C6 rising. From memory, except C4. */
  const int pitches[] = {45, 60, 72, 84};
  const double low[] = {3e-5, 1.75e-4, 3e-4, 8e-4};
  const double high[] = {3e-4, 7e-4, 2e-3, 6e-3};
  plumb_note notes[4];
  read_notes(PIANO, pitches, 4, notes);
  for (int i = 0; i < 4; ++i) {
    print_message("piano midi %d: B %.3e (range %.1e to %.1e), %d partials\n", pitches[i],
                  notes[i].inharmonicity_b, low[i], high[i], notes[i].partials);
    assert_true(notes[i].inharmonicity_b >= low[i] && notes[i].inharmonicity_b <= high[i]);
  }
  /* Rising from the lowest note to the highest measured (Schuck & Young). */
  assert_true(notes[0].inharmonicity_b < notes[1].inharmonicity_b);
  assert_true(notes[1].inharmonicity_b < notes[3].inharmonicity_b);
}

#define CLEARLY_ABOVE_DB 6.0 /* common practice, no source */

static void test_clarinet_odd_even_above_violin_and_trumpet(void **state) {
  (void)state;
  const int pitches[] = {55, 58, 62}; /* G3, A#3, D4: the clarinet's low register */
  plumb_note clarinet[3], violin[3], trumpet[3];
  read_notes(CLARINET, pitches, 3, clarinet);
  read_notes(VIOLIN, pitches, 3, violin);
  read_notes(TRUMPET, pitches, 3, trumpet);
  for (int i = 0; i < 3; ++i) {
    print_message("midi %d: odd/even clarinet %+.2f dB, violin %+.2f, trumpet %+.2f\n",
                  pitches[i], clarinet[i].odd_even_db, violin[i].odd_even_db,
                  trumpet[i].odd_even_db);
    assert_true(clarinet[i].odd_even_db >= violin[i].odd_even_db + CLEARLY_ABOVE_DB);
    assert_true(clarinet[i].odd_even_db >= trumpet[i].odd_even_db + CLEARLY_ABOVE_DB);
  }
}

static void check_plateau(int program, const char *name, bool plateau) {
  const int pitches[] = {48, 55, 64};
  plumb_note notes[3];
  read_notes(program, pitches, 3, notes);
  for (int i = 0; i < 3; ++i) {
    print_message("%s midi %d: attack %.1f ms, decay %.1f ms, sustain %.2f dB, release %.1f "
                  "ms, free decay %.2f dB/s\n",
                  name, pitches[i], notes[i].attack_ms, notes[i].decay_ms, notes[i].sustain_db,
                  notes[i].release_ms, notes[i].decay_db_per_s);
    if (plateau) {
      assert_true(isfinite(notes[i].sustain_db));
      assert_true(isnan(notes[i].decay_db_per_s));
    } else {
      assert_true(isnan(notes[i].sustain_db));
      assert_true(notes[i].decay_db_per_s < 0.0);
    }
  }
}

static void test_guitar_has_no_plateau(void **state) {
  (void)state;
  check_plateau(NYLON_GUITAR, "guitar", false);
}

static void test_piano_has_no_plateau(void **state) {
  (void)state;
  check_plateau(PIANO, "piano", false);
}

static void test_organ_has_a_plateau(void **state) {
  (void)state;
  check_plateau(CHURCH_ORGAN, "organ", true);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_piano_b_in_published_range),
      cmocka_unit_test(test_clarinet_odd_even_above_violin_and_trumpet),
      cmocka_unit_test(test_guitar_has_no_plateau),
      cmocka_unit_test(test_piano_has_no_plateau),
      cmocka_unit_test(test_organ_has_a_plateau),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
