/*
  The notify port's note objects (docs/ports.md, "Note objects").

  This executable hosts build/plumb.lv2/plumb.so as an LV2 host would
  (tests/plugin/plugin_host.c: urid:map and unmap, log:log, options),
  runs a synthetic take of six notes, one of them 30 cents sharp, and
  reads every urn:plumb:Note object from notify after each run(). The truth is the analysis core
  run directly on the same samples (plumb_new / plumb_process, with the
  same denormal mode as run()): one object a note, in order, every
  property bit for bit the core's value, and absent exactly where the
  core's value does not apply. A time:Position at the start gives the
  notes a bar and beat (the core is given the same mark). A notify
  buffer too small for an object must get none of it, and the sequence
  must stay within its buffer.

  A real take leaves some fields empty (vibrato on a steady note, B on
  a harmonic one), so the forging is also checked on its own, on
  synthetic notes with every field known, through the note object format
  (plugin/formats/note_object.c) that the plugin uses.
*/
#include "plugin_host.h"
#include "take_host.h"

#include "note_object.h"
#include "plumb.h"

#include <math.h>
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
#define NOTIFY_BUFFER_BYTES 16384 /* what this host offers on notify */
#define NOTIFY_SPACE_BYTES (NOTIFY_BUFFER_BYTES - 8) /* after the header */
#define SMALL_NOTIFY_BYTES 256
#define NOTE_CLASS_URI "urn:plumb:Note"
#define NOTE_KEY_PREFIX "urn:plumb:note#"
#define MAX_NOTES 32

/* ================================================== the note fields */

/* How a plumb_note field travels (docs/ports.md, "Note objects"). */
typedef enum {
  FIELD_INT,          /* atom:Int; absent at -1 (index, verdict: always) */
  FIELD_DOUBLE,       /* atom:Double; absent at NaN */
  FIELD_TRISTIMULUS,  /* atom:Vector of 3 atom:Double; absent if all NaN */
  FIELD_PARTIAL_CENTS /* atom:Vector of atom:Float up to the last found */
} field_kind;

/* Every member of plumb_note (core/include/plumb.h), as docs/ports.md lists it. */
typedef struct {
  const char *name;
  field_kind kind;
  size_t offset; /* in plumb_note */
  LV2_URID key;  /* mapped in setup */
} note_field;

#define INT_FIELD(name) {#name, FIELD_INT, offsetof(plumb_note, name), 0}
#define DOUBLE_FIELD(name) {#name, FIELD_DOUBLE, offsetof(plumb_note, name), 0}

static note_field fields[] = {
    INT_FIELD(index),
    DOUBLE_FIELD(start_s),
    DOUBLE_FIELD(end_s),
    DOUBLE_FIELD(timeline_s),
    DOUBLE_FIELD(bar),
    DOUBLE_FIELD(beat),
    INT_FIELD(midi),
    DOUBLE_FIELD(target_hz),
    DOUBLE_FIELD(f0_hz),
    DOUBLE_FIELD(cents),
    DOUBLE_FIELD(spread_cents),
    DOUBLE_FIELD(drift_cents_per_s),
    DOUBLE_FIELD(vibrato_hz),
    DOUBLE_FIELD(vibrato_cents),
    DOUBLE_FIELD(confidence),
    DOUBLE_FIELD(inharmonicity_b),
    INT_FIELD(partials),
    DOUBLE_FIELD(hnr_db),
    DOUBLE_FIELD(odd_even_db),
    DOUBLE_FIELD(centroid_hz),
    DOUBLE_FIELD(attack_ms),
    DOUBLE_FIELD(decay_ms),
    DOUBLE_FIELD(sustain_db),
    DOUBLE_FIELD(release_ms),
    DOUBLE_FIELD(decay_db_per_s),
    {"tristimulus", FIELD_TRISTIMULUS, offsetof(plumb_note, tristimulus), 0},
    DOUBLE_FIELD(peak_dbfs),
    INT_FIELD(verdict),
    {"partial_cents", FIELD_PARTIAL_CENTS, offsetof(plumb_note, partial_cents),
     0},
};
#define FIELD_COUNT (sizeof fields / sizeof fields[0])

