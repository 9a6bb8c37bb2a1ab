/*
  plumb LV2: marks to undo a half-written event in the notify sequence.
  The forge stops at the first write that does not fit, which would
  otherwise leave a truncated object in the sequence; an answer or a note
  object is written after a mark and undone whole when it does not fit.
  [RT]: no allocation, no system calls.
*/
#ifndef PLUMB_LV2_FORGE_MARK_H
#define PLUMB_LV2_FORGE_MARK_H

#include <lv2/atom/forge.h>

#include <stdint.h>

typedef struct {
  uint32_t offset;
  uint32_t sequence_size;
  LV2_Atom_Forge_Frame *stack;
} forge_mark;

static inline forge_mark mark_forge(LV2_Atom_Forge *forge) {
  forge_mark mark = {forge->offset, 0, forge->stack};
  if (forge->stack) {
    mark.sequence_size = lv2_atom_forge_deref(forge, forge->stack->ref)->size;
  }
  return mark;
}

static inline void undo_to_mark(LV2_Atom_Forge *forge, const forge_mark *mark) {
  forge->offset = mark->offset;
  forge->stack = mark->stack;
  if (forge->stack) {
    lv2_atom_forge_deref(forge, forge->stack->ref)->size = mark->sequence_size;
  }
}

#endif
