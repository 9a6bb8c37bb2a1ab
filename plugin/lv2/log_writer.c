/*
  plumb LV2: the session log writer (see log_writer.h).
*/
#include "log_writer.h"

#include "controls.h"
#include "log_file.h"
#include "log_path.h"
#include "note_csv.h"
#include "run_json.h"

#include <errno.h>
#include <math.h>
#include <pthread.h>
#include <stdatomic.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>

struct log_writer {
  /* Fixed at creation. */
  plumb *core;
  LV2_Log_Logger logger;
  double sample_rate_hz;
  char default_folder[PLUMB_LV2_FOLDER_MAX]; /* "" when none was found */
  const LV2_State_Make_Path *make_path;      /* NULL when the host has none */
  const LV2_State_Free_Path *free_path;

  /* From the audio thread: one request slot and plain atomics. */
  atomic_bool slot_full;
  log_request slot;
  atomic_bool ready;
  atomic_bool logging;
  atomic_uint_least32_t dropped;
  atomic_uint_least64_t bad_samples;
  atomic_uint complaints;

  /* To the audio thread. */
  atomic_bool log_ok;

  /* Take control from activate/deactivate/cleanup. take_active and
     popping form a two-flag handshake (sequentially consistent), so once
     deactivate has cleared take_active and then seen popping clear, no
     step touches the core again until the next take, even one that
     deactivate could not wait for. */
  atomic_bool take_active;
  atomic_bool popping;
  atomic_uint take_number;
  atomic_int_least64_t activation_us; /* the take's activation, for run_id */
  atomic_uint activation_serial;      /* activations counted in the process */
  atomic_bool close_wanted; /* a take ended while a step held the lock */
  atomic_uint steps_begun;  /* steps so far, counted as they start */
  atomic_uint steps_ended;  /* ... and as they end */

  /* One step at a time, whoever calls it (the host's worker, the own
     thread, deactivate, cleanup). run() never takes it. */
  pthread_mutex_t lock;

  /* Under the lock. */
  log_request current; /* the latest request taken from the slot */
  log_file file;       /* file.csv != NULL while a take is open */
  run_record record;
  char record_label[PLUMB_LV2_LABEL_MAX];
  char record_source[PLUMB_LV2_FOLDER_MAX];
  char run_id[64]; /* the take's, made when a step first sees it */
  char session_folder[PLUMB_LV2_FOLDER_MAX]; /* from make_path; "" if none */
  unsigned session_asked_take; /* the take make_path was last called in, 0: never */
  bool target_failed; /* opening failed; retried for a new target/take */
  unsigned take_seen;
};

/* ------------------------------------------------------------ helpers */

static void sleep_us(long microseconds) {
  struct timespec pause = {microseconds / 1000000L,
                           (microseconds % 1000000L) * 1000L};
  nanosleep(&pause, NULL);
}

static double monotonic_s(void) {
  struct timespec now;
  clock_gettime(CLOCK_MONOTONIC, &now);
  return (double)now.tv_sec + 1e-9 * (double)now.tv_nsec;
}

static const char *error_text(int error, char *buffer, size_t size) {
  if (strerror_r(error, buffer, size) != 0) {
    snprintf(buffer, size, "error %d", error);
  }
  return buffer;
}

/* One line to the host's log (or stderr); the writer's only voice. */
static void report_error(log_writer *writer, const char *what,
                         const char *where, int error) {
  char reason[128];
  lv2_log_error(&writer->logger,
                "plumb: cannot %s %s: %s. The audio and the readings go on "
                "and notes are still counted, but they are not logged.\n",
                what, where, error_text(error, reason, sizeof reason));
  atomic_store(&writer->log_ok, false);
}

static void report_complaints(log_writer *writer) {
  unsigned complaints = atomic_exchange(&writer->complaints, 0u);
  for (unsigned bit = 0; bit < COMPLAINT_BITS; ++bit) {
    if (complaints & (1u << bit)) {
      lv2_log_warning(&writer->logger, "plumb: %s\n",
                      messages_complaint_text(1u << bit));
    }
  }
}

