/*
  The notify port's note objects (docs/ports.md, "Note objects").

  This executable hosts build/plumb.lv2/plumb.so as an LV2 host would
  (urid:map and unmap, log:log, options), runs a synthetic take of six
  notes, one of them 30 cents sharp, and reads every urn:plumb:Note
  object from notify after each run(). The truth is the analysis core
  run directly on the same samples (plumb_new / plumb_process, with the
  same denormal mode as run()): one object a note, in order, every
  property bit for bit the core's value, and absent exactly where the
  core's value does not apply. A notify buffer too small for an object
  must get none of it, and the sequence must stay within its buffer.
*/
#include "urid_table.h"
#include "signal.h"

#include "../plugin/lv2/ports.h"
#include "plumb.h"

#include <lv2/atom/atom.h>
#include <lv2/atom/util.h>
#include <lv2/buf-size/buf-size.h>
#include <lv2/core/lv2.h>
#include <lv2/log/log.h>
#include <lv2/options/options.h>
#include <lv2/parameters/parameters.h>
#include <lv2/urid/urid.h>

#include <dlfcn.h>
#include <limits.h>
#include <math.h>
#include <pthread.h>
#include <stdarg.h>
#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>
#if defined(__SSE__)
#include <pmmintrin.h>
#include <xmmintrin.h>
#endif

#include <setjmp.h>
#include <cmocka.h>

#define SAMPLE_RATE_HZ 48000.0
#define MAX_BLOCK_FRAMES 4096
#define NOTIFY_BUFFER_BYTES 16384
#define NOTIFY_SPACE_BYTES (NOTIFY_BUFFER_BYTES - 8) /* after the header */
#define SMALL_NOTIFY_BYTES 256
#define PLUGIN_URI "urn:plumb:intonation"
#define NOTE_CLASS_URI "urn:plumb:Note"
#define NOTE_KEY_PREFIX "urn:plumb:note#"
#define MAX_NOTES 32

/* ================================================== URIDs */

/* The shared table: tests/urid_table.c. */
#define map_uri urid_table_map
#define unmap_uri urid_table_unmap

static LV2_URID map_plain(const char *uri) { return map_uri(NULL, uri); }

/* ================================================== the note fields */

/* Every plumb_note field docs/ports.md lists, with its atom type. */
typedef struct {
  const char *name;
  bool is_int;
  size_t offset; /* in plumb_note */
  LV2_URID key;  /* mapped in setup */
} note_field;

#define INT_FIELD(name) {#name, true, offsetof(plumb_note, name), 0}
#define DOUBLE_FIELD(name) {#name, false, offsetof(plumb_note, name), 0}

static note_field fields[] = {
    INT_FIELD(index),          DOUBLE_FIELD(start_s),
    DOUBLE_FIELD(end_s),       DOUBLE_FIELD(timeline_s),
    INT_FIELD(midi),           DOUBLE_FIELD(target_hz),
    DOUBLE_FIELD(f0_hz),       DOUBLE_FIELD(cents),
    DOUBLE_FIELD(spread_cents), DOUBLE_FIELD(drift_cents_per_s),
    DOUBLE_FIELD(vibrato_hz),  DOUBLE_FIELD(vibrato_cents),
    DOUBLE_FIELD(confidence),  DOUBLE_FIELD(inharmonicity_b),
    INT_FIELD(partials),       DOUBLE_FIELD(hnr_db),
    DOUBLE_FIELD(odd_even_db), DOUBLE_FIELD(centroid_hz),
    DOUBLE_FIELD(attack_ms),   DOUBLE_FIELD(decay_ms),
    DOUBLE_FIELD(sustain_db),  DOUBLE_FIELD(release_ms),
    DOUBLE_FIELD(peak_dbfs),   INT_FIELD(verdict),
};
#define FIELD_COUNT (sizeof fields / sizeof fields[0])

