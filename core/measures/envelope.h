/*
  A note's amplitude envelope: attack, decay, sustain, release (a
  decay-rate line fit in the manner of ISO 3382) and free decay rate.
*/
#ifndef PLUMB_MEASURES_ENVELOPE_H
#define PLUMB_MEASURES_ENVELOPE_H

#include "internal.h"
#include "measures/measure_context.h"

/* Attack, decay, sustain, release and free decay rate; f0_hz (0 when the
   event has no pitch) sets the smoothing. */
void plumb_note_envelope(const measure_context *context, const frame_record *frames, int count,
                   double f0_hz, float *levels_db, plumb_note *note);

#endif /* PLUMB_MEASURES_ENVELOPE_H */
