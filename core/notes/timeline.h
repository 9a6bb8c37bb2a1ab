/*
  The host transport's marks, and the timeline position, bar and beat of
  any sample between them.
*/
#ifndef PLUMB_NOTES_TIMELINE_H
#define PLUMB_NOTES_TIMELINE_H

#include "internal.h"

#include <stdint.h>

typedef struct {
  uint64_t sample[PLUMB_TIMELINE_MARKS];
  plumb_transport transport[PLUMB_TIMELINE_MARKS];
  uint32_t count;
} timeline_marks;

void plumb_timeline_reset(timeline_marks *marks);
void plumb_timeline_mark(timeline_marks *marks, uint64_t sample, const plumb_transport *transport);
/* The transport position (and bar and beat, NaN when unknown) of sample
   `sample`. */
void plumb_timeline_locate(const timeline_marks *marks, uint64_t sample, double sample_rate_hz,
                     double *position_s, double *bar, double *beat);

#endif /* PLUMB_NOTES_TIMELINE_H */