static int32_t core_int(const plumb_note *note, const note_field *field) {
  const char *at = (const char *)note + field->offset;
  if (strcmp(field->name, "index") == 0) {
    return (int32_t)note->index;
  }
  if (strcmp(field->name, "verdict") == 0) {
    return (int32_t)note->verdict;
  }
  int value;
  memcpy(&value, at, sizeof value);
  return value;
}

static double core_double(const plumb_note *note, const note_field *field) {
  double value;
  memcpy(&value, (const char *)note + field->offset, sizeof value);
  return value;
}

/* index and verdict always apply; midi and partials not when -1. */
static bool core_applies(const plumb_note *note, const note_field *field) {
  return field->is_int ? core_int(note, field) != -1 ||
                             strcmp(field->name, "verdict") == 0
                       : !isnan(core_double(note, field));
}

/* ================================================== a received object */

typedef struct {
  bool present[FIELD_COUNT];
  int32_t ints[FIELD_COUNT];
  double doubles[FIELD_COUNT];
  unsigned properties;
  unsigned wrong_properties; /* unknown key, wrong type or repeated */
  uint32_t object_bytes;     /* the object atom's body size */
  uint32_t event_bytes;      /* the whole event: time, header, body */
  int64_t frame;
  size_t block_frames; /* of the run() it came in */
} received_note;

typedef struct {
  LV2_URID atom_Chunk, atom_Sequence, atom_Object, atom_Int, atom_Double,
      atom_Float, plumb_Note, param_sampleRate, bufsz_min, bufsz_max,
      bufsz_nominal;
} host_uris;

static host_uris uris;

static int field_of_key(LV2_URID key) {
  for (size_t i = 0; i < FIELD_COUNT; ++i) {
    if (fields[i].key == key) {
      return (int)i;
    }
  }
  return -1;
}

static void read_property(received_note *note, const LV2_Atom_Property_Body *p) {
  int i = field_of_key(p->key);
  ++note->properties;
  if (i < 0 || note->present[i]) {
    ++note->wrong_properties;
    return;
  }
  if (fields[i].is_int && p->value.type == uris.atom_Int) {
    note->ints[i] = ((const LV2_Atom_Int *)&p->value)->body;
  } else if (!fields[i].is_int && p->value.type == uris.atom_Double) {
    note->doubles[i] = ((const LV2_Atom_Double *)&p->value)->body;
  } else {
    ++note->wrong_properties;
    return;
  }
  note->present[i] = true;
}

static void read_note(received_note *note, const LV2_Atom_Event *event) {
  memset(note, 0, sizeof *note);
  const LV2_Atom_Object *object = (const LV2_Atom_Object *)&event->body;
  note->frame = event->time.frames;
  note->object_bytes = object->atom.size;
  note->event_bytes = (uint32_t)sizeof(LV2_Atom_Event) +
                      lv2_atom_pad_size(object->atom.size);
  LV2_ATOM_OBJECT_FOREACH(object, property) { read_property(note, property); }
}

/* ================================================== the host */

typedef struct {
  LV2_URID_Map map;
  LV2_URID_Unmap unmap;
  LV2_Log_Log log;
  float sample_rate_hz;
  int32_t min_block, max_block, nominal_block;
  LV2_Options_Option options[5];
  LV2_Feature features[4];
  const LV2_Feature *list[5];
} host_features;

static int log_vprintf(LV2_Log_Handle handle, LV2_URID type, const char *format,
                       va_list arguments) {
  (void)handle;
  (void)type;
  return vfprintf(stderr, format, arguments);
}

static int log_printf(LV2_Log_Handle handle, LV2_URID type, const char *format,
                      ...) {
  va_list arguments;
  va_start(arguments, format);
  int written = log_vprintf(handle, type, format, arguments);
  va_end(arguments);
  return written;
}

