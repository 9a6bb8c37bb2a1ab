/*
  Splits the stream of decided frames into notes.

  A note starts at an onset (a peak of the band-wise spectral flux) or where
  voicing begins above the level gate. It ends where the level falls away,
  where voicing is lost, at the next onset (a re-articulation, also at the
  same pitch), or where the pitch moves to a new level and stays there for
  the minimum note length (legato). A move that comes before the note has
  lasted the minimum length is an attack scoop: it stays in the note, and the
  note's reference pitch follows the new level.
*/
#include "notes/note_tracker.h"

#include "util/stats.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Levels and thresholds below are common practice, no source; they were
   set on the project's synthetic and sampled test takes. */
#define GATE_DBFS (-80.0)          /* below this a frame is silence */
#define RELEASE_DROP_DB 40.0       /* a note has ended this far below its peak */
#define QUIET_FRAMES_TO_END 2
/* A pitched note survives this long without pitch while it stays loud:
   the frames of a legato change straddle two pitches and read none. */
#define UNVOICED_S_TO_END 0.1
#define ONSET_MIN_DB 2.5           /* mean band rise over two hops */
#define ONSET_ABOVE_RECENT_DB 1.5  /* above the recent mean of the function */
/* A weaker flux peak still counts when the level has just dipped this far
   and come back: a re-articulation at the same pitch. */
#define REARTICULATION_DIP_DB 6.0
#define REARTICULATION_MIN_DB 1.0
#define DIP_SPAN_S 0.065
#define PITCH_CHANGE_CENTS 50.0
#define SMOOTHING_S 0.25           /* a whole vibrato cycle down to 4 Hz */
#define REFERENCE_SKIP_FRAMES 2    /* attack frames kept out of the reference */

plumb_status plumb_note_tracker_init(note_tracker *tracker) {
  memset(tracker, 0, sizeof *tracker);
  tracker->frames = malloc(sizeof(frame_record) * PLUMB_NOTE_FRAMES_MAX);
  return tracker->frames ? PLUMB_OK : PLUMB_ERR_MEMORY;
}

void plumb_note_tracker_destroy(note_tracker *tracker) {
  free(tracker->frames);
  tracker->frames = NULL;
}

void plumb_note_tracker_set_min_note(note_tracker *tracker, double min_note_ms) {
  int frames = (int)ceil(min_note_ms / 1000.0 / tracker->hop_s);
  tracker->min_note_frames = frames < 2 ? 2 : frames;
}

void plumb_note_tracker_reset(note_tracker *tracker, double hop_s,
                        double min_note_ms) {
  frame_record *frames = tracker->frames;
  memset(tracker, 0, sizeof *tracker);
  tracker->frames = frames;
  tracker->hop_s = hop_s;
  tracker->reference_midi = NAN;
  tracker->previous_onset_db = INFINITY;
  tracker->idle_floor_dbfs = -INFINITY;
  tracker->last_level_dbfs = -INFINITY;
  plumb_note_tracker_set_min_note(tracker, min_note_ms);
}

static double frame_midi(const frame_record *frame) {
  return 69.0 + 12.0 * log2(frame->f0_hz / 440.0);
}

static void start_note(note_tracker *tracker, const frame_record *frame) {
  tracker->active = true;
  tracker->preroll_count = 0;
  tracker->count = 0;
  tracker->reference_midi = NAN;
  tracker->reference_n = 0;
  tracker->unvoiced_run = 0;
  tracker->quiet_run = 0;
  tracker->change_run = 0;
  tracker->peak_level_dbfs = frame->level_dbfs;
  tracker->frames[tracker->count] = *frame;
  tracker->frames[tracker->count++].level_before_dbfs = tracker->last_level_dbfs;
}

static void remember_preroll(note_tracker *tracker, const frame_record *frame) {
  tracker->preroll[tracker->preroll_next] = *frame;
  tracker->preroll_next = (tracker->preroll_next + 1) % PLUMB_PREROLL_FRAMES;
  if (tracker->preroll_count < PLUMB_PREROLL_FRAMES) tracker->preroll_count++;
}

/* A note found by its pitch rather than an onset begins with the sounding
   frames that led up to it. */