static int32_t core_int(const plumb_note *note, const note_field *field) {
  if (strcmp(field->name, "index") == 0) {
    return (int32_t)note->index;
  }
  if (strcmp(field->name, "verdict") == 0) {
    return (int32_t)note->verdict;
  }
  int value;
  memcpy(&value, (const char *)note + field->offset, sizeof value);
  return value;
}

static double core_double(const plumb_note *note, const note_field *field) {
  double value;
  memcpy(&value, (const char *)note + field->offset, sizeof value);
  return value;
}

/* docs/ports.md: partial_cents ends at the last partial found. */
static uint32_t core_partials_length(const plumb_note *note) {
  uint32_t length = PLUMB_MAX_PARTIALS;
  while (length > 0 && isnan(note->partial_cents[length - 1])) {
    --length;
  }
  return length;
}

static bool core_applies(const plumb_note *note, const note_field *field) {
  switch (field->kind) {
  case FIELD_INT:
    return core_int(note, field) != -1 || strcmp(field->name, "verdict") == 0;
  case FIELD_DOUBLE:
    return !isnan(core_double(note, field));
  case FIELD_TRISTIMULUS:
    return !isnan(note->tristimulus[0]) || !isnan(note->tristimulus[1]) ||
           !isnan(note->tristimulus[2]);
  default:
    return core_partials_length(note) > 0;
  }
}

/* ================================================== a received object */

typedef struct {
  bool present[FIELD_COUNT];
  int32_t ints[FIELD_COUNT];
  double doubles[FIELD_COUNT];
  double tristimulus[3];
  float partial_cents[PLUMB_MAX_PARTIALS];
  uint32_t partials_length;
  unsigned properties;
  unsigned wrong_properties; /* unknown key, wrong type or repeated */
  uint32_t object_bytes;     /* the object atom's body size */
  uint32_t event_bytes;      /* the whole event: time, header, body */
  int64_t frame;
  size_t block_frames; /* of the run() it came in */
  /* The last-note ports after that run(), when this note was the run's
     last: last_hnr_db, last_odd_even_db, last_attack_ms. */
  bool last_of_run;
  float shown[3];
} received_note;

static struct {
  LV2_URID atom_Sequence, atom_Object, atom_Int, atom_Double, atom_Float,
      atom_Vector, plumb_Note;
  host_time_uris time;
} uris;

static int field_of_key(LV2_URID key) {
  for (size_t i = 0; i < FIELD_COUNT; ++i) {
    if (fields[i].key == key) {
      return (int)i;
    }
  }
  return -1;
}

/* The elements of an atom:Vector of child_type, or NULL (and 0). */
static const void *vector_elements(const LV2_Atom *value, LV2_URID child_type,
                                   uint32_t child_size, uint32_t *count) {
  const LV2_Atom_Vector *vector = (const LV2_Atom_Vector *)value;
  *count = 0;
  if (value->type != uris.atom_Vector ||
      value->size < sizeof(LV2_Atom_Vector_Body) ||
      vector->body.child_type != child_type ||
      vector->body.child_size != child_size) {
    return NULL;
  }
  *count = (value->size - (uint32_t)sizeof(LV2_Atom_Vector_Body)) / child_size;
  return vector + 1;
}

