/*
  Behaviour of the analyser as a component: block-size invariance, reset,
  bad input (silence, DC, clipping, NaN and Inf), every sample rate,
  argument checks, flags against the tolerance and the tuning, timeline
  marks and the note queue. Truth comes from exact synthetic signals and
  the MIDI Tuning Standard formula.
*/
#include "harness.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

static float *tone(double fs, double f0_hz, double seconds, double lead_s, size_t *n_out) {
  size_t length = (size_t)(seconds * fs), lead = (size_t)(lead_s * fs);
  size_t n = length + 2 * lead;
  float *x = calloc(n, sizeof(float));
  double *f0 = malloc(sizeof(double) * length), *gain = malloc(sizeof(double) * length);
  sig_contour_constant(f0, length, f0_hz);
  sig_envelope envelope = sig_envelope_gate(0.01);
  sig_envelope_fill(&envelope, seconds - 0.01, 0.25, fs, gain, length);
  sig_timbre timbre = {8, SIG_AMPS_SAWTOOTH, NULL, 0.0, true, 21};
  sig_tone_add(&timbre, f0, gain, length, fs, x + lead);
  free(f0);
  free(gain);
  *n_out = n;
  return x;
}

static void test_results_identical_for_any_block_size(void **state) {
  (void)state;
  harness_take_spec spec = {48000.0, 30.0, 8.0, true, true, 77};
  harness_take take;
  assert_int_equal(harness_random_take(&spec, &take), 0);
  static harness_result reference, other;
  assert_int_equal(harness_run_default(48000.0, take.samples, take.n, 4096, &reference), 0);
  assert_true(reference.count > 5);
  const size_t blocks[] = {1, 7, 64, 1000};
  for (size_t b = 0; b < sizeof blocks / sizeof blocks[0]; ++b) {
    assert_int_equal(harness_run_default(48000.0, take.samples, take.n, blocks[b], &other), 0);
    assert_int_equal(other.count, reference.count);
    /* bit for bit: every field of every note */
    assert_memory_equal(other.notes, reference.notes, sizeof(plumb_note) * (size_t)reference.count);
  }
  harness_take_free(&take);
}

static void test_free_null_and_null_arguments(void **state) {
  (void)state;
  plumb_free(NULL);
  plumb_process(NULL, NULL, 10);
  plumb_finish(NULL);
  plumb_reset(NULL);
  plumb_note note;
  assert_false(plumb_pop_note(NULL, &note));
  assert_int_equal(plumb_analysis_delay_frames(NULL), 0);
  plumb_settings settings;
  plumb_settings_default(&settings, 48000.0);
  plumb *analyser = plumb_new(&settings, NULL);
  assert_non_null(analyser);
  plumb_process(analyser, NULL, 0); /* zero frames with no buffer is fine */
  assert_false(plumb_pop_note(analyser, NULL));
  assert_int_equal(plumb_configure(analyser, NULL), PLUMB_ERR_ARGUMENT);
  plumb_free(analyser);
}

static void test_rejects_bad_settings(void **state) {
  (void)state;
  plumb_settings settings;
  plumb_status status = PLUMB_OK;
  plumb_settings_default(&settings, 1000.0);
  assert_null(plumb_new(&settings, &status));
  assert_int_equal(status, PLUMB_ERR_SAMPLE_RATE);
  plumb_settings_default(&settings, 48000.0);
  settings.tolerance_cents = NAN;
  assert_null(plumb_new(&settings, &status));
  assert_int_equal(status, PLUMB_ERR_ARGUMENT);
  assert_null(plumb_new(NULL, &status));
  assert_int_equal(status, PLUMB_ERR_ARGUMENT);
}

static void test_silence_gives_no_notes(void **state) {
  (void)state;
  size_t n = 48000 * 5;
  float *x = calloc(n, sizeof(float));
  harness_result result;
  assert_int_equal(harness_run_default(48000.0, x, n, 512, &result), 0);
  assert_int_equal(result.count, 0);
  free(x);
}

