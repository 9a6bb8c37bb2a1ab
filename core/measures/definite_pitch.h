/*
  Definite pitch or not: a membrane's, a bar's or a bell's strong modes lie
  off any harmonic or stiff-string series, so a share of the strong
  spectral peaks that the note's own series does not account for marks an
  event with no definite pitch, which is never flagged.
*/
#ifndef PLUMB_MEASURES_DEFINITE_PITCH_H
#define PLUMB_MEASURES_DEFINITE_PITCH_H

#include "internal.h"
#include "measures/measure_context.h"
#include "measures/partial_fit.h"

#include <stdbool.h>

/* True when the strong peaks of frames [0, count) stray from the series
   of f0_hz under the model (an event with no definite pitch). */
bool plumb_definite_pitch_fits_no_series(const measure_context *context,
                                   const frame_record *frames, int count, double f0_hz,
                                   const partial_model *model);

#endif /* PLUMB_MEASURES_DEFINITE_PITCH_H */
