/*
  The core's own timeline marks (notes/timeline.c): which transport
  position, bar and beat belong to a sample. The truths are LV2's
  time:Position terms (lv2/time: bar and barBeat counted from 0, speed 1
  when rolling, 0 stopped) and the arithmetic of tempo and meter: at B
  beats a minute, t seconds hold B t / 60 beats; a bar of N beats starts
  every N beats; bar and beat are printed counted from 1, as musicians
  count (common practice, no source).
*/
#include "notes/timeline.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <string.h>

#define RATE_HZ 48000.0

static plumb_transport rolling_at(double position_s, double speed) {
  plumb_transport t;
  memset(&t, 0, sizeof t);
  t.position_s = position_s;
  t.speed = speed;
  return t;
}

static plumb_transport with_beats(double position_s, double bar, double bar_beat,
                                  double beats_per_bar, double bpm) {
  plumb_transport t = rolling_at(position_s, 1.0);
  t.has_beats = true;
  t.bar = bar;
  t.bar_beat = bar_beat;
  t.beats_per_bar = beats_per_bar;
  t.beats_per_minute = bpm;
  return t;
}

static void test_no_mark_is_time_since_reset(void **state) {
  (void)state;
  timeline_marks marks;
  plumb_timeline_reset(&marks);
  double position_s, bar, beat;
  plumb_timeline_locate(&marks, 72000, RATE_HZ, &position_s, &bar, &beat);
  assert_true(position_s == 1.5); /* 72000 / 48000 */
  assert_true(isnan(bar) && isnan(beat));
}

static void test_position_between_marks_with_speed(void **state) {
  (void)state;
  /* A transport position advances by speed x elapsed audio time (LV2
     time:speed): at 1 with the audio, at 0 not at all. */
  timeline_marks marks;
  plumb_timeline_reset(&marks);
  plumb_transport a = rolling_at(10.0, 1.0);  /* sample 48000: 10 s, rolling */
  plumb_transport b = rolling_at(100.0, 0.0); /* sample 144000: stopped at 100 s */
  plumb_transport c = rolling_at(50.0, 2.0);  /* sample 240000: 50 s, double speed */
  plumb_timeline_mark(&marks, 48000, &a);
  plumb_timeline_mark(&marks, 144000, &b);
  plumb_timeline_mark(&marks, 240000, &c);
  double position_s, bar, beat;
  plumb_timeline_locate(&marks, 48000 + 24000, RATE_HZ, &position_s, &bar, &beat);
  assert_true(fabs(position_s - 10.5) < 1e-12);
  assert_true(isnan(bar) && isnan(beat)); /* no beats given */
  plumb_timeline_locate(&marks, 144000 + 96000 - 1, RATE_HZ, &position_s, &bar, &beat);
  assert_true(position_s == 100.0); /* stopped */
  plumb_timeline_locate(&marks, 240000 + 12000, RATE_HZ, &position_s, &bar, &beat);
  assert_true(fabs(position_s - 50.5) < 1e-12); /* 0.25 s at speed 2 */
  /* Exactly on a mark: the mark itself. */
  plumb_timeline_locate(&marks, 144000, RATE_HZ, &position_s, &bar, &beat);
  assert_true(position_s == 100.0);
  /* Before the oldest mark: extrapolated back from it. */
  plumb_timeline_locate(&marks, 0, RATE_HZ, &position_s, &bar, &beat);
  assert_true(fabs(position_s - 9.0) < 1e-12);
}

static void test_only_the_newest_marks_are_kept(void **state) {
  (void)state;
  /* Marks every 1000 samples, position = 1 s per mark (a transport that
     jumps): after more marks than the ring holds, a sample between two
     recent marks still gets the newer one at or before it, and one older
     than every kept mark is extrapolated from the oldest kept. */
  timeline_marks marks;
  plumb_timeline_reset(&marks);
  const uint32_t total = 3 * PLUMB_TIMELINE_MARKS + 5;
  for (uint32_t i = 0; i < total; ++i) {
    plumb_transport t = rolling_at((double)i, 1.0);
    plumb_timeline_mark(&marks, 1000u * i, &t);
  }
  double position_s, bar, beat;
  for (uint32_t i = total - PLUMB_TIMELINE_MARKS; i < total; ++i) {
    plumb_timeline_locate(&marks, 1000u * i + 480, RATE_HZ, &position_s, &bar, &beat);
    assert_true(fabs(position_s - (i + 0.01)) < 1e-12);
  }
  uint32_t oldest = total - PLUMB_TIMELINE_MARKS;
  plumb_timeline_locate(&marks, 1000u * (oldest - 3), RATE_HZ, &position_s, &bar, &beat);
  assert_true(fabs(position_s - (oldest - 3000.0 / RATE_HZ)) < 1e-12);
}

