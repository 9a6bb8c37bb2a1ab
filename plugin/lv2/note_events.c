/*
  plumb LV2: every completed note goes out on the notify port as one
  urn:plumb:Note object (note_object.c). [RT]: pops the core's
  audio-thread note queue and forges into the notify sequence, with no
  allocation, lock, log or system call.
*/
#include "note_events.h"

#include "note_object.h"

uint32_t note_events_send(plumb *core, const plumb_uris *uris,
                          LV2_Atom_Forge *forge, bool notify_open,
                          int64_t frame) {
  uint32_t dropped = 0;
  plumb_note note;
  while (plumb_pop_note_here(core, &note)) {
    if (!notify_open || !note_object_forge(uris, &note, forge, frame)) {
      ++dropped;
    }
  }
  return dropped;
}