static void set_option(LV2_Options_Option *option, LV2_URID key, LV2_URID type,
                       uint32_t size, const void *value) {
  *option =
      (LV2_Options_Option){LV2_OPTIONS_INSTANCE, 0, key, size, type, value};
}

static void build_features(host_features *f, uint32_t block_frames) {
  memset(f, 0, sizeof *f);
  f->map = (LV2_URID_Map){NULL, map_uri};
  f->unmap = (LV2_URID_Unmap){NULL, unmap_uri};
  f->log = (LV2_Log_Log){NULL, log_printf, log_vprintf};
  f->sample_rate_hz = (float)SAMPLE_RATE_HZ;
  f->min_block = 1;
  f->max_block = MAX_BLOCK_FRAMES;
  f->nominal_block = (int32_t)block_frames;
  set_option(&f->options[0], uris.param_sampleRate, uris.atom_Float,
             sizeof(float), &f->sample_rate_hz);
  set_option(&f->options[1], uris.bufsz_min, uris.atom_Int, sizeof(int32_t),
             &f->min_block);
  set_option(&f->options[2], uris.bufsz_max, uris.atom_Int, sizeof(int32_t),
             &f->max_block);
  set_option(&f->options[3], uris.bufsz_nominal, uris.atom_Int,
             sizeof(int32_t), &f->nominal_block);
  f->features[0] = (LV2_Feature){LV2_URID__map, &f->map};
  f->features[1] = (LV2_Feature){LV2_URID__unmap, &f->unmap};
  f->features[2] = (LV2_Feature){LV2_LOG__log, &f->log};
  f->features[3] = (LV2_Feature){LV2_OPTIONS__options, f->options};
  for (int i = 0; i < 4; ++i) {
    f->list[i] = &f->features[i];
  }
  f->list[4] = NULL;
}

/* What one take through the plugin gave. */
typedef struct {
  received_note notes[MAX_NOTES];
  size_t count;            /* note objects (beyond MAX_NOTES not kept) */
  size_t other_events;     /* events that are not note objects */
  size_t runs_overflowing; /* sequence bigger than its buffer, or bad type */
} take_result;

typedef struct {
  const LV2_Descriptor *descriptor;
  LV2_Handle instance;
  float in[MAX_BLOCK_FRAMES];
  float out[MAX_BLOCK_FRAMES];
  float controls[PORT_COUNT];
  LV2_Atom_Sequence control;
  union {
    LV2_Atom_Sequence sequence;
    uint8_t bytes[NOTIFY_BUFFER_BYTES];
  } notify;
} plugin_host;

static struct {
  const LV2_Descriptor *descriptor;
  void *library;
  char bundle[PATH_MAX];
  float *take;
  size_t take_frames;
  plumb_note core_notes[MAX_NOTES];
  size_t core_count;
} suite;

/* The defaults of ttl/plumb.ttl; no session log is written. */
static void set_control_defaults(float controls[PORT_COUNT]) {
  controls[PORT_REFERENCE] = 440.0f;
  controls[PORT_TOLERANCE] = 10.0f;
  controls[PORT_TEMPERAMENT] = 0.0f;
  controls[PORT_TONIC] = 0.0f;
  controls[PORT_LOWEST] = 28.0f;
  controls[PORT_HIGHEST] = 96.0f;
  controls[PORT_MIN_NOTE] = 80.0f;
  controls[PORT_LOGGING] = 0.0f;
}

static void connect_every_port(plugin_host *host) {
  const LV2_Descriptor *d = host->descriptor;
  d->connect_port(host->instance, PORT_IN, host->in);
  d->connect_port(host->instance, PORT_OUT, host->out);
  d->connect_port(host->instance, PORT_CONTROL, &host->control);
  d->connect_port(host->instance, PORT_NOTIFY, &host->notify);
  for (uint32_t port = PORT_NOTIFY + 1; port < PORT_COUNT; ++port) {
    d->connect_port(host->instance, port, &host->controls[port]);
  }
}

