/*
  plumb LV2: the session log on the host's worker (see log_worker.h).
*/
#include "log_worker.h"

#include <math.h>
#include <string.h>

/* The same pace as the own thread (log_thread.c): a row reaches the file
   within 20 ms of audio of its note completing. */
#define STEP_INTERVAL_S 0.020

/* The one message: the host copies it, so it only has to say it is
   ours. */
#define STEP_MESSAGE 0x706c7374u

bool log_worker_init(log_worker *worker, const LV2_Worker_Schedule *schedule,
                     double sample_rate_hz) {
  memset(worker, 0, sizeof *worker);
  worker->schedule = schedule && schedule->schedule_work ? schedule : NULL;
  double frames = floor(sample_rate_hz * STEP_INTERVAL_S);
  worker->step_frames = frames >= 1.0 ? (uint64_t)frames : 1u;
  atomic_init(&worker->step_scheduled, false);
  return worker->schedule != NULL;
}

void log_worker_begin_take(log_worker *worker) {
  worker->frames_waiting = 0;
  worker->step_due = true;
  /* A host may drop what was still queued when it deactivated; asking
     again costs at most one extra step. */
  atomic_store(&worker->step_scheduled, false);
}

void log_worker_run(log_worker *worker, uint32_t n_frames) {
  if (!worker->schedule) {
    return;
  }
  if (worker->frames_waiting < worker->step_frames) {
    worker->frames_waiting += n_frames;
  }
  bool due = worker->step_due || worker->frames_waiting >= worker->step_frames;
  if (!due || atomic_load(&worker->step_scheduled)) {
    return; /* one step at a time: the one waiting will see everything */
  }
  static const uint32_t message = STEP_MESSAGE;
  worker->step_due = false;
  worker->frames_waiting = 0;
  /* Set before the call: a synchronous host runs work(), which clears
     it, inside schedule_work. */
  atomic_store(&worker->step_scheduled, true);
  if (worker->schedule->schedule_work(worker->schedule->handle, sizeof message,
                                      &message) != LV2_WORKER_SUCCESS) {
    atomic_store(&worker->step_scheduled, false);
    worker->step_due = true; /* the host's queue is full: the next run() */
  }
}

LV2_Worker_Status log_worker_work(log_worker *worker, log_writer *writer,
                                  uint32_t size, const void *data) {
  uint32_t message = 0;
  if (size != sizeof message || !data) {
    return LV2_WORKER_ERR_UNKNOWN;
  }
  memcpy(&message, data, sizeof message); /* the host's copy may be unaligned */
  if (message != STEP_MESSAGE) {
    return LV2_WORKER_ERR_UNKNOWN;
  }
  /* Cleared first: what run() hands over during this step gets a step
     of its own. */
  atomic_store(&worker->step_scheduled, false);
  log_writer_step(writer);
  return LV2_WORKER_SUCCESS;
}