static void start_after_preroll(note_tracker *tracker, const frame_record *frame) {
  int count = tracker->preroll_count;
  int first = (tracker->preroll_next - count + PLUMB_PREROLL_FRAMES) % PLUMB_PREROLL_FRAMES;
  if (count == 0) {
    start_note(tracker, frame);
    return;
  }
  start_note(tracker, &tracker->preroll[first]);
  tracker->frames[0].level_before_dbfs = -INFINITY; /* the pre-roll follows a quiet frame */
  for (int i = 1; i < count; ++i)
    tracker->frames[tracker->count++] = tracker->preroll[(first + i) % PLUMB_PREROLL_FRAMES];
  tracker->frames[tracker->count++] = *frame;
  for (int i = 0; i < tracker->count; ++i)
    tracker->peak_level_dbfs = fmax(tracker->peak_level_dbfs, tracker->frames[i].level_dbfs);
}

/* Hand frames [0, count) to the sink and keep [count, end) as the start of
   the next note (only the legato split keeps any). */
static void close_note(note_tracker *tracker, int count, note_sink sink,
                       void *context) {
  if (count > 0) sink(context, tracker->frames, count);
  int kept = tracker->count - count;
  if (kept > 0)
    memmove(tracker->frames, tracker->frames + count,
            sizeof(frame_record) * (size_t)kept);
  tracker->count = kept > 0 ? kept : 0;
  tracker->active = kept > 0;
}

/* The mean of sorted values with the highest and lowest sixth left out:
   vibrato over whole cycles averages out of it (a median of a sinusoid
   over a cycle and a bit sits off its centre), and a stray frame cannot
   move it. */
static double sorted_trimmed_mean(const double *values, int n) {
  int cut = n / 6;
  double sum = 0.0;
  for (int i = cut; i < n - cut; ++i) sum += values[i];
  return sum / (n - 2 * cut);
}

/* The same of unsorted values, which it sorts in place (n is at most
   PLUMB_REFERENCE_FRAMES). */
static double trimmed_mean(double *values, int n) {
  for (int i = 1; i < n; ++i)
    for (int j = i; j > 0 && values[j - 1] > values[j]; --j) {
      double t = values[j];
      values[j] = values[j - 1];
      values[j - 1] = t;
    }
  return sorted_trimmed_mean(values, n);
}

/* Keep reference_sorted in order as one value leaves and one comes: O(n)
   instead of a sort. */
static void sorted_replace(double *sorted, int n, bool leaving, double old, double value) {
  int count = n;
  if (leaving) {
    int at = 0;
    while (at < count && sorted[at] != old) ++at;
    if (at < count) {
      memmove(sorted + at, sorted + at + 1, sizeof(double) * (size_t)(count - at - 1));
      count--;
    }
  }
  int at = count;
  while (at > 0 && sorted[at - 1] > value) {
    sorted[at] = sorted[at - 1];
    --at;
  }
  sorted[at] = value;
}

/* The reference is the trimmed mean of the newest voiced frames, so that a
   stray frame (an octave slip in an attack) cannot move it. */
static void add_reference(note_tracker *tracker, double midi) {
  int slot = tracker->reference_n % PLUMB_REFERENCE_FRAMES;
  bool full = tracker->reference_n >= PLUMB_REFERENCE_FRAMES;
  int before = full ? PLUMB_REFERENCE_FRAMES : tracker->reference_n;
  sorted_replace(tracker->reference_sorted, before, full, tracker->reference_values[slot], midi);
  tracker->reference_values[slot] = midi;
  tracker->reference_n++;
  int kept = full ? PLUMB_REFERENCE_FRAMES : tracker->reference_n;
  tracker->reference_midi = sorted_trimmed_mean(tracker->reference_sorted, kept);
}

static void rebuild_reference(note_tracker *tracker, int from) {
  tracker->reference_n = 0;
  tracker->reference_midi = NAN;
  for (int i = from; i < tracker->count; ++i)
    if (tracker->frames[i].voiced) add_reference(tracker, frame_midi(&tracker->frames[i]));
  tracker->change_run = 0;
}

/* The pitch of about one vibrato cycle of the newest frames: it follows
   note changes but neither vibrato nor a stray frame. */
