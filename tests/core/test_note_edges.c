/*
  A note's onset and offset from its frame levels (measures/note_edges.c),
  on exact synthetic level tracks: a steady sound that starts (or stops)
  at once at a known instant, seen through a periodic Hann window of N
  samples. A frame's level is then the share of the squared window that
  lies on the sounding side, sum w[i]^2 over those samples / sum w[i]^2
  (Parseval; the signal's mean square is constant), computed here by
  direct summation, independently of the module's closed form.
*/
#include "measures/note_edges.h"
#include "measure_fixture.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <string.h>

#define FRAMES      120
#define STEADY_DBFS (-12.0)

/* The share of the squared periodic Hann window of a frame centred at
   `centre` that falls on samples n with on(n). */
static double window_share(long centre, long start, long stop) {
  double inside = 0.0, total = 0.0;
  for (int i = 0; i < FFT; ++i) {
    double w = 0.5 - 0.5 * cos(2.0 * M_PI * i / FFT);
    long n = centre - FFT / 2 + i;
    total += w * w;
    if (n >= start && n < stop) inside += w * w;
  }
  return inside / total;
}

/* Frames centred at first_centre + k HOP over a sound on [start, stop). */
static void level_track(frame_record *frames, long first_centre, long start, long stop) {
  memset(frames, 0, sizeof(frame_record) * FRAMES);
  for (int k = 0; k < FRAMES; ++k) {
    long centre = first_centre + (long)k * HOP;
    frames[k].centre_sample = (uint64_t)centre;
    frames[k].level_dbfs = STEADY_DBFS + 10.0 * log10(window_share(centre, start, stop) + 1e-20);
    frames[k].voiced = true;
  }
  frames[0].level_before_dbfs = -200.0; /* silence before */
}

static void test_frame_time_is_its_centre(void **state) {
  (void)state;
  measure_context c = context_48k();
  frame_record f;
  memset(&f, 0, sizeof f);
  f.centre_sample = 72000;
  assert_true(plumb_note_edges_frame_time_s(&c, &f) == 1.5);
}

static void test_a_sudden_start_is_found_where_it_is(void **state) {
  (void)state;
  /* Starts at 16 phases across a hop, the note's first frame a few hops
     before: the onset must come out at the start whatever the window's
     length (42.7 ms here). Without the window's lead the crossing 20 dB
     down would be 0.31 frame early (F(u) = 0.01 at u = 0.313, the closed
     form of the Hann-squared tail), 13.4 ms. The level is interpolated
     linearly in dB between frames a hop (5.3 ms) apart, and the tail's
     bend over a hop moves the crossing by up to 0.51 ms here: allowed,
     an eighth of a hop (0.67 ms). */
  measure_context c = context_48k();
  static frame_record frames[FRAMES];
  double worst_s = 0.0;
  for (int phase = 0; phase < 16; ++phase) {
    long start = 40000 + phase * HOP / 16;
    long first_centre = 40000 - 3 * HOP - FFT / 2 + 7; /* first frame still silent */
    level_track(frames, first_centre, start, 1L << 40);
    double onset_s = plumb_note_edges_start_s(&c, frames, FRAMES);
    double error_s = fabs(onset_s - start / RATE_HZ);
    if (error_s > worst_s) worst_s = error_s;
    assert_true(error_s < 0.125 * c.hop_s);
  }
  print_message("worst onset error %.3f ms\n", 1e3 * worst_s);
}

static void test_a_sudden_stop_is_found_where_it_is(void **state) {
  (void)state;
  /* A sudden stop sits at the frame centre whose level is half (-3 dB)
     the steady level (the squared window is symmetric about its centre),
     so the offset is the -3 dB crossing; again within an eighth of a hop
     (up to 0.48 ms measured). */
  measure_context c = context_48k();
  static frame_record frames[FRAMES];
  for (int phase = 0; phase < 16; ++phase) {
    long stop = 40000 + phase * HOP / 16;
    /* The stop six hops before the last frame (which is past the window's
       reach, silent), among the last twelve frames that the module searches
       for the level to fall from. */
    long first_centre = 40000 - (FRAMES - 6) * HOP;
    level_track(frames, first_centre, 0, stop);
    double offset_s = plumb_note_edges_end_s(&c, frames, FRAMES);
    assert_true(fabs(offset_s - stop / RATE_HZ) < 0.125 * c.hop_s);
  }
}

static void test_a_note_cut_by_the_next_ends_after_its_last_frame(void **state) {
  (void)state;
  /* A note still sounding at its last frame (cut by the next note, not
     died away by 20 dB) ends half a hop after that frame's centre, where
     the next one's first frame takes over. */
  measure_context c = context_48k();
  static frame_record frames[FRAMES];
  level_track(frames, 50000, 0, 1L << 40);
  double offset_s = plumb_note_edges_end_s(&c, frames, FRAMES);
  double last_s = (50000.0 + (FRAMES - 1) * HOP) / RATE_HZ;
  assert_true(fabs(offset_s - (last_s + 0.5 * c.hop_s)) < 1e-12);
}

static void test_no_rise_means_the_first_frame(void **state) {
  (void)state;
  /* No attack to measure (a level that never rises 6 dB): the onset is
     the first frame's centre. */
  measure_context c = context_48k();
  static frame_record frames[FRAMES];
  level_track(frames, 50000, 0, 1L << 40);
  frames[0].level_before_dbfs = STEADY_DBFS - 1.0;
  double onset_s = plumb_note_edges_start_s(&c, frames, FRAMES);
  assert_true(fabs(onset_s - 50000.0 / RATE_HZ) < 1e-12);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_frame_time_is_its_centre),
      cmocka_unit_test(test_a_sudden_start_is_found_where_it_is),
      cmocka_unit_test(test_a_sudden_stop_is_found_where_it_is),
      cmocka_unit_test(test_a_note_cut_by_the_next_ends_after_its_last_frame),
      cmocka_unit_test(test_no_rise_means_the_first_frame),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
