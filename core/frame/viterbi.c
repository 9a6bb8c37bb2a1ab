/*
  Online Viterbi decoding of pitch and voicing, in the manner of pYIN
  (Mauch & Dixon 2014), over a sparse state space: in each frame the states
  are "unvoiced" and one voiced state per pitch candidate. Decisions are
  made at a fixed lag by tracing the best path back from the newest frame.
*/
#include "frame/viterbi.h"

#include <math.h>
#include <string.h>

/* Probability of switching between voiced and unvoiced in one hop: 0.01
   is pYIN's published setting (from memory). */
#define SWITCH_PROBABILITY 0.01
/* Pitch moves are scored by a triangle of this half-width in cents per hop;
   larger moves (note changes) cost the floor. Common practice, no source. */
#define PITCH_STEP_WIDTH_CENTS 300.0
#define PITCH_JUMP_FLOOR 0.02
#define EMISSION_FLOOR 1e-4

void plumb_viterbi_reset(viterbi_decoder *decoder) {
  memset(decoder, 0, sizeof *decoder);
}

static double pitch_transition(double from_hz, double to_hz) {
  double cents = fabs(1200.0 * log2(to_hz / from_hz));
  double weight = 1.0 - cents / PITCH_STEP_WIDTH_CENTS;
  return weight > PITCH_JUMP_FLOOR ? weight : PITCH_JUMP_FLOOR;
}

static double emission(const candidate_set *frame, int state) {
  double p = state == 0 ? 1.0 - frame->voiced_probability
                        : frame->candidate[state - 1].probability;
  return log(p > EMISSION_FLOOR ? p : EMISSION_FLOOR);
}

/* Best predecessor of `state` in the previous frame, and its score. */
static double best_predecessor(const viterbi_decoder *decoder,
                               const candidate_set *previous,
                               const candidate_set *current, int state,
                               int *from) {
  const double stay = log(1.0 - SWITCH_PROBABILITY);
  const double change = log(SWITCH_PROBABILITY);
  double best = -INFINITY;
  for (int p = 0; p <= previous->count; ++p) {
    double step;
    if (p == 0 && state == 0) step = stay;
    else if (p == 0 || state == 0) step = change;
    else
      step = stay + log(pitch_transition(previous->candidate[p - 1].frequency_hz,
                                         current->candidate[state - 1].frequency_hz));
    double score = decoder->score[p] + step;
    if (score > best) {
      best = score;
      *from = p;
    }
  }
  return best;
}

void plumb_viterbi_push(viterbi_decoder *decoder, const candidate_set *frame) {
  int slot = (int)(decoder->frames_pushed % PLUMB_SPECTRUM_RING);
  double next[PLUMB_CANDIDATES_MAX + 1] = {0};
  if (decoder->frames_pushed == 0) {
    for (int s = 0; s <= frame->count; ++s) {
      next[s] = emission(frame, s);
      decoder->back[slot][s] = 0;
    }
  } else {
    int previous_slot =
        (int)((decoder->frames_pushed - 1) % PLUMB_SPECTRUM_RING);
    const candidate_set *previous = &decoder->frames[previous_slot];
    for (int s = 0; s <= frame->count; ++s) {
      int from = 0;
      next[s] = best_predecessor(decoder, previous, frame, s, &from) +
                emission(frame, s);
      decoder->back[slot][s] = (unsigned char)from;
    }
  }
  /* Keep scores near zero so that long takes cannot underflow. */
  double top = next[0];
  for (int s = 1; s <= frame->count; ++s)
    if (next[s] > top) top = next[s];
  for (int s = 0; s <= PLUMB_CANDIDATES_MAX; ++s)
    decoder->score[s] = s <= frame->count ? next[s] - top : -INFINITY;
  decoder->frames[slot] = *frame;
  decoder->frames_pushed++;
}

int plumb_viterbi_decide(const viterbi_decoder *decoder, int lag) {
  if (decoder->frames_pushed == 0) return 0;
  uint64_t newest = decoder->frames_pushed - 1;
  const candidate_set *frame = &decoder->frames[newest % PLUMB_SPECTRUM_RING];
  int state = 0;
  for (int s = 1; s <= frame->count; ++s)
    if (decoder->score[s] > decoder->score[state]) state = s;
  for (int k = 0; k < lag && newest >= (uint64_t)k + 1; ++k)
    state = decoder->back[(newest - (uint64_t)k) % PLUMB_SPECTRUM_RING][state];
  return state;
}

const candidate_set *plumb_viterbi_frame(const viterbi_decoder *decoder, int lag) {
  uint64_t newest = decoder->frames_pushed - 1;
  return &decoder->frames[(newest - (uint64_t)lag) % PLUMB_SPECTRUM_RING];
}
