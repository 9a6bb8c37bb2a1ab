/*
  plumb LV2: the session log driven by the host's worker (work:schedule,
  LV2 Worker extension), used instead of the plugin's own thread when the
  host offers one.

  run() schedules one small fixed message, at most one at a time: on the
  first run() of a take, then once 20 ms of audio have passed. The host
  calls work() with it, on a thread of its own (live) or at once inside
  schedule_work (freewheeling, offline), and work() makes one
  log_writer_step(). Nothing is sent back: what run() needs from the
  writer (log_ok) is an atomic, the same in every host.

  A synchronous host cannot deadlock: the mutex a step takes is free
  whenever run() runs, since its only other takers are deactivate and
  cleanup, which never run with run(), and work(), which the host never
  calls twice at a time; run() itself takes no lock.
*/
#ifndef PLUMB_LV2_LOG_WORKER_H
#define PLUMB_LV2_LOG_WORKER_H

#include "log_writer.h"

#include <lv2/worker/worker.h>

#include <stdatomic.h>
#include <stdbool.h>
#include <stdint.h>

typedef struct {
  const LV2_Worker_Schedule *schedule; /* NULL: the host has no worker */
  uint64_t step_frames;                /* audio between two steps */
  /* The audio thread's own (and activate's, which never runs with it). */
  uint64_t frames_waiting;
  bool step_due; /* schedule at the next run(), whatever the time */
  /* Set by run() when it schedules, cleared by work() when it starts. */
  atomic_bool step_scheduled;
} log_worker;

/* [instantiation] Keeps `schedule` (the host's work:schedule feature data,
   or NULL). Returns whether the host has a worker to use. */
bool log_worker_init(log_worker *worker, const LV2_Worker_Schedule *schedule,
                     double sample_rate_hz);

/* [instantiation] A take starts: its first run() asks for a step, so the
   take's file opens at once. */
void log_worker_begin_take(log_worker *worker);

/* [RT] After run() has handed everything over to the writer: schedule a
   step when one is due and none is waiting. Does nothing without a
   host worker. */
void log_worker_run(log_worker *worker, uint32_t n_frames);

/* [non-RT] The plugin's work(): one step of the writer for a message of
   ours; LV2_WORKER_ERR_UNKNOWN for anything else. */
LV2_Worker_Status log_worker_work(log_worker *worker, log_writer *writer,
                                  uint32_t size, const void *data);

#endif /* PLUMB_LV2_LOG_WORKER_H */
