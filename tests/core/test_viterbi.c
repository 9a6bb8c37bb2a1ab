/*
  The online Viterbi decoder of pitch and voicing (frame/viterbi.c) on
  hand-worked candidate sequences. The model is pYIN's (Mauch & Dixon
  2014): a voicing switch costs log 0.01 per hop (pYIN's published
  setting, from memory), a pitch move within 300 cents a hop costs little
  and a larger one the floor 0.02 (common practice, no source), and each
  state's emission is its candidate's probability (unvoiced: one minus the
  frame's voiced probability). The decoder's answer must be the most
  probable path (Viterbi 1967), which the comments work out by hand.
*/
#include "frame/viterbi.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <string.h>

#define FRAMES 30

static candidate_set frame_of(int count, double f1, double p1, double f2, double p2) {
  candidate_set c;
  memset(&c, 0, sizeof c);
  c.count = count;
  c.candidate[0].frequency_hz = f1;
  c.candidate[0].probability = p1;
  c.candidate[1].frequency_hz = f2;
  c.candidate[1].probability = p2;
  c.voiced_probability = (count > 0 ? p1 : 0.0) + (count > 1 ? p2 : 0.0);
  return c;
}

/* Push frames[0, n) and read back, for each frame, the decided frequency
   (0 for unvoiced) at the decoder's fixed lag, then the last frames at
   shorter lags, as a take's end does. */
static void decode(const candidate_set *frames, int n, double *decided_hz) {
  viterbi_decoder decoder;
  plumb_viterbi_reset(&decoder);
  for (int i = 0; i < n; ++i) {
    plumb_viterbi_push(&decoder, &frames[i]);
    if (i < PLUMB_DECODE_LAG) continue;
    int state = plumb_viterbi_decide(&decoder, PLUMB_DECODE_LAG);
    const candidate_set *c = plumb_viterbi_frame(&decoder, PLUMB_DECODE_LAG);
    /* The frame handed back is the one pushed PLUMB_DECODE_LAG ago. */
    assert_memory_equal(c, &frames[i - PLUMB_DECODE_LAG], sizeof *c);
    decided_hz[i - PLUMB_DECODE_LAG] = state ? c->candidate[state - 1].frequency_hz : 0.0;
  }
  for (int lag = PLUMB_DECODE_LAG - 1; lag >= 0; --lag) {
    int state = plumb_viterbi_decide(&decoder, lag);
    const candidate_set *c = plumb_viterbi_frame(&decoder, lag);
    decided_hz[n - 1 - lag] = state ? c->candidate[state - 1].frequency_hz : 0.0;
  }
}

static void test_a_single_outlier_is_decoded_through(void **state) {
  (void)state;
  /* 220 Hz at 0.5 with a 330 Hz alternative at 0.4, except frame 12,
     where 660 Hz leads at 0.7 and 220 Hz has 0.2. Following 660 Hz gains
     log(0.7 / 0.2) = 1.25 in emission and costs two moves of 1902 cents
     at the floor, 2 log 0.02 = -7.8: the path stays on 220 Hz. The 330 Hz
     alternative (702 cents away) is never worth a move either. */
  candidate_set frames[FRAMES];
  for (int i = 0; i < FRAMES; ++i) frames[i] = frame_of(2, 220.0, 0.5, 330.0, 0.4);
  frames[12] = frame_of(2, 660.0, 0.7, 220.0, 0.2);
  double decided[FRAMES];
  decode(frames, FRAMES, decided);
  for (int i = 0; i < FRAMES; ++i) assert_true(decided[i] == 220.0);
}

static void test_a_lasting_change_is_followed_where_it_happens(void **state) {
  (void)state;
  /* 220 Hz leads (0.6 against 330 Hz's 0.3) for frames 0-14, then 330 Hz
     leads for frames 15-29. Staying on 220 Hz costs log(0.3 / 0.6) = -0.69
     a frame over fifteen frames (-10.4); one move costs log 0.02 = -3.9.
     Moving a frame early or late costs another 0.69: the move is at 15. */
  candidate_set frames[FRAMES];
  for (int i = 0; i < FRAMES; ++i)
    frames[i] = i < 15 ? frame_of(2, 220.0, 0.6, 330.0, 0.3) : frame_of(2, 330.0, 0.6, 220.0, 0.3);
  double decided[FRAMES];
  decode(frames, FRAMES, decided);
  for (int i = 0; i < FRAMES; ++i) assert_true(decided[i] == (i < 15 ? 220.0 : 330.0));
}

