/*
  Helpers shared by the core's tests and the benchmark: run the analyser
  over a buffer at a given block size, and score detected notes against a
  ground truth with the note-matching convention of mir_eval (Raffel et al.
  2014) and MIREX (Bay, Ehmann & Downie 2009): onset within +-50 ms and
  pitch within +-50 cents, with a one-to-one maximum matching.
*/
#ifndef PLUMB_TEST_HARNESS_H
#define PLUMB_TEST_HARNESS_H

#include "plumb.h"

#include <stddef.h>

#define HARNESS_MAX_NOTES 512

typedef struct {
  int count;
  plumb_note notes[HARNESS_MAX_NOTES];
  plumb_counts counts;
} harness_result;

/* Analyse samples[0..n) in blocks of `block` frames (the last one shorter),
   then finish. Returns 0, or -1 if the analyser could not be created. */
int harness_run(const plumb_settings *settings, const float *samples,
                size_t n, size_t block, harness_result *result);

/* Same with default settings at sample_rate_hz. */
int harness_run_default(double sample_rate_hz, const float *samples, size_t n,
                        size_t block, harness_result *result);

typedef struct {
  double onset_s;
  double f0_hz; /* <= 0: unpitched reference (matched by onset only) */
} harness_truth;

typedef struct {
  int matched;
  int reference;
  int estimated;
  double precision, recall, f1;
  /* for every reference note, the index of its matched estimate or -1 */
  int match[HARNESS_MAX_NOTES];
} harness_score;

/* Score the pitched estimates against the truth (onset +-50 ms, pitch
   +-50 cents). Estimates with no pitch are not counted. */
void harness_score_notes(const harness_truth *truth, int truth_count,
                         const harness_result *result, harness_score *score);

/* 1200 log2(a/b) */
double harness_cents(double a_hz, double b_hz);

/* Print the notes (when a test fails, to see why). */
void harness_print(const harness_result *result);

#endif

/* ------------------------------------------------------------ random takes */

#include "signal.h"

typedef struct {
  double sample_rate_hz;
  double snr_db;          /* white noise re the take's power; <= 0: none */
  double duration_s;
  bool vibrato;           /* some notes carry vibrato */
  bool legato;            /* some notes follow without a gap */
  uint64_t seed;
} harness_take_spec;

typedef struct {
  float *samples;
  size_t n;
  int count;
  sig_note notes[HARNESS_MAX_NOTES];
  harness_truth truth[HARNESS_MAX_NOTES];
  double true_f0_hz[HARNESS_MAX_NOTES]; /* centre pitch of each note */
} harness_take;

/* A seeded melody of harmonic tones (MIDI 45-84, detunes up to +-30
   cents, notes 0.25-0.8 s, rests, re-articulations, legato with glides,
   vibrato) with its ground truth. Free with harness_take_free. */
int harness_random_take(const harness_take_spec *spec, harness_take *take);
void harness_take_free(harness_take *take);