static double smoothed_midi(const note_tracker *tracker) {
  int span = (int)lround(SMOOTHING_S / tracker->hop_s);
  if (span > PLUMB_REFERENCE_FRAMES) span = PLUMB_REFERENCE_FRAMES;
  double values[PLUMB_REFERENCE_FRAMES];
  int n = 0;
  for (int i = tracker->count - 1; i >= 0 && n < span; --i)
    if (tracker->frames[i].voiced) values[n++] = frame_midi(&tracker->frames[i]);
  return n > 0 ? trimmed_mean(values, n) : NAN;
}

/* Where a legato change begins: the first frame of the new pitch, moved
   back over frames that read no pitch (their window straddles both notes)
   and over the last few old frames that already lean towards the new
   pitch (the window reaching into a glide). */
#define LEAN_CENTS 15.0
#define LEAN_FRAMES_MAX 3

static int change_start(const note_tracker *tracker) {
  int first_new = tracker->count - 1;
  int i = tracker->count - 1;
  while (i > 0) {
    const frame_record *f = &tracker->frames[i - 1];
    if (f->voiced) {
      if (fabs(frame_midi(f) - tracker->reference_midi) * 100.0 <= PITCH_CHANGE_CENTS) break;
      first_new = i - 1;
    }
    --i;
  }
  double direction = frame_midi(&tracker->frames[first_new]) - tracker->reference_midi;
  for (int lean = 0; lean < LEAN_FRAMES_MAX && i > 1; ++lean) {
    const frame_record *f = &tracker->frames[i - 1];
    double toward = (frame_midi(f) - tracker->reference_midi) * (direction > 0 ? 100.0 : -100.0);
    if (!f->voiced || toward <= LEAN_CENTS) break;
    --i;
  }
  return i;
}

static void follow_pitch(note_tracker *tracker, const frame_record *frame,
                         note_sink sink, void *context) {
  if (!frame->voiced) return;
  /* The reference is first built over a whole vibrato cycle, so that it
     starts at the note's centre, not at a swing. */
  int building = (int)lround(SMOOTHING_S / tracker->hop_s);
  if (tracker->reference_n < (building > 3 ? building : 3)) {
    if (tracker->count > REFERENCE_SKIP_FRAMES) add_reference(tracker, frame_midi(frame));
    return;
  }
  double away_cents = fabs(smoothed_midi(tracker) - tracker->reference_midi) * 100.0;
  if (away_cents <= PITCH_CHANGE_CENTS) {
    tracker->change_run = 0;
    /* Frames join the reference only while the present agrees with it:
       the first frames of a new note must not drag it along before the
       change is seen. */
    if (away_cents <= 0.5 * PITCH_CHANGE_CENTS) add_reference(tracker, frame_midi(frame));
    return;
  }
  if (++tracker->change_run < tracker->min_note_frames) return;
  int split = change_start(tracker);
  if (split < tracker->min_note_frames) {
    rebuild_reference(tracker, split); /* an attack scoop */
    return;
  }
  close_note(tracker, split, sink, context);
  tracker->frames[0].legato_start = true;
  rebuild_reference(tracker, 0);
}

/* Did the level fall by REARTICULATION_DIP_DB within the last DIP_SPAN_S
   from where it stood just before? */
static bool dipped(const note_tracker *tracker) {
  int span = (int)ceil(DIP_SPAN_S / tracker->hop_s);
  if (tracker->count < 2 * span) return false;
  double before = -INFINITY, lowest = INFINITY;
  for (int i = tracker->count - 2 * span; i < tracker->count - span; ++i)
    before = fmax(before, tracker->frames[i].level_dbfs);
  for (int i = tracker->count - span; i < tracker->count; ++i)
    lowest = fmin(lowest, tracker->frames[i].level_dbfs);
  return before - lowest >= REARTICULATION_DIP_DB;
}

static void track_frame_state(note_tracker *tracker, const frame_record *frame,
                              bool onset, note_sink sink, void *context);

static void track_frame(note_tracker *tracker, const frame_record *frame,
                        bool onset, note_sink sink, void *context) {
  track_frame_state(tracker, frame, onset, sink, context);
  tracker->last_level_dbfs = frame->level_dbfs;
}

