#include "harness.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

int harness_run(const plumb_settings *settings, const float *samples,
                size_t n, size_t block, harness_result *result) {
  memset(result, 0, sizeof *result);
  plumb_status status;
  plumb *analyser = plumb_new(settings, &status);
  if (!analyser) return -1;
  if (block == 0) block = 1;
  plumb_note note;
  for (size_t i = 0; i < n; i += block) {
    size_t length = n - i < block ? n - i : block;
    plumb_process(analyser, samples + i, length);
    while (plumb_pop_note(analyser, &note))
      if (result->count < HARNESS_MAX_NOTES) result->notes[result->count++] = note;
  }
  plumb_finish(analyser);
  while (plumb_pop_note(analyser, &note))
    if (result->count < HARNESS_MAX_NOTES) result->notes[result->count++] = note;
  plumb_get_counts(analyser, &result->counts);
  plumb_free(analyser);
  return 0;
}

int harness_run_default(double sample_rate_hz, const float *samples, size_t n,
                        size_t block, harness_result *result) {
  plumb_settings settings;
  plumb_settings_default(&settings, sample_rate_hz);
  return harness_run(&settings, samples, n, block, result);
}

double harness_cents(double a_hz, double b_hz) { return 1200.0 * log2(a_hz / b_hz); }

#define ONSET_TOLERANCE_S 0.05
#define PITCH_TOLERANCE_CENTS 50.0

static bool compatible(const harness_truth *t, const plumb_note *e) {
  if (fabs(t->onset_s - e->start_s) > ONSET_TOLERANCE_S) return false;
  if (t->f0_hz <= 0.0) return true;
  return fabs(harness_cents(e->f0_hz, t->f0_hz)) <= PITCH_TOLERANCE_CENTS;
}

/* Kuhn's augmenting paths: a maximum one-to-one matching, as mir_eval. */
static bool augment(const harness_truth *truth, const harness_result *result,
                    const int *estimate_index, int estimates, int r,
                    bool *seen, int *owner) {
  for (int e = 0; e < estimates; ++e) {
    if (seen[e] || !compatible(&truth[r], &result->notes[estimate_index[e]]))
      continue;
    seen[e] = true;
    if (owner[e] < 0 ||
        augment(truth, result, estimate_index, estimates, owner[e], seen, owner)) {
      owner[e] = r;
      return true;
    }
  }
  return false;
}

void harness_score_notes(const harness_truth *truth, int truth_count,
                         const harness_result *result, harness_score *score) {
  memset(score, 0, sizeof *score);
  int estimate_index[HARNESS_MAX_NOTES];
  int estimates = 0;
  for (int i = 0; i < result->count; ++i)
    if (result->notes[i].verdict != PLUMB_VERDICT_UNPITCHED)
      estimate_index[estimates++] = i;
  int owner[HARNESS_MAX_NOTES];
  for (int e = 0; e < estimates; ++e) owner[e] = -1;
  for (int r = 0; r < truth_count; ++r) {
    bool seen[HARNESS_MAX_NOTES] = {false};
    augment(truth, result, estimate_index, estimates, r, seen, owner);
  }
  for (int r = 0; r < truth_count; ++r) score->match[r] = -1;
  for (int e = 0; e < estimates; ++e)
    if (owner[e] >= 0) {
      score->match[owner[e]] = estimate_index[e];
      score->matched++;
    }
  score->reference = truth_count;
  score->estimated = estimates;
  score->precision = estimates ? (double)score->matched / estimates : 0.0;
  score->recall = truth_count ? (double)score->matched / truth_count : 0.0;
  double sum = score->precision + score->recall;
  score->f1 = sum > 0.0 ? 2.0 * score->precision * score->recall / sum : 0.0;
}

