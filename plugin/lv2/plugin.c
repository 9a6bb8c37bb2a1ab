/*
  plumb LV2: the plugin, urn:plumb:intonation.

  A thin wrapper: audio passes through untouched, the core (libplumb)
  does all the analysis, and the log writer writes the session log,
  stepped by the host's worker when the host has one, else by a thread of
  the plugin's own. The functions come in lifecycle order; each says its threading
  class as the LV2 specification defines them ("instantiation" functions
  are never called at the same time as run() on one instance).
*/
#include "controls.h"
#include "denormals.h"
#include "log_thread.h"
#include "log_worker.h"
#include "log_writer.h"
#include "messages.h"
#include "note_events.h"
#include "plumb.h"
#include "ports.h"
#include "state.h"
#include "transport.h"
#include "uris.h"

#include <lv2/atom/forge.h>
#include <lv2/atom/util.h>
#include <lv2/core/lv2.h>
#include <lv2/core/lv2_util.h>
#include <lv2/log/log.h>
#include <lv2/log/logger.h>
#include <lv2/state/state.h>
#include <lv2/urid/urid.h>
#include <lv2/worker/worker.h>

#include <stdbool.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#define END_TAKE_TIMEOUT_S 2.0 /* deactivate waits this long for the log */
#define MAX_FEATURES 64

typedef struct {
  /* Features */
  LV2_URID_Map *map;
  LV2_Log_Logger logger;

  /* Ports */
  const float *audio_in;
  float *audio_out;
  const LV2_Atom_Sequence *control;
  LV2_Atom_Sequence *notify;
  float *controls[PORT_COUNT]; /* the control ports by index; others NULL */

  /* URIDs */
  plumb_uris uris;
  LV2_Atom_Forge forge;
  LV2_Atom_Forge_Frame notify_frame;
  bool notify_open; /* the notify sequence is being written this run() */

  /* State */
  double sample_rate_hz;
  plumb *core;
  log_writer *writer;
  log_worker worker;  /* the host's worker, when it offers one */
  log_thread *thread; /* else the plugin's own; NULL with a worker */
  take_settings settings; /* as last given to the core */
  bool logging;
  plumb_lv2_parameters parameters; /* log folder, take label, offsets */
  state_snapshot snapshot;         /* the parameters, for state save() */
  log_request request;             /* the latest, for the writer */
  bool request_pending;            /* not yet taken by the writer's slot */
  bool ran;                        /* run() was called during this take */
  uint32_t notes_not_sent;         /* note objects that did not fit notify */
  transport position;
} Plumb;

/* ---------------------------------------------------------- instantiate */

/* lv2_features_query() compares every entry's URI with strcmp(), and a
   host on this machine passes an entry whose URI is NULL: skip those. */
static const LV2_Feature *const *
usable_features(const LV2_Feature *const *features,
                const LV2_Feature *usable[MAX_FEATURES]) {
  size_t count = 0;
  for (size_t i = 0; features && features[i] && count + 1 < MAX_FEATURES; ++i) {
    if (features[i]->URI) {
      usable[count++] = features[i];
    }
  }
  usable[count] = NULL;
  return usable;
}

static bool start_core(Plumb *self) {
  plumb_settings settings;
  plumb_status status =
      controls_to_core(&self->settings, self->sample_rate_hz, &settings);
  if (status == PLUMB_OK) {
    self->core = plumb_new(&settings, &status);
  }
  if (!self->core) {
    lv2_log_error(&self->logger, "plumb: cannot start the analysis: %s\n",
                  plumb_strerror(status));
  }
  return self->core != NULL;
}

/* make_path is kept for the writer, which calls it only in a step. The
   host's worker steps the writer when there is one (work:schedule), else
   a thread of the plugin's own does. */
static bool start_writer(Plumb *self, const LV2_Feature *const *features) {
  log_writer_config config = {self->core, self->logger, self->sample_rate_hz,
                              NULL, NULL};
  config.make_path = lv2_features_data(features, LV2_STATE__makePath);
  config.free_path = lv2_features_data(features, LV2_STATE__freePath);
  const LV2_Worker_Schedule *schedule =
      lv2_features_data(features, LV2_WORKER__schedule);
  int error = 0;
  self->writer = log_writer_new(&config, &error);
  bool has_worker =
      log_worker_init(&self->worker, schedule, self->sample_rate_hz);
  if (self->writer && !has_worker) {
    self->thread = log_thread_start(self->writer, &error);
  }
  if (!self->writer || (!has_worker && !self->thread)) {
    lv2_log_error(&self->logger,
                  "plumb: cannot start the session log writer (error %d)\n",
                  error);
    return false;
  }
  return true;
}

