/*
  plumb LV2: completed notes as urn:plumb:Note objects on notify.
*/
#include "note_events.h"
#include "forge_mark.h"

#include <math.h>
#include <stddef.h>

/* A property with an atom:Int value; `applies` false leaves it out. */
static bool put_int(LV2_Atom_Forge *forge, LV2_URID key, int32_t value,
                    bool applies) {
  return !applies ||
         (lv2_atom_forge_key(forge, key) && lv2_atom_forge_int(forge, value));
}

/* A property with an atom:Double value; NaN leaves it out. */
static bool put_double(LV2_Atom_Forge *forge, LV2_URID key, double value) {
  return isnan(value) || (lv2_atom_forge_key(forge, key) &&
                          lv2_atom_forge_double(forge, value));
}

static bool put_integers(const plumb_uris *u, const plumb_note *note,
                         LV2_Atom_Forge *forge) {
  return put_int(forge, u->note_index, (int32_t)note->index, true) &&
         put_int(forge, u->note_midi, note->midi, note->midi != -1) &&
         put_int(forge, u->note_partials, note->partials,
                 note->partials != -1) &&
         put_int(forge, u->note_verdict, (int32_t)note->verdict, true);
}

static bool put_pitch(const plumb_uris *u, const plumb_note *note,
                      LV2_Atom_Forge *forge) {
  return put_double(forge, u->note_start_s, note->start_s) &&
         put_double(forge, u->note_end_s, note->end_s) &&
         put_double(forge, u->note_timeline_s, note->timeline_s) &&
         put_double(forge, u->note_target_hz, note->target_hz) &&
         put_double(forge, u->note_f0_hz, note->f0_hz) &&
         put_double(forge, u->note_cents, note->cents) &&
         put_double(forge, u->note_spread_cents, note->spread_cents) &&
         put_double(forge, u->note_drift_cents_per_s,
                    note->drift_cents_per_s) &&
         put_double(forge, u->note_vibrato_hz, note->vibrato_hz) &&
         put_double(forge, u->note_vibrato_cents, note->vibrato_cents) &&
         put_double(forge, u->note_confidence, note->confidence);
}

static bool put_timbre(const plumb_uris *u, const plumb_note *note,
                       LV2_Atom_Forge *forge) {
  return put_double(forge, u->note_inharmonicity_b, note->inharmonicity_b) &&
         put_double(forge, u->note_hnr_db, note->hnr_db) &&
         put_double(forge, u->note_odd_even_db, note->odd_even_db) &&
         put_double(forge, u->note_centroid_hz, note->centroid_hz) &&
         put_double(forge, u->note_attack_ms, note->attack_ms) &&
         put_double(forge, u->note_decay_ms, note->decay_ms) &&
         put_double(forge, u->note_sustain_db, note->sustain_db) &&
         put_double(forge, u->note_release_ms, note->release_ms) &&
         put_double(forge, u->note_peak_dbfs, note->peak_dbfs);
}

bool note_events_forge(const plumb_uris *uris, const plumb_note *note,
                       LV2_Atom_Forge *forge, int64_t frame) {
  forge_mark mark = mark_forge(forge);
  LV2_Atom_Forge_Frame object;
  bool fits = lv2_atom_forge_frame_time(forge, frame) &&
              lv2_atom_forge_object(forge, &object, 0, uris->plumb_Note) &&
              put_integers(uris, note, forge) && put_pitch(uris, note, forge) &&
              put_timbre(uris, note, forge);
  if (!fits) {
    undo_to_mark(forge, &mark);
    return false;
  }
  lv2_atom_forge_pop(forge, &object);
  return true;
}

uint32_t note_events_send(plumb *core, const plumb_uris *uris,
                          LV2_Atom_Forge *forge, bool notify_open,
                          int64_t frame) {
  uint32_t dropped = 0;
  plumb_note note;
  while (plumb_pop_note_here(core, &note)) {
    if (!notify_open || !note_events_forge(uris, &note, forge, frame)) {
      ++dropped;
    }
  }
  return dropped;
}
