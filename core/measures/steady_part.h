/*
  A note's steady part: its frames past the attack and before the
  release, within a band around the median pitch. Scoops, glides and
  slips stay out of the pitch.
*/
#ifndef PLUMB_MEASURES_STEADY_PART_H
#define PLUMB_MEASURES_STEADY_PART_H

#include "internal.h"
#include "measures/measure_context.h"

/* A note's steady part: its frame range, and the band around its median
   pitch (reference_hz) outside which a frame is a slip, not the pitch. */
typedef struct {
  int first, last; /* inclusive frame range */
  double reference_hz;
  double band_cents;
} steady_part;

/* Voiced, and within the band. */
bool plumb_steady_frame(const frame_record *f, const steady_part *part);

/* Find the steady part of frames [0, count) of a note from start_s to
   end_s. scratch holds count doubles. False when it has fewer than three
   frames. */
bool plumb_steady_part_find(const measure_context *context, const frame_record *frames,
                      int count, double start_s, double end_s, double *scratch,
                      steady_part *part);

#endif /* PLUMB_MEASURES_STEADY_PART_H */
