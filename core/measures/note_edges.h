/*
  A note's onset and offset times from the frame levels, free of the
  analysis window's length.
*/
#ifndef PLUMB_MEASURES_NOTE_EDGES_H
#define PLUMB_MEASURES_NOTE_EDGES_H

#include "internal.h"
#include "measures/measure_context.h"

/* Onsets are placed where the level crosses this far below the attack's
   peak. Common practice, no source. */
#define PLUMB_ONSET_THRESHOLD_DB (-20.0)

/* The time of a frame's centre, in seconds since reset. */
double plumb_note_edges_frame_time_s(const measure_context *context, const frame_record *frame);
/* The onset and the offset of the note made of frames [0, count). */
double plumb_note_edges_start_s(const measure_context *context, const frame_record *frames,
                          int count);
double plumb_note_edges_end_s(const measure_context *context, const frame_record *frames,
                        int count);

#endif /* PLUMB_MEASURES_NOTE_EDGES_H */
