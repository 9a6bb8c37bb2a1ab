/*
  plumb LV2: the parameters that are not ports (log folder, take label,
  custom offsets, and the source file and channel a host may tell), set
  with patch:Set and read back with patch:Get.

  Every call here is [RT]: it reads atoms, copies into fixed buffers and
  forges replies into the notify port, with no allocation and no system
  call. Problems cannot be logged from the audio thread, so they come
  back as complaint bits that the log writer thread reports later.
*/
#ifndef PLUMB_LV2_MESSAGES_H
#define PLUMB_LV2_MESSAGES_H

#include "uris.h"

#include <lv2/atom/forge.h>

#include <stdbool.h>
#include <stdint.h>

#define PLUMB_LV2_FOLDER_MAX 4096 /* bytes, with the terminating NUL */
#define PLUMB_LV2_LABEL_MAX 256
#define PLUMB_LV2_OFFSET_LIMIT_CENTS 600.0 /* half an octave either way */

typedef struct {
  char log_folder[PLUMB_LV2_FOLDER_MAX]; /* "" = not set: defaults apply */
  char take_label[PLUMB_LV2_LABEL_MAX];  /* "" = not set: automatic stem */
  double custom_offsets_cents[12];       /* degree 0 = the tonic */
  char source_file[PLUMB_LV2_FOLDER_MAX]; /* "" = not told by the host */
  int32_t source_channel;                 /* 1 = the first; 0 = not told */
} plumb_lv2_parameters;

/* What a patch:Set changed. */
enum {
  MESSAGE_CHANGED_LOG_TARGET = 1u << 0, /* log folder or take label */
  MESSAGE_CHANGED_OFFSETS = 1u << 1,
  MESSAGE_CHANGED_SOURCE = 1u << 2 /* source file or channel: run.json only */
};

/* What went wrong in run() (mostly in a message); the writer thread logs
   one line for each. */
enum {
  COMPLAINT_FOLDER_TOO_LONG = 1u << 0,
  COMPLAINT_FOLDER_NOT_A_PATH = 1u << 1,
  COMPLAINT_LABEL_NOT_A_STRING = 1u << 2,
  COMPLAINT_LABEL_SHORTENED = 1u << 3,
  COMPLAINT_OFFSETS_MALFORMED = 1u << 4,
  COMPLAINT_OFFSETS_OUT_OF_RANGE = 1u << 5,
  COMPLAINT_REPLY_DID_NOT_FIT = 1u << 6,
  COMPLAINT_SETTINGS_REJECTED = 1u << 7,
  COMPLAINT_FOLDER_NOT_ABSOLUTE = 1u << 8,
  COMPLAINT_SOURCE_FILE_REFUSED = 1u << 9,
  COMPLAINT_SOURCE_CHANNEL_REFUSED = 1u << 10,
  COMPLAINT_STATE_VALUE_TOO_BIG = 1u << 11,
  COMPLAINT_STATE_PATH_UNMAPPED = 1u << 12,
  COMPLAINT_BITS = 13
};

/* A sentence for one complaint bit; "" for a bit that is not one. */
const char *messages_complaint_text(unsigned complaint);

/* All unset, offsets 0. */
void messages_parameters_init(plumb_lv2_parameters *parameters);

/* Apply one patch:Set object. Returns MESSAGE_CHANGED_* bits and ORs
   COMPLAINT_* bits into *complaints. A rejected value leaves the
   parameter as it was. Properties that are not ours are ignored. */
unsigned messages_apply_set(const plumb_uris *uris, const LV2_Atom_Object *set,
                            plumb_lv2_parameters *parameters,
                            unsigned *complaints);

/* Answer one patch:Get at `frame` on the forge, which must be writing
   into the notify sequence (its top frame). With a patch:property of ours
   the answer is a patch:Set of it; with none, a patch:Put whose body
   holds the folder, the label and the offsets, and the source file and
   channel when a host has told them. A given patch:subject and patch:sequenceNumber are
   echoed. Returns false, and leaves the sequence as it was, when the
   answer does not fit in the buffer. */
bool messages_answer_get(const plumb_uris *uris, const LV2_Atom_Object *get,
                         const plumb_lv2_parameters *parameters,
                         LV2_Atom_Forge *forge, int64_t frame);

#endif /* PLUMB_LV2_MESSAGES_H */
