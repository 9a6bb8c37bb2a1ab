/*
  Splitting the decided frames into notes: onsets from spectral flux and
  level, legato pitch changes, re-articulations, offsets.
*/
#ifndef PLUMB_NOTES_NOTE_TRACKER_H
#define PLUMB_NOTES_NOTE_TRACKER_H

#include "internal.h"

#include <stdbool.h>

typedef struct {
  double hop_s;
  int min_note_frames;
  /* state */
  bool active;
  int count;               /* frames in the current note */
  double reference_midi;   /* the note's running pitch (NaN before) */
  double reference_values[PLUMB_REFERENCE_FRAMES]; /* newest voiced frames */
  double reference_sorted[PLUMB_REFERENCE_FRAMES]; /* the same, in order */
  int reference_n;         /* frames taken since the reference started */
  int unvoiced_run;
  int quiet_run;
  int change_run;          /* frames the smoothed pitch has left the note */
  double peak_level_dbfs;
  double idle_floor_dbfs;  /* a release must not restart a note */
  double last_level_dbfs;  /* of the frame tracked last */
  double onset_history[16];
  int onset_history_n;
  frame_record pending;    /* one frame of look-ahead for onset peaks */
  bool has_pending;
  bool has_pending_peak;   /* the frame being tracked is a flux peak */
  double previous_onset_db;
  frame_record *frames;    /* PLUMB_NOTE_FRAMES_MAX */
  /* The frames since the last silence while no note sounds: a note whose
     pitch firms up only after a slow attack starts where its sound does. */
  frame_record preroll[PLUMB_PREROLL_FRAMES];
  int preroll_count;
  int preroll_next;
} note_tracker;

/* A segment closed by the tracker: frames [0, count) of tracker->frames. */
typedef void (*note_sink)(void *context, const frame_record *frames,
                          int count);

plumb_status plumb_note_tracker_init(note_tracker *tracker);
void plumb_note_tracker_destroy(note_tracker *tracker);
void plumb_note_tracker_reset(note_tracker *tracker, double hop_s,
                        double min_note_ms);
void plumb_note_tracker_set_min_note(note_tracker *tracker, double min_note_ms);
void plumb_note_tracker_push(note_tracker *tracker, const frame_record *frame,
                       note_sink sink, void *context);
void plumb_note_tracker_flush(note_tracker *tracker, note_sink sink, void *context);

#endif /* PLUMB_NOTES_NOTE_TRACKER_H */