static void test_dc_gives_no_pitched_notes(void **state) {
  (void)state;
  size_t n = 48000 * 3;
  float *x = malloc(sizeof(float) * n);
  for (size_t i = 0; i < n; ++i) x[i] = 0.5f;
  harness_result result;
  assert_int_equal(harness_run_default(48000.0, x, n, 512, &result), 0);
  for (int i = 0; i < result.count; ++i) {
    assert_int_equal(result.notes[i].verdict, PLUMB_VERDICT_UNPITCHED);
    assert_false(plumb_verdict_is_flagged(result.notes[i].verdict));
  }
  free(x);
}

static void assert_note_finite(const plumb_note *note) {
  assert_true(isfinite(note->start_s) && isfinite(note->end_s));
  assert_true(note->end_s >= note->start_s);
  if (note->verdict != PLUMB_VERDICT_UNPITCHED) {
    assert_true(isfinite(note->f0_hz) && isfinite(note->cents));
    assert_true(isfinite(note->confidence));
    assert_true(note->confidence >= 0.0 && note->confidence <= 1.0);
  }
}

static void test_full_scale_clipping_reads_the_pitch(void **state) {
  (void)state;
  size_t n;
  float *x = tone(48000.0, 220.0, 1.0, 0.2, &n);
  for (size_t i = 0; i < n; ++i) {
    float y = x[i] * 20.0f; /* hard clipping at full scale */
    x[i] = y > 1.0f ? 1.0f : y < -1.0f ? -1.0f : y;
  }
  harness_result result;
  assert_int_equal(harness_run_default(48000.0, x, n, 333, &result), 0);
  assert_int_equal(result.count, 1);
  assert_note_finite(&result.notes[0]);
  assert_int_equal(result.notes[0].midi, 57);
  assert_true(fabs(result.notes[0].cents) < 1.0);
  assert_true(fabs(result.notes[0].peak_dbfs) < 0.01); /* 0 dBFS peak */
  free(x);
}

static void test_nan_and_inf_bursts_are_contained(void **state) {
  (void)state;
  size_t n;
  float *x = tone(48000.0, 330.0, 3.0, 0.2, &n);
  /* bursts of NaN, +Inf and -Inf 1 s into the tone */
  for (size_t i = 0; i < 300; ++i) {
    x[48000 + i] = NAN;
    x[60000 + i] = INFINITY;
    x[70000 + i] = -INFINITY;
  }
  harness_result result;
  assert_int_equal(harness_run_default(48000.0, x, n, 100, &result), 0);
  assert_int_equal(result.counts.bad_samples, 900);
  assert_true(result.count >= 1);
  for (int i = 0; i < result.count; ++i) assert_note_finite(&result.notes[i]);
  /* the tone after the bursts still reads 330 Hz */
  const plumb_note *last = &result.notes[result.count - 1];
  assert_true(fabs(harness_cents(last->f0_hz, 330.0)) < 0.5);
  free(x);
}

static void test_every_sample_rate(void **state) {
  (void)state;
  /* From the library's lowest rate to its highest (plumb.h). Below about
     16 kHz the peak search's 8 kHz top lies past Nyquist and must be cut
     to the transform's bins. */
  const double rates[] = {8000,  11025, 12000,  16000,  22050,  32000, 44100,
                          48000, 88200, 96000, 176400, 192000, 384000};
  for (size_t r = 0; r < sizeof rates / sizeof rates[0]; ++r) {
    size_t n;
    /* 415.3 Hz is G#4 +0.0 c at A4 = 440 (MIDI Tuning Standard formula) */
    double f = 440.0 * pow(2.0, -1.0 / 12.0) * pow(2.0, 3.7 / 1200.0);
    float *x = tone(rates[r], f, 0.8, 0.2, &n);
    harness_result result;
    assert_int_equal(harness_run_default(rates[r], x, n, 1024, &result), 0);
    assert_int_equal(result.count, 1);
    assert_int_equal(result.notes[0].midi, 68);
    assert_true(fabs(result.notes[0].cents - 3.7) <= 0.1);
    assert_true(fabs(result.notes[0].start_s - 0.2) <= 0.03);
    free(x);
  }
}

