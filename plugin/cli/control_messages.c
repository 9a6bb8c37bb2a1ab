#include "control_messages.h"

#include <limits.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Starts a patch:Set of `property` at frame 0, up to its patch:value key.
   The caller forges the value, then calls end_set, which pops the object
   frame only if it was pushed: the forge asserts on a stray pop. */
static bool begin_set(LV2_Atom_Forge *forge, const host_uris *uris,
                      LV2_URID property, LV2_Atom_Forge_Frame *frame,
                      bool *pushed) {
  *pushed = lv2_atom_forge_frame_time(forge, 0) &&
            lv2_atom_forge_object(forge, frame, 0, uris->patch_Set);
  return *pushed && lv2_atom_forge_key(forge, uris->patch_property) &&
         lv2_atom_forge_urid(forge, property) &&
         lv2_atom_forge_key(forge, uris->patch_value);
}

static bool end_set(LV2_Atom_Forge *forge, LV2_Atom_Forge_Frame *frame,
                    bool pushed, bool ok) {
  if (pushed) {
    lv2_atom_forge_pop(forge, frame);
  }
  return ok;
}

static bool set_path(LV2_Atom_Forge *forge, const host_uris *uris,
                     LV2_URID property, const char *path) {
  LV2_Atom_Forge_Frame frame;
  bool pushed = false;
  bool ok = begin_set(forge, uris, property, &frame, &pushed) &&
            lv2_atom_forge_path(forge, path, (uint32_t)strlen(path));
  return end_set(forge, &frame, pushed, ok);
}

static bool set_string(LV2_Atom_Forge *forge, const host_uris *uris,
                       LV2_URID property, const char *text) {
  LV2_Atom_Forge_Frame frame;
  bool pushed = false;
  bool ok = begin_set(forge, uris, property, &frame, &pushed) &&
            lv2_atom_forge_string(forge, text, (uint32_t)strlen(text));
  return end_set(forge, &frame, pushed, ok);
}

/* The parameter is an atom:Vector of twelve atom:Float. */
static bool set_offsets(LV2_Atom_Forge *forge, const host_uris *uris,
                        LV2_URID property, const double offsets_cents[12]) {
  float offsets[12];
  for (int i = 0; i < 12; ++i) {
    offsets[i] = (float)offsets_cents[i];
  }
  LV2_Atom_Forge_Frame frame;
  bool pushed = false;
  bool ok = begin_set(forge, uris, property, &frame, &pushed) &&
            lv2_atom_forge_vector(forge, sizeof(float), uris->atom_Float, 12,
                                  offsets);
  return end_set(forge, &frame, pushed, ok);
}

static bool set_int(LV2_Atom_Forge *forge, const host_uris *uris,
                    LV2_URID property, int32_t value) {
  LV2_Atom_Forge_Frame frame;
  bool pushed = false;
  bool ok = begin_set(forge, uris, property, &frame, &pushed) &&
            lv2_atom_forge_int(forge, value);
  return end_set(forge, &frame, pushed, ok);
}

/* The source file, absolute, so that run.json tells two takes of one
   name from two folders apart wherever it is read from later. */
static bool set_source(LV2_Atom_Forge *forge, const host_uris *uris,
                       const control_parameters *parameters) {
  const char *given = parameters->source_file;
  bool ok = true;
  if (given && given[0] && strcmp(given, "-") != 0) {
    char resolved[PATH_MAX];
    const char *path =
        given[0] == '/' || !realpath(given, resolved) ? given : resolved;
    ok = set_path(forge, uris, uris->plumb_sourceFile, path);
  }
  if (ok && parameters->source_channel > 0) {
    ok = set_int(forge, uris, uris->plumb_sourceChannel,
                 parameters->source_channel);
  }
  return ok;
}

/* A time:Position at frame 0 (LV2 time): the timeline frame of the first
   sample, rolling, and with a tempo the bar and beat there, counted
   from bar 0, beat 0 at timeline 0 (the LV2 convention; the plugin logs
   them from 1). */
static bool set_position(LV2_Atom_Forge *forge, const host_uris *uris,
                         const control_timeline *timeline) {
  LV2_Atom_Forge_Frame frame;
  if (!lv2_atom_forge_frame_time(forge, 0) ||
      !lv2_atom_forge_object(forge, &frame, 0, uris->time_Position)) {
    return false;
  }
  int64_t start_frame = (int64_t)llround(timeline->start_s * timeline->sample_rate_hz);
  bool ok = lv2_atom_forge_key(forge, uris->time_frame) &&
            lv2_atom_forge_long(forge, start_frame) &&
            lv2_atom_forge_key(forge, uris->time_speed) && lv2_atom_forge_float(forge, 1.0f);
  if (ok && timeline->beats_per_minute > 0.0) {
    double beats = (double)start_frame / timeline->sample_rate_hz *
                   timeline->beats_per_minute / 60.0;
    double bar = floor(beats / timeline->beats_per_bar);
    ok = lv2_atom_forge_key(forge, uris->time_bar) &&
         lv2_atom_forge_long(forge, (int64_t)bar) &&
         lv2_atom_forge_key(forge, uris->time_barBeat) &&
         lv2_atom_forge_float(forge, (float)(beats - bar * timeline->beats_per_bar)) &&
         lv2_atom_forge_key(forge, uris->time_beatsPerBar) &&
         lv2_atom_forge_float(forge, (float)timeline->beats_per_bar) &&
         lv2_atom_forge_key(forge, uris->time_beatUnit) &&
         lv2_atom_forge_int(forge, timeline->beat_unit) &&
         lv2_atom_forge_key(forge, uris->time_beatsPerMinute) &&
         lv2_atom_forge_float(forge, (float)timeline->beats_per_minute);
  }
  lv2_atom_forge_pop(forge, &frame);
  return ok;
}

bool control_messages_write_parameters(LV2_Atom_Forge *caller_forge,
                                       const host_uris *uris, void *buffer,
                                       uint32_t capacity_bytes,
                                       const control_parameters *parameters) {
  /* The frames below live on this stack, so they are pushed on a copy of
     the caller's forge that dies with them: the caller's forge never
     holds their address (gcc's -Wdangling-pointer). */
  LV2_Atom_Forge local_forge = *caller_forge;
  LV2_Atom_Forge *forge = &local_forge;
  lv2_atom_forge_set_buffer(forge, buffer, capacity_bytes);
  LV2_Atom_Forge_Frame sequence;
  if (!lv2_atom_forge_sequence_head(forge, &sequence, 0)) {
    return false;
  }
  bool ok =
      set_path(forge, uris, uris->plumb_logFolder, parameters->log_folder);
  ok = ok &&
       set_string(forge, uris, uris->plumb_takeLabel, parameters->take_label);
  if (parameters->custom_offsets_cents) {
    ok = ok && set_offsets(forge, uris, uris->plumb_customOffsets,
                           parameters->custom_offsets_cents);
  }
  ok = ok && set_source(forge, uris, parameters);
  if (parameters->timeline) {
    ok = ok && set_position(forge, uris, parameters->timeline);
  }
  lv2_atom_forge_pop(forge, &sequence);
  return ok;
}

void control_messages_write_empty(const host_uris *uris, void *buffer) {
  LV2_Atom_Sequence *sequence = buffer;
  sequence->atom.size = sizeof(LV2_Atom_Sequence_Body);
  sequence->atom.type = uris->atom_Sequence;
  sequence->body.unit = 0;
  sequence->body.pad = 0;
}
