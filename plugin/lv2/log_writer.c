/*
  plumb LV2: the session log writer thread (see log_writer.h).
*/
#include "log_writer.h"

#include "controls.h"
#include "log_file.h"
#include "log_path.h"
#include "plumb_csv.h"
#include "run_json.h"

#include <errno.h>
#include <pthread.h>
#include <stdatomic.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>

#define POLL_MS 20L /* how often the thread looks for work */

struct log_writer {
  /* Fixed at creation. */
  plumb *core;
  LV2_Log_Logger logger;
  double sample_rate_hz;
  char default_folder[PLUMB_LV2_FOLDER_MAX]; /* "" when none was found */
  const LV2_State_Make_Path *make_path;      /* NULL when the host has none */
  const LV2_State_Free_Path *free_path;
  pthread_t thread;

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
     deactivate has cleared take_active and then seen popping clear, the
     thread does not touch the core again until the next take. */
  atomic_bool take_active;
  atomic_bool popping;
  atomic_uint take_number;
  atomic_uint finish_requested;
  atomic_uint finish_done;
  atomic_bool quit;

  /* The thread's own. */
  log_request current; /* the latest request taken from the slot */
  log_file file;       /* file.csv != NULL while a take is open */
  run_record record;
  char record_label[PLUMB_LV2_LABEL_MAX];
  char session_folder[PLUMB_LV2_FOLDER_MAX]; /* from make_path; "" if none */
  bool session_asked;                        /* make_path has been called */
  bool target_failed; /* opening failed; retried for a new target/take */
  unsigned take_seen;
  unsigned finish_handled;
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

/* One line to the host's log (or stderr); the thread's only voice. */
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
  record->stem = writer->file.stem;
  record->take_label = writer->record_label;
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

/* The host's folder inside the session, asked for once, on this thread. */
static const char *session_folder(log_writer *writer) {
  if (writer->make_path && !writer->session_asked) {
    writer->session_asked = true;
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

/* Opens the take's files once logging is on and run() has delivered the
   first events (so a folder or label sent at frame 0 is the one used). */
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

/* Takes a request from the slot. A new folder or label ends the open
   file and starts another; new settings are only noted in run.json. */
static void take_request(log_writer *writer) {
  if (!atomic_load_explicit(&writer->slot_full, memory_order_acquire)) {
    return;
  }
  const log_request *incoming = &writer->slot;
  if (!same_target(writer, &incoming->parameters,
                   &writer->current.parameters)) {
    close_take(writer);
    writer->target_failed = false;
  } else if (writer->file.csv &&
             !controls_equal(&incoming->settings, &writer->record.settings)) {
    writer->record.settings_changed = true;
  }
  writer->current = *incoming;
  atomic_store_explicit(&writer->slot_full, false, memory_order_release);
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

/* ------------------------------------------------------------ the thread */

static void start_new_take_if_any(log_writer *writer) {
  unsigned take = atomic_load(&writer->take_number);
  if (take != writer->take_seen) {
    writer->take_seen = take;
    writer->target_failed = false; /* a new take tries the folder again */
  }
}

static void writer_step(log_writer *writer) {
  unsigned finish = atomic_load(&writer->finish_requested);
  if (atomic_load(&writer->take_active)) {
    start_new_take_if_any(writer);
    take_request(writer);
    open_take_when_wanted(writer);
    drain_notes(writer);
  }
  report_complaints(writer);
  if (finish != writer->finish_handled) {
    close_take(writer);
    writer->finish_handled = finish;
    atomic_store(&writer->finish_done, finish);
  }
}

static void *writer_main(void *argument) {
  log_writer *writer = argument;
  while (!atomic_load(&writer->quit)) {
    writer_step(writer);
    sleep_us(POLL_MS * 1000L);
  }
  /* cleanup without deactivate: the audio thread has stopped, so what is
     queued can still be written before the files are closed. */
  writer_step(writer);
  close_take(writer);
  return NULL;
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
  int started = pthread_create(&writer->thread, NULL, writer_main, writer);
  if (started != 0) {
    free(writer);
    if (error) {
      *error = started;
    }
    return NULL;
  }
  return writer;
}

void log_writer_free(log_writer *writer) {
  if (!writer) {
    return;
  }
  atomic_store(&writer->quit, true);
  pthread_join(writer->thread, NULL);
  free(writer);
}

void log_writer_begin_take(log_writer *writer) {
  plumb_counts zero;
  memset(&zero, 0, sizeof zero);
  log_writer_publish_counts(writer, &zero);
  atomic_store(&writer->ready, false);
  atomic_fetch_add(&writer->take_number, 1u);
  atomic_store(&writer->take_active, true);
}

/* Sleep-polls until done() or the deadline; true if done in time. */
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

static bool wait_for_finish(log_writer *writer, unsigned ticket,
                            double deadline_s) {
  while (atomic_load(&writer->finish_done) != ticket) {
    if (monotonic_s() > deadline_s) {
      return false;
    }
    sleep_us(2000);
  }
  return true;
}

bool log_writer_end_take(log_writer *writer, const log_request *pending,
                         bool ran, double timeout_s) {
  double deadline_s = monotonic_s() + timeout_s;
  bool delivered = !pending || offer_until(writer, pending, deadline_s);
  if (ran && delivered) {
    log_writer_mark_ready(writer);
  }
  unsigned ticket = atomic_fetch_add(&writer->finish_requested, 1u) + 1u;
  bool finished = wait_for_finish(writer, ticket, deadline_s);
  atomic_store(&writer->take_active, false);
  /* A pop in progress ends within microseconds (it only copies one note
     out of the queue), so this wait needs no deadline. */
  while (atomic_load(&writer->popping)) {
    sleep_us(50);
  }
  return finished && delivered;
}
