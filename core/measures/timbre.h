/*
  The balance of a note's partials: their cents from the series,
  odd/even, tristimulus (Pollard & Jansson 1982), centroid and
  harmonic-to-noise ratio.
*/
#ifndef PLUMB_MEASURES_TIMBRE_H
#define PLUMB_MEASURES_TIMBRE_H

#include "internal.h"
#include "measures/measure_context.h"
#include "measures/partial_fit.h"
#include "measures/steady_part.h"

/* Partial deviations, odd/even balance, tristimulus, centroid and
   harmonic-to-noise ratio of a pitched note (f0_hz set). */
void plumb_note_timbre(const measure_context *context, const frame_record *frames,
                 const steady_part *part, const partial_model *model, plumb_note *note);
/* An unpitched event's strong modes against the harmonics of its lowest. */
void plumb_note_mode_cents(const measure_context *context, const frame_record *frames, int count,
                     plumb_note *note);

#endif /* PLUMB_MEASURES_TIMBRE_H */