/* ------------------------------------------------------------ one take */

static void start_record(log_writer *writer) {
  run_record *record = &writer->record;
  memset(record, 0, sizeof *record);
  snprintf(writer->record_label, sizeof writer->record_label, "%s",
           writer->current.parameters.take_label);
  snprintf(writer->record_source, sizeof writer->record_source, "%s",
           writer->current.parameters.source_file);
  record->stem = writer->file.stem;
  record->take_label = writer->record_label;
  record->run_id = writer->run_id;
  record->source_file = writer->record_source;
  record->source_channel = writer->current.parameters.source_channel;
  record->sample_rate_hz = writer->sample_rate_hz;
  record->settings = writer->current.settings;
  run_json_time(time(NULL), record->start_time);
}

static void write_record(log_writer *writer) {
  int error = run_json_write(writer->file.json_path, &writer->record);
  if (error) {
    report_error(writer, "write", writer->file.json_path, error);
  }
}

/* The host's folder inside the session, asked for in a step: once it is
   given, and else once a take. A host may not know its session's folder
   yet when it first runs the plugin (one workstation runs a block before
   the plugin has its place in the session, and answers with a relative
   path then), so an answer that is not an absolute path is not taken and
   the next take asks again. */
static const char *session_folder(log_writer *writer) {
  if (writer->make_path && !writer->session_folder[0] &&
      writer->session_asked_take != writer->take_seen) {
    writer->session_asked_take = writer->take_seen;
    if (log_path_session_folder(writer->make_path, writer->free_path,
                                writer->session_folder,
                                sizeof writer->session_folder) != 0) {
      writer->session_folder[0] = '\0';
    }
  }
  return writer->session_folder;
}

/* The logFolder parameter, else makePath's, else the environment's. */
static const char *folder_of(log_writer *writer,
                             const plumb_lv2_parameters *parameters) {
  if (parameters->log_folder[0]) {
    return parameters->log_folder;
  }
  const char *session = session_folder(writer);
  return session[0] ? session : writer->default_folder;
}

/* Opens the take's files with its first note, once logging is on and
   run() has delivered the first events (so a folder or label sent at frame
   0 is the one used). A take with no notes (a host running the plugin for
   a block to learn its latency, a host that activates it again after an
   export) leaves no files, and never truncates an earlier take's log of
   the same name. */
static void open_take_when_wanted(log_writer *writer) {
  if (writer->file.csv || writer->target_failed ||
      !atomic_load(&writer->logging) || !atomic_load(&writer->ready)) {
    return;
  }
  const char *folder = folder_of(writer, &writer->current.parameters);
  if (!folder[0]) {
    writer->target_failed = true;
    atomic_store(&writer->log_ok, false);
    lv2_log_error(&writer->logger,
                  "plumb: no log folder: set the logFolder parameter or "
                  "PLUMB_LOG_DIR (neither XDG_STATE_HOME nor a home folder "
                  "was found). The audio and the readings go on, but notes "
                  "are not logged.\n");
    return;
  }
  char stem[LOG_PATH_STEM_MAX + 1];
  if (log_path_sanitise_label(writer->current.parameters.take_label, stem) ==
      0) {
    log_path_automatic_stem(time(NULL), stem);
  }
  const char *why = "";
  int error = log_file_open(&writer->file, folder, stem, &why);
  if (writer->file.refused[0]) {
    lv2_log_warning(&writer->logger,
                    "plumb: %s is not a regular file (a link, folder, FIFO "
                    "...); it is left untouched%s.\n",
                    writer->file.refused,
                    error ? "" : " and the take is logged under the next free "
                                 "name");
  }
  if (error) {
    writer->target_failed = true;
    report_error(writer, why, folder, error);
    return;
  }
  atomic_store(&writer->log_ok, true);
  start_record(writer);
  write_record(writer);
}

