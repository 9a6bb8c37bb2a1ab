/*
  plumb LV2: every completed note goes out on the notify port as one
  urn:plumb:Note object (docs/ports.md lists its properties).

  [RT]: pops the core's audio-thread note queue and forges into the
  notify sequence, with no allocation, lock, log or system call.
*/
#ifndef PLUMB_LV2_NOTE_EVENTS_H
#define PLUMB_LV2_NOTE_EVENTS_H

#include "plumb.h"
#include "uris.h"

#include <lv2/atom/forge.h>

#include <stdbool.h>
#include <stdint.h>

/* Forge one note as an object event at `frame` on the forge, which must
   be writing into the notify sequence (its top frame). A field that does
   not apply (NaN, or -1 for midi and partials) is left out. Returns
   false, and leaves the sequence as it was, when the object does not
   fit. */
bool note_events_forge(const plumb_uris *uris, const plumb_note *note,
                       LV2_Atom_Forge *forge, int64_t frame);

/* Pop every completed note from plumb_pop_note_here() and forge each at
   `frame`; with notify_open false they are only popped. Returns how many
   were dropped (did not fit, or notify was not open). */
uint32_t note_events_send(plumb *core, const plumb_uris *uris,
                          LV2_Atom_Forge *forge, bool notify_open,
                          int64_t frame);

#endif /* PLUMB_LV2_NOTE_EVENTS_H */
