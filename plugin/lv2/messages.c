/*
  plumb LV2: patch:Set and patch:Get for the non-port parameters (see
  messages.h). All [RT].
*/
#include "messages.h"
#include "forge_mark.h"
#include "utf8_cut.h"

#include <lv2/atom/util.h>

#include <math.h>
#include <string.h>

static const char *const complaint_texts[COMPLAINT_BITS] = {
    "the log folder path is too long (4095 bytes at most); the previous "
    "folder stays",
    "the log folder must be an atom:Path (or atom:String); ignored",
    "the take label must be an atom:String; ignored",
    "the take label was shortened to 255 bytes",
    "customOffsets must be an atom:Vector of 12 atom:Float; ignored",
    "customOffsets must be finite and within +-600 cents; ignored",
    "a patch:Get answer did not fit in the notify port; it was dropped",
    "the analysis refused the new control settings; the previous ones stay",
    "the log folder must be an absolute path (starting with /), so that the "
    "log never lands wherever the host happens to run; the previous folder "
    "stays",
    "the source file must be an atom:Path (or atom:String) of at most 4095 "
    "bytes; the previous one stays",
    "the source channel must be an atom:Int of 1 or more (1 = the first "
    "channel); the previous one stays",
    "a saved value was too large to restore (over 4 KB); the previous value "
    "stays",
    "the host could not map the saved log folder back to a path "
    "(state:mapPath's absolute_path gave none); the previous folder stays"};

const char *messages_complaint_text(unsigned complaint) {
  for (unsigned bit = 0; bit < COMPLAINT_BITS; ++bit) {
    if (complaint == 1u << bit) {
      return complaint_texts[bit];
    }
  }
  return "";
}

void messages_parameters_init(plumb_lv2_parameters *parameters) {
  memset(parameters, 0, sizeof *parameters);
}

/* ------------------------------------------------------------ patch:Set */

/* The text of a string-like atom, and its length without the NUL (an
   atom's body need not be terminated within its size, so measure). */
static const char *atom_text(const LV2_Atom *atom, size_t *length) {
  const char *text = (const char *)LV2_ATOM_BODY_CONST(atom);
  *length = strnlen(text, atom->size);
  return text;
}

static unsigned set_folder(const plumb_uris *uris, const LV2_Atom *value,
                           plumb_lv2_parameters *parameters,
                           unsigned *complaints) {
  if (value->type != uris->atom_Path && value->type != uris->atom_String) {
    *complaints |= COMPLAINT_FOLDER_NOT_A_PATH;
    return 0;
  }
  size_t length = 0;
  const char *folder = atom_text(value, &length);
  if (length >= PLUMB_LV2_FOLDER_MAX) {
    *complaints |= COMPLAINT_FOLDER_TOO_LONG;
    return 0;
  }
  /* A relative folder would be resolved against the host's working
     directory, which no user chooses: refused ("" still means unset). */
  if (length > 0 && folder[0] != '/') {
    *complaints |= COMPLAINT_FOLDER_NOT_ABSOLUTE;
    return 0;
  }
  if (strlen(parameters->log_folder) == length &&
      memcmp(parameters->log_folder, folder, length) == 0) {
    return 0;
  }
  memcpy(parameters->log_folder, folder, length);
  parameters->log_folder[length] = '\0';
  return MESSAGE_CHANGED_LOG_TARGET;
}

static unsigned set_label(const plumb_uris *uris, const LV2_Atom *value,
                          plumb_lv2_parameters *parameters,
                          unsigned *complaints) {
  if (value->type != uris->atom_String) {
    *complaints |= COMPLAINT_LABEL_NOT_A_STRING;
    return 0;
  }
  size_t length = 0;
  const char *label = atom_text(value, &length);
  size_t kept = utf8_cut(label, length, PLUMB_LV2_LABEL_MAX - 1);
  if (kept < length) {
    *complaints |= COMPLAINT_LABEL_SHORTENED;
  }
  if (strlen(parameters->take_label) == kept &&
      memcmp(parameters->take_label, label, kept) == 0) {
    return 0;
  }
  memcpy(parameters->take_label, label, kept);
  parameters->take_label[kept] = '\0';
  return MESSAGE_CHANGED_LOG_TARGET;
}

/* Recorded in run.json only: a new source does not start a new log. */
static unsigned set_source_file(const plumb_uris *uris, const LV2_Atom *value,
                                plumb_lv2_parameters *parameters,
                                unsigned *complaints) {
  size_t length = 0;
  const char *path = NULL;
  if (value->type == uris->atom_Path || value->type == uris->atom_String) {
    path = atom_text(value, &length);
  }
  if (!path || length >= PLUMB_LV2_FOLDER_MAX) {
    *complaints |= COMPLAINT_SOURCE_FILE_REFUSED;
    return 0;
  }
  if (strlen(parameters->source_file) == length &&
      memcmp(parameters->source_file, path, length) == 0) {
    return 0;
  }
  memcpy(parameters->source_file, path, length);
  parameters->source_file[length] = '\0';
  return MESSAGE_CHANGED_SOURCE;
}

