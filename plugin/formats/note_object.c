/*
  A completed note as a urn:plumb:Note atom object (docs/ports.md).

  A note is first listed as the properties that apply to it, so that its
  exact size is known before anything is written: the forge does not
  always say when a write did not fit (lv2_atom_forge_vector ignores a
  failed write of its elements, and a failed padding write is silent),
  so the space is checked first, and the object is written only whole.
*/
#include "note_object.h"

#include "forge_mark.h"

#include <lv2/atom/util.h>

#include <math.h>
#include <stddef.h>

/* Every int and double field, both vectors, and room to spare. */
#define MAX_PROPERTIES 48

typedef enum { VALUE_INT, VALUE_DOUBLE, VALUE_DOUBLES, VALUE_FLOATS } value_kind;

typedef struct {
  LV2_URID key;
  value_kind kind;
  int32_t int_value;  /* VALUE_INT */
  double double_value; /* VALUE_DOUBLE */
  const void *values; /* VALUE_DOUBLES, VALUE_FLOATS */
  uint32_t count;     /* of values */
} note_property;

typedef struct {
  note_property items[MAX_PROPERTIES];
  uint32_t count;
} property_list;

static void add_int(property_list *list, LV2_URID key, int32_t value,
                    bool applies) {
  if (applies && list->count < MAX_PROPERTIES) {
    list->items[list->count++] = (note_property){key, VALUE_INT, value, 0.0, NULL, 0};
  }
}

/* NaN does not apply: left out, never sent as a number. */
static void add_double(property_list *list, LV2_URID key, double value) {
  if (!isnan(value) && list->count < MAX_PROPERTIES) {
    list->items[list->count++] =
        (note_property){key, VALUE_DOUBLE, 0, value, NULL, 0};
  }
}

static void add_vector(property_list *list, LV2_URID key, value_kind kind,
                       const void *values, uint32_t count) {
  if (count > 0 && list->count < MAX_PROPERTIES) {
    list->items[list->count++] = (note_property){key, kind, 0, 0.0, values, count};
  }
}

/* T1, T2, T3 as one atom:Vector of atom:Double, since they belong
   together (they sum to 1); left out when none is known, a NaN inside
   for one that is not. */
static uint32_t tristimulus_count(const plumb_note *note) {
  const double *t = note->tristimulus;
  return isnan(t[0]) && isnan(t[1]) && isnan(t[2]) ? 0u : 3u;
}

/* partial_cents[k] belongs to partial k + 1. The vector ends at the last
   partial found (NaN inside for those between that were not), so its
   length says how far up partials were found; left out when none was. */
static uint32_t partial_cents_count(const plumb_note *note) {
  uint32_t count = PLUMB_MAX_PARTIALS;
  while (count > 0 && isnan(note->partial_cents[count - 1])) {
    --count;
  }
  return count;
}

/* Every plumb_note field that applies to the note (docs/ports.md). */
static void list_properties(const plumb_uris *u, const plumb_note *note,
                            property_list *list) {
  list->count = 0;
  add_int(list, u->note_index, (int32_t)note->index, true);
  add_int(list, u->note_midi, note->midi, note->midi != -1);
  add_int(list, u->note_partials, note->partials, note->partials != -1);
  add_int(list, u->note_verdict, (int32_t)note->verdict, true);
#define PLUMB_NOTE_ADD_DOUBLE(name) add_double(list, u->note_##name, note->name);
  PLUMB_NOTE_DOUBLE_FIELDS(PLUMB_NOTE_ADD_DOUBLE)
#undef PLUMB_NOTE_ADD_DOUBLE
  add_vector(list, u->note_tristimulus, VALUE_DOUBLES, note->tristimulus,
             tristimulus_count(note));
  add_vector(list, u->note_partial_cents, VALUE_FLOATS, note->partial_cents,
             partial_cents_count(note));
}

/* Key, context and the value's atom header (16), then its body padded
   to 8 bytes (a vector's body starts with its own 8-byte header). */
static uint32_t property_bytes(const note_property *p) {
  uint32_t body = p->kind == VALUE_INT      ? sizeof(int32_t)
                  : p->kind == VALUE_DOUBLE ? sizeof(double)
                  : p->kind == VALUE_DOUBLES
                      ? sizeof(LV2_Atom_Vector_Body) + p->count * sizeof(double)
                      : sizeof(LV2_Atom_Vector_Body) + p->count * sizeof(float);
  return (uint32_t)sizeof(LV2_Atom_Property_Body) + lv2_atom_pad_size(body);
}

/* The event: frame time (8), the object's atom header and body (id and
   type, 16), its properties. */
static uint32_t event_bytes(const property_list *list) {
  uint32_t bytes = (uint32_t)sizeof(int64_t) + (uint32_t)sizeof(LV2_Atom_Object);
  for (uint32_t i = 0; i < list->count; ++i) {
    bytes += property_bytes(&list->items[i]);
  }
  return bytes;
}

static bool forge_property(const plumb_uris *u, const note_property *p,
                           LV2_Atom_Forge *forge) {
  if (!lv2_atom_forge_key(forge, p->key)) {
    return false;
  }
  switch (p->kind) {
  case VALUE_INT:
    return lv2_atom_forge_int(forge, p->int_value) != 0;
  case VALUE_DOUBLE:
    return lv2_atom_forge_double(forge, p->double_value) != 0;
  case VALUE_DOUBLES:
    return lv2_atom_forge_vector(forge, sizeof(double), u->atom_Double,
                                 p->count, p->values) != 0;
  default:
    return lv2_atom_forge_vector(forge, sizeof(float), u->atom_Float,
                                 p->count, p->values) != 0;
  }
}

bool note_object_forge(const plumb_uris *uris, const plumb_note *note,
                       LV2_Atom_Forge *forge, int64_t frame) {
  property_list list;
  list_properties(uris, note, &list);
  if (forge->offset > forge->size ||
      event_bytes(&list) > forge->size - forge->offset) {
    return false; /* nothing written: the sequence stays as it was */
  }
  forge_mark mark = mark_forge(forge);
  LV2_Atom_Forge_Frame object;
  bool fits = lv2_atom_forge_frame_time(forge, frame) &&
              lv2_atom_forge_object(forge, &object, 0, uris->plumb_Note);
  for (uint32_t i = 0; fits && i < list.count; ++i) {
    fits = forge_property(uris, &list.items[i], forge);
  }
  if (!fits) {
    undo_to_mark(forge, &mark); /* cannot happen after the check above */
    return false;
  }
  lv2_atom_forge_pop(forge, &object);
  return true;
}
