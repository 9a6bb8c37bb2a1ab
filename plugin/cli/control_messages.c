#include "control_messages.h"

#include <limits.h>
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