static unsigned set_source_channel(const plumb_uris *uris,
                                   const LV2_Atom *value,
                                   plumb_lv2_parameters *parameters,
                                   unsigned *complaints) {
  int32_t channel = 0;
  if (value->type == uris->atom_Int && value->size >= sizeof(int32_t)) {
    channel = ((const LV2_Atom_Int *)value)->body;
  }
  if (channel < 1) {
    *complaints |= COMPLAINT_SOURCE_CHANNEL_REFUSED;
    return 0;
  }
  if (channel == parameters->source_channel) {
    return 0;
  }
  parameters->source_channel = channel;
  return MESSAGE_CHANGED_SOURCE;
}

/* Twelve finite offsets from a Vector of Float (or Double), or false. */
static bool read_offsets(const plumb_uris *uris, const LV2_Atom *value,
                         double offsets_cents[12], unsigned *complaints) {
  const LV2_Atom_Vector *vector = (const LV2_Atom_Vector *)value;
  if (value->type != uris->atom_Vector || value->size < sizeof vector->body) {
    *complaints |= COMPLAINT_OFFSETS_MALFORMED;
    return false;
  }
  uint32_t child_type = vector->body.child_type;
  uint32_t child_size = vector->body.child_size;
  bool is_float = child_type == uris->atom_Float && child_size == sizeof(float);
  bool is_double =
      child_type == uris->atom_Double && child_size == sizeof(double);
  if (!(is_float || is_double) ||
      value->size - sizeof vector->body != 12 * child_size) {
    *complaints |= COMPLAINT_OFFSETS_MALFORMED;
    return false;
  }
  const void *elements = LV2_ATOM_CONTENTS_CONST(LV2_Atom_Vector, vector);
  for (int degree = 0; degree < 12; ++degree) {
    double offset = is_float ? (double)((const float *)elements)[degree]
                             : ((const double *)elements)[degree];
    if (!(fabs(offset) <= PLUMB_LV2_OFFSET_LIMIT_CENTS)) { /* NaN too */
      *complaints |= COMPLAINT_OFFSETS_OUT_OF_RANGE;
      return false;
    }
    offsets_cents[degree] = offset;
  }
  return true;
}

static unsigned set_offsets(const plumb_uris *uris, const LV2_Atom *value,
                            plumb_lv2_parameters *parameters,
                            unsigned *complaints) {
  double offsets_cents[12];
  if (!read_offsets(uris, value, offsets_cents, complaints)) {
    return 0;
  }
  /* Bit for bit on purpose: any change of the twelve numbers (even
     0 to -0) is passed on and echoed.
     NOLINTNEXTLINE(bugprone-suspicious-memory-comparison,cert-exp42-c,cert-flp37-c) */
  if (memcmp(offsets_cents, parameters->custom_offsets_cents,
             sizeof offsets_cents) == 0) {
    return 0;
  }
  memcpy(parameters->custom_offsets_cents, offsets_cents, sizeof offsets_cents);
  return MESSAGE_CHANGED_OFFSETS;
}

unsigned messages_apply_set(const plumb_uris *uris, const LV2_Atom_Object *set,
                            plumb_lv2_parameters *parameters,
                            unsigned *complaints) {
  const LV2_Atom *property = NULL;
  const LV2_Atom *value = NULL;
  lv2_atom_object_get(set, uris->patch_property, &property, uris->patch_value,
                      &value, 0);
  if (!property || property->type != uris->atom_URID || !value) {
    return 0;
  }
  LV2_URID key = ((const LV2_Atom_URID *)property)->body;
  if (key == uris->plumb_logFolder) {
    return set_folder(uris, value, parameters, complaints);
  }
  if (key == uris->plumb_takeLabel) {
    return set_label(uris, value, parameters, complaints);
  }
  if (key == uris->plumb_customOffsets) {
    return set_offsets(uris, value, parameters, complaints);
  }
  if (key == uris->plumb_sourceFile) {
    return set_source_file(uris, value, parameters, complaints);
  }
  if (key == uris->plumb_sourceChannel) {
    return set_source_channel(uris, value, parameters, complaints);
  }
  return 0;
}

/* ------------------------------------------------------------ patch:Get */