static void test_a_small_pitch_step_is_followed_at_once(void **state) {
  (void)state;
  /* A 50-cent step (a slide within the triangle's 300 cents): the move
     costs only log(1 - 50/300) = -0.18, less than one frame's emission
     gain log(0.6 / 0.3) = 0.69, so the decoder follows it on the frame it
     happens, and a single frame's step is followed too. */
  const double low_hz = 220.0, high_hz = 220.0 * pow(2.0, 50.0 / 1200.0);
  candidate_set frames[FRAMES];
  for (int i = 0; i < FRAMES; ++i) {
    int high = i == 10 || i >= 20;
    frames[i] =
        high ? frame_of(2, high_hz, 0.6, low_hz, 0.3) : frame_of(2, low_hz, 0.6, high_hz, 0.3);
  }
  double decided[FRAMES];
  decode(frames, FRAMES, decided);
  for (int i = 0; i < FRAMES; ++i)
    assert_true(decided[i] == (i == 10 || i >= 20 ? high_hz : low_hz));
}

static void test_voicing_switches_where_the_evidence_does(void **state) {
  (void)state;
  /* Frames 0-9: a weak candidate (voiced probability 0.05), frames 10-29:
     a strong one (0.9). Unvoiced gains log(0.95 / 0.05) = 2.9 a frame in
     the first run and loses log(0.9 / 0.1) = 2.2 a frame in the second;
     one switch costs log 0.01 = -4.6, paid once whatever its place, so it
     falls at frame 10. */
  candidate_set frames[FRAMES];
  for (int i = 0; i < FRAMES; ++i)
    frames[i] = i < 10 ? frame_of(1, 220.0, 0.05, 0, 0) : frame_of(1, 220.0, 0.9, 0, 0);
  double decided[FRAMES];
  decode(frames, FRAMES, decided);
  for (int i = 0; i < FRAMES; ++i) assert_true(decided[i] == (i < 10 ? 0.0 : 220.0));
}

static void test_a_one_frame_dropout_is_bridged_a_long_one_is_not(void **state) {
  (void)state;
  /* Voiced at 0.8 throughout except frame 8 (0.3) and frames 16-23
     (0.05). Going unvoiced for frame 8 alone gains log(0.7 / 0.3) = 0.85
     and costs two switches, 2 log 0.01 = -9.2: bridged. Going unvoiced
     for the eight frames gains 8 log(0.95 / 0.05) = 23.6 against the same
     -9.2: taken, exactly over those frames (each frame more or less
     loses at least log(0.8 / 0.2) = 1.4 or 2.9). */
  candidate_set frames[FRAMES];
  for (int i = 0; i < FRAMES; ++i) {
    double p = i == 8 ? 0.3 : (i >= 16 && i < 24 ? 0.05 : 0.8);
    frames[i] = frame_of(1, 220.0, p, 0, 0);
  }
  double decided[FRAMES];
  decode(frames, FRAMES, decided);
  for (int i = 0; i < FRAMES; ++i) assert_true(decided[i] == (i >= 16 && i < 24 ? 0.0 : 220.0));
}

static void test_frames_without_candidates_are_unvoiced(void **state) {
  (void)state;
  /* A frame with no candidate has the unvoiced state only: the path must
     go through it, however strong the voiced frames around it. */
  candidate_set frames[FRAMES];
  for (int i = 0; i < FRAMES; ++i)
    frames[i] = i == 15 ? frame_of(0, 0, 0, 0, 0) : frame_of(1, 220.0, 0.99, 0, 0);
  double decided[FRAMES];
  decode(frames, FRAMES, decided);
  for (int i = 0; i < FRAMES; ++i) assert_true(decided[i] == (i == 15 ? 0.0 : 220.0));
}

static void test_an_empty_decoder_decides_unvoiced(void **state) {
  (void)state;
  viterbi_decoder decoder;
  plumb_viterbi_reset(&decoder);
  assert_int_equal(plumb_viterbi_decide(&decoder, PLUMB_DECODE_LAG), 0);
  /* A reset forgets everything: after a voiced run and a reset, an
     unvoiced frame decides unvoiced at once. */
  candidate_set voiced = frame_of(1, 220.0, 0.9, 0, 0);
  for (int i = 0; i < 20; ++i) plumb_viterbi_push(&decoder, &voiced);
  assert_int_equal(plumb_viterbi_decide(&decoder, 0), 1);
  plumb_viterbi_reset(&decoder);
  candidate_set weak = frame_of(1, 220.0, 0.1, 0, 0);
  plumb_viterbi_push(&decoder, &weak);
  assert_int_equal(plumb_viterbi_decide(&decoder, 0), 0);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_a_single_outlier_is_decoded_through),
      cmocka_unit_test(test_a_lasting_change_is_followed_where_it_happens),
      cmocka_unit_test(test_a_small_pitch_step_is_followed_at_once),
      cmocka_unit_test(test_voicing_switches_where_the_evidence_does),
      cmocka_unit_test(test_a_one_frame_dropout_is_bridged_a_long_one_is_not),
      cmocka_unit_test(test_frames_without_candidates_are_unvoiced),
      cmocka_unit_test(test_an_empty_decoder_decides_unvoiced),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