/* Read notify after one run() that was offered `space` bytes after the
   atom header (the Chunk's size). */
static void collect(const plugin_host *host, uint32_t space,
                    size_t block_frames, take_result *result) {
  const LV2_Atom_Sequence *sequence = &host->notify.sequence;
  if (sequence->atom.type != uris.atom_Sequence ||
      sequence->atom.size > space) {
    result->runs_overflowing++;
    return;
  }
  LV2_ATOM_SEQUENCE_FOREACH(sequence, event) {
    const LV2_Atom_Object *object = (const LV2_Atom_Object *)&event->body;
    if (event->body.type != uris.atom_Object ||
        object->body.otype != uris.plumb_Note) {
      result->other_events++;
      continue;
    }
    if (result->count < MAX_NOTES) {
      read_note(&result->notes[result->count], event);
      result->notes[result->count].block_frames = block_frames;
    }
    result->count++;
  }
}

static void run_block(plugin_host *host, size_t begin, size_t frames,
                      uint32_t space, take_result *result) {
  memcpy(host->in, suite.take + begin, frames * sizeof(float));
  host->control.atom.type = uris.atom_Sequence;
  host->control.atom.size = sizeof(LV2_Atom_Sequence_Body);
  host->control.body.unit = 0;
  host->control.body.pad = 0;
  /* As lilv does: an empty Chunk whose size is the space there is. */
  memset(host->notify.bytes, 0xa5, sizeof host->notify.bytes);
  host->notify.sequence.atom.type = uris.atom_Chunk;
  host->notify.sequence.atom.size = space;
  host->descriptor->run(host->instance, (uint32_t)frames);
  collect(host, space, frames, result);
}

/* The whole take through one instance at one block size, with `space`
   bytes offered on notify after its atom header. */
static bool drive_take(size_t block_frames, uint32_t space,
                       take_result *result) {
  memset(result, 0, sizeof *result);
  plugin_host *host = calloc(1, sizeof *host);
  host_features features;
  if (!host) {
    return false;
  }
  build_features(&features, (uint32_t)block_frames);
  host->descriptor = suite.descriptor;
  host->instance = suite.descriptor->instantiate(
      suite.descriptor, SAMPLE_RATE_HZ, suite.bundle, features.list);
  if (!host->instance) {
    free(host);
    return false;
  }
  set_control_defaults(host->controls);
  connect_every_port(host);
  suite.descriptor->activate(host->instance);
  for (size_t begin = 0; begin < suite.take_frames; begin += block_frames) {
    size_t left = suite.take_frames - begin;
    run_block(host, begin, left < block_frames ? left : block_frames, space,
              result);
  }
  suite.descriptor->deactivate(host->instance);
  suite.descriptor->cleanup(host->instance);
  free(host);
  return true;
}

/* ================================================== the take */

/* Six notes of 0.4 s with 0.2 s gaps; the fourth is 30 cents sharp. The
   take ends in enough silence that every note completes within run(). */
#define SHARP_NOTE 3
#define TAKE_S 4.5

static const sig_note take_notes[] = {
    /* start_s end_s midi detune vib_hz vib_cents glide_s level_db */
    {0.20, 0.60, 57, 0.0, 0.0, 0.0, 0.0, 0.0},
    {0.80, 1.20, 60, 0.0, 0.0, 0.0, 0.0, 0.0},
    {1.40, 1.80, 64, 0.0, 0.0, 0.0, 0.0, 0.0},
    {2.00, 2.40, 67, 30.0, 0.0, 0.0, 0.0, 0.0},
    {2.60, 3.00, 69, 0.0, 0.0, 0.0, 0.0, 0.0},
    {3.20, 3.60, 72, 0.0, 0.0, 0.0, 0.0, 0.0},
};
#define TAKE_NOTES (sizeof take_notes / sizeof take_notes[0])