static void close_take(log_writer *writer) {
  if (!writer->file.csv) {
    return;
  }
  run_record *record = &writer->record;
  /* notes and flagged were counted as the notes were taken (drain_notes);
     these two the core counts for the whole take. */
  record->totals.dropped = atomic_load(&writer->dropped);
  record->totals.bad_samples = atomic_load(&writer->bad_samples);
  record->totals.rows = writer->file.rows;
  record->log_error = writer->file.failed;
  record->complete = true;
  run_json_time(time(NULL), record->end_time);
  int error = log_file_close(&writer->file);
  if (error) {
    report_error(writer, "close", writer->file.csv_path, error);
  }
  write_record(writer);
}

/* ------------------------------------------------------------ requests */

/* "/a/b" and "/a/b/" (or a link to it) are one folder. */
static bool same_folder(const char *a, const char *b) {
  struct stat info_a;
  struct stat info_b;
  return strcmp(a, b) == 0 ||
         (stat(a, &info_a) == 0 && stat(b, &info_b) == 0 &&
          info_a.st_dev == info_b.st_dev && info_a.st_ino == info_b.st_ino);
}

/* Whether two requests name the same files. Comparing what the names
   become, not the raw strings, matters: closing a file and opening it
   again under an equivalent name would truncate the rows just written. */
static bool same_target(log_writer *writer, const plumb_lv2_parameters *a,
                        const plumb_lv2_parameters *b) {
  char stem_a[LOG_PATH_STEM_MAX + 1];
  char stem_b[LOG_PATH_STEM_MAX + 1];
  log_path_sanitise_label(a->take_label, stem_a);
  log_path_sanitise_label(b->take_label, stem_b);
  return strcmp(stem_a, stem_b) == 0 &&
         same_folder(folder_of(writer, a), folder_of(writer, b));
}

/* A new folder or label ends the open file and starts another; new
   settings are only noted in run.json. */
static void apply_request(log_writer *writer, const log_request *incoming) {
  if (!same_target(writer, &incoming->parameters,
                   &writer->current.parameters)) {
    close_take(writer);
    writer->target_failed = false;
  } else if (writer->file.csv &&
             !controls_equal(&incoming->settings, &writer->record.settings)) {
    writer->record.settings_changed = true;
  }
  writer->current = *incoming;
}

/* Takes the request run() left in the slot, if any. */
static void take_request(log_writer *writer) {
  if (atomic_load_explicit(&writer->slot_full, memory_order_acquire)) {
    apply_request(writer, &writer->slot);
    atomic_store_explicit(&writer->slot_full, false, memory_order_release);
  }
}

/* ------------------------------------------------------------ notes */

/* plumb_pop_note under the handshake with log_writer_end_take. */
static bool pop_note(log_writer *writer, plumb_note *note) {
  atomic_store(&writer->popping, true);
  bool popped =
      atomic_load(&writer->take_active) && plumb_pop_note(writer->core, note);
  atomic_store(&writer->popping, false);
  return popped;
}

static void write_note(log_writer *writer, const plumb_note *note) {
  char row[PLUMB_CSV_ROW_MAX];
  int length = plumb_note_to_csv(note, row, sizeof row);
  if (length < 0 || (size_t)length >= sizeof row) {
    report_error(writer, "format a row for", writer->file.csv_path, EOVERFLOW);
    return;
  }
  int error = log_file_append(&writer->file, row);
  if (error) {
    report_error(writer, "write to", writer->file.csv_path, error);
  }
}

/* Every completed note is taken, so the core's queue never fills. Notes
   taken while a file is open count in its totals; rows are written only
   while logging is on and the file is healthy. */
