/*
  plumb LV2: the host's transport (see transport.h).
*/
#include "transport.h"

#include <lv2/atom/util.h>

#include <math.h>
#include <string.h>

/* Two positions closer than this are one: any real jump is a frame or
   more, and a Long time:frame is exact. */
#define SAME_FRAME_TOLERANCE 0.5
/* time:barBeat is a Float in the LV2 time specification: about 7
   significant digits (common practice, no source). */
#define SAME_BEAT_TOLERANCE 1e-5

void transport_reset(transport *position, double sample_rate_hz) {
  memset(position, 0, sizeof *position);
  position->sample_rate_hz = sample_rate_hz;
  position->speed = 1.0;
}

/* Hosts differ in the number type they send (time:frame and time:bar
   are Longs in the spec, the others Floats; some send Int or Double). */
static bool read_number(const plumb_uris *uris, const LV2_Atom *atom,
                        double *value) {
  if (!atom) {
    return false;
  }
  if (atom->type == uris->atom_Long && atom->size >= sizeof(int64_t)) {
    *value = (double)((const LV2_Atom_Long *)atom)->body;
  } else if (atom->type == uris->atom_Int && atom->size >= sizeof(int32_t)) {
    *value = (double)((const LV2_Atom_Int *)atom)->body;
  } else if (atom->type == uris->atom_Float && atom->size >= sizeof(float)) {
    *value = (double)((const LV2_Atom_Float *)atom)->body;
  } else if (atom->type == uris->atom_Double && atom->size >= sizeof(double)) {
    *value = ((const LV2_Atom_Double *)atom)->body;
  } else {
    return false;
  }
  return isfinite(*value);
}

static bool read_positive(const plumb_uris *uris, const LV2_Atom *atom,
                          double *value) {
  double number = 0.0;
  if (!read_number(uris, atom, &number) || number <= 0.0) {
    return false;
  }
  *value = number;
  return true;
}

/* Beats the transport moved since the last event: one product of the
   whole frame count, never a sum over blocks. */
static double beats_moved(const transport *position) {
  return position->speed * (double)position->frames_since *
         position->beats_per_minute / (60.0 * position->sample_rate_hz);
}

/* The same transport with the frames since the last event folded in. */
static transport folded(const transport *position) {
  transport now = *position;
  now.frame += position->speed * (double)position->frames_since;
  if (position->has_beats) {
    now.bar_beat += beats_moved(position);
  }
  now.frames_since = 0;
  return now;
}

static double total_beats(const transport *position) {
  return position->bar * position->beats_per_bar + position->bar_beat;
}

/* Whether `next` says something `now` does not: a host that sends
   time:Position every block while rolling must not use up the core's
   marks, which are kept for real jumps. */
static bool differs(const transport *next, const transport *now) {
  if (fabs(next->frame - now->frame) >= SAME_FRAME_TOLERANCE ||
      next->speed != now->speed || next->has_beats != now->has_beats ||
      next->beats_per_bar != now->beats_per_bar ||
      next->beats_per_minute != now->beats_per_minute) {
    return true;
  }
  return next->has_beats &&
         fabs(total_beats(next) - total_beats(now)) >= SAME_BEAT_TOLERANCE;
}

typedef struct {
  const LV2_Atom *frame, *speed, *bar, *bar_beat, *beats_per_bar,
      *beats_per_minute;
} position_atoms;

/* Each property that is there replaces the carried value. A new frame
   without bar and beat is a jump to where the musical time is not known,
   so the carried bar no longer applies. */
static void apply(const plumb_uris *uris, const position_atoms *atoms,
                  transport *next) {
  double value = 0.0;
  bool has_frame = read_number(uris, atoms->frame, &value);
  if (has_frame) {
    next->frame = value;
  }
  if (read_number(uris, atoms->speed, &value)) {
    next->speed = value;
  }
  read_positive(uris, atoms->beats_per_bar, &next->beats_per_bar);
  read_positive(uris, atoms->beats_per_minute, &next->beats_per_minute);
  double bar = 0.0;
  double bar_beat = 0.0;
  if (read_number(uris, atoms->bar, &bar) &&
      read_number(uris, atoms->bar_beat, &bar_beat)) {
    next->has_beats = true;
    next->bar = bar;
    next->bar_beat = bar_beat;
  } else if (has_frame) {
    next->has_beats = false;
  }
}

bool transport_read(transport *position, const plumb_uris *uris,
                    const LV2_Atom_Object *object) {
  position_atoms atoms = {NULL, NULL, NULL, NULL, NULL, NULL};
  lv2_atom_object_get(object, uris->time_frame, &atoms.frame, uris->time_speed,
                      &atoms.speed, uris->time_bar, &atoms.bar,
                      uris->time_barBeat, &atoms.bar_beat,
                      uris->time_beatsPerBar, &atoms.beats_per_bar,
                      uris->time_beatsPerMinute, &atoms.beats_per_minute, 0);
  transport now = folded(position);
  transport next = now;
  apply(uris, &atoms, &next);
  if (!differs(&next, &now)) {
    return false; /* the old mark already says this */
  }
  *position = next;
  return true;
}

void transport_advance(transport *position, uint32_t n_frames) {
  position->frames_since += n_frames;
}

void transport_now(const transport *position, plumb_transport *now) {
  transport at = folded(position);
  now->position_s = at.frame / at.sample_rate_hz;
  now->speed = at.speed;
  now->has_beats = at.has_beats && at.beats_per_bar > 0.0 &&
                   at.beats_per_minute > 0.0;
  now->bar = at.bar;
  now->bar_beat = at.bar_beat;
  now->beats_per_bar = at.beats_per_bar;
  now->beats_per_minute = at.beats_per_minute;
}