static void test_non_finite_marks_are_ignored(void **state) {
  (void)state;
  timeline_marks marks;
  plumb_timeline_reset(&marks);
  plumb_transport good = rolling_at(4.0, 1.0);
  plumb_timeline_mark(&marks, 0, &good);
  plumb_transport bad = rolling_at(NAN, 1.0);
  plumb_timeline_mark(&marks, 48000, &bad);
  bad = rolling_at(1.0, INFINITY);
  plumb_timeline_mark(&marks, 48000, &bad);
  double position_s, bar, beat;
  plumb_timeline_locate(&marks, 96000, RATE_HZ, &position_s, &bar, &beat);
  assert_true(fabs(position_s - 6.0) < 1e-12);
}

/* The bar and beat (from 1) `seconds` after a mark at bar `bar0`, beat
   `beat0` (from 0): the total beats since the song's start, split into
   whole bars and the rest. */
static void expected_bar_beat(double bar0, double beat0, double beats_per_bar, double bpm,
                              double seconds, double *bar, double *beat) {
  double beats = bar0 * beats_per_bar + beat0 + bpm * seconds / 60.0;
  double whole = floor(beats / beats_per_bar);
  *bar = whole + 1.0;
  *beat = beats - whole * beats_per_bar + 1.0;
}

static void test_bar_and_beat_from_tempo_and_meter(void **state) {
  (void)state;
  /* 4/4 at 120 beats a minute: two beats a second. From bar 0 beat 0
     (the song's start): 1 s in is bar 1 beat 3, 3 s in bar 2 beat 3,
     2 s in bar 2 beat 1. */
  timeline_marks marks;
  plumb_timeline_reset(&marks);
  plumb_transport t = with_beats(0.0, 0.0, 0.0, 4.0, 120.0);
  plumb_timeline_mark(&marks, 0, &t);
  double position_s, bar, beat;
  plumb_timeline_locate(&marks, 48000, RATE_HZ, &position_s, &bar, &beat);
  assert_true(fabs(bar - 1.0) < 1e-12 && fabs(beat - 3.0) < 1e-12);
  plumb_timeline_locate(&marks, 144000, RATE_HZ, &position_s, &bar, &beat);
  assert_true(fabs(bar - 2.0) < 1e-12 && fabs(beat - 3.0) < 1e-12);
  plumb_timeline_locate(&marks, 96000, RATE_HZ, &position_s, &bar, &beat);
  assert_true(fabs(bar - 2.0) < 1e-12 && fabs(beat - 1.0) < 1e-12);

  /* 7/8 at 93 beats a minute, a mark in the middle of bar 11 (bar 10
     from 0, 2.5 beats in); many instants against the formula. */
  plumb_timeline_reset(&marks);
  t = with_beats(30.0, 10.0, 2.5, 7.0, 93.0);
  plumb_timeline_mark(&marks, 10000, &t);
  for (int k = 0; k < 200; ++k) {
    uint64_t sample = 10000 + 1234u * (uint64_t)k;
    double seconds = (double)(sample - 10000) / RATE_HZ, eb, ebeat;
    expected_bar_beat(10.0, 2.5, 7.0, 93.0, seconds, &eb, &ebeat);
    if (ebeat > 8.0 - 0.0005) continue; /* the bar line's rounding, below */
    plumb_timeline_locate(&marks, sample, RATE_HZ, &position_s, &bar, &beat);
    assert_true(fabs(bar - eb) < 1e-9);
    assert_true(fabs(beat - ebeat) < 1e-9);
    assert_true(beat >= 1.0 && beat < 8.0);
    assert_true(fabs(position_s - (30.0 + seconds)) < 1e-9);
  }
}