/* Writes the value of one of our properties; 0 when it does not fit. */
static LV2_Atom_Forge_Ref forge_value(const plumb_uris *uris, LV2_URID key,
                                      const plumb_lv2_parameters *parameters,
                                      LV2_Atom_Forge *forge) {
  if (key == uris->plumb_logFolder) {
    const char *folder = parameters->log_folder;
    return lv2_atom_forge_path(forge, folder, (uint32_t)strlen(folder));
  }
  if (key == uris->plumb_takeLabel) {
    const char *label = parameters->take_label;
    return lv2_atom_forge_string(forge, label, (uint32_t)strlen(label));
  }
  if (key == uris->plumb_sourceFile) {
    const char *path = parameters->source_file;
    return lv2_atom_forge_path(forge, path, (uint32_t)strlen(path));
  }
  if (key == uris->plumb_sourceChannel) {
    return lv2_atom_forge_int(forge, parameters->source_channel);
  }
  float offsets_cents[12];
  for (int degree = 0; degree < 12; ++degree) {
    offsets_cents[degree] = (float)parameters->custom_offsets_cents[degree];
  }
  /* Not lv2_atom_forge_vector(): it reports success when the header fits
     but the elements do not, which would leave half an answer. */
  const LV2_Atom_Vector header = {
      {(uint32_t)(sizeof(LV2_Atom_Vector_Body) + sizeof offsets_cents),
       uris->atom_Vector},
      {sizeof(float), uris->atom_Float}};
  LV2_Atom_Forge_Ref ref = lv2_atom_forge_write(forge, &header, sizeof header);
  return ref && lv2_atom_forge_write(forge, offsets_cents,
                                     sizeof offsets_cents)
             ? ref
             : 0;
}

static bool is_our_property(const plumb_uris *uris, LV2_URID key) {
  return key == uris->plumb_logFolder || key == uris->plumb_takeLabel ||
         key == uris->plumb_customOffsets || key == uris->plumb_sourceFile ||
         key == uris->plumb_sourceChannel;
}

/* patch:subject and patch:sequenceNumber, copied from the request. */
static bool forge_echoes(const plumb_uris *uris, const LV2_Atom *subject,
                         const LV2_Atom *sequence, LV2_Atom_Forge *forge) {
  bool fits = true;
  if (subject) {
    fits = fits && lv2_atom_forge_key(forge, uris->patch_subject) &&
           lv2_atom_forge_write(forge, subject,
                                (uint32_t)sizeof(LV2_Atom) + subject->size);
  }
  if (sequence && sequence->type == uris->atom_Int) {
    fits = fits && lv2_atom_forge_key(forge, uris->patch_sequenceNumber) &&
           lv2_atom_forge_int(forge, ((const LV2_Atom_Int *)sequence)->body);
  }
  return fits;
}

static bool forge_set_answer(const plumb_uris *uris, LV2_URID key,
                             const plumb_lv2_parameters *parameters,
                             LV2_Atom_Forge *forge) {
  return lv2_atom_forge_key(forge, uris->patch_property) &&
         lv2_atom_forge_urid(forge, key) &&
         lv2_atom_forge_key(forge, uris->patch_value) &&
         forge_value(uris, key, parameters, forge);
}

static bool forge_put_body(const plumb_uris *uris,
                           const plumb_lv2_parameters *parameters,
                           LV2_Atom_Forge *forge) {
  LV2_URID keys[5] = {uris->plumb_logFolder, uris->plumb_takeLabel,
                      uris->plumb_customOffsets};
  int count = 3;
  /* The source file and channel only once a host has told them. */
  if (parameters->source_file[0]) {
    keys[count++] = uris->plumb_sourceFile;
  }
  if (parameters->source_channel > 0) {
    keys[count++] = uris->plumb_sourceChannel;
  }
  LV2_Atom_Forge_Frame body;
  if (!lv2_atom_forge_key(forge, uris->patch_body) ||
      !lv2_atom_forge_object(forge, &body, 0, 0)) {
    return false;
  }
  for (int i = 0; i < count; ++i) {
    if (!lv2_atom_forge_key(forge, keys[i]) ||
        !forge_value(uris, keys[i], parameters, forge)) {
      return false;
    }
  }
  lv2_atom_forge_pop(forge, &body);
  return true;
}

bool messages_answer_get(const plumb_uris *uris, const LV2_Atom_Object *get,
                         const plumb_lv2_parameters *parameters,
                         LV2_Atom_Forge *forge, int64_t frame) {
  const LV2_Atom *property = NULL;
  const LV2_Atom *subject = NULL;
  const LV2_Atom *sequence = NULL;
  lv2_atom_object_get(get, uris->patch_property, &property, uris->patch_subject,
                      &subject, uris->patch_sequenceNumber, &sequence, 0);
  LV2_URID key = 0;
  if (property) {
    key = property->type == uris->atom_URID
              ? ((const LV2_Atom_URID *)property)->body
              : 0;
    if (!is_our_property(uris, key)) {
      return true; /* not ours to answer */
    }
  }
  forge_mark mark = mark_forge(forge);
  LV2_Atom_Forge_Frame answer;
  bool fits = lv2_atom_forge_frame_time(forge, frame) &&
              lv2_atom_forge_object(forge, &answer, 0,
                                    key ? uris->patch_Set : uris->patch_Put);
  fits = fits && forge_echoes(uris, subject, sequence, forge);
  fits = fits && (key ? forge_set_answer(uris, key, parameters, forge)
                      : forge_put_body(uris, parameters, forge));
  if (!fits) {
    undo_to_mark(forge, &mark);
    return false;
  }
  lv2_atom_forge_pop(forge, &answer);
  return true;
}
