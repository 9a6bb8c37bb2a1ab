/*
  --preset NAME: one of the plugin's presets (pset:Preset resources that
  apply to it), matched case-insensitively by rdfs:label or by the last
  part of its URI. Only the preset's port values are used.
*/
#ifndef PLUMB_CLI_PRESET_H
#define PLUMB_CLI_PRESET_H

#include "bundle.h"
#include "ports.h"

#include <lv2/urid/urid.h>
#include <stdbool.h>

/* Writes the preset's port values into control_values (indexed like the
   ports). On failure reports one line (an unknown name lists the presets
   there are) and returns false: a usage error. */
bool preset_apply(const bundle *loaded, const port_layout *layout,
                  LV2_URID_Map *map, const char *name, float *control_values);

#endif