/* Below 16 kHz a band limit past Nyquist once read beyond the spectrum:
   the results then changed from run to run. Two runs of one take must
   agree bit for bit, every field of every note. */
static void test_low_rates_repeat_exactly(void **state) {
  (void)state;
  const double rates[] = {8000, 11025, 12000};
  for (size_t r = 0; r < sizeof rates / sizeof rates[0]; ++r) {
    size_t n;
    float *x = tone(rates[r], 440.0, 1.0, 0.2, &n);
    harness_result first, second;
    assert_int_equal(harness_run_default(rates[r], x, n, 512, &first), 0);
    assert_int_equal(harness_run_default(rates[r], x, n, 97, &second), 0);
    assert_int_equal(first.count, 1);
    assert_int_equal(second.count, first.count);
    assert_memory_equal(&first.notes[0], &second.notes[0], sizeof first.notes[0]);
    assert_true(fabs(harness_cents(first.notes[0].f0_hz, 440.0)) < 0.1);
    free(x);
  }
}

/* A program built against an older, shorter plumb_note passes its own
   sizeof (the macro does): the library writes no byte past it. The
   older struct is modelled by a prefix of the note and a canary after. */
static void test_a_shorter_note_struct_is_not_overrun(void **state) {
  (void)state;
  size_t n;
  float *x = tone(48000.0, 440.0, 0.6, 0.2, &n);
  plumb_settings settings;
  plumb_settings_default(&settings, 48000.0);
  plumb *analyser = plumb_new(&settings, NULL);
  assert_non_null(analyser);
  plumb_process(analyser, x, n);
  plumb_finish(analyser);
  const size_t older = offsetof(plumb_note, tristimulus);
  unsigned char memory[sizeof(plumb_note) + 16];
  memset(memory, 0xA5, sizeof memory);
  assert_true(plumb_pop_note_sized(analyser, (plumb_note *)(void *)memory, older));
  for (size_t i = older; i < sizeof memory; ++i) assert_int_equal(memory[i], 0xA5);
  plumb_note prefix;
  memcpy(&prefix, memory, older);
  assert_true(fabs(harness_cents(prefix.f0_hz, 440.0)) < 0.1);
  plumb_counts counts;
  memset(&counts, 0xA5, sizeof counts);
  plumb_get_counts_sized(analyser, &counts, offsetof(plumb_counts, has_last));
  assert_int_equal(counts.notes, 1);
  assert_int_equal(((unsigned char *)&counts)[offsetof(plumb_counts, has_last)], 0xA5);
  plumb_free(analyser);
  free(x);
}

static void test_reset_repeats_the_analysis(void **state) {
  (void)state;
  size_t n;
  float *x = tone(48000.0, 261.63, 0.6, 0.2, &n);
  plumb_settings settings;
  plumb_settings_default(&settings, 48000.0);
  plumb *analyser = plumb_new(&settings, NULL);
  plumb_note first, second;
  plumb_process(analyser, x, n);
  plumb_finish(analyser);
  assert_true(plumb_pop_note(analyser, &first));
  plumb_reset(analyser);
  plumb_process(analyser, x, n);
  plumb_finish(analyser);
  assert_true(plumb_pop_note(analyser, &second));
  assert_memory_equal(&first, &second, sizeof first);
  plumb_free(analyser);
  free(x);
}

static plumb_verdict verdict_for(double cents, double tolerance, plumb_temperament temperament,
                                 double f_hz) {
  size_t n;
  double f = f_hz > 0 ? f_hz : 440.0 * pow(2.0, cents / 1200.0);
  float *x = tone(48000.0, f, 0.6, 0.2, &n);
  plumb_settings settings;
  plumb_settings_default(&settings, 48000.0);
  settings.tolerance_cents = tolerance;
  plumb_tuning_spec spec;
  plumb_tuning_spec_default(&spec);
  spec.temperament = temperament;
  plumb_tuning_build(&spec, &settings.tuning);
  harness_result result;
  harness_run(&settings, x, n, 512, &result);
  free(x);
  assert_int_equal(result.count, 1);
  return result.notes[0].verdict;
}

