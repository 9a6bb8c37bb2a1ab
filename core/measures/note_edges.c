/*
  Onset and offset times from the frame levels. The level of a Hann-windowed
  frame is half (-3 dB) its full value when a sudden start or stop sits at
  the frame centre, and reaches any other fraction at a lead that the
  window's shape fixes (plumb_window_step_lead_s in spectrum.c), so level crossings,
  interpolated between frames, place a note's ends free of the window's
  length.
*/
#include "measures/note_edges.h"

#include "frame/spectrum.h"

#include <math.h>

#define EDGE_SEARCH_FRAMES 12
#define EDGE_MIN_RISE_DB 6.0
#define EDGE_RELEASED_DB 20.0

double plumb_note_edges_frame_time_s(const measure_context *context, const frame_record *f) {
  return (double)f->centre_sample / context->sample_rate_hz;
}

static double crossing_time_s(const measure_context *context, const frame_record *a,
                              const frame_record *b, double level) {
  double span = b->level_dbfs - a->level_dbfs;
  double fraction = span != 0.0 ? (level - a->level_dbfs) / span : 0.0;
  if (fraction < 0.0) fraction = 0.0;
  if (fraction > 1.0) fraction = 1.0;
  return plumb_note_edges_frame_time_s(context, a) + fraction * context->hop_s;
}

/* The onset: where the level rising to the attack's peak crosses
   PLUMB_ONSET_THRESHOLD_DB below it (or, over a noise floor, 6 dB above
   the quietest frame before the peak), moved later by the lead a sudden
   start has at that level. A low threshold puts a slow, bowed or breathed
   attack's onset near where it begins to sound. */
#define ONSET_ABOVE_FLOOR_DB 6.0
#define ATTACK_SEARCH_S 0.6
#define ATTACK_DIP_DB 1.0

double plumb_note_edges_start_s(const measure_context *context, const frame_record *frames,
                          int count) {
  /* The attack's peak: the level followed upwards (through dips of less
     than ATTACK_DIP_DB) for at most ATTACK_SEARCH_S. */
  int look = (int)ceil(ATTACK_SEARCH_S / context->hop_s);
  if (look > count) look = count;
  int top = 0;
  for (int i = 1; i < look; ++i) {
    if (frames[i].level_dbfs < frames[top].level_dbfs - ATTACK_DIP_DB) break;
    if (frames[i].level_dbfs > frames[top].level_dbfs) top = i;
  }
  /* The floor under the note: the quietest of its rising frames and of the
     frame before it (silence before a note from nothing). */
  double quietest = fmin(frames[0].level_dbfs, frames[0].level_before_dbfs);
  for (int i = 1; i < top; ++i) quietest = fmin(quietest, frames[i].level_dbfs);
  if (frames[top].level_dbfs - quietest < EDGE_MIN_RISE_DB)
    return plumb_note_edges_frame_time_s(context, &frames[0]);
  double threshold = fmax(frames[top].level_dbfs + PLUMB_ONSET_THRESHOLD_DB,
                          quietest + ONSET_ABOVE_FLOOR_DB);
  int i = top;
  while (i > 0 && frames[i - 1].level_dbfs >= threshold) --i;
  if (i == 0) {
    /* The note's first frame is already above the threshold: place a
       sudden start where the window's shape puts one at that frame's level
       (the frame before was below the floor). */
    double below_top_db = frames[0].level_dbfs - frames[top].level_dbfs;
    double lead0_s = below_top_db < 0.0 ? plumb_window_step_lead_s(below_top_db, context->frame_s) : 0.0;
    return plumb_note_edges_frame_time_s(context, &frames[0]) + lead0_s;
  }
  double lead_s = plumb_window_step_lead_s(threshold - frames[top].level_dbfs, context->frame_s);
  double refined_s = crossing_time_s(context, &frames[i - 1], &frames[i], threshold) + lead_s;
  /* Over a sound that is still ringing (the floor set the threshold), the
     crossing says more of the floor than of the note: trust the frame the
     note was found at, to within a hop. */
  bool over_floor = threshold > frames[top].level_dbfs + PLUMB_ONSET_THRESHOLD_DB;
  double found_s = plumb_note_edges_frame_time_s(context, &frames[0]);
  return over_floor ? fmin(refined_s, found_s + context->hop_s) : refined_s;
}

double plumb_note_edges_end_s(const measure_context *context, const frame_record *frames,
                        int count) {
  double fallback = plumb_note_edges_frame_time_s(context, &frames[count - 1]) + 0.5 * context->hop_s;
  double peak = frames[0].level_dbfs;
  for (int i = 1; i < count; ++i)
    if (frames[i].level_dbfs > peak) peak = frames[i].level_dbfs;
  /* Only a note that has died away has an offset of its own; one cut by
     the next note ends where that one starts. */
  if (frames[count - 1].level_dbfs > peak - EDGE_RELEASED_DB) return fallback;
  int from = count > EDGE_SEARCH_FRAMES ? count - EDGE_SEARCH_FRAMES : 0;
  int top = from;
  for (int i = from + 1; i < count; ++i)
    if (frames[i].level_dbfs > frames[top].level_dbfs) top = i;
  double threshold = frames[top].level_dbfs - 3.0;
  for (int i = top + 1; i < count; ++i)
    if (frames[i].level_dbfs < threshold)
      return crossing_time_s(context, &frames[i - 1], &frames[i], threshold);
  return fallback;
}
