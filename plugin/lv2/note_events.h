/*
  plumb LV2: the completed notes, out on the notify port.
*/
#ifndef PLUMB_LV2_NOTE_EVENTS_H
#define PLUMB_LV2_NOTE_EVENTS_H

#include "plumb.h"
#include "uris.h"

#include <lv2/atom/forge.h>

#include <stdbool.h>
#include <stdint.h>

/* Pop every completed note from plumb_pop_note_here() and forge each at
   `frame`; with notify_open false they are only popped. Returns how many
   were dropped (did not fit, or notify was not open). */
uint32_t note_events_send(plumb *core, const plumb_uris *uris,
                          LV2_Atom_Forge *forge, bool notify_open,
                          int64_t frame);

#endif /* PLUMB_LV2_NOTE_EVENTS_H */