static float *render_take(size_t *n) {
  *n = (size_t)lround(TAKE_S * SAMPLE_RATE_HZ);
  float *samples = calloc(*n, sizeof *samples);
  sig_voice voice;
  memset(&voice, 0, sizeof voice);
  voice.timbre = (sig_timbre){8, SIG_AMPS_SAWTOOTH, NULL, 0.0, true, 11};
  voice.envelope =
      (sig_envelope){SIG_RAMP_LINEAR, 0.02, 0.10, -4.0, SIG_RAMP_EXP, 0.04};
  voice.reference_hz = 440.0;
  voice.amplitude = 0.2;
  if (!samples || sig_render_notes(&voice, take_notes, TAKE_NOTES,
                                   SAMPLE_RATE_HZ, samples, *n) != 0) {
    free(samples);
    return NULL;
  }
  return samples;
}

/* The core on the same samples, in run()'s denormal mode (FTZ and DAZ),
   so its notes are the plugin's to the bit. No plumb_finish(): the
   plugin sends only what completes within run(). */
static int run_core_directly(void) {
  plumb_settings settings;
  plumb_settings_default(&settings, SAMPLE_RATE_HZ);
  plumb_tuning_spec spec;
  plumb_tuning_spec_default(&spec);
  plumb_status status = plumb_tuning_build(&spec, &settings.tuning);
  plumb *core = status == PLUMB_OK ? plumb_new(&settings, &status) : NULL;
  if (!core) {
    fprintf(stderr, "plumb_new: %s\n", plumb_strerror(status));
    return -1;
  }
#if defined(__SSE__)
  unsigned int saved = _mm_getcsr();
  _mm_setcsr(saved | _MM_FLUSH_ZERO_ON | _MM_DENORMALS_ZERO_ON);
#endif
  plumb_process(core, suite.take, suite.take_frames);
#if defined(__SSE__)
  _mm_setcsr(saved);
#endif
  plumb_note note;
  while (plumb_pop_note(core, &note)) {
    if (suite.core_count < MAX_NOTES) {
      suite.core_notes[suite.core_count] = note;
    }
    suite.core_count++;
  }
  plumb_free(core);
  return 0;
}

/* ================================================== the checks */

/* Every field present where the core's value applies, bit for bit equal,
   absent where it does not. Returns the mismatches (and says which). */
static unsigned compare_note(const received_note *got, const plumb_note *want,
                             size_t which) {
  unsigned mismatches = 0;
  for (size_t i = 0; i < FIELD_COUNT; ++i) {
    const note_field *field = &fields[i];
    bool applies = core_applies(want, field);
    bool equal = false;
    if (applies && got->present[i] && field->is_int) {
      equal = got->ints[i] == core_int(want, field);
    } else if (applies && got->present[i]) {
      double value = core_double(want, field);
      equal = memcmp(&got->doubles[i], &value, sizeof value) == 0;
    } else {
      equal = applies == got->present[i];
    }
    if (!equal) {
      fprintf(stderr, "note %zu: %s %s\n", which, field->name,
              applies ? (got->present[i] ? "differs" : "missing")
                      : "present but does not apply");
      ++mismatches;
    }
  }
  return mismatches;
}

/* One property is 24 bytes (key, context, atom header, a padded 8-byte
   body); the object body adds its id and type, 8 bytes. */
static void assert_well_formed(const received_note *note) {
  assert_int_equal(note->wrong_properties, 0);
  assert_int_equal(note->object_bytes, 8 + 24 * note->properties);
  assert_int_equal(note->frame, (int64_t)note->block_frames - 1);
}

static size_t field_index(const char *name) {
  for (size_t i = 0; i < FIELD_COUNT; ++i) {
    if (strcmp(fields[i].name, name) == 0) {
      return i;
    }
  }
  fail_msg("no field %s", name);
  return 0;
}

