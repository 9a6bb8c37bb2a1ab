/*
  Every URI the plugin speaks, shared by the plugin, the command and a UI
  (as eg-sampler's uris.h is by its plugin and UI), and the plugin's
  URIDs, mapped once in instantiate() (mapping may lock or allocate, so
  never in run()).
*/
#ifndef PLUMB_SHARED_URIS_H
#define PLUMB_SHARED_URIS_H

#include <lv2/atom/atom.h>
#include <lv2/patch/patch.h>
#include <lv2/time/time.h>
#include <lv2/urid/urid.h>

#define PLUMB_URI "urn:plumb:intonation"
#define PLUMB_URI_LOG_FOLDER "urn:plumb:logFolder"
#define PLUMB_URI_TAKE_LABEL "urn:plumb:takeLabel"
#define PLUMB_URI_CUSTOM_OFFSETS "urn:plumb:customOffsets"
#define PLUMB_URI_SOURCE_FILE "urn:plumb:sourceFile"
#define PLUMB_URI_SOURCE_CHANNEL "urn:plumb:sourceChannel"
#define PLUMB_URI_NOTE "urn:plumb:Note"
#define PLUMB_URI_NOTE_PREFIX "urn:plumb:note#" /* then the field's name */

/* The plumb_note fields a urn:plumb:Note object carries, by atom type;
   each key is PLUMB_URI_NOTE_PREFIX and the field's name. */
#define PLUMB_NOTE_INT_FIELDS(X) X(index) X(midi) X(partials) X(verdict)
#define PLUMB_NOTE_DOUBLE_FIELDS(X)                                            \
  X(start_s) X(end_s) X(timeline_s) X(bar) X(beat) X(target_hz) X(f0_hz)      \
  X(cents) X(spread_cents) X(drift_cents_per_s) X(vibrato_hz)                  \
  X(vibrato_cents) X(confidence) X(inharmonicity_b) X(hnr_db) X(odd_even_db)   \
  X(centroid_hz) X(attack_ms) X(decay_ms) X(sustain_db) X(release_ms)          \
  X(decay_db_per_s) X(peak_dbfs)
/* atom:Vector fields: tristimulus (3 atom:Double), partial_cents (atom:Float,
   one a partial from the first). */
#define PLUMB_NOTE_VECTOR_FIELDS(X) X(tristimulus) X(partial_cents)
#define PLUMB_NOTE_KEY_FIELD(name) LV2_URID note_##name;

typedef struct {
  LV2_URID atom_Float;
  LV2_URID atom_Double;
  LV2_URID atom_Int;
  LV2_URID atom_Long;
  LV2_URID atom_Path;
  LV2_URID atom_String;
  LV2_URID atom_URID;
  LV2_URID atom_Vector;
  LV2_URID patch_Get;
  LV2_URID patch_Set;
  LV2_URID patch_Put;
  LV2_URID patch_body;
  LV2_URID patch_property;
  LV2_URID patch_value;
  LV2_URID patch_subject;
  LV2_URID patch_sequenceNumber;
  LV2_URID time_Position;
  LV2_URID time_frame;
  LV2_URID time_speed;
  LV2_URID time_bar;
  LV2_URID time_barBeat;
  LV2_URID time_beatsPerBar;
  LV2_URID time_beatsPerMinute;
  LV2_URID plumb_logFolder;
  LV2_URID plumb_takeLabel;
  LV2_URID plumb_customOffsets;
  LV2_URID plumb_sourceFile;
  LV2_URID plumb_sourceChannel;
  LV2_URID plumb_Note;
  PLUMB_NOTE_INT_FIELDS(PLUMB_NOTE_KEY_FIELD)
  PLUMB_NOTE_DOUBLE_FIELDS(PLUMB_NOTE_KEY_FIELD)
  PLUMB_NOTE_VECTOR_FIELDS(PLUMB_NOTE_KEY_FIELD)
} plumb_uris;

static inline void plumb_uris_map(plumb_uris *uris, LV2_URID_Map *map) {
  LV2_URID (*const get)(LV2_URID_Map_Handle, const char *) = map->map;
  LV2_URID_Map_Handle handle = map->handle;
  uris->atom_Float = get(handle, LV2_ATOM__Float);
  uris->atom_Double = get(handle, LV2_ATOM__Double);
  uris->atom_Int = get(handle, LV2_ATOM__Int);
  uris->atom_Long = get(handle, LV2_ATOM__Long);
  uris->atom_Path = get(handle, LV2_ATOM__Path);
  uris->atom_String = get(handle, LV2_ATOM__String);
  uris->atom_URID = get(handle, LV2_ATOM__URID);
  uris->atom_Vector = get(handle, LV2_ATOM__Vector);
  uris->patch_Get = get(handle, LV2_PATCH__Get);
  uris->patch_Set = get(handle, LV2_PATCH__Set);
  uris->patch_Put = get(handle, LV2_PATCH__Put);
  uris->patch_body = get(handle, LV2_PATCH__body);
  uris->patch_property = get(handle, LV2_PATCH__property);
  uris->patch_value = get(handle, LV2_PATCH__value);
  uris->patch_subject = get(handle, LV2_PATCH__subject);
  uris->patch_sequenceNumber = get(handle, LV2_PATCH__sequenceNumber);
  uris->time_Position = get(handle, LV2_TIME__Position);
  uris->time_frame = get(handle, LV2_TIME__frame);
  uris->time_speed = get(handle, LV2_TIME__speed);
  uris->time_bar = get(handle, LV2_TIME__bar);
  uris->time_barBeat = get(handle, LV2_TIME__barBeat);
  uris->time_beatsPerBar = get(handle, LV2_TIME__beatsPerBar);
  uris->time_beatsPerMinute = get(handle, LV2_TIME__beatsPerMinute);
  uris->plumb_logFolder = get(handle, PLUMB_URI_LOG_FOLDER);
  uris->plumb_takeLabel = get(handle, PLUMB_URI_TAKE_LABEL);
  uris->plumb_customOffsets = get(handle, PLUMB_URI_CUSTOM_OFFSETS);
  uris->plumb_sourceFile = get(handle, PLUMB_URI_SOURCE_FILE);
  uris->plumb_sourceChannel = get(handle, PLUMB_URI_SOURCE_CHANNEL);
  uris->plumb_Note = get(handle, PLUMB_URI_NOTE);
#define PLUMB_NOTE_KEY_MAP(name)                                               \
  uris->note_##name = get(handle, PLUMB_URI_NOTE_PREFIX #name);
  PLUMB_NOTE_INT_FIELDS(PLUMB_NOTE_KEY_MAP)
  PLUMB_NOTE_DOUBLE_FIELDS(PLUMB_NOTE_KEY_MAP)
  PLUMB_NOTE_VECTOR_FIELDS(PLUMB_NOTE_KEY_MAP)
#undef PLUMB_NOTE_KEY_MAP
}

#endif /* PLUMB_SHARED_URIS_H */