static void drain_notes(log_writer *writer) {
  plumb_note note;
  while (pop_note(writer, &note)) {
    open_take_when_wanted(writer);
    if (!writer->file.csv) {
      continue;
    }
    writer->record.totals.notes++;
    writer->record.totals.flagged += plumb_verdict_is_flagged(note.verdict);
    if (!writer->file.failed && atomic_load(&writer->logging)) {
      write_note(writer, &note);
    }
  }
}

/* ------------------------------------------------------------ a step */

static void start_new_take_if_any(log_writer *writer) {
  unsigned take = atomic_load(&writer->take_number);
  if (take != writer->take_seen) {
    writer->take_seen = take;
    run_json_make_id(atomic_load(&writer->activation_us),
                     atomic_load(&writer->activation_serial), writer->run_id);
    writer->target_failed = false; /* a new take tries the folder again */
  }
}

/* Under the lock. */
static void step_locked(log_writer *writer) {
  atomic_fetch_add(&writer->steps_begun, 1u);
  if (atomic_exchange(&writer->close_wanted, false)) {
    close_take(writer);
  }
  if (atomic_load(&writer->take_active)) {
    start_new_take_if_any(writer);
    take_request(writer);
    drain_notes(writer);
  }
  report_complaints(writer);
  atomic_fetch_add(&writer->steps_ended, 1u);
}

void log_writer_step(log_writer *writer) {
  pthread_mutex_lock(&writer->lock);
  step_locked(writer);
  pthread_mutex_unlock(&writer->lock);
}

/* ------------------------------------------------------- [RT] interface */

bool log_writer_offer(log_writer *writer, const log_request *request) {
  if (atomic_load_explicit(&writer->slot_full, memory_order_acquire)) {
    return false;
  }
  writer->slot = *request;
  atomic_store_explicit(&writer->slot_full, true, memory_order_release);
  return true;
}

void log_writer_mark_ready(log_writer *writer) {
  atomic_store_explicit(&writer->ready, true, memory_order_release);
}

void log_writer_set_logging(log_writer *writer, bool logging) {
  atomic_store_explicit(&writer->logging, logging, memory_order_relaxed);
}

void log_writer_publish_counts(log_writer *writer, const plumb_counts *counts) {
  atomic_store_explicit(&writer->dropped, counts->dropped,
                        memory_order_relaxed);
  atomic_store_explicit(&writer->bad_samples, counts->bad_samples,
                        memory_order_relaxed);
}

void log_writer_complain(log_writer *writer, unsigned complaints) {
  if (complaints) {
    atomic_fetch_or_explicit(&writer->complaints, complaints,
                             memory_order_relaxed);
  }
}

bool log_writer_log_ok(log_writer *writer) {
  return atomic_load_explicit(&writer->log_ok, memory_order_relaxed);
}

/* ---------------------------------------------- [instantiation] interface */

log_writer *log_writer_new(const log_writer_config *config, int *error) {
  log_writer *writer = calloc(1, sizeof *writer);
  if (!writer) {
    if (error) {
      *error = ENOMEM;
    }
    return NULL;
  }
  writer->core = config->core;
  writer->logger = config->logger;
  writer->sample_rate_hz = config->sample_rate_hz;
  writer->make_path = config->make_path;
  writer->free_path = config->free_path;
  if (log_path_default_folder(writer->default_folder,
                              sizeof writer->default_folder) != 0) {
    writer->default_folder[0] = '\0';
  }
  controls_default(&writer->current.settings, &(bool){true});
  atomic_init(&writer->logging, true);
  atomic_init(&writer->log_ok, true);
  int failed = pthread_mutex_init(&writer->lock, NULL);
  if (failed != 0) {
    free(writer);
    if (error) {
      *error = failed;
    }
    return NULL;
  }
  return writer;
}

/* cleanup without deactivate: the audio thread has stopped, so what is
   queued can still be written before the files are closed. */
void log_writer_free(log_writer *writer) {
  if (!writer) {
    return;
  }
  pthread_mutex_lock(&writer->lock);
  step_locked(writer);
  close_take(writer);
  pthread_mutex_unlock(&writer->lock);
  pthread_mutex_destroy(&writer->lock);
  free(writer);
}

