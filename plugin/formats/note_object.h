/*
  A completed note as one urn:plumb:Note atom object (docs/ports.md lists
  its properties), the format the plugin sends on notify and a UI reads.
  [RT]: no allocation, lock, log or system call.
*/
#ifndef PLUMB_FORMATS_NOTE_OBJECT_H
#define PLUMB_FORMATS_NOTE_OBJECT_H

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
bool note_object_forge(const plumb_uris *uris, const plumb_note *note,
                       LV2_Atom_Forge *forge, int64_t frame);

#endif /* PLUMB_FORMATS_NOTE_OBJECT_H */
