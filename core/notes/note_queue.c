/* A fixed-size single-producer single-consumer queue of completed notes.
   The producer is plumb_process(); the consumer may be another thread. */
#include "notes/note_queue.h"

#include <stdatomic.h>
#include <stdlib.h>

plumb_status plumb_note_queue_init(note_queue *queue) {
  queue->slots = calloc(PLUMB_QUEUE_CAPACITY, sizeof *queue->slots);
  atomic_init(&queue->write_index, 0);
  atomic_init(&queue->read_index, 0);
  return queue->slots ? PLUMB_OK : PLUMB_ERR_MEMORY;
}

void plumb_note_queue_destroy(note_queue *queue) {
  free(queue->slots);
  queue->slots = NULL;
}

void plumb_note_queue_clear(note_queue *queue) {
  atomic_store_explicit(&queue->read_index,
                        atomic_load_explicit(&queue->write_index,
                                             memory_order_acquire),
                        memory_order_release);
}

bool plumb_note_queue_push(note_queue *queue, const plumb_note *note) {
  uint32_t write = atomic_load_explicit(&queue->write_index, memory_order_relaxed);
  uint32_t read = atomic_load_explicit(&queue->read_index, memory_order_acquire);
  if (write - read >= PLUMB_QUEUE_CAPACITY) return false;
  queue->slots[write & (PLUMB_QUEUE_CAPACITY - 1)] = *note;
  atomic_store_explicit(&queue->write_index, write + 1, memory_order_release);
  return true;
}

bool plumb_note_queue_pop(note_queue *queue, plumb_note *note) {
  uint32_t read = atomic_load_explicit(&queue->read_index, memory_order_relaxed);
  uint32_t write = atomic_load_explicit(&queue->write_index, memory_order_acquire);
  if (read == write) return false;
  *note = queue->slots[read & (PLUMB_QUEUE_CAPACITY - 1)];
  atomic_store_explicit(&queue->read_index, read + 1, memory_order_release);
  return true;
}