static void test_a_hair_before_the_bar_line_is_the_next_bar(void **state) {
  (void)state;
  /* Within half of the log's 0.001 beat before a bar line, the onset is
     printed as the next bar's first beat (a beat 4.9996 in 4/4 would
     print as 5.000, a beat the bar does not have). 60 bpm: a beat a
     second. 10 samples before 4 s is beat 5 - 10/48000 of bar 1 (within
     the 0.0005): bar 2, beat 1 - 10/48000. 100 samples before (0.0021
     beats) stays in bar 1. */
  timeline_marks marks;
  plumb_timeline_reset(&marks);
  plumb_transport t = with_beats(0.0, 0.0, 0.0, 4.0, 60.0);
  plumb_timeline_mark(&marks, 0, &t);
  double position_s, bar, beat;
  plumb_timeline_locate(&marks, 4 * 48000 - 10, RATE_HZ, &position_s, &bar, &beat);
  assert_true(bar == 2.0);
  assert_true(fabs(beat - (1.0 - 10.0 / RATE_HZ)) < 1e-9);
  plumb_timeline_locate(&marks, 4 * 48000 - 100, RATE_HZ, &position_s, &bar, &beat);
  assert_true(bar == 1.0);
  assert_true(fabs(beat - (5.0 - 100.0 / RATE_HZ)) < 1e-9);
  /* On the bar line itself: bar 2, beat 1. */
  plumb_timeline_locate(&marks, 4 * 48000, RATE_HZ, &position_s, &bar, &beat);
  assert_true(bar == 2.0 && beat == 1.0);
}

static void test_unknown_or_unusable_beats_are_nan(void **state) {
  (void)state;
  /* No tempo, no meter, or a non-finite bar: no bar or beat (NaN, "does
     not apply"), though the position is still known. */
  plumb_transport bad[4];
  bad[0] = with_beats(0.0, 0.0, 0.0, 4.0, 0.0);
  bad[1] = with_beats(0.0, 0.0, 0.0, 0.0, 120.0);
  bad[2] = with_beats(0.0, NAN, 0.0, 4.0, 120.0);
  bad[3] = with_beats(0.0, 0.0, 0.0, 4.0, 120.0);
  bad[3].has_beats = false;
  for (int i = 0; i < 4; ++i) {
    timeline_marks marks;
    plumb_timeline_reset(&marks);
    plumb_timeline_mark(&marks, 0, &bad[i]);
    double position_s, bar, beat;
    plumb_timeline_locate(&marks, 24000, RATE_HZ, &position_s, &bar, &beat);
    assert_true(isnan(bar) && isnan(beat));
    assert_true(fabs(position_s - 0.5) < 1e-12);
  }
}

static void test_a_later_mark_without_beats_drops_them(void **state) {
  (void)state;
  /* The newest mark at or before the sample decides: beats from the
     first, none after a second mark without them. */
  timeline_marks marks;
  plumb_timeline_reset(&marks);
  plumb_transport with = with_beats(0.0, 0.0, 0.0, 4.0, 120.0);
  plumb_transport without = rolling_at(5.0, 1.0);
  plumb_timeline_mark(&marks, 0, &with);
  plumb_timeline_mark(&marks, 240000, &without);
  double position_s, bar, beat;
  plumb_timeline_locate(&marks, 120000, RATE_HZ, &position_s, &bar, &beat);
  assert_true(fabs(bar - 2.0) < 1e-12 && fabs(beat - 2.0) < 1e-12); /* 5 beats in */
  plumb_timeline_locate(&marks, 240001, RATE_HZ, &position_s, &bar, &beat);
  assert_true(isnan(bar) && isnan(beat));
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_no_mark_is_time_since_reset),
      cmocka_unit_test(test_position_between_marks_with_speed),
      cmocka_unit_test(test_only_the_newest_marks_are_kept),
      cmocka_unit_test(test_non_finite_marks_are_ignored),
      cmocka_unit_test(test_bar_and_beat_from_tempo_and_meter),
      cmocka_unit_test(test_a_hair_before_the_bar_line_is_the_next_bar),
      cmocka_unit_test(test_unknown_or_unusable_beats_are_nan),
      cmocka_unit_test(test_a_later_mark_without_beats_drops_them),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
