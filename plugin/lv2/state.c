/*
  plumb LV2: state save and restore (see state.h).
*/
#include "state.h"

#include <lv2/atom/forge.h>

#include <stdbool.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#define STATE_FLAGS (LV2_STATE_IS_POD | LV2_STATE_IS_PORTABLE)
/* Room for a patch:Set whose value is the longest folder there may be. */
#define SET_BUFFER_BYTES (PLUMB_LV2_FOLDER_MAX + 256)

/* ------------------------------------------------------------ snapshot */

void state_snapshot_publish(state_snapshot *snapshot,
                            const plumb_lv2_parameters *parameters) {
  unsigned sequence =
      atomic_load_explicit(&snapshot->sequence, memory_order_relaxed);
  atomic_store_explicit(&snapshot->sequence, sequence + 1u,
                        memory_order_relaxed);
  atomic_thread_fence(memory_order_release);
  snapshot->copy = *parameters;
  atomic_store_explicit(&snapshot->sequence, sequence + 2u,
                        memory_order_release);
}

void state_snapshot_read(state_snapshot *snapshot,
                         plumb_lv2_parameters *parameters) {
  for (;;) {
    unsigned before =
        atomic_load_explicit(&snapshot->sequence, memory_order_acquire);
    if ((before & 1u) == 0) {
      *parameters = snapshot->copy;
      atomic_thread_fence(memory_order_acquire);
      unsigned after =
          atomic_load_explicit(&snapshot->sequence, memory_order_relaxed);
      if (after == before) {
        return;
      }
    }
    struct timespec pause = {0, 100000L}; /* run() is mid-copy: 0.1 ms */
    nanosleep(&pause, NULL);
  }
}

/* ------------------------------------------------------------ features */

/* Like lv2_features_data(), but skips entries whose URI is NULL. */
static void *feature_data(const LV2_Feature *const *features, const char *uri) {
  for (size_t i = 0; features && features[i]; ++i) {
    if (features[i]->URI && strcmp(features[i]->URI, uri) == 0) {
      return features[i]->data;
    }
  }
  return NULL;
}

static void free_path(const LV2_Feature *const *features, char *path) {
  const LV2_State_Free_Path *freer = feature_data(features, LV2_STATE__freePath);
  if (freer) {
    freer->free_path(freer->handle, path);
  } else {
    free(path);
  }
}

/* ---------------------------------------------------------------- save */

static LV2_State_Status save_folder(const plumb_uris *uris, const char *folder,
                                    LV2_State_Store_Function store,
                                    LV2_State_Handle handle,
                                    const LV2_Feature *const *features) {
  const LV2_State_Map_Path *map_path =
      feature_data(features, LV2_STATE__mapPath);
  char *abstract =
      map_path ? map_path->abstract_path(map_path->handle, folder) : NULL;
  const char *stored = abstract ? abstract : folder;
  LV2_State_Status status =
      store(handle, uris->plumb_logFolder, stored, strlen(stored) + 1,
            uris->atom_Path, STATE_FLAGS);
  if (abstract) {
    free_path(features, abstract);
  }
  return status;
}

static bool offsets_set(const plumb_lv2_parameters *parameters) {
  for (int degree = 0; degree < 12; ++degree) {
    if (parameters->custom_offsets_cents[degree] != 0.0) {
      return true;
    }
  }
  return false;
}

static LV2_State_Status save_offsets(const plumb_uris *uris,
                                     const plumb_lv2_parameters *parameters,
                                     LV2_State_Store_Function store,
                                     LV2_State_Handle handle) {
  struct {
    LV2_Atom_Vector_Body body;
    float cents[12];
  } vector;
  vector.body.child_size = sizeof(float);
  vector.body.child_type = uris->atom_Float;
  for (int degree = 0; degree < 12; ++degree) {
    vector.cents[degree] = (float)parameters->custom_offsets_cents[degree];
  }
  return store(handle, uris->plumb_customOffsets, &vector, sizeof vector,
               uris->atom_Vector, STATE_FLAGS);
}

