/*
  An online Viterbi decoder of pitch and voicing over the candidates, with
  a fixed decision lag (in the manner of pYIN, Mauch & Dixon 2014).
*/
#ifndef PLUMB_FRAME_VITERBI_H
#define PLUMB_FRAME_VITERBI_H

#include "internal.h"
#include "frame/pitch_prob.h"

#include <stdint.h>

typedef struct {
  candidate_set frames[PLUMB_SPECTRUM_RING];
  unsigned char back[PLUMB_SPECTRUM_RING][PLUMB_CANDIDATES_MAX + 1]; /* states 0 .. max */
  double score[PLUMB_CANDIDATES_MAX + 1]; /* state 0: unvoiced */
  uint64_t frames_pushed;
} viterbi_decoder;

void plumb_viterbi_reset(viterbi_decoder *decoder);
void plumb_viterbi_push(viterbi_decoder *decoder, const candidate_set *frame);
/* The state decided for the frame `lag` frames before the newest one:
   0 for unvoiced, 1 + candidate index for voiced. */
int plumb_viterbi_decide(const viterbi_decoder *decoder, int lag);
const candidate_set *plumb_viterbi_frame(const viterbi_decoder *decoder, int lag);

#endif /* PLUMB_FRAME_VITERBI_H */