static void test_flags_follow_the_tolerance(void **state) {
  (void)state;
  /* +-10 cents is the common practice tolerance (no source). */
  assert_int_equal(verdict_for(13.0, 10.0, PLUMB_TEMPERAMENT_EQUAL, 0), PLUMB_VERDICT_SHARP);
  assert_int_equal(verdict_for(-13.0, 10.0, PLUMB_TEMPERAMENT_EQUAL, 0), PLUMB_VERDICT_FLAT);
  assert_int_equal(verdict_for(7.0, 10.0, PLUMB_TEMPERAMENT_EQUAL, 0), PLUMB_VERDICT_IN_TUNE);
  assert_int_equal(verdict_for(-7.0, 10.0, PLUMB_TEMPERAMENT_EQUAL, 0), PLUMB_VERDICT_IN_TUNE);
  assert_int_equal(verdict_for(13.0, 15.0, PLUMB_TEMPERAMENT_EQUAL, 0), PLUMB_VERDICT_IN_TUNE);
}

static void test_flags_follow_the_temperament(void **state) {
  (void)state;
  /* A pure major third above C4 (5/4, 386.31 cents; derived) is 13.69
     cents flat of equal temperament but in tune in just intonation on C. */
  double c4 = 440.0 * pow(2.0, -9.0 / 12.0);
  double just_third = c4 * 5.0 / 4.0;
  /* just intonation is anchored at A (A4 = reference): E's offset is
     relative to A's, so compute the expected deviation from the tuning */
  plumb_tuning_spec spec;
  plumb_tuning_spec_default(&spec);
  spec.temperament = PLUMB_TEMPERAMENT_JUST;
  plumb_tuning tuning;
  plumb_tuning_build(&spec, &tuning);
  double e_target = plumb_tuning_target_hz(&tuning, 64);
  double c_target = plumb_tuning_target_hz(&tuning, 60);
  assert_true(fabs(harness_cents(e_target, c_target) - 386.3137) < 0.001);
  assert_int_equal(verdict_for(0, 10.0, PLUMB_TEMPERAMENT_EQUAL, just_third), PLUMB_VERDICT_FLAT);
  assert_int_equal(verdict_for(0, 10.0, PLUMB_TEMPERAMENT_JUST, e_target), PLUMB_VERDICT_IN_TUNE);
}

static void test_unsteady_pitch_is_flagged(void **state) {
  (void)state;
  /* A pitch that wanders (a slow random walk of +-40 cents) with no
     periodic vibrato. */
  const double fs = 48000.0, seconds = 1.5;
  size_t length = (size_t)(seconds * fs), lead = (size_t)(0.2 * fs), n = length + 2 * lead;
  float *x = calloc(n, sizeof(float));
  double *f0 = malloc(sizeof(double) * length), *gain = malloc(sizeof(double) * length);
  sig_segment segments[4] = {{0.4, 440.0, 440.0 * pow(2, 35 / 1200.0)},
                             {0.3, 440.0 * pow(2, 35 / 1200.0), 440.0 * pow(2, -25 / 1200.0)},
                             {0.5, 440.0 * pow(2, -25 / 1200.0), 440.0 * pow(2, 30 / 1200.0)},
                             {0.3, 440.0 * pow(2, 30 / 1200.0), 440.0}};
  sig_contour_segments(f0, length, fs, segments, 4);
  sig_envelope envelope = sig_envelope_gate(0.01);
  sig_envelope_fill(&envelope, seconds - 0.01, 0.25, fs, gain, length);
  sig_timbre timbre = {8, SIG_AMPS_SAWTOOTH, NULL, 0.0, true, 2};
  sig_tone_add(&timbre, f0, gain, length, fs, x + lead);
  harness_result result;
  harness_run_default(fs, x, n, 512, &result);
  assert_int_equal(result.count, 1);
  assert_true(isnan(result.notes[0].vibrato_hz));
  assert_int_equal(result.notes[0].verdict, PLUMB_VERDICT_UNSTEADY);
  free(x);
  free(f0);
  free(gain);
}

