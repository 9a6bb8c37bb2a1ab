/*
  plumb LV2: what the user chose for a take, as the control ports and the
  customOffsets parameter give it. The audio thread keeps one; the log
  writer gets a copy for run.json.
*/
#ifndef PLUMB_LV2_TAKE_SETTINGS_H
#define PLUMB_LV2_TAKE_SETTINGS_H

#include "plumb.h"

typedef struct {
  /* reference_hz, temperament, tonic and the twelve custom offsets */
  plumb_tuning_spec tuning;
  double tolerance_cents;
  int lowest_midi;
  int highest_midi;
  double min_note_ms;
} take_settings;

#endif /* PLUMB_LV2_TAKE_SETTINGS_H */
