/*
  Probabilistic thresholds in the manner of pYIN (Mauch & Dixon 2014): the
  YIN threshold is not one number but a distribution, Beta(2, 18). For each
  threshold the first trough below it takes that threshold's weight; the
  weights a trough gathers are its probability of being the pitch.
*/
#include "frame/pitch_prob.h"

#include <math.h>

void plumb_pitch_prob_thresholds(double weights[PLUMB_THRESHOLDS]) {
  /* Beta(2, 18) density x (1-x)^17 / B(2, 18), sampled at 0.01 ... 1.00 and
     normalised so that the weights sum to one. */
  double total = 0.0;
  for (int i = 0; i < PLUMB_THRESHOLDS; ++i) {
    double x = (i + 1) / (double)PLUMB_THRESHOLDS;
    weights[i] = x * pow(1.0 - x, 17.0);
    total += weights[i];
  }
  for (int i = 0; i < PLUMB_THRESHOLDS; ++i) weights[i] /= total;
}

/* pYIN gives a threshold with no trough below it to the global minimum,
   with a small prior (0.01 in the authors' implementation, from memory). */
#define ABSOLUTE_MINIMUM_PRIOR 0.01

static void keep_most_probable(candidate_set *out, const yin_trough *troughs,
                               double *probability, int count,
                               double sample_rate_hz) {
  out->count = 0;
  out->voiced_probability = 0.0;
  for (int pass = 0; pass < PLUMB_CANDIDATES_MAX; ++pass) {
    int best = -1;
    for (int i = 0; i < count; ++i)
      if (probability[i] > 0.0 && (best < 0 || probability[i] > probability[best]))
        best = i;
    if (best < 0) break;
    pitch_candidate *c = &out->candidate[out->count++];
    c->frequency_hz = sample_rate_hz / troughs[best].lag_samples;
    c->probability = probability[best];
    out->voiced_probability += probability[best];
    probability[best] = 0.0; /* taken */
  }
}

void plumb_pitch_prob_candidates(const double weights[PLUMB_THRESHOLDS],
                           const yin_trough *troughs, int count,
                           double sample_rate_hz, candidate_set *out) {
  double probability[64] = {0};
  if (count > 64) count = 64;
  int global_minimum = -1;
  for (int i = 0; i < count; ++i)
    if (global_minimum < 0 || troughs[i].value < troughs[global_minimum].value)
      global_minimum = i;
  for (int t = 0; t < PLUMB_THRESHOLDS && count > 0; ++t) {
    double threshold = (t + 1) / (double)PLUMB_THRESHOLDS;
    int chosen = -1;
    for (int i = 0; i < count; ++i)
      if (troughs[i].value < threshold) {
        chosen = i;
        break;
      }
    if (chosen >= 0)
      probability[chosen] += weights[t];
    else
      probability[global_minimum] += weights[t] * ABSOLUTE_MINIMUM_PRIOR;
  }
  keep_most_probable(out, troughs, probability, count, sample_rate_hz);
  if (out->voiced_probability > 1.0) out->voiced_probability = 1.0;
}