static void cleanup(LV2_Handle instance);

/* [instantiation] All memory, the FFT plans and the log writer (with
   its thread when the host has no worker). */
static LV2_Handle instantiate(const LV2_Descriptor *descriptor,
                              double sample_rate_hz, const char *bundle_path,
                              const LV2_Feature *const *features) {
  (void)descriptor;
  (void)bundle_path;
  const LV2_Feature *usable[MAX_FEATURES];
  LV2_URID_Map *map = NULL;
  LV2_Log_Log *log = NULL;
  features = usable_features(features, usable);
  const char *missing =
      lv2_features_query(features, LV2_LOG__log, &log,
                         false, LV2_URID__map, &map, true, NULL);
  LV2_Log_Logger logger;
  memset(&logger, 0, sizeof logger);
  lv2_log_logger_init(&logger, map, log);
  if (missing) {
    lv2_log_error(
        &logger,
        "plumb: the host does not provide %s, which the plugin needs\n",
        missing);
    return NULL;
  }
  Plumb *self = calloc(1, sizeof *self);
  if (!self) {
    lv2_log_error(&logger, "plumb: out of memory\n");
    return NULL;
  }
  self->map = map;
  self->logger = logger;
  self->sample_rate_hz = sample_rate_hz;
  plumb_uris_map(&self->uris, map);
  lv2_atom_forge_init(&self->forge, map);
  messages_parameters_init(&self->parameters);
  state_snapshot_publish(&self->snapshot, &self->parameters);
  controls_default(&self->settings, &self->logging);
  transport_reset(&self->position, sample_rate_hz);
  if (!start_core(self) || !start_writer(self, features)) {
    cleanup(self);
    return NULL;
  }
  return self;
}

/* ---------------------------------------------------------- connect_port */

/* [RT] */
static void connect_port(LV2_Handle instance, uint32_t port, void *data) {
  Plumb *self = instance;
  switch ((plumb_port)port) {
  case PORT_IN:
    self->audio_in = data;
    break;
  case PORT_OUT:
    self->audio_out = data;
    break;
  case PORT_CONTROL:
    self->control = data;
    break;
  case PORT_NOTIFY:
    self->notify = data;
    break;
  default:
    if (port < PORT_COUNT) {
      self->controls[port] = data;
    }
    break;
  }
}

/* -------------------------------------------------------------- activate */

/* The writer gets the current parameters and settings at the next run(). */
static void request_update(Plumb *self) {
  self->request.parameters = self->parameters;
  self->request.settings = self->settings;
  self->request_pending = true;
}

/* [instantiation] A new take: the core forgets all audio and notes. */
static void activate(LV2_Handle instance) {
  Plumb *self = instance;
  plumb_reset(self->core);
  transport_reset(&self->position, self->sample_rate_hz);
  self->ran = false;
  self->notes_not_sent = 0;
  request_update(self);
  log_writer_begin_take(self->writer);
  log_worker_begin_take(&self->worker);
}

/* ------------------------------------------------------------------- run */

static void pass_audio(Plumb *self, uint32_t n_samples) {
  if (!self->audio_out) {
    return;
  }
  if (!self->audio_in) {
    memset(self->audio_out, 0, n_samples * sizeof(float));
  } else if (self->audio_in != self->audio_out) {
    memcpy(self->audio_out, self->audio_in, n_samples * sizeof(float));
  }
}

static void analyse(Plumb *self, uint32_t begin, uint32_t end) {
  if (self->audio_in && end > begin) {
    plumb_process(self->core, self->audio_in + begin, end - begin);
    transport_advance(&self->position, end - begin);
  }
}

static void configure(Plumb *self, const take_settings *wanted) {
  plumb_settings core_settings;
  if (controls_to_core(wanted, self->sample_rate_hz, &core_settings) !=
          PLUMB_OK ||
      plumb_configure(self->core, &core_settings) != PLUMB_OK) {
    log_writer_complain(self->writer, COMPLAINT_SETTINGS_REJECTED);
  }
  self->settings = *wanted; /* not retried every block if refused */
  request_update(self);
}

static void read_controls(Plumb *self) {
  take_settings wanted = self->settings;
  bool logging = self->logging;
  controls_read(self->controls, &wanted, &logging);
  if (logging != self->logging || !self->ran) {
    self->logging = logging;
    log_writer_set_logging(self->writer, logging);
  }
  if (!controls_equal(&wanted, &self->settings)) {
    configure(self, &wanted);
  }
}