static void test_timeline_marks_place_notes(void **state) {
  (void)state;
  size_t n;
  float *x = tone(48000.0, 440.0, 0.6, 0.5, &n);
  plumb_settings settings;
  plumb_settings_default(&settings, 48000.0);
  plumb *analyser = plumb_new(&settings, NULL);
  plumb_mark_timeline(analyser, 100.0, 1.0); /* the take starts at 100 s */
  plumb_process(analyser, x, n);
  plumb_finish(analyser);
  plumb_note note;
  assert_true(plumb_pop_note(analyser, &note));
  /* to within the half sample the onset is rounded to */
  assert_true(fabs(note.timeline_s - (100.0 + note.start_s)) <= 0.5 / 48000.0 + 1e-12);
  plumb_free(analyser);
  free(x);
}

static void test_both_queues_carry_every_note(void **state) {
  (void)state;
  harness_take_spec spec = {48000.0, 40.0, 6.0, false, false, 5};
  harness_take take;
  assert_int_equal(harness_random_take(&spec, &take), 0);
  plumb_settings settings;
  plumb_settings_default(&settings, 48000.0);
  plumb *analyser = plumb_new(&settings, NULL);
  plumb_process(analyser, take.samples, take.n);
  plumb_finish(analyser);
  plumb_note from_consumer, from_here;
  int count = 0;
  while (plumb_pop_note(analyser, &from_consumer)) {
    assert_true(plumb_pop_note_here(analyser, &from_here));
    assert_memory_equal(&from_consumer, &from_here, sizeof from_here);
    ++count;
  }
  assert_false(plumb_pop_note_here(analyser, &from_here));
  assert_true(count >= 5);
  plumb_free(analyser);
  harness_take_free(&take);
}

static void test_full_queue_counts_dropped_notes(void **state) {
  (void)state;
  /* 300 short notes with nobody reading the queue */
  const double fs = 48000.0;
  size_t n = (size_t)(300 * 0.25 * fs + fs);
  float *x = calloc(n, sizeof(float));
  for (int k = 0; k < 300; ++k) {
    size_t m;
    float *t = tone(fs, 330.0, 0.15, 0.0, &m);
    memcpy(x + (size_t)(k * 0.25 * fs), t, sizeof(float) * m);
    free(t);
  }
  plumb_settings settings;
  plumb_settings_default(&settings, fs);
  plumb *analyser = plumb_new(&settings, NULL);
  plumb_process(analyser, x, n);
  plumb_finish(analyser);
  plumb_counts counts;
  plumb_get_counts(analyser, &counts);
  assert_int_equal(counts.notes, 300);
  assert_int_equal(counts.dropped, 300 - 256);
  plumb_free(analyser);
  free(x);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_results_identical_for_any_block_size),
      cmocka_unit_test(test_free_null_and_null_arguments),
      cmocka_unit_test(test_rejects_bad_settings),
      cmocka_unit_test(test_silence_gives_no_notes),
      cmocka_unit_test(test_dc_gives_no_pitched_notes),
      cmocka_unit_test(test_full_scale_clipping_reads_the_pitch),
      cmocka_unit_test(test_nan_and_inf_bursts_are_contained),
      cmocka_unit_test(test_every_sample_rate),
      cmocka_unit_test(test_low_rates_repeat_exactly),
      cmocka_unit_test(test_a_shorter_note_struct_is_not_overrun),
      cmocka_unit_test(test_reset_repeats_the_analysis),
      cmocka_unit_test(test_flags_follow_the_tolerance),
      cmocka_unit_test(test_flags_follow_the_temperament),
      cmocka_unit_test(test_unsteady_pitch_is_flagged),
      cmocka_unit_test(test_timeline_marks_place_notes),
      cmocka_unit_test(test_both_queues_carry_every_note),
      cmocka_unit_test(test_full_queue_counts_dropped_notes),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