void harness_print(const harness_result *result) {
  for (int i = 0; i < result->count; ++i) {
    const plumb_note *n = &result->notes[i];
    char name[8];
    plumb_note_name(n->midi, name);
    printf("  note %d: %.3f-%.3f s %s f0 %.3f Hz %+.2f c spread %.2f vib %.2f Hz %.2f c %s\n",
           i, n->start_s, n->end_s, name, n->f0_hz, n->cents, n->spread_cents,
           n->vibrato_hz, n->vibrato_cents, plumb_verdict_name(n->verdict));
  }
}

/* ------------------------------------------------------------ random takes */

#include <stdlib.h>

static double uniform(sig_rng *rng, double low, double high) {
  return low + (high - low) * sig_rng_uniform(rng);
}

static int choose_notes(const harness_take_spec *spec, sig_rng *rng, harness_take *take) {
  double t = 0.3;
  int midi = 60 + (int)uniform(rng, -6, 6);
  int count = 0;
  while (count < HARNESS_MAX_NOTES) {
    double length = uniform(rng, 0.25, 0.8);
    if (t + length > spec->duration_s - 0.4) break;
    sig_note *note = &take->notes[count];
    memset(note, 0, sizeof *note);
    int step = (int)uniform(rng, -5, 6);
    if (step == 0 && count > 0 && take->notes[count - 1].end_s >= t - 1e-9) step = 2;
    midi += step;
    if (midi < 45) midi += 12;
    if (midi > 84) midi -= 12;
    note->start_s = t;
    note->end_s = t + length;
    note->midi = midi;
    note->detune_cents = uniform(rng, -30.0, 30.0);
    note->level_db = uniform(rng, -6.0, 0.0);
    if (spec->vibrato && sig_rng_uniform(rng) < 0.3) {
      note->vibrato_hz = uniform(rng, 5.0, 7.0);
      note->vibrato_cents = uniform(rng, 10.0, 40.0);
    }
    double gap = sig_rng_uniform(rng) < 0.5 ? uniform(rng, 0.05, 0.3) : 0.04;
    bool next_legato = spec->legato && sig_rng_uniform(rng) < 0.3;
    if (count > 0 && take->notes[count - 1].end_s >= t - 1e-9) note->glide_s = 0.04;
    t = note->end_s + (next_legato ? 0.0 : gap);
    count++;
  }
  take->count = count;
  return count;
}

int harness_random_take(const harness_take_spec *spec, harness_take *take) {
  memset(take, 0, sizeof *take);
  sig_rng rng;
  sig_rng_seed(&rng, spec->seed);
  choose_notes(spec, &rng, take);
  take->n = (size_t)(spec->duration_s * spec->sample_rate_hz);
  take->samples = calloc(take->n, sizeof(float));
  if (!take->samples) return -1;
  sig_voice voice;
  memset(&voice, 0, sizeof voice);
  voice.timbre.partials = 12;
  voice.timbre.law = SIG_AMPS_SAWTOOTH;
  voice.timbre.random_phase = true;
  voice.timbre.phase_seed = spec->seed + 1;
  voice.envelope.attack = SIG_RAMP_LINEAR;
  voice.envelope.attack_s = 0.015;
  voice.envelope.release = SIG_RAMP_EXP;
  voice.envelope.release_s = 0.02;
  voice.reference_hz = 440.0;
  voice.amplitude = 0.2;
  if (sig_render_notes(&voice, take->notes, (size_t)take->count, spec->sample_rate_hz,
                       take->samples, take->n) != 0)
    return -1;
  if (spec->snr_db > 0.0) sig_add_noise_snr(take->samples, take->n, spec->snr_db, &rng);
  for (int i = 0; i < take->count; ++i) {
    take->true_f0_hz[i] = 440.0 * pow(2.0, (take->notes[i].midi - 69) / 12.0 +
                                               take->notes[i].detune_cents / 1200.0);
    take->truth[i].onset_s = take->notes[i].start_s;
    take->truth[i].f0_hz = take->true_f0_hz[i];
  }
  return 0;
}

void harness_take_free(harness_take *take) {
  free(take->samples);
  take->samples = NULL;
}