static void track_frame_state(note_tracker *tracker, const frame_record *frame,
                              bool onset, note_sink sink, void *context) {
  bool quiet = frame->level_dbfs < GATE_DBFS;
  if (!tracker->active) {
    /* After a note has ended, its release is not a new note: only an onset
       or a level back above the release floor starts one. */
    if (quiet) tracker->idle_floor_dbfs = -INFINITY;
    bool above_release = frame->level_dbfs > tracker->idle_floor_dbfs;
    if (!quiet && onset) start_note(tracker, frame);
    else if (!quiet && frame->voiced && above_release) start_after_preroll(tracker, frame);
    else if (!quiet && above_release) remember_preroll(tracker, frame);
    else tracker->preroll_count = 0;
    return;
  }
  if (!onset && frame->onset_db >= REARTICULATION_MIN_DB && tracker->has_pending_peak)
    onset = dipped(tracker);
  if (onset && tracker->count >= tracker->min_note_frames) {
    close_note(tracker, tracker->count, sink, context);
    start_note(tracker, frame);
    return;
  }
  if (tracker->count >= PLUMB_NOTE_FRAMES_MAX) {
    close_note(tracker, tracker->count, sink, context); /* very long note */
    start_note(tracker, frame);
    return;
  }
  quiet = quiet || frame->level_dbfs < tracker->peak_level_dbfs - RELEASE_DROP_DB;
  if (frame->level_dbfs > tracker->peak_level_dbfs)
    tracker->peak_level_dbfs = frame->level_dbfs;
  tracker->quiet_run = quiet ? tracker->quiet_run + 1 : 0;
  tracker->unvoiced_run = frame->voiced ? 0 : tracker->unvoiced_run + 1;
  tracker->frames[tracker->count++] = *frame;
  bool pitched = tracker->reference_n >= 3;
  int tail = tracker->quiet_run >= QUIET_FRAMES_TO_END ? tracker->quiet_run
             : pitched && tracker->unvoiced_run * tracker->hop_s >= UNVOICED_S_TO_END
                 ? tracker->unvoiced_run
                 : 0;
  if (tail > 0) {
    /* What follows must rise above the note's release to start a note
       without an onset. */
    tracker->idle_floor_dbfs = tracker->peak_level_dbfs - RELEASE_DROP_DB;
    close_note(tracker, tracker->count - tail, sink, context);
    tracker->active = false;
    return;
  }
  follow_pitch(tracker, frame, sink, context);
}

/* An onset is a peak of the detection function that stands above both a
   fixed floor and the function's recent mean. */
static bool is_onset(note_tracker *tracker, const frame_record *frame,
                     const frame_record *next) {
  double recent = 0.0;
  for (int i = 0; i < tracker->onset_history_n; ++i)
    recent += tracker->onset_history[i];
  if (tracker->onset_history_n > 0) recent /= tracker->onset_history_n;
  bool peak = frame->onset_db >= tracker->previous_onset_db &&
              (!next || frame->onset_db > next->onset_db);
  tracker->has_pending_peak = peak;
  return peak && frame->onset_db >= ONSET_MIN_DB &&
         frame->onset_db >= recent + ONSET_ABOVE_RECENT_DB;
}

static void remember_onset_value(note_tracker *tracker, double value) {
  const int capacity = (int)(sizeof tracker->onset_history /
                             sizeof tracker->onset_history[0]);
  if (tracker->onset_history_n < capacity) {
    tracker->onset_history[tracker->onset_history_n++] = value;
  } else {
    memmove(tracker->onset_history, tracker->onset_history + 1,
            sizeof(double) * (size_t)(capacity - 1));
    tracker->onset_history[capacity - 1] = value;
  }
  tracker->previous_onset_db = value;
}

void plumb_note_tracker_push(note_tracker *tracker, const frame_record *frame,
                       note_sink sink, void *context) {
  if (tracker->has_pending) {
    frame_record current = tracker->pending;
    bool onset = is_onset(tracker, &current, frame);
    remember_onset_value(tracker, current.onset_db);
    track_frame(tracker, &current, onset, sink, context);
  }
  tracker->pending = *frame;
  tracker->has_pending = true;
}

void plumb_note_tracker_flush(note_tracker *tracker, note_sink sink, void *context) {
  if (tracker->has_pending) {
    frame_record current = tracker->pending;
    bool onset = is_onset(tracker, &current, NULL);
    track_frame(tracker, &current, onset, sink, context);
    tracker->has_pending = false;
  }
  if (tracker->active) close_note(tracker, tracker->count, sink, context);
  tracker->active = false;
  tracker->count = 0;
}
