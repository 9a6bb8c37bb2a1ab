/*
  The queue of completed notes (notes/note_queue.c): a fixed-capacity
  single-producer, single-consumer FIFO (Lamport 1983, "Specifying
  concurrent program modules": one writer of each index, no lock). Its
  contract: first in, first out; PLUMB_QUEUE_CAPACITY notes fit, the next
  push is refused and loses nothing already queued; an empty queue pops
  nothing; and across two threads nothing is lost, duplicated or
  reordered.
*/
#include "notes/note_queue.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <pthread.h>
#include <sched.h>
#include <stdatomic.h>
#include <string.h>

static plumb_note note_numbered(uint32_t index) {
  plumb_note note;
  memset(&note, 0, sizeof note);
  note.index = index;
  note.start_s = 0.5 * index;
  note.midi = (int)(index % 128);
  note.partial_cents[PLUMB_MAX_PARTIALS - 1] = (float)index; /* the record's far end */
  return note;
}

static void assert_note_is(const plumb_note *note, uint32_t index) {
  assert_int_equal(note->index, index);
  assert_true(note->start_s == 0.5 * index);
  assert_int_equal(note->midi, (int)(index % 128));
  assert_true(note->partial_cents[PLUMB_MAX_PARTIALS - 1] == (float)index);
}

static int setup(void **state) {
  static note_queue queue;
  if (plumb_note_queue_init(&queue) != PLUMB_OK) return -1;
  *state = &queue;
  return 0;
}

static int teardown(void **state) {
  plumb_note_queue_destroy(*state);
  return 0;
}

static void test_empty_queue_pops_nothing(void **state) {
  note_queue *queue = *state;
  plumb_note note = note_numbered(7);
  assert_false(plumb_note_queue_pop(queue, &note));
  assert_note_is(&note, 7); /* untouched */
}

static void test_first_in_first_out(void **state) {
  note_queue *queue = *state;
  for (uint32_t i = 0; i < 5; ++i) {
    plumb_note note = note_numbered(i);
    assert_true(plumb_note_queue_push(queue, &note));
  }
  plumb_note note;
  for (uint32_t i = 0; i < 5; ++i) {
    assert_true(plumb_note_queue_pop(queue, &note));
    assert_note_is(&note, i);
  }
  assert_false(plumb_note_queue_pop(queue, &note));
}

static void test_capacity_then_refusal(void **state) {
  note_queue *queue = *state;
  for (uint32_t i = 0; i < PLUMB_QUEUE_CAPACITY; ++i) {
    plumb_note note = note_numbered(i);
    assert_true(plumb_note_queue_push(queue, &note));
  }
  /* Full: the next note is refused and the queued ones are intact. */
  plumb_note extra = note_numbered(999999);
  assert_false(plumb_note_queue_push(queue, &extra));
  plumb_note note;
  assert_true(plumb_note_queue_pop(queue, &note));
  assert_note_is(&note, 0);
  /* One slot free again: one push fits, the next does not. */
  assert_true(plumb_note_queue_push(queue, &extra));
  assert_false(plumb_note_queue_push(queue, &extra));
  for (uint32_t i = 1; i < PLUMB_QUEUE_CAPACITY; ++i) {
    assert_true(plumb_note_queue_pop(queue, &note));
    assert_note_is(&note, i);
  }
  assert_true(plumb_note_queue_pop(queue, &note));
  assert_note_is(&note, 999999);
  assert_false(plumb_note_queue_pop(queue, &note));
}

static void test_wraps_around_over_many_pushes(void **state) {
  note_queue *queue = *state;
  /* Ten times round the ring, with the fill level moving between 1 and
     capacity - 1 so that the indices wrap at every position. */
  uint32_t pushed = 0, popped = 0;
  plumb_note note;
  while (pushed < 10u * PLUMB_QUEUE_CAPACITY) {
    uint32_t burst = 1 + pushed % (PLUMB_QUEUE_CAPACITY - 1);
    for (uint32_t k = 0; k < burst && pushed - popped < PLUMB_QUEUE_CAPACITY; ++k) {
      note = note_numbered(pushed);
      assert_true(plumb_note_queue_push(queue, &note));
      ++pushed;
    }
    uint32_t drain = 1 + (pushed * 7u) % (pushed - popped);
    for (uint32_t k = 0; k < drain; ++k) {
      assert_true(plumb_note_queue_pop(queue, &note));
      assert_note_is(&note, popped++);
    }
  }
  while (plumb_note_queue_pop(queue, &note)) assert_note_is(&note, popped++);
  assert_int_equal(popped, pushed);
}

