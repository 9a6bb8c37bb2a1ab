/*
  The host's worker of the project's plugin tests: see worker_host.h.
*/
#include "worker_host.h"

#include <string.h>
#include <time.h>

static bool ring_push(host_message_ring *ring, uint32_t size, const void *data) {
  size_t written = atomic_load_explicit(&ring->written, memory_order_relaxed);
  size_t taken = atomic_load_explicit(&ring->taken, memory_order_acquire);
  if (written - taken == HOST_WORK_SLOTS || size > HOST_WORK_MESSAGE_MAX_BYTES) {
    return false;
  }
  host_work_message *slot = &ring->slots[written % HOST_WORK_SLOTS];
  slot->size = size;
  memcpy(slot->data, data, size);
  atomic_store_explicit(&ring->written, written + 1, memory_order_release);
  return true;
}

static bool ring_pop(host_message_ring *ring, host_work_message *message) {
  size_t taken = atomic_load_explicit(&ring->taken, memory_order_relaxed);
  size_t written = atomic_load_explicit(&ring->written, memory_order_acquire);
  if (taken == written) {
    return false;
  }
  *message = ring->slots[taken % HOST_WORK_SLOTS];
  atomic_store_explicit(&ring->taken, taken + 1, memory_order_release);
  return true;
}

static LV2_Worker_Status respond(LV2_Worker_Respond_Handle handle, uint32_t size,
                                 const void *data) {
  host_worker *worker = handle;
  return ring_push(&worker->responses, size, data) ? LV2_WORKER_SUCCESS : LV2_WORKER_ERR_NO_SPACE;
}

static void call_work(host_worker *worker, uint32_t size, const void *data) {
  LV2_Worker_Status status = worker->interface->work(worker->instance, respond, worker, size, data);
  atomic_fetch_add(&worker->work_calls, 1ul);
  if (pthread_equal(pthread_self(), worker->run_thread)) {
    atomic_fetch_add(&worker->work_on_run_thread, 1ul);
  }
  if (status != LV2_WORKER_SUCCESS) {
    atomic_fetch_add(&worker->work_refused, 1ul);
  }
}

/* The live host: queue the message for the worker thread. */
static LV2_Worker_Status schedule_on_thread(LV2_Worker_Schedule_Handle handle, uint32_t size,
                                            const void *data) {
  host_worker *worker = handle;
  if (!ring_push(&worker->requests, size, data)) {
    return LV2_WORKER_ERR_NO_SPACE;
  }
  atomic_fetch_add(&worker->schedules, 1ul); /* lock-free */
  return LV2_WORKER_SUCCESS;
}

/* The freewheeling host: work() at once, inside run(). */
static LV2_Worker_Status schedule_at_once(LV2_Worker_Schedule_Handle handle, uint32_t size,
                                          const void *data) {
  host_worker *worker = handle;
  if (worker->around_synchronous_work) {
    worker->around_synchronous_work(true);
  }
  atomic_fetch_add(&worker->schedules, 1ul);
  call_work(worker, size, data);
  if (worker->around_synchronous_work) {
    worker->around_synchronous_work(false);
  }
  return LV2_WORKER_SUCCESS;
}

/* Polls, as a host's worker may; a message scheduled before `stop` is
   still handed to work(). */
static void *worker_main(void *argument) {
  host_worker *worker = argument;
  const struct timespec pause = {0, 200000L};
  host_work_message message;
  for (;;) {
    bool stopping = atomic_load(&worker->stop);
    bool any = false;
    while (ring_pop(&worker->requests, &message)) {
      call_work(worker, message.size, message.data);
      any = true;
    }
    if (stopping && !any) {
      return NULL;
    }
    nanosleep(&pause, NULL);
  }
}

void host_worker_init(host_worker *worker, host_worker_kind kind,
                      const LV2_Worker_Interface *interface) {
  memset(worker, 0, sizeof *worker);
  worker->kind = kind;
  worker->interface = interface;
  worker->run_thread = pthread_self();
  worker->schedule.handle = worker;
  worker->schedule.schedule_work =
      kind == HOST_SYNCHRONOUS_WORKER ? schedule_at_once : schedule_on_thread;
  atomic_init(&worker->stop, false);
}

bool host_worker_start(host_worker *worker, LV2_Handle instance) {
  worker->instance = instance;
  if (worker->kind != HOST_WORKER_THREAD) {
    return true;
  }
  worker->thread_started = pthread_create(&worker->thread, NULL, worker_main, worker) == 0;
  return worker->thread_started;
}

void host_worker_stop(host_worker *worker) {
  if (worker->thread_started) {
    atomic_store(&worker->stop, true);
    pthread_join(worker->thread, NULL);
    worker->thread_started = false;
  }
}

void host_worker_wait_idle(host_worker *worker) {
  const struct timespec pause = {0, 1000000L};
  for (int tries = 0;
       tries < 2000 && atomic_load(&worker->work_calls) < atomic_load(&worker->schedules);
       ++tries) {
    nanosleep(&pause, NULL);
  }
}

void host_worker_end_of_run(host_worker *worker) {
  host_work_message message;
  while (ring_pop(&worker->responses, &message)) {
    worker->interface->work_response(worker->instance, message.size, message.data);
  }
  if (worker->interface->end_run) {
    worker->interface->end_run(worker->instance);
  }
}
