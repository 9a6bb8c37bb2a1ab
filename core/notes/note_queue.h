/*
  A fixed-size single-producer, single-consumer queue of completed notes,
  lock-free.
*/
#ifndef PLUMB_NOTES_NOTE_QUEUE_H
#define PLUMB_NOTES_NOTE_QUEUE_H

#include "internal.h"

#include <stdbool.h>
#include <stdint.h>

typedef struct {
  plumb_note *slots;            /* PLUMB_QUEUE_CAPACITY */
  _Atomic uint32_t write_index;
  _Atomic uint32_t read_index;
} note_queue;

plumb_status plumb_note_queue_init(note_queue *queue);
void plumb_note_queue_destroy(note_queue *queue);
void plumb_note_queue_clear(note_queue *queue); /* only while no consumer runs */
bool plumb_note_queue_push(note_queue *queue, const plumb_note *note);
bool plumb_note_queue_pop(note_queue *queue, plumb_note *note);

#endif /* PLUMB_NOTES_NOTE_QUEUE_H */
