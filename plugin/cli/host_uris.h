/*
  The URIDs the host uses, mapped once per run in the shared table and
  then only read, by every track's thread.
*/
#ifndef PLUMB_CLI_HOST_URIS_H
#define PLUMB_CLI_HOST_URIS_H

#include "urid_map.h"
#include "uris.h" /* the plugin's URIs, shared */

#include <stdbool.h>


typedef struct {
  LV2_URID atom_Chunk;
  LV2_URID atom_Float;
  LV2_URID atom_Int;
  LV2_URID atom_Long;
  LV2_URID atom_Object;
  LV2_URID atom_Sequence;
  LV2_URID patch_Set;
  LV2_URID patch_property;
  LV2_URID patch_value;
  LV2_URID plumb_logFolder;
  LV2_URID plumb_takeLabel;
  LV2_URID plumb_customOffsets;
  LV2_URID plumb_sourceFile;
  LV2_URID plumb_sourceChannel;
  LV2_URID param_sampleRate;
  LV2_URID bufsz_minBlockLength;
  LV2_URID bufsz_maxBlockLength;
  LV2_URID bufsz_nominalBlockLength;
  LV2_URID log_Note;
  LV2_URID log_Trace;
  LV2_URID time_Position;
  LV2_URID time_frame;
  LV2_URID time_speed;
  LV2_URID time_bar;
  LV2_URID time_barBeat;
  LV2_URID time_beatsPerBar;
  LV2_URID time_beatUnit;
  LV2_URID time_beatsPerMinute;
} host_uris;

/* False when the table could not map them (out of memory). */
bool host_uris_map(host_uris *uris, urid_table *table);

#endif
