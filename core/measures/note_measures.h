/*
  One note measured from its frames: edges, steady part, pitch under the
  partial model, steadiness, definite pitch, verdict, timbre, envelope.
*/
#ifndef PLUMB_MEASURES_NOTE_MEASURES_H
#define PLUMB_MEASURES_NOTE_MEASURES_H

#include "internal.h"
#include "measures/measure_context.h"

/* Measure one note from its frames and fill everything but index and
   timeline_s. `scratch` holds at least 5 * count doubles, levels_db
   count * PLUMB_ENVELOPE_STEPS floats. */
void plumb_note_measure(const measure_context *context, const frame_record *frames,
                  int count, double *scratch, float *levels_db, plumb_note *note);

#endif /* PLUMB_MEASURES_NOTE_MEASURES_H */
