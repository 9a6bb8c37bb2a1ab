/*
  The host's worker of the project's plugin tests (worker_host.c), as
  the LV2 Worker extension (worker.h) describes a host's side:
  work:schedule queues a message for work(), which runs on a thread of
  the host's ("the host MAY call this method from any non-real-time
  thread") or at once inside schedule_work, as a freewheeling host may
  ("the worker may be executed immediately"); responses are handed to
  work_response() at the end of the next run(), then end_run().

  Not real-time code, except what run() reaches: schedule_work and the
  end of a run take no lock and allocate nothing (a lock-free ring of
  one producer and one consumer).
*/
#ifndef PLUMB_TEST_WORKER_HOST_H
#define PLUMB_TEST_WORKER_HOST_H

#include <lv2/core/lv2.h>
#include <lv2/worker/worker.h>

#include <pthread.h>
#include <stdatomic.h>
#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

/* The hosts a test can drive the plugin in. */
typedef enum {
  HOST_NO_WORKER,          /* no work:schedule */
  HOST_WORKER_THREAD,      /* work() on a thread of the host's */
  HOST_SYNCHRONOUS_WORKER, /* work() at once, inside schedule_work */
  HOST_WORKER_KINDS
} host_worker_kind;

#define HOST_WORK_SLOTS             64
#define HOST_WORK_MESSAGE_MAX_BYTES 64

typedef struct {
  uint32_t size;
  uint8_t data[HOST_WORK_MESSAGE_MAX_BYTES];
} host_work_message;

/* One producer and one consumer, lock-free: the producer may be run(),
   which must not see the host take a lock either. */
typedef struct {
  host_work_message slots[HOST_WORK_SLOTS];
  atomic_size_t written;
  atomic_size_t taken;
} host_message_ring;

typedef struct {
  host_worker_kind kind;
  const LV2_Worker_Interface *interface;
  LV2_Handle instance;          /* set by host_worker_start() */
  LV2_Worker_Schedule schedule; /* the work:schedule feature's data */
  host_message_ring requests;   /* run() to the worker thread */
  host_message_ring responses;  /* work() to the end of the next run() */
  pthread_t thread;
  bool thread_started;
  atomic_bool stop;
  pthread_t run_thread;            /* the thread that called init, and run() */
  atomic_ulong schedules;          /* schedule_work() calls taken */
  atomic_ulong work_calls;         /* work() calls made */
  atomic_ulong work_on_run_thread; /* of those, made on run()'s thread */
  atomic_ulong work_refused;       /* work() did not take the message */
  /* Called with true just before a synchronous work() and with false
     just after, when set: what work() does there is the host's
     non-real-time business, which a test may leave out of its checks. */
  void (*around_synchronous_work)(bool entering);
} host_worker;

void host_worker_init(host_worker *worker, host_worker_kind kind,
                      const LV2_Worker_Interface *interface);
/* Starts the worker thread, for HOST_WORKER_THREAD. False if it could
   not be started. */
bool host_worker_start(host_worker *worker, LV2_Handle instance);
/* Hands every message still queued to work(), then joins the thread
   (worker.h: a scheduled message "MUST" eventually reach work()). */
void host_worker_stop(host_worker *worker);
/* Until every message scheduled so far has been through work(), for at
   most 2 s (common practice, no source). */
void host_worker_wait_idle(host_worker *worker);
/* After run(), in its context: the responses, then end_run (worker.h). */
void host_worker_end_of_run(host_worker *worker);

#endif