/* [RT] After the parameters changed (patch:Set or state restore). */
static void parameters_changed(Plumb *self, unsigned changed) {
  if (changed & MESSAGE_CHANGED_OFFSETS) {
    take_settings wanted = self->settings;
    memcpy(wanted.tuning.custom_offsets_cents,
           self->parameters.custom_offsets_cents,
           sizeof wanted.tuning.custom_offsets_cents);
    configure(self, &wanted);
  }
  if (changed) {
    request_update(self);
    state_snapshot_publish(&self->snapshot, &self->parameters);
  }
}

static void apply_set(Plumb *self, const LV2_Atom_Object *set) {
  unsigned complaints = 0;
  unsigned changed =
      messages_apply_set(&self->uris, set, &self->parameters, &complaints);
  log_writer_complain(self->writer, complaints);
  parameters_changed(self, changed);
}

/* [RT] The core takes a new mark only when the transport really moved
   somewhere else: the mark belongs to the next sample it analyses. */
static void mark_transport(Plumb *self, const LV2_Atom_Object *position) {
  if (transport_read(&self->position, &self->uris, position)) {
    plumb_transport now;
    transport_now(&self->position, &now);
    plumb_mark_transport(self->core, &now);
  }
}

static void handle_event(Plumb *self, const LV2_Atom *body, uint32_t frame) {
  /* An object too short to hold its id and class is no message (its class
     would be read past the event: tests/fuzz/regressions/plugin/). */
  if (!lv2_atom_forge_is_object_type(&self->forge, body->type) ||
      body->size < sizeof(LV2_Atom_Object_Body)) {
    return;
  }
  const LV2_Atom_Object *object = (const LV2_Atom_Object *)body;
  LV2_URID kind = object->body.otype;
  if (kind == self->uris.patch_Set) {
    apply_set(self, object);
  } else if (kind == self->uris.patch_Get && self->notify_open) {
    if (!messages_answer_get(&self->uris, object, &self->parameters,
                             &self->forge, frame)) {
      log_writer_complain(self->writer, COMPLAINT_REPLY_DID_NOT_FIT);
    }
  } else if (kind == self->uris.time_Position) {
    mark_transport(self, object);
  }
}

/* Feed the core the audio up to each event, then handle the event, so
   a message acts exactly at its frame. */
static void analyse_with_events(Plumb *self, uint32_t n_samples) {
  uint32_t analysed = 0;
  if (self->control) {
    LV2_ATOM_SEQUENCE_FOREACH(self->control, event) {
      int64_t at = event->time.frames;
      uint32_t frame = at < (int64_t)analysed    ? analysed
                       : at > (int64_t)n_samples ? n_samples
                                                 : (uint32_t)at;
      analyse(self, analysed, frame);
      analysed = frame;
      /* A reply belongs to this block: an event at its end (or past it)
         is answered at its last frame, not after it, and so before the
         notes sent there (tests/fuzz/regressions/plugin/). */
      uint32_t last = n_samples > 0 ? n_samples - 1 : 0;
      handle_event(self, &event->body, frame < last ? frame : last);
    }
  }
  analyse(self, analysed, n_samples);
}

static void open_notify(Plumb *self) {
  self->notify_open = false;
  if (self->notify) {
    lv2_atom_forge_set_buffer(&self->forge, (uint8_t *)self->notify,
                              self->notify->atom.size);
    self->notify_open =
        lv2_atom_forge_sequence_head(&self->forge, &self->notify_frame, 0) != 0;
  }
}

/* Every note completed in this block, at its last frame. */
static void send_notes(Plumb *self, uint32_t n_samples) {
  int64_t last_frame = n_samples > 0 ? (int64_t)n_samples - 1 : 0;
  self->notes_not_sent += note_events_send(
      self->core, &self->uris, &self->forge, self->notify_open, last_frame);
}

static void close_notify(Plumb *self) {
  if (self->notify_open) {
    lv2_atom_forge_pop(&self->forge, &self->notify_frame);
  }
}

/* The writer opens the take's file only once everything run() received
   has been handed over, so frame-0 parameters are never missed. */
static void hand_over_to_writer(Plumb *self) {
  if (self->request_pending && log_writer_offer(self->writer, &self->request)) {
    self->request_pending = false;
  }
  if (!self->request_pending) {
    log_writer_mark_ready(self->writer);
  }
}

static void write_outputs(Plumb *self) {
  control_readings readings;
  plumb_get_live(self->core, &readings.live);
  plumb_get_counts(self->core, &readings.counts);
  readings.log_ok = log_writer_log_ok(self->writer);
  controls_write(self->controls, &readings);
  log_writer_publish_counts(self->writer, &readings.counts);
}