LV2_State_Status state_save(const plumb_uris *uris,
                            const plumb_lv2_parameters *parameters,
                            LV2_State_Store_Function store,
                            LV2_State_Handle handle,
                            const LV2_Feature *const *features) {
  LV2_State_Status status = LV2_STATE_SUCCESS;
  if (parameters->log_folder[0]) {
    status = save_folder(uris, parameters->log_folder, store, handle, features);
  }
  const char *label = parameters->take_label;
  if (status == LV2_STATE_SUCCESS && label[0]) {
    status = store(handle, uris->plumb_takeLabel, label, strlen(label) + 1,
                   uris->atom_String, STATE_FLAGS);
  }
  if (status == LV2_STATE_SUCCESS && offsets_set(parameters)) {
    status = save_offsets(uris, parameters, store, handle);
  }
  return status;
}

/* ------------------------------------------------------------- restore */

/* Apply one value as a patch:Set of `key` would; 0 if it cannot be put
   into one (then the current value stays). */
static unsigned apply_value(const state_restorer *restorer, LV2_URID key,
                            const void *value, size_t size, uint32_t type,
                            plumb_lv2_parameters *parameters) {
  const plumb_uris *uris = restorer->uris;
  _Alignas(8) uint8_t buffer[SET_BUFFER_BYTES];
  LV2_Atom_Forge forge = *restorer->forge;
  LV2_Atom_Forge_Frame frame;
  lv2_atom_forge_set_buffer(&forge, buffer, sizeof buffer);
  if (size > PLUMB_LV2_FOLDER_MAX + 64) {
    *restorer->complaints |= COMPLAINT_STATE_VALUE_TOO_BIG; /* said, not lost */
    return 0;
  }
  if (!lv2_atom_forge_object(&forge, &frame, 0, uris->patch_Set) ||
      !lv2_atom_forge_key(&forge, uris->patch_property) ||
      !lv2_atom_forge_urid(&forge, key) ||
      !lv2_atom_forge_key(&forge, uris->patch_value) ||
      !lv2_atom_forge_atom(&forge, (uint32_t)size, type) ||
      !lv2_atom_forge_write(&forge, value, (uint32_t)size)) {
    *restorer->complaints |= COMPLAINT_STATE_VALUE_TOO_BIG;
    return 0;
  }
  lv2_atom_forge_pop(&forge, &frame);
  return messages_apply_set(uris, (const LV2_Atom_Object *)buffer, parameters,
                            restorer->complaints);
}

/* An atom:Path through state:mapPath's absolute_path, when there is one. */
static unsigned apply_folder(const state_restorer *restorer, const void *value,
                             size_t size, uint32_t type,
                             plumb_lv2_parameters *parameters) {
  LV2_URID key = restorer->uris->plumb_logFolder;
  const LV2_State_Map_Path *map_path =
      feature_data(restorer->features, LV2_STATE__mapPath);
  if (type != restorer->uris->atom_Path || !map_path ||
      memchr(value, '\0', size) == NULL) {
    return apply_value(restorer, key, value, size, type, parameters);
  }
  char *absolute = map_path->absolute_path(map_path->handle, value);
  if (!absolute) {
    *restorer->complaints |= COMPLAINT_STATE_PATH_UNMAPPED;
    return 0;
  }
  unsigned changed = apply_value(restorer, key, absolute, strlen(absolute) + 1,
                                 type, parameters);
  free_path(restorer->features, absolute);
  return changed;
}

unsigned state_restore(const state_restorer *restorer,
                       LV2_State_Retrieve_Function retrieve,
                       LV2_State_Handle handle,
                       plumb_lv2_parameters *parameters) {
  const plumb_uris *uris = restorer->uris;
  const LV2_URID keys[3] = {uris->plumb_logFolder, uris->plumb_takeLabel,
                            uris->plumb_customOffsets};
  unsigned changed = 0;
  for (int k = 0; k < 3; ++k) {
    size_t size = 0;
    uint32_t type = 0;
    uint32_t flags = 0;
    const void *value = retrieve(handle, keys[k], &size, &type, &flags);
    if (!value) {
      continue; /* missing: the current value stays */
    }
    changed |= k == 0 ? apply_folder(restorer, value, size, type, parameters)
                      : apply_value(restorer, keys[k], value, size, type,
                                    parameters);
  }
  return changed;
}
