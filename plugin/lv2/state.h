/*
  plumb LV2: state save and restore of the parameters that are not
  ports (log folder, take label, custom offsets), as typed, portable
  atoms (docs/ports.md, "State").

  save() may run at the same time as run(), which changes the parameters
  on a patch:Set, so save reads a snapshot that run() publishes through
  a sequence counter (lock-free for run(); save retries on a change).
  restore() is [instantiation]: it runs alone.
*/
#ifndef PLUMB_LV2_STATE_H
#define PLUMB_LV2_STATE_H

#include "messages.h"
#include "uris.h"

#include <lv2/atom/forge.h>
#include <lv2/core/lv2.h>
#include <lv2/state/state.h>

#include <stdatomic.h>

typedef struct {
  atomic_uint sequence; /* odd while a copy is being written */
  plumb_lv2_parameters copy;
} state_snapshot;

/* [RT] Publish the current parameters for save(). One writer at a time
   (run(), or restore() which never runs with it). */
void state_snapshot_publish(state_snapshot *snapshot,
                            const plumb_lv2_parameters *parameters);

/* [non-RT] A consistent copy of the last published parameters. */
void state_snapshot_read(state_snapshot *snapshot,
                         plumb_lv2_parameters *parameters);

/* Store each parameter that is set (a folder or label that is not "",
   offsets that are not all 0), flags POD | PORTABLE. The folder goes
   through the state:mapPath of `features` when there is one. */
LV2_State_Status state_save(const plumb_uris *uris,
                            const plumb_lv2_parameters *parameters,
                            LV2_State_Store_Function store,
                            LV2_State_Handle handle,
                            const LV2_Feature *const *features);

/* What restore needs besides the host's callback. */
typedef struct {
  const plumb_uris *uris;
  const LV2_Atom_Forge *forge;       /* initialised; copied, not written */
  const LV2_Feature *const *features; /* restore()'s: mapPath, freePath */
  unsigned *complaints;              /* COMPLAINT_* bits are ORed in */
} state_restorer;

/* Read back each key there is and apply it with the patch:Set rules
   (messages_apply_set), so a wrong type or value keeps the current one
   and a missing key is no change. Returns MESSAGE_CHANGED_* bits. */
unsigned state_restore(const state_restorer *restorer,
                       LV2_State_Retrieve_Function retrieve,
                       LV2_State_Handle handle,
                       plumb_lv2_parameters *parameters);

#endif /* PLUMB_LV2_STATE_H */
