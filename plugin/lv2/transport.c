/*
  plumb LV2: the host's transport position (see transport.h).
*/
#include "transport.h"

#include <lv2/atom/util.h>

#include <math.h>

void transport_reset(transport *position) {
  position->frame = 0.0;
  position->speed = 1.0;
}

/* Hosts differ in the number type they send (time:frame is a Long in
   the spec, some send Int or Double). */
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

bool transport_read(transport *position, const plumb_uris *uris,
                    const LV2_Atom_Object *object) {
  const LV2_Atom *frame = NULL;
  const LV2_Atom *speed = NULL;
  lv2_atom_object_get(object, uris->time_frame, &frame, uris->time_speed,
                      &speed, 0);
  double value = 0.0;
  bool found = false;
  if (read_number(uris, frame, &value)) {
    position->frame = value;
    found = true;
  }
  if (read_number(uris, speed, &value)) {
    position->speed = value;
    found = true;
  }
  return found;
}

void transport_advance(transport *position, uint32_t n_frames) {
  position->frame += (double)n_frames * position->speed;
}
