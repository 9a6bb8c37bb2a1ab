/*
  Pitch candidates with probabilities from YIN's troughs, over a
  distribution of thresholds (pYIN, Mauch & Dixon 2014).
*/
#ifndef PLUMB_FRAME_PITCH_PROB_H
#define PLUMB_FRAME_PITCH_PROB_H

#include "internal.h"
#include "frame/yin.h"

typedef struct {
  double frequency_hz;
  double probability;
} pitch_candidate;

typedef struct {
  int count;
  pitch_candidate candidate[PLUMB_CANDIDATES_MAX];
  double voiced_probability; /* sum of the candidates' probabilities */
} candidate_set;

#define PLUMB_THRESHOLDS 100

/* Weights of the thresholds 0.01, 0.02 ... 1.00 under a Beta(2, 18) prior
   (Mauch & Dixon 2014). */
void plumb_pitch_prob_thresholds(double weights[PLUMB_THRESHOLDS]);
/* Turn YIN troughs into pitch candidates with probabilities. */
void plumb_pitch_prob_candidates(const double weights[PLUMB_THRESHOLDS],
                           const yin_trough *troughs, int count,
                           double sample_rate_hz, candidate_set *out);

#endif /* PLUMB_FRAME_PITCH_PROB_H */
