/*
  plumb LV2: the session log writer.

  It is the single consumer of the core's note queue (plumb_pop_note),
  formats each note with plugin/formats/note_csv.c and appends it to
  <folder>/<STEM>.notes.csv, flushing row by row, and keeps
  <STEM>.run.json beside it (see docs/log-format.md).

  It has no thread of its own: something non-real-time calls
  log_writer_step() often, either the host's worker (log_worker.h, when
  the host offers work:schedule) or the plugin's own thread
  (log_thread.h, when it does not). A step takes a mutex, so steps never
  overlap, whoever calls them; run() never takes it.

  Talking to it from the audio thread is lock-free: run() copies a new
  request (folder, label, settings) into one preallocated slot and
  publishes it with a C11 atomic flag; counters and switches are plain
  atomics.

  Threading classes, per call:
  - [RT] may be called from run(): no allocation, lock, I/O or syscall.
  - [instantiation] from instantiate/activate/deactivate/cleanup, which
    the host never runs at the same time as run().
  - [non-RT] from any thread that may block and do file I/O.
*/
#ifndef PLUMB_LV2_LOG_WRITER_H
#define PLUMB_LV2_LOG_WRITER_H

#include "messages.h"
#include "plumb.h"
#include "take_settings.h"

#include <lv2/log/logger.h>
#include <lv2/state/state.h>

#include <stdbool.h>

/* Everything the writer needs to know about where and how to log. */
typedef struct {
  plumb_lv2_parameters parameters; /* log folder, take label, offsets */
  take_settings settings;          /* for run.json */
} log_request;

typedef struct {
  plumb *core;           /* the writer pops its notes; not owned */
  LV2_Log_Logger logger; /* copied; with no host log it prints to stderr */
  double sample_rate_hz;
  /* The host's state:makePath and state:freePath, or NULL. Only the
     writer calls make_path (in a step), once, when a take needs a folder and
     no logFolder is set (never in instantiate: a host aborts). */
  const LV2_State_Make_Path *make_path;
  const LV2_State_Free_Path *free_path;
} log_writer_config;

typedef struct log_writer log_writer;

/* [instantiation] Allocate; the default folder is read from the
   environment now. NULL when memory or the mutex could not be had
   (*error, if not NULL, gets the errno). */
log_writer *log_writer_new(const log_writer_config *config, int *error);

/* [instantiation] Writes what is still queued and closes an open take
   with its totals, then frees. Whatever calls log_writer_step() must
   have stopped. log_writer_free(NULL) does nothing. */
void log_writer_free(log_writer *writer);

/* [non-RT] Do what is due: take the latest request, open the take's
   files once they are wanted, write a row for every completed note, log
   the complaints run() left. Returns at once when nothing is due. */
void log_writer_step(log_writer *writer);

/* [instantiation] A take starts (activate, after plumb_reset): the file
   is opened once the first run() has delivered its events, so a folder
   or label sent at frame 0 of the first run() is the one used. */
void log_writer_begin_take(log_writer *writer);

/* [instantiation] The take ends (deactivate, after plumb_finish and the
   last log_writer_publish_counts). Delivers `pending` if not NULL, then,
   on the calling thread, drains the queue, flushes, closes the CSV and
   rewrites run.json with totals. `ran` tells whether run() was called
   during the take (a take that never ran leaves no file). With
   `own_thread` (log_thread.h steps the writer) that thread makes one more
   step first, so the host's makePath stays on it. Waits at most
   timeout_s in all; when a step elsewhere holds the writer longer, the
   take is closed by the next step instead. On return the writer no
   longer touches the core, so activate may plumb_reset it. Returns false
   when the wait timed out. */
bool log_writer_end_take(log_writer *writer, const log_request *pending,
                         bool ran, bool own_thread, double timeout_s);

/* [RT] Offer a new request. Returns false when the slot still holds the
   previous one (the writer has not taken it yet); offer again later. */
bool log_writer_offer(log_writer *writer, const log_request *request);

/* [RT] Everything run() has received so far has been offered: the
   writer may open the take's file. */
void log_writer_mark_ready(log_writer *writer);

/* [RT] The logging port. With logging off, notes are taken from the
   queue (and so still counted by the core) but no rows are written. */
void log_writer_set_logging(log_writer *writer, bool logging);

/* [RT] The core's counters; run.json takes dropped and bad_samples from
   them (notes and flagged it counts itself, as it takes the notes). */
void log_writer_publish_counts(log_writer *writer, const plumb_counts *counts);

/* [RT] COMPLAINT_* bits (messages.h) for the next step to log. */
void log_writer_complain(log_writer *writer, unsigned complaints);

/* [RT] False after the log could not be opened or written. */
bool log_writer_log_ok(log_writer *writer);

#endif /* PLUMB_LV2_LOG_WRITER_H */