void log_writer_begin_take(log_writer *writer) {
  static atomic_uint activations; /* in this process, for run_id */
  struct timespec now;
  clock_gettime(CLOCK_REALTIME, &now);
  atomic_store(&writer->activation_us,
               (int_least64_t)now.tv_sec * 1000000 + now.tv_nsec / 1000);
  atomic_store(&writer->activation_serial,
               atomic_fetch_add(&activations, 1u) + 1u);
  plumb_counts zero;
  memset(&zero, 0, sizeof zero);
  log_writer_publish_counts(writer, &zero);
  atomic_store(&writer->ready, false);
  atomic_fetch_add(&writer->take_number, 1u);
  atomic_store(&writer->take_active, true);
}

/* The lock within timeout_s; false when a step held it all that time. */
static bool lock_within(log_writer *writer, double timeout_s) {
  struct timespec deadline;
  clock_gettime(CLOCK_REALTIME, &deadline);
  double whole_s = floor(timeout_s);
  deadline.tv_sec += (time_t)whole_s;
  deadline.tv_nsec += (long)((timeout_s - whole_s) * 1e9);
  if (deadline.tv_nsec >= 1000000000L) {
    deadline.tv_sec += 1;
    deadline.tv_nsec -= 1000000000L;
  }
  return pthread_mutex_timedlock(&writer->lock, &deadline) == 0;
}

/* Sleep-polls until the slot is free, then offers; false at the deadline. */
static bool offer_until(log_writer *writer, const log_request *pending,
                        double deadline_s) {
  while (!log_writer_offer(writer, pending)) {
    if (monotonic_s() > deadline_s) {
      return false;
    }
    sleep_us(1000);
  }
  return true;
}

/* With a thread of the plugin's own, that thread, not the host's thread
   in deactivate, makes a step after everything is handed over, so the
   host's makePath is only ever called from the plugin's own thread. It
   is due within one poll. Returns whether `pending` was delivered. */
static bool step_on_own_thread(log_writer *writer, const log_request *pending,
                               bool ran, double deadline_s) {
  bool delivered = !pending || offer_until(writer, pending, deadline_s);
  if (ran && delivered) {
    log_writer_mark_ready(writer);
  }
  unsigned begun = atomic_load(&writer->steps_begun);
  while (atomic_load(&writer->steps_ended) < begun + 1u &&
         monotonic_s() <= deadline_s) {
    sleep_us(1000);
  }
  return delivered;
}

/* Under the lock, with run() not running: what is in the slot first, so
   that `pending`, the newer request, is the one that stays. */
static void deliver_locked(log_writer *writer, const log_request *pending) {
  take_request(writer);
  if (pending && atomic_load(&writer->take_active)) {
    apply_request(writer, pending);
  }
}

bool log_writer_end_take(log_writer *writer, const log_request *pending,
                         bool ran, bool own_thread, double timeout_s) {
  double deadline_s = monotonic_s() + timeout_s;
  if (own_thread && step_on_own_thread(writer, pending, ran, deadline_s)) {
    pending = NULL;
  }
  bool locked = lock_within(writer, fmax(0.0, deadline_s - monotonic_s()));
  if (locked) {
    deliver_locked(writer, pending);
    if (ran) {
      log_writer_mark_ready(writer);
    }
    step_locked(writer); /* opens the file of a take that ran, if still due */
    close_take(writer);
  } else {
    atomic_store(&writer->close_wanted, true); /* for the step that is late */
  }
  atomic_store(&writer->take_active, false);
  /* A pop in progress ends within microseconds (it only copies one note
     out of the queue), so this wait needs no deadline. */
  while (atomic_load(&writer->popping)) {
    sleep_us(50);
  }
  if (locked) {
    pthread_mutex_unlock(&writer->lock);
  }
  return locked;
}