static void test_core_finds_the_take(void **state) {
  (void)state;
  assert_int_equal(suite.core_count, TAKE_NOTES);
  for (size_t i = 0; i < suite.core_count; ++i) {
    assert_int_equal(suite.core_notes[i].verdict, i == SHARP_NOTE
                                                      ? PLUMB_VERDICT_SHARP
                                                      : PLUMB_VERDICT_IN_TUNE);
  }
}

static void test_one_object_per_note(void **state) {
  size_t block_frames = *(const size_t *)*state;
  take_result result;
  assert_true(drive_take(block_frames, NOTIFY_SPACE_BYTES, &result));
  assert_int_equal(result.runs_overflowing, 0);
  assert_int_equal(result.other_events, 0);
  assert_int_equal(result.count, suite.core_count);
  assert_int_equal(result.count, TAKE_NOTES);
  size_t index = field_index("index"), verdict = field_index("verdict");
  size_t vibrato = field_index("vibrato_hz");
  unsigned mismatches = 0;
  for (size_t i = 0; i < result.count; ++i) {
    const received_note *note = &result.notes[i];
    assert_well_formed(note);
    assert_true(note->present[index]);
    assert_int_equal(note->ints[index], (int32_t)i);
    assert_true(note->present[verdict]);
    assert_int_equal(note->ints[verdict], i == SHARP_NOTE ? 1 : 0);
    /* no vibrato in the take: the core says NaN, the object says nothing */
    assert_true(isnan(suite.core_notes[i].vibrato_hz));
    assert_false(note->present[vibrato]);
    mismatches += compare_note(note, &suite.core_notes[i], i);
  }
  assert_int_equal(mismatches, 0);
}

/* docs/ports.md: the plugin writes at most the Chunk's size in all,
   sequence header (16 bytes) included. Room for the header and the
   largest note event exactly: every note arrives. 8 bytes less: the
   largest do not arrive at all, smaller ones still do. 256 bytes: no
   note arrives, not even in part, and the sequence stays valid and
   within its buffer. */
static size_t smaller_than(const take_result *result, uint32_t bytes) {
  size_t count = 0;
  for (size_t i = 0; i < result->count; ++i) {
    count += result->notes[i].event_bytes < bytes;
  }
  return count;
}

static void test_small_notify_drops_whole_objects(void **state) {
  (void)state;
  take_result full;
  assert_true(drive_take(64, NOTIFY_SPACE_BYTES, &full));
  assert_int_equal(full.count, TAKE_NOTES);
  uint32_t largest = 0;
  for (size_t i = 0; i < full.count; ++i) {
    largest = full.notes[i].event_bytes > largest ? full.notes[i].event_bytes
                                                  : largest;
  }
  assert_true(largest > SMALL_NOTIFY_BYTES);

  take_result exact;
  uint32_t exact_bytes = (uint32_t)sizeof(LV2_Atom_Sequence) + largest;
  assert_true(drive_take(64, exact_bytes, &exact));
  assert_int_equal(exact.runs_overflowing, 0);
  assert_int_equal(exact.count, TAKE_NOTES);
  for (size_t i = 0; i < exact.count; ++i) {
    assert_well_formed(&exact.notes[i]);
    assert_int_equal(compare_note(&exact.notes[i], &suite.core_notes[i], i), 0);
  }

  take_result short_by_8;
  assert_true(drive_take(64, exact_bytes - 8, &short_by_8));
  assert_int_equal(short_by_8.runs_overflowing, 0);
  assert_int_equal(short_by_8.count, smaller_than(&full, largest));
  for (size_t i = 0; i < short_by_8.count; ++i) {
    assert_well_formed(&short_by_8.notes[i]);
    assert_true(short_by_8.notes[i].event_bytes < largest);
  }

  take_result small;
  assert_true(drive_take(64, SMALL_NOTIFY_BYTES, &small));
  assert_int_equal(small.runs_overflowing, 0);
  assert_int_equal(small.count, 0);
  assert_int_equal(small.other_events, 0);
}

