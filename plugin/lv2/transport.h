/*
  plumb LV2: the host's transport position, from time:Position events.

  Hosts send time:Position when the transport jumps or changes speed, not
  every block, so the position is carried forward here between events:
  it advances by frames x speed for the audio analysed. [RT].
*/
#ifndef PLUMB_LV2_TRANSPORT_H
#define PLUMB_LV2_TRANSPORT_H

#include "uris.h"

#include <stdbool.h>
#include <stdint.h>

typedef struct {
  double frame; /* transport position of the next sample, in frames */
  double speed; /* 1 rolling, 0 stopped */
} transport;

/* Position 0, rolling: the same as the core's own clock after a reset. */
void transport_reset(transport *position);

/* Take time:frame and time:speed from a time:Position object (either may
   be missing). Returns false when it holds neither. */
bool transport_read(transport *position, const plumb_uris *uris,
                    const LV2_Atom_Object *object);

/* The transport moved on by n_frames of audio. */
void transport_advance(transport *position, uint32_t n_frames);

#endif /* PLUMB_LV2_TRANSPORT_H */
