/*
  plumb LV2: the host's transport, from time:Position events.

  Hosts send time:Position when the transport jumps or changes speed or
  tempo, not every block (and some send it every block anyway), so the
  transport is carried forward here between events. The state is the
  last event's values plus a whole count of frames analysed since, and
  every derived value is computed from those two in one step: how the
  audio was split into blocks never changes a result. [RT].
*/
#ifndef PLUMB_LV2_TRANSPORT_H
#define PLUMB_LV2_TRANSPORT_H

#include "plumb.h"
#include "uris.h"

#include <stdbool.h>
#include <stdint.h>

typedef struct {
  double sample_rate_hz;
  /* As of the last event that changed anything: */
  double frame;            /* transport position, frames */
  double speed;            /* 1 rolling, 0 stopped */
  bool has_beats;          /* bar and bar_beat are known */
  double bar;              /* bars before the current one (time:bar) */
  double bar_beat;         /* beats into it (time:barBeat) */
  double beats_per_bar;    /* 0 until the host gives it */
  double beats_per_minute; /* 0 until the host gives it */
  /* Audio analysed since then. */
  uint64_t frames_since;
} transport;

/* Position 0, rolling, no musical time: the same as the core's own clock
   after a reset. */
void transport_reset(transport *position, double sample_rate_hz);

/* Apply one time:Position object: time:frame, time:speed, time:bar with
   time:barBeat, time:beatsPerBar and time:beatsPerMinute, each in any
   number type and each optional (see docs/ports.md for what a missing
   one means). Returns true when the transport now differs from what it
   would have been without the object: the core needs a new mark. */
bool transport_read(transport *position, const plumb_uris *uris,
                    const LV2_Atom_Object *object);

/* The transport moved on by n_frames of analysed audio. */
void transport_advance(transport *position, uint32_t n_frames);

/* The transport at the next sample, as plumb_mark_transport() takes it. */
void transport_now(const transport *position, plumb_transport *now);

#endif /* PLUMB_LV2_TRANSPORT_H */