/* ================================================== setup */

/* build/tests/test_notify -> build/plumb.lv2/ */
static int find_bundle(char *bundle, size_t size) {
  char executable[PATH_MAX];
  ssize_t length =
      readlink("/proc/self/exe", executable, sizeof executable - 1);
  if (length <= 0) {
    return -1;
  }
  executable[length] = '\0';
  char *slash = strrchr(executable, '/');
  if (!slash) {
    return -1;
  }
  *slash = '\0';
  int written = snprintf(bundle, size, "%s/../plumb.lv2/", executable);
  return written > 0 && (size_t)written < size ? 0 : -1;
}

static int load_plugin(void) {
  char binary[PATH_MAX + 16];
  if (find_bundle(suite.bundle, sizeof suite.bundle) != 0) {
    fprintf(stderr, "cannot find the bundle beside /proc/self/exe\n");
    return -1;
  }
  snprintf(binary, sizeof binary, "%splumb.so", suite.bundle);
  suite.library = dlopen(binary, RTLD_NOW | RTLD_LOCAL);
  if (!suite.library) {
    fprintf(stderr, "cannot load %s: %s (run make all)\n", binary, dlerror());
    return -1;
  }
  LV2_Descriptor_Function get =
      (LV2_Descriptor_Function)dlsym(suite.library, "lv2_descriptor");
  for (uint32_t i = 0; get && get(i) && !suite.descriptor; ++i) {
    if (strcmp(get(i)->URI, PLUGIN_URI) == 0) {
      suite.descriptor = get(i);
    }
  }
  return suite.descriptor ? 0 : -1;
}

static void map_uris(void) {
  uris.atom_Chunk = map_plain(LV2_ATOM__Chunk);
  uris.atom_Sequence = map_plain(LV2_ATOM__Sequence);
  uris.atom_Object = map_plain(LV2_ATOM__Object);
  uris.atom_Int = map_plain(LV2_ATOM__Int);
  uris.atom_Double = map_plain(LV2_ATOM__Double);
  uris.atom_Float = map_plain(LV2_ATOM__Float);
  uris.plumb_Note = map_plain(NOTE_CLASS_URI);
  uris.param_sampleRate = map_plain(LV2_PARAMETERS__sampleRate);
  uris.bufsz_min = map_plain(LV2_BUF_SIZE__minBlockLength);
  uris.bufsz_max = map_plain(LV2_BUF_SIZE__maxBlockLength);
  uris.bufsz_nominal = map_plain(LV2_BUF_SIZE__nominalBlockLength);
  for (size_t i = 0; i < FIELD_COUNT; ++i) {
    char uri[160];
    snprintf(uri, sizeof uri, "%s%s", NOTE_KEY_PREFIX, fields[i].name);
    fields[i].key = map_plain(uri);
  }
}

static int setup_suite(void **state) {
  (void)state;
  map_uris();
  suite.take = render_take(&suite.take_frames);
  if (!suite.take) {
    fprintf(stderr, "cannot render the take\n");
    return -1;
  }
  if (run_core_directly() != 0) {
    return -1;
  }
  return load_plugin();
}

static int teardown_suite(void **state) {
  (void)state;
  free(suite.take);
  if (suite.library) {
    dlclose(suite.library);
  }
  return 0;
}

static size_t block_64 = 64;
static size_t block_4096 = 4096;

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_core_finds_the_take),
      {"one note object per note at 64-frame blocks", test_one_object_per_note,
       NULL, NULL, &block_64},
      {"one note object per note at 4096-frame blocks",
       test_one_object_per_note, NULL, NULL, &block_4096},
      cmocka_unit_test(test_small_notify_drops_whole_objects),
  };
  return cmocka_run_group_tests(tests, setup_suite, teardown_suite);
}