static bool read_value(received_note *note, size_t i, const LV2_Atom *value) {
  uint32_t count = 0;
  const void *elements = NULL;
  switch (fields[i].kind) {
  case FIELD_INT:
    if (value->type != uris.atom_Int) {
      return false;
    }
    note->ints[i] = ((const LV2_Atom_Int *)value)->body;
    return true;
  case FIELD_DOUBLE:
    if (value->type != uris.atom_Double) {
      return false;
    }
    note->doubles[i] = ((const LV2_Atom_Double *)value)->body;
    return true;
  case FIELD_TRISTIMULUS:
    elements = vector_elements(value, uris.atom_Double, sizeof(double), &count);
    if (!elements || count != 3) {
      return false;
    }
    memcpy(note->tristimulus, elements, sizeof note->tristimulus);
    return true;
  default:
    elements = vector_elements(value, uris.atom_Float, sizeof(float), &count);
    if (!elements || count == 0 || count > PLUMB_MAX_PARTIALS) {
      return false;
    }
    memcpy(note->partial_cents, elements, count * sizeof(float));
    note->partials_length = count;
    return true;
  }
}

static void read_property(received_note *note, const LV2_Atom_Property_Body *p) {
  int i = field_of_key(p->key);
  ++note->properties;
  if (i < 0 || note->present[i] || !read_value(note, (size_t)i, &p->value)) {
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

/* What one take through the plugin gave. */
typedef struct {
  received_note notes[MAX_NOTES];
  size_t count;            /* note objects (beyond MAX_NOTES not kept) */
  size_t other_events;     /* events that are not note objects */
  size_t runs_overflowing; /* sequence bigger than its buffer, or bad type */
  size_t runs;
  size_t runs_showing_nan;  /* a last-note port held NaN */
  float shown_at_first[3];  /* the last-note ports after the first run() */
} take_result;

/* The ports docs/ports.md adds for the last note's timbre, in order. */
static const plumb_port last_note_ports[3] = {PORT_LAST_HNR,
                                              PORT_LAST_ODD_EVEN,
                                              PORT_LAST_ATTACK};

static struct {
  host_plugin plugin;
  LV2_URID_Map map;
  float *take;
  size_t take_frames;
  plumb_note core_notes[MAX_NOTES];
  size_t core_count;
} suite;

/* Read notify after one run() that was offered `space` bytes after the
   atom header (the Chunk's size). */
static void read_last_note_ports(const host_instance *host, take_result *result,
                                 size_t first_of_run) {
  float shown[3];
  bool nan = false;
  for (int i = 0; i < 3; ++i) {
    shown[i] = host->controls[last_note_ports[i]];
    nan = nan || isnan(shown[i]);
  }
  result->runs_showing_nan += nan;
  if (result->runs++ == 0) {
    memcpy(result->shown_at_first, shown, sizeof shown);
  }
  size_t last = result->count;
  if (last > first_of_run && last <= MAX_NOTES) {
    result->notes[last - 1].last_of_run = true;
    memcpy(result->notes[last - 1].shown, shown, sizeof shown);
  }
}

static void collect(const host_instance *host, uint32_t space,
                    size_t block_frames, take_result *result) {
  size_t first_of_run = result->count;
  const LV2_Atom_Sequence *sequence = &host->notify.sequence;
  if (sequence->atom.type != uris.atom_Sequence ||
      sequence->atom.size > space) {
    result->runs_overflowing++;
    read_last_note_ports(host, result, first_of_run);
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
  read_last_note_ports(host, result, first_of_run);
}

/* The host's transport at the start of the take: bar and beat given, so
   that the notes carry them (time.lv2: frame and bar are Longs, the
   others Floats). */
#define START_FRAME 96000
#define START_BAR 4
#define START_BAR_BEAT 0.5f
#define START_BEATS_PER_BAR 4.0f
#define START_BPM 100.0f

static void write_start_position(host_instance *host) {
  LV2_Atom_Forge *forge = &host->forge;
  LV2_Atom_Forge_Frame object;
  lv2_atom_forge_frame_time(forge, 0);
  lv2_atom_forge_object(forge, &object, 0, uris.time.Position);
  lv2_atom_forge_key(forge, uris.time.frame);
  lv2_atom_forge_long(forge, START_FRAME);
  lv2_atom_forge_key(forge, uris.time.speed);
  lv2_atom_forge_float(forge, 1.0f);
  lv2_atom_forge_key(forge, uris.time.bar);
  lv2_atom_forge_long(forge, START_BAR);
  lv2_atom_forge_key(forge, uris.time.barBeat);
  lv2_atom_forge_float(forge, START_BAR_BEAT);
  lv2_atom_forge_key(forge, uris.time.beatsPerBar);
  lv2_atom_forge_float(forge, START_BEATS_PER_BAR);
  lv2_atom_forge_key(forge, uris.time.beatsPerMinute);
  lv2_atom_forge_float(forge, START_BPM);
  lv2_atom_forge_pop(forge, &object);
}

static void run_block(host_instance *host, size_t begin, size_t frames,
                      uint32_t space, take_result *result) {
  host_control_begin(host);
  if (begin == 0) {
    write_start_position(host);
  }
  host_control_end(host);
  /* As lilv does: an empty Chunk whose size is the space there is. */
  memset(host->notify.bytes, 0xa5, sizeof host->notify.bytes);
  host->notify_space_bytes = space;
  host_run(host, suite.take + begin, (uint32_t)frames);
  collect(host, space, frames, result);
}

/* The whole take through one instance at one block size, with `space`
   bytes offered on notify after its atom header. */
static bool drive_take(size_t block_frames, uint32_t space,
                       take_result *result) {
  memset(result, 0, sizeof *result);
  host_features features;
  host_features_build(&features, SAMPLE_RATE_HZ, (uint32_t)block_frames);
  host_instance *host = host_instance_open(&suite.plugin, &features,
                                           SAMPLE_RATE_HZ, false, HOST_NO_WORKER);
  if (!host) {
    return false;
  }
  host->descriptor->activate(host->instance);
  for (size_t begin = 0; begin < suite.take_frames; begin += block_frames) {
    size_t left = suite.take_frames - begin;
    run_block(host, begin, left < block_frames ? left : block_frames, space,
              result);
  }
  host->descriptor->deactivate(host->instance);
  host_instance_close(host);
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
  return host_take_render(take_notes, TAKE_NOTES, TAKE_S, SAMPLE_RATE_HZ, 11, n);
}

/* The core on the same samples, in run()'s denormal mode (FTZ and DAZ),
   with the same transport mark, so its notes are the plugin's to the
   bit. No plumb_finish(): the plugin sends only what completes within
   run(). */
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
  const plumb_transport start = {START_FRAME / SAMPLE_RATE_HZ,
                                 1.0,
                                 true,
                                 START_BAR,
                                 START_BAR_BEAT,
                                 START_BEATS_PER_BAR,
                                 START_BPM};
  plumb_mark_transport(core, &start);
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

/* A present field equals the core's value, bit for bit. */
static bool equal_to_core(const received_note *got, const plumb_note *want,
                          size_t i) {
  const note_field *field = &fields[i];
  double value = 0.0;
  switch (field->kind) {
  case FIELD_INT:
    return got->ints[i] == core_int(want, field);
  case FIELD_DOUBLE:
    value = core_double(want, field);
    return memcmp(&got->doubles[i], &value, sizeof value) == 0;
  case FIELD_TRISTIMULUS:
    return memcmp(got->tristimulus, want->tristimulus,
                  sizeof want->tristimulus) == 0;
  default:
    return got->partials_length == core_partials_length(want) &&
           memcmp(got->partial_cents, want->partial_cents,
                  got->partials_length * sizeof(float)) == 0;
  }
}

/* Every field present where the core's value applies, equal to it, and
   absent where it does not. Returns the mismatches (and says which). */
static unsigned compare_note(const received_note *got, const plumb_note *want,
                             size_t which) {
  unsigned mismatches = 0;
  for (size_t i = 0; i < FIELD_COUNT; ++i) {
    bool applies = core_applies(want, &fields[i]);
    bool equal = applies && got->present[i] ? equal_to_core(got, want, i)
                                            : applies == got->present[i];
    if (!equal) {
      fprintf(stderr, "note %zu: %s %s\n", which, fields[i].name,
              applies ? (got->present[i] ? "differs" : "missing")
                      : "present but does not apply");
      ++mismatches;
    }
  }
  return mismatches;
}

/* docs/ports.md, "Size": a number property is 24 bytes (key, context,
   atom header, a padded 8-byte body), tristimulus 48 (the vector's
   header adds 8), partial_cents 24 + its floats padded to 8; the object
   body adds its id and type, 8 bytes. */
static uint32_t documented_object_bytes(const received_note *note) {
  uint32_t bytes = 8;
  for (size_t i = 0; i < FIELD_COUNT; ++i) {
    if (!note->present[i]) {
      continue;
    }
    bytes += fields[i].kind == FIELD_TRISTIMULUS ? 48
             : fields[i].kind == FIELD_PARTIAL_CENTS
                 ? 24 + (4 * note->partials_length + 7) / 8 * 8
                 : 24;
  }
  return bytes;
}

static void assert_well_formed(const received_note *note) {
  assert_int_equal(note->wrong_properties, 0);
  assert_int_equal(note->object_bytes, documented_object_bytes(note));
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
    /* the start position gave a bar and beat (docs/ports.md) */
    assert_true(note->present[field_index("bar")]);
    assert_true(note->present[field_index("beat")]);
    /* no vibrato in the take: the core says NaN, the object says nothing */
    assert_true(isnan(suite.core_notes[i].vibrato_hz));
    assert_false(note->present[vibrato]);
    mismatches += compare_note(note, &suite.core_notes[i], i);
  }
  assert_int_equal(mismatches, 0);
}

/* docs/ports.md, "Control outputs": last_hnr_db, last_odd_even_db and
   last_attack_ms show the last completed note's hnr_db, odd_even_db and
   attack_ms, held within the ranges ttl/plumb.ttl declares (-20 … 80 dB,
   -40 … 40 dB, 0 … 2000 ms), 0 before the first note and where the
   reading is NaN, and never NaN. The truth is the core's own notes. */
static float shown_reading(double value, double low, double high) {
  return isnan(value) ? 0.0f
                      : (float)(value < low ? low : value > high ? high : value);
}

static void test_last_note_ports(void **state) {
  (void)state;
  take_result result;
  assert_true(drive_take(64, NOTIFY_SPACE_BYTES, &result));
  assert_int_equal(result.count, TAKE_NOTES);
  assert_int_equal(result.runs_showing_nan, 0);
  for (int i = 0; i < 3; ++i) {
    assert_true(result.shown_at_first[i] == 0.0f);
  }
  size_t checked = 0;
  for (size_t i = 0; i < result.count; ++i) {
    const received_note *note = &result.notes[i];
    const plumb_note *truth = &suite.core_notes[i];
    if (!note->last_of_run) {
      continue;
    }
    float want[3] = {shown_reading(truth->hnr_db, -20.0, 80.0),
                     shown_reading(truth->odd_even_db, -40.0, 40.0),
                     shown_reading(truth->attack_ms, 0.0, 2000.0)};
    for (int k = 0; k < 3; ++k) {
      if (note->shown[k] != want[k]) {
        fail_msg("note %zu: port %d shows %g, expected %g", i,
                 (int)last_note_ports[k], (double)note->shown[k],
                 (double)want[k]);
      }
    }
    ++checked;
  }
  assert_int_equal(checked, TAKE_NOTES); /* one note a block at 64 frames */
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

/* ================================================== the forging alone */

/* A note whose every field is known: distinct values, a NaN inside
   partial_cents (partial 6 not found) and partials found up to
   `last_partial` (1 .. 40). */
static plumb_note known_note(uint32_t last_partial) {
  plumb_note note;
  memset(&note, 0, sizeof note);
  double value = 1.0;
  for (size_t i = 0; i < FIELD_COUNT; ++i) {
    if (fields[i].kind == FIELD_DOUBLE) {
      value += 0.375;
      memcpy((char *)&note + fields[i].offset, &value, sizeof value);
    }
  }
  note.index = 7;
  note.midi = 69;
  note.partials = 12;
  note.verdict = PLUMB_VERDICT_FLAT;
  note.tristimulus[0] = 0.5;
  note.tristimulus[1] = 0.3125;
  note.tristimulus[2] = 0.1875;
  for (uint32_t k = 0; k < PLUMB_MAX_PARTIALS; ++k) {
    note.partial_cents[k] = k < last_partial ? 0.25f * (float)k - 2.0f : NAN;
  }
  note.partial_cents[5] = NAN;
  return note;
}

/* Forge one note at frame 3 into a sequence with `space` bytes after
   the sequence's atom header, as the plugin does into notify. Returns
   whether it went in; the received object, if any, goes to *got. */
static bool forge_alone(const plumb_note *note, uint32_t space,
                        received_note *got, uint32_t *sequence_bytes) {
  static union {
    LV2_Atom_Sequence sequence;
    uint64_t aligned; /* "Atoms MUST be 64-bit aligned" (atom.meta.ttl) */
    uint8_t bytes[4096];
  } buffer;
  plumb_uris plugin_uris;
  plumb_uris_map(&plugin_uris, &suite.map);
  LV2_Atom_Forge forge;
  LV2_Atom_Forge_Frame frame;
  lv2_atom_forge_init(&forge, &suite.map);
  memset(buffer.bytes, 0xa5, sizeof buffer.bytes);
  lv2_atom_forge_set_buffer(&forge, buffer.bytes, space);
  lv2_atom_forge_sequence_head(&forge, &frame, 0);
  bool sent = note_object_forge(&plugin_uris, note, &forge, 3);
  lv2_atom_forge_pop(&forge, &frame);
  *sequence_bytes = buffer.sequence.atom.size;
  memset(got, 0, sizeof *got);
  size_t events = 0;
  LV2_ATOM_SEQUENCE_FOREACH(&buffer.sequence, event) {
    read_note(got, event);
    got->block_frames = 4; /* frame 3 is a block's last */
    ++events;
  }
  assert_int_equal(events, sent ? 1 : 0);
  return sent;
}

static size_t present_count(const received_note *note) {
  size_t count = 0;
  for (size_t i = 0; i < FIELD_COUNT; ++i) {
    count += note->present[i];
  }
  return count;
}

/* Every field of plumb_note arrives, bit for bit, the vectors as
   documented (docs/ports.md, "Note objects"). */
static void test_every_field_reaches_the_object(void **state) {
  (void)state;
  received_note got;
  uint32_t sequence_bytes = 0;
  plumb_note all = known_note(PLUMB_MAX_PARTIALS);
  assert_true(forge_alone(&all, 4096, &got, &sequence_bytes));
  assert_well_formed(&got);
  assert_int_equal(present_count(&got), FIELD_COUNT);
  assert_int_equal(compare_note(&got, &all, 0), 0);
  /* docs/ports.md, "Size": the largest note is an event of 904 bytes */
  assert_int_equal(got.event_bytes, 904);
  assert_int_equal(got.partials_length, PLUMB_MAX_PARTIALS);

  plumb_note some = known_note(31);
  assert_true(forge_alone(&some, 4096, &got, &sequence_bytes));
  assert_well_formed(&got);
  assert_int_equal(compare_note(&got, &some, 1), 0);
  assert_int_equal(got.partials_length, 31); /* up to the last found */
  assert_true(isnan(got.partial_cents[5]));  /* NaN inside, not dropped */
  assert_true(got.partial_cents[30] == 0.25f * 30.0f - 2.0f);
}

/* docs/ports.md: a value that does not apply is an absent property; only
   index and verdict are always there; a tristimulus with one value
   unknown carries NaN for it. */
static void test_absent_fields_stay_absent(void **state) {
  (void)state;
  plumb_note none = known_note(0);
  for (size_t i = 0; i < FIELD_COUNT; ++i) {
    if (fields[i].kind == FIELD_DOUBLE) {
      double nan = NAN;
      memcpy((char *)&none + fields[i].offset, &nan, sizeof nan);
    }
  }
  none.midi = none.partials = -1;
  none.tristimulus[0] = none.tristimulus[1] = none.tristimulus[2] = NAN;
  received_note got;
  uint32_t sequence_bytes = 0;
  assert_true(forge_alone(&none, 4096, &got, &sequence_bytes));
  assert_well_formed(&got);
  assert_int_equal(present_count(&got), 2);
  assert_true(got.present[field_index("index")]);
  assert_true(got.present[field_index("verdict")]);
  assert_int_equal(compare_note(&got, &none, 0), 0);

  none.tristimulus[1] = 0.25;
  assert_true(forge_alone(&none, 4096, &got, &sequence_bytes));
  assert_true(got.present[field_index("tristimulus")]);
  assert_true(isnan(got.tristimulus[0]) && isnan(got.tristimulus[2]));
  assert_true(got.tristimulus[1] == 0.25);
}

/* docs/ports.md: an object that does not fit is dropped whole, the
   sequence left as it was. 8 bytes short is where only the elements of
   partial_cents would not fit: the forge's own vector call would report
   success there and leave half an object. */
static void test_whole_object_or_none(void **state) {
  (void)state;
  plumb_note all = known_note(PLUMB_MAX_PARTIALS);
  received_note got;
  uint32_t sequence_bytes = 0;
  const uint32_t header = sizeof(LV2_Atom_Sequence);
  assert_true(forge_alone(&all, header + 904, &got, &sequence_bytes));
  assert_int_equal(sequence_bytes, sizeof(LV2_Atom_Sequence_Body) + 904);
  assert_int_equal(compare_note(&got, &all, 0), 0);
  for (uint32_t short_by = 8; short_by <= 200; short_by += 8) {
    assert_false(forge_alone(&all, header + 904 - short_by, &got,
                             &sequence_bytes));
    assert_int_equal(sequence_bytes, sizeof(LV2_Atom_Sequence_Body));
  }
}

/* ================================================== setup */

static void map_uris(void) {
  uris.atom_Sequence = host_map(LV2_ATOM__Sequence);
  uris.atom_Object = host_map(LV2_ATOM__Object);
  uris.atom_Int = host_map(LV2_ATOM__Int);
  uris.atom_Double = host_map(LV2_ATOM__Double);
  uris.atom_Float = host_map(LV2_ATOM__Float);
  uris.atom_Vector = host_map(LV2_ATOM__Vector);
  host_time_uris_map(&uris.time);
  uris.plumb_Note = host_map(NOTE_CLASS_URI);
  for (size_t i = 0; i < FIELD_COUNT; ++i) {
    char uri[160];
    snprintf(uri, sizeof uri, "%s%s", NOTE_KEY_PREFIX, fields[i].name);
    fields[i].key = host_map(uri);
  }
}

static int setup_suite(void **state) {
  (void)state;
  suite.map = (LV2_URID_Map){NULL, urid_table_map};
  map_uris();
  suite.take = render_take(&suite.take_frames);
  if (!suite.take) {
    fprintf(stderr, "cannot render the take\n");
    return -1;
  }
  if (run_core_directly() != 0) {
    return -1;
  }
  return host_plugin_load(&suite.plugin);
}

static int teardown_suite(void **state) {
  (void)state;
  free(suite.take);
  host_plugin_unload(&suite.plugin);
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
      cmocka_unit_test(test_last_note_ports),
      cmocka_unit_test(test_every_field_reaches_the_object),
      cmocka_unit_test(test_absent_fields_stay_absent),
      cmocka_unit_test(test_whole_object_or_none),
  };
  return cmocka_run_group_tests(tests, setup_suite, teardown_suite);
}