/* [RT] No allocation, lock, log, file I/O or system call here. */
static void run(LV2_Handle instance, uint32_t n_samples) {
  Plumb *self = instance;
  denormal_guard guard = denormals_flush();
  pass_audio(self, n_samples);
  open_notify(self);
  read_controls(self);
  analyse_with_events(self, n_samples);
  send_notes(self, n_samples);
  close_notify(self);
  hand_over_to_writer(self);
  denormals_restore(guard);
  /* In the host's own float mode, since a synchronous host makes the
     log's pass in here (formatting numbers); before the outputs, so that
     log_ok then shows its result at once. */
  log_worker_run(&self->worker, n_samples);
  write_outputs(self);
  self->ran = true;
}

/* ------------------------------------------------------------ deactivate */

/* [instantiation] The take ends: complete the last note, then write its
   row, close the CSV and give run.json its totals (waiting, bounded, for
   a pass of the log in progress on another thread). */
static void deactivate(LV2_Handle instance) {
  Plumb *self = instance;
  plumb_finish(self->core);
  plumb_counts counts;
  plumb_get_counts(self->core, &counts);
  log_writer_publish_counts(self->writer, &counts);
  const log_request *pending = self->request_pending ? &self->request : NULL;
  if (!log_writer_end_take(self->writer, pending, self->ran,
                           self->thread != NULL, END_TAKE_TIMEOUT_S)) {
    lv2_log_warning(&self->logger,
                    "plumb: the session log was not finished within 2 s; "
                    "its last rows or totals may be missing\n");
  }
  self->request_pending = false;
}

/* --------------------------------------------------------------- cleanup */

/* [instantiation] Stops the own thread, then the writer (closing any
   open take), before the core they read. */
static void cleanup(LV2_Handle instance) {
  Plumb *self = instance;
  log_thread_stop(self->thread);
  log_writer_free(self->writer);
  plumb_free(self->core);
  free(self);
}

/* -------------------------------------------------------- extension_data */

/* [state save: may run with run()] From the snapshot run() publishes;
   never waits for the writer thread. */
static LV2_State_Status save(LV2_Handle instance,
                             LV2_State_Store_Function store,
                             LV2_State_Handle handle, uint32_t flags,
                             const LV2_Feature *const *features) {
  (void)flags;
  Plumb *self = instance;
  plumb_lv2_parameters parameters;
  state_snapshot_read(&self->snapshot, &parameters);
  return state_save(&self->uris, &parameters, store, handle, features);
}

/* [instantiation] As a patch:Set would: the next run() (or activate)
   hands the restored folder and label to the writer. */
static LV2_State_Status restore(LV2_Handle instance,
                                LV2_State_Retrieve_Function retrieve,
                                LV2_State_Handle handle, uint32_t flags,
                                const LV2_Feature *const *features) {
  (void)flags;
  Plumb *self = instance;
  unsigned complaints = 0;
  state_restorer restorer = {&self->uris, &self->forge, features, &complaints};
  unsigned changed =
      state_restore(&restorer, retrieve, handle, &self->parameters);
  log_writer_complain(self->writer, complaints);
  parameters_changed(self, changed);
  return LV2_STATE_SUCCESS;
}

static const LV2_State_Interface state_interface = {save, restore};

/* [worker: non-real-time, never two at a time] One step of the session
   log, for the message run() scheduled. May run inside run() itself
   when the host is freewheeling. */
static LV2_Worker_Status work(LV2_Handle instance,
                              LV2_Worker_Respond_Function respond,
                              LV2_Worker_Respond_Handle handle, uint32_t size,
                              const void *data) {
  (void)respond;
  (void)handle;
  Plumb *self = instance;
  return log_worker_work(&self->worker, self->writer, size, data);
}

/* [audio] work() never responds (log_worker.h), so hosts never call this;
   the interface has no way to leave it out. */
static LV2_Worker_Status work_response(LV2_Handle instance, uint32_t size,
                                       const void *body) {
  (void)instance;
  (void)size;
  (void)body;
  return LV2_WORKER_SUCCESS;
}

static const LV2_Worker_Interface worker_interface = {work, work_response,
                                                      NULL};

/* [discovery] */
static const void *extension_data(const char *uri) {
  if (strcmp(uri, LV2_STATE__interface) == 0) {
    return &state_interface;
  }
  return strcmp(uri, LV2_WORKER__interface) == 0 ? &worker_interface : NULL;
}

/* ------------------------------------------------------------ descriptor */

static const LV2_Descriptor descriptor = {
    PLUMB_URI, instantiate, connect_port, activate,
    run,       deactivate,  cleanup,      extension_data};

LV2_SYMBOL_EXPORT const LV2_Descriptor *lv2_descriptor(uint32_t index) {
  return index == 0 ? &descriptor : NULL;
}
