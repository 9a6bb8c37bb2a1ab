/*
  A note's steady part (measures/steady_part.c) on synthetic frame tracks
  whose every frame's pitch and level is set: the frames it must leave
  out (attack scoop, release glide, the onset's first tenth, the frames
  whose window reaches past the note, a dying tail) are known by
  construction, and the expected frame range is worked out by hand from
  the module's stated rules beside each check.
*/
#include "measures/steady_part.h"
#include "measure_fixture.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <string.h>

#define START_SAMPLE 24000 /* the note from 0.5 s */
#define COUNT        188   /* frames a hop apart; the note ends 100 samples after */

static void steady_note(frame_record *frames, double hz) {
  memset(frames, 0, sizeof(frame_record) * COUNT);
  for (int i = 0; i < COUNT; ++i) {
    frames[i].centre_sample = START_SAMPLE + (uint64_t)i * HOP;
    frames[i].voiced = true;
    frames[i].f0_hz = hz;
    frames[i].level_dbfs = -12.0;
  }
}

static double cents_hz(double hz, double cents) {
  return hz * pow(2.0, cents / 1200.0);
}

static const double start_s = START_SAMPLE / RATE_HZ;
static const double end_s = (START_SAMPLE + COUNT * HOP + 100) / RATE_HZ; /* sample 72228 */

static void test_scoop_and_glide_stay_out(void **state) {
  (void)state;
  /* Frames 0-29 scoop, 80 cents flat, frames 170-187 glide 50 cents
     down; the rest hold 440 Hz. The first tenth of the note (0.1 s,
     under the 0.15 s cap) ends at frame 19 (4823 samples / 256 = 18.8);
     frames whose window reaches past the end by more than a quarter
     (512 samples: centres after sample 71716) start at 187, so 186 is
     the last. The median of 19..186 is 440 Hz, so the band
     is 25 cents plus 1.6 x a zero median deviation: the scoop's frames
     up to 29 and the glide's from 170 are cut. */
  measure_context c = context_48k();
  static frame_record frames[COUNT];
  static double scratch[COUNT];
  steady_note(frames, 440.0);
  for (int i = 0; i < 30; ++i) frames[i].f0_hz = cents_hz(440.0, -80.0);
  for (int i = 170; i < COUNT; ++i) frames[i].f0_hz = cents_hz(440.0, -50.0);
  steady_part part;
  assert_true(plumb_steady_part_find(&c, frames, COUNT, start_s, end_s, scratch, &part));
  assert_int_equal(part.first, 30);
  assert_int_equal(part.last, 169);
  assert_true(part.reference_hz == 440.0);
  assert_true(fabs(part.band_cents - 25.0) < 1e-12);
  /* plumb_steady_frame: voiced and within the band. */
  assert_true(plumb_steady_frame(&frames[100], &part));
  assert_false(plumb_steady_frame(&frames[10], &part));
  frames[100].voiced = false;
  assert_false(plumb_steady_frame(&frames[100], &part));
}

static void test_vibrato_widens_the_band(void **state) {
  (void)state;
  /* A 40-cent sinusoidal vibrato at 5.5 Hz: the median |deviation| of a
     sinusoid is its extent times sin(pi/4) = 0.707 (half of a uniform
     phase has |sin| above it), so the band is 25 + 1.6 x 28.3 = 70.3
     cents, and every frame of the vibrato stays in. The sampled median
     is within half a cent of the continuous one. */
  measure_context c = context_48k();
  static frame_record frames[COUNT];
  static double scratch[COUNT];
  steady_note(frames, 440.0);
  for (int i = 0; i < COUNT; ++i)
    frames[i].f0_hz = cents_hz(440.0, 40.0 * sin(2.0 * M_PI * 5.5 * i * HOP / RATE_HZ));
  steady_part part;
  assert_true(plumb_steady_part_find(&c, frames, COUNT, start_s, end_s, scratch, &part));
  assert_true(fabs(part.band_cents - (25.0 + 1.6 * 40.0 * sin(M_PI / 4.0))) < 1.6 * 0.5);
  assert_int_equal(part.first, 19);
  assert_int_equal(part.last, 186);
  /* The median of a symmetric vibrato is within a cent of its centre. */
  assert_true(fabs(1200.0 * log2(part.reference_hz / 440.0)) < 1.0);
}

static void test_a_dying_tail_and_a_slow_attack_are_cut(void **state) {
  (void)state;
  /* A slow (bowed or breathed) attack: the level rises 1 dB a frame from
     -30 dBFS (frames 0-22) to the peak, -12 dBFS, at frame 40; the
     steady part starts where it is within 3 dB of the peak, frame 37.
     After frame 120 it dies 1 dB a frame, 20 dB below the peak at frame
     140 and further from 141: the steady part ends at 140. */
  measure_context c = context_48k();
  static frame_record frames[COUNT];
  static double scratch[COUNT];
  steady_note(frames, 330.0);
  for (int i = 0; i < COUNT; ++i) {
    double level = -12.0;
    if (i < 40) level = fmax(-12.0 - (40 - i), -30.0);
    if (i > 120) level = -12.0 - (i - 120);
    frames[i].level_dbfs = level;
  }
  steady_part part;
  assert_true(plumb_steady_part_find(&c, frames, COUNT, start_s, end_s, scratch, &part));
  assert_int_equal(part.first, 37);
  assert_int_equal(part.last, 140);
}

static void test_too_few_voiced_frames(void **state) {
  (void)state;
  /* Fewer than three voiced frames in the steady part: no steady part. */
  measure_context c = context_48k();
  static frame_record frames[COUNT];
  static double scratch[COUNT];
  steady_note(frames, 440.0);
  for (int i = 0; i < COUNT; ++i) frames[i].voiced = i == 50 || i == 60;
  steady_part part;
  assert_false(plumb_steady_part_find(&c, frames, COUNT, start_s, end_s, scratch, &part));
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_scoop_and_glide_stay_out),
      cmocka_unit_test(test_vibrato_widens_the_band),
      cmocka_unit_test(test_a_dying_tail_and_a_slow_attack_are_cut),
      cmocka_unit_test(test_too_few_voiced_frames),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