static void test_indices_wrap_past_their_range(void **state) {
  note_queue *queue = *state;
  /* The indices are free-running 32-bit counters; unsigned arithmetic is
     modulo 2^32 (C11 6.2.5p9), so the fill level write - read stays right
     when they overflow. Start them just below the top and run across. */
  const uint32_t start = UINT32_MAX - 100u;
  atomic_store(&queue->write_index, start);
  atomic_store(&queue->read_index, start);
  plumb_note note;
  for (uint32_t i = 0; i < PLUMB_QUEUE_CAPACITY; ++i) {
    note = note_numbered(i);
    assert_true(plumb_note_queue_push(queue, &note));
  }
  assert_false(plumb_note_queue_push(queue, &note)); /* full across the overflow */
  for (uint32_t i = 0; i < PLUMB_QUEUE_CAPACITY; ++i) {
    assert_true(plumb_note_queue_pop(queue, &note));
    assert_note_is(&note, i);
  }
  assert_false(plumb_note_queue_pop(queue, &note));
}

static void test_clear_drops_what_is_queued(void **state) {
  note_queue *queue = *state;
  for (uint32_t i = 0; i < 10; ++i) {
    plumb_note note = note_numbered(i);
    assert_true(plumb_note_queue_push(queue, &note));
  }
  plumb_note_queue_clear(queue);
  plumb_note note;
  assert_false(plumb_note_queue_pop(queue, &note));
  /* And the whole capacity is free again. */
  for (uint32_t i = 0; i < PLUMB_QUEUE_CAPACITY; ++i) {
    note = note_numbered(100 + i);
    assert_true(plumb_note_queue_push(queue, &note));
  }
  assert_true(plumb_note_queue_pop(queue, &note));
  assert_note_is(&note, 100);
  plumb_note_queue_clear(queue);
}

#define THREAD_NOTES 200000u

static void *producer(void *arg) {
  note_queue *queue = arg;
  for (uint32_t i = 0; i < THREAD_NOTES; ++i) {
    plumb_note note = note_numbered(i);
    while (!plumb_note_queue_push(queue, &note)) sched_yield();
  }
  return NULL;
}

static void test_two_threads_lose_and_reorder_nothing(void **state) {
  note_queue *queue = *state;
  /* The producer runs ahead (the ring fills and it waits) and behind (the
     consumer finds it empty) many times over 200000 notes; every note
     must arrive once, whole and in order. */
  pthread_t thread;
  assert_int_equal(pthread_create(&thread, NULL, producer, queue), 0);
  uint32_t expected = 0, empty_polls = 0;
  plumb_note note;
  while (expected < THREAD_NOTES) {
    if (plumb_note_queue_pop(queue, &note)) {
      if (note.index != expected) fail_msg("note %u arrived when %u was due", note.index, expected);
      assert_note_is(&note, expected);
      ++expected;
    } else {
      ++empty_polls;
      sched_yield();
    }
  }
  assert_int_equal(pthread_join(thread, NULL), 0);
  assert_false(plumb_note_queue_pop(queue, &note));
  print_message("%u notes, %u empty polls\n", expected, empty_polls);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test_setup_teardown(test_empty_queue_pops_nothing, setup, teardown),
      cmocka_unit_test_setup_teardown(test_first_in_first_out, setup, teardown),
      cmocka_unit_test_setup_teardown(test_capacity_then_refusal, setup, teardown),
      cmocka_unit_test_setup_teardown(test_wraps_around_over_many_pushes, setup, teardown),
      cmocka_unit_test_setup_teardown(test_indices_wrap_past_their_range, setup, teardown),
      cmocka_unit_test_setup_teardown(test_clear_drops_what_is_queued, setup, teardown),
      cmocka_unit_test_setup_teardown(test_two_threads_lose_and_reorder_nothing, setup, teardown),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
