/*
  The host's transport at each note's onset (docs/ports.md,
  "time:Position"; core/include/plumb.h, plumb_mark_transport).

  This executable hosts build/plumb.lv2/plumb.so (tests/plugin/plugin_host.c),
  plays a take of nine notes and sends time:Position objects mid-block:
  a start at 10 s with bar and beat, a locate to 100 s while a note
  sounds, a loop back to 99 s while a note sounds, a stop (speed 0, no
  frame: the position is carried), a roll, and double speed. Each note
  arrives on notify as a urn:plumb:Note object.

  The truth is the LV2 time specification (time.lv2/time.ttl): a
  time:Position gives the transport at the frame of its event; between
  events the transport moves on by `speed` frames per frame of audio; a
  property the host leaves out keeps its value. So the position at a
  note's onset, o frames after the latest event at or before it, is
  frame / rate + speed * o / rate, and its musical time is
  beats = bar * beatsPerBar + barBeat + speed * (o / rate) * bpm / 60,
  shown as bar floor(beats / beatsPerBar) + 1 and beat
  beats - (bar - 1) * beatsPerBar + 1 (both counted from 1, core/include/plumb.h).
  The test walks its own list of events to get these, from each note's
  start_s as the note reports it; the notes themselves must sit within
  50 ms of the synthetic take's onsets (the note-matching tolerance of
  mir_eval, Raffel et al. 2014, and MIREX). Each case is also checked
  against numbers worked out by hand.

  Also: every block size gives the same numbers to the bit; a host that
  sends a time:Position every block changes nothing; without any
  time:Position, timeline_s is the time since activation (docs/ports.md),
  also in a second take; and the session log's timeline_s column is the
  note's (docs/log-format.md).
*/
#include "folder_host.h"
#include "plugin_host.h"
#include "take_host.h"

#include "plumb.h"


#include <errno.h>
#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include <setjmp.h>
#include <cmocka.h>

#define SAMPLE_RATE_HZ 48000.0
#define TAKE_S 6.2
#define MAX_NOTES 32
#define MAX_EVENTS 16
#define ONSET_TOLERANCE_S 0.050 /* mir_eval / MIREX onset matching */
/* Rounding of one double operation on values below 1e6: far below a
   frame (2e-5 s) and a beat; "exact arithmetic" up to that. */
#define TIME_TOLERANCE_S 1e-9
#define BEAT_TOLERANCE 1e-9
#define NOTE_KEY_PREFIX "urn:plumb:note#"
#define LABEL "timeline-take"

/* ================================================== the take */

static const sig_note take_notes[] = {
    /* start_s end_s midi detune vib_hz vib_cents glide_s level_db */
    {0.20, 0.60, 60, 0.0, 0.0, 0.0, 0.0, 0.0},
    {0.80, 1.20, 62, 0.0, 0.0, 0.0, 0.0, 0.0},
    {1.40, 1.80, 64, 0.0, 0.0, 0.0, 0.0, 0.0},
    {2.00, 2.40, 65, 0.0, 0.0, 0.0, 0.0, 0.0},
    {2.60, 3.00, 67, 0.0, 0.0, 0.0, 0.0, 0.0},
    {3.20, 3.60, 69, 0.0, 0.0, 0.0, 0.0, 0.0},
    {3.80, 4.20, 71, 0.0, 0.0, 0.0, 0.0, 0.0},
    {4.40, 4.80, 72, 0.0, 0.0, 0.0, 0.0, 0.0},
    {5.00, 5.40, 74, 0.0, 0.0, 0.0, 0.0, 0.0},
};
#define TAKE_NOTES (sizeof take_notes / sizeof take_notes[0])

static size_t seconds_to_frames(double seconds) {
  return (size_t)llround(seconds * SAMPLE_RATE_HZ);
}

static float *render_take(size_t *n) {
  return host_take_render(take_notes, TAKE_NOTES, TAKE_S, SAMPLE_RATE_HZ, 5, n);
}

/* ================================================== the events */

/* The number types hosts send (time.ttl has frame and bar as Long, the
   others as Float; hosts also send Int and Double). */
typedef enum { ABSENT, AS_INT, AS_LONG, AS_FLOAT, AS_DOUBLE } number_type;

typedef struct {
  number_type type;
  double value;
} number;

typedef struct {
  size_t at; /* frame of the take the event belongs to */
  number frame, speed, bar, bar_beat, beats_per_bar, beats_per_minute;
} position_event;

#define N(type, value) {type, value}
#define NONE {ABSENT, 0.0}

/* Take frames are odd so that events land mid-block at every block size
   but 1. */
#define AT_START (seconds_to_frames(0.05) + 3)
#define AT_LOCATE (seconds_to_frames(1.00) + 5) /* note 1 is sounding */
#define AT_LOOP (seconds_to_frames(2.20) + 7)   /* note 3 is sounding */
#define AT_STOP (seconds_to_frames(3.10) + 9)   /* between notes 4 and 5 */
#define AT_ROLL (seconds_to_frames(3.50) + 11)  /* note 5 (began stopped) */
#define AT_FAST (seconds_to_frames(4.30) + 13)  /* between notes 6 and 7 */

typedef struct {
  position_event events[MAX_EVENTS];
  size_t count;
} event_list;

/* The transport as the test's own model has it (see the top comment). */
typedef struct {
  size_t at;
  double frame, speed;
  bool has_beats;
  double bar, bar_beat, beats_per_bar, beats_per_minute;
} model;

static void model_start(model *m) {
  memset(m, 0, sizeof *m);
  m->speed = 1.0; /* no event yet: the time since activation */
}

/* Move the model on to take frame `at`: speed frames per frame. */
static void model_move(model *m, size_t at) {
  double frames = (double)at - (double)m->at;
  m->frame += m->speed * frames;
  if (m->has_beats) {
    m->bar_beat +=
        m->speed * (frames / SAMPLE_RATE_HZ) * m->beats_per_minute / 60.0;
  }
  m->at = at;
}

static void model_apply(model *m, const position_event *e) {
  model_move(m, e->at);
  if (e->frame.type != ABSENT) {
    m->frame = e->frame.value;
  }
  if (e->speed.type != ABSENT) {
    m->speed = e->speed.value;
  }
  if (e->beats_per_bar.type != ABSENT) {
    m->beats_per_bar = e->beats_per_bar.value;
  }
  if (e->beats_per_minute.type != ABSENT) {
    m->beats_per_minute = e->beats_per_minute.value;
  }
  if (e->bar.type != ABSENT && e->bar_beat.type != ABSENT) {
    m->has_beats = true;
    m->bar = e->bar.value;
    m->bar_beat = e->bar_beat.value;
  } else if (e->frame.type != ABSENT) {
    m->has_beats = false; /* docs/ports.md: a jump without musical time */
  }
}

/* The model just before take frame `at` is analysed (events at `at`
   included). */
static model model_at(const event_list *list, size_t at) {
  model m;
  model_start(&m);
  for (size_t i = 0; i < list->count && list->events[i].at <= at; ++i) {
    model_apply(&m, &list->events[i]);
  }
  return m;
}

typedef struct {
  double timeline_s;
  double bar, beat; /* NaN without musical time */
} expected_position;

/* The truth at an onset sample, with the formulas of the top comment. */
static expected_position expected_at(const event_list *list, size_t onset) {
  model m = model_at(list, onset);
  double seconds = ((double)onset - (double)m.at) / SAMPLE_RATE_HZ;
  expected_position e = {m.frame / SAMPLE_RATE_HZ + m.speed * seconds, NAN,
                         NAN};
  if (m.has_beats) {
    double beats = m.bar * m.beats_per_bar + m.bar_beat +
                   m.speed * seconds * m.beats_per_minute / 60.0;
    double whole_bars = floor(beats / m.beats_per_bar);
    e.bar = whole_bars + 1.0;
    e.beat = beats - whole_bars * m.beats_per_bar + 1.0;
  }
  return e;
}

static void add_event(event_list *list, position_event event) {
  if (list->count < MAX_EVENTS) {
    list->events[list->count++] = event;
  }
}

/* The scenario of the top comment. The stop sends only time:speed, so
   the roll's frame and bar are where the model says the stop left them;
   the fast part sends only time:speed too. */
static void plan_scenario(event_list *list) {
  memset(list, 0, sizeof *list);
  add_event(list, (position_event){AT_START, N(AS_LONG, 480000.0 + 7.0),
                                   N(AS_FLOAT, 1.0), N(AS_LONG, 2.0),
                                   N(AS_FLOAT, 1.5), N(AS_FLOAT, 4.0),
                                   N(AS_FLOAT, 120.0)});
  add_event(list, (position_event){AT_LOCATE, N(AS_INT, 4800000.0),
                                   N(AS_DOUBLE, 1.0), N(AS_INT, 40.0),
                                   N(AS_DOUBLE, 0.25), N(AS_DOUBLE, 3.0),
                                   N(AS_DOUBLE, 90.0)});
  add_event(list, (position_event){AT_LOOP, N(AS_LONG, 4752000.0),
                                   N(AS_FLOAT, 1.0), N(AS_LONG, 39.0),
                                   N(AS_FLOAT, 2.0), NONE, NONE});
  add_event(list, (position_event){AT_STOP, NONE, N(AS_FLOAT, 0.0), NONE,
                                   NONE, NONE, NONE});
  model stopped = model_at(list, AT_ROLL);
  add_event(list, (position_event){AT_ROLL, N(AS_LONG, stopped.frame),
                                   N(AS_FLOAT, 1.0), N(AS_LONG, stopped.bar),
                                   N(AS_DOUBLE, stopped.bar_beat), NONE,
                                   NONE});
  add_event(list, (position_event){AT_FAST, NONE, N(AS_DOUBLE, 2.0), NONE,
                                   NONE, NONE, NONE});
}

/* ================================================== forging */

static struct {
  host_time_uris time;
  LV2_URID atom_Object, atom_Int, atom_Double, take_label, plumb_Note, note_index, note_start_s, note_timeline_s,
      note_bar, note_beat;
} uris;

static void map_uris(void) {
  uris.atom_Object = host_map(LV2_ATOM__Object);
  uris.atom_Int = host_map(LV2_ATOM__Int);
  uris.atom_Double = host_map(LV2_ATOM__Double);
  host_time_uris_map(&uris.time);
  uris.take_label = host_map("urn:plumb:takeLabel");
  uris.plumb_Note = host_map("urn:plumb:Note");
  uris.note_index = host_map(NOTE_KEY_PREFIX "index");
  uris.note_start_s = host_map(NOTE_KEY_PREFIX "start_s");
  uris.note_timeline_s = host_map(NOTE_KEY_PREFIX "timeline_s");
  uris.note_bar = host_map(NOTE_KEY_PREFIX "bar");
  uris.note_beat = host_map(NOTE_KEY_PREFIX "beat");
}

static bool forge_number(LV2_Atom_Forge *forge, LV2_URID key, number n) {
  if (n.type == ABSENT) {
    return true;
  }
  if (!lv2_atom_forge_key(forge, key)) {
    return false;
  }
  switch (n.type) {
  case AS_INT:
    return lv2_atom_forge_int(forge, (int32_t)n.value) != 0;
  case AS_LONG:
    return lv2_atom_forge_long(forge, (int64_t)n.value) != 0;
  case AS_FLOAT:
    return lv2_atom_forge_float(forge, (float)n.value) != 0;
  default:
    return lv2_atom_forge_double(forge, n.value) != 0;
  }
}

static bool forge_position(LV2_Atom_Forge *forge, int64_t offset,
                           const position_event *e) {
  LV2_Atom_Forge_Frame object;
  bool fits =
      lv2_atom_forge_frame_time(forge, offset) &&
      lv2_atom_forge_object(forge, &object, 0, uris.time.Position) &&
      forge_number(forge, uris.time.frame, e->frame) &&
      forge_number(forge, uris.time.speed, e->speed) &&
      forge_number(forge, uris.time.bar, e->bar) &&
      forge_number(forge, uris.time.barBeat, e->bar_beat) &&
      forge_number(forge, uris.time.beatsPerBar, e->beats_per_bar) &&
      forge_number(forge, uris.time.beatsPerMinute, e->beats_per_minute);
  if (fits) {
    lv2_atom_forge_pop(forge, &object);
  }
  return fits;
}

static bool forge_label(host_instance *host) {
  LV2_Atom_Forge_Frame object;
  bool fits = host_patch_set_begin(host, 0, &object, uris.take_label) &&
              lv2_atom_forge_string(&host->forge, LABEL, sizeof LABEL - 1);
  if (fits) {
    lv2_atom_forge_pop(&host->forge, &object);
  }
  return fits;
}

/* ================================================== the notes received */

typedef struct {
  int32_t index;
  double start_s, timeline_s, bar, beat; /* NaN when absent */
} received_note;

typedef struct {
  received_note notes[MAX_NOTES];
  size_t count;
  size_t malformed; /* a note object without index, start or timeline */
} take_result;

static double read_double(const LV2_Atom *atom) {
  return atom && atom->type == uris.atom_Double
             ? ((const LV2_Atom_Double *)atom)->body
             : NAN;
}

static void collect(const host_instance *host, take_result *result) {
  LV2_ATOM_SEQUENCE_FOREACH(&host->notify.sequence, event) {
    const LV2_Atom_Object *object = (const LV2_Atom_Object *)&event->body;
    if (event->body.type != uris.atom_Object ||
        object->body.otype != uris.plumb_Note) {
      continue;
    }
    const LV2_Atom *index = NULL, *start = NULL, *timeline = NULL,
                   *bar = NULL, *beat = NULL;
    lv2_atom_object_get(object, uris.note_index, &index, uris.note_start_s,
                        &start, uris.note_timeline_s, &timeline,
                        uris.note_bar, &bar, uris.note_beat, &beat, 0);
    received_note note = {-1, read_double(start), read_double(timeline),
                          read_double(bar), read_double(beat)};
    if (index && index->type == uris.atom_Int) {
      note.index = ((const LV2_Atom_Int *)index)->body;
    }
    result->malformed +=
        note.index < 0 || isnan(note.start_s) || isnan(note.timeline_s);
    if (result->count < MAX_NOTES) {
      result->notes[result->count] = note;
    }
    result->count++;
  }
}

/* ================================================== driving */

static struct {
  host_plugin plugin;
  float *take;
  size_t take_frames;
  char folder[PATH_MAX - 64]; /* $PLUMB_LOG_DIR for the logged take */
  take_result by_block[5];
  bool by_block_done[5];
} suite;

static size_t block_sizes[5] = {1, 7, 64, 1000, 4096};

typedef struct {
  const event_list *events;
  bool every_block; /* also a position consistent with the model at the
                       start of every block, as some hosts send */
  bool label;       /* set the take label at frame 0 of the first block */
} control_plan;

static bool write_control(host_instance *host, const control_plan *plan,
                          size_t begin, size_t frames) {
  bool fits = host_control_begin(host);
  if (plan->label && begin == 0) {
    fits = fits && forge_label(host);
  }
  if (plan->every_block && plan->events) {
    model m = model_at(plan->events, begin > 0 ? begin - 1 : 0);
    model_move(&m, begin);
    position_event now = {begin,
                          N(AS_LONG, m.frame),
                          N(AS_FLOAT, m.speed),
                          NONE,
                          NONE,
                          N(AS_FLOAT, m.beats_per_bar),
                          N(AS_FLOAT, m.beats_per_minute)};
    if (m.has_beats) {
      now.bar = (number)N(AS_LONG, m.bar);
      now.bar_beat = (number)N(AS_FLOAT, m.bar_beat);
    }
    bool started = begin >= AT_START; /* before it, the host is silent */
    fits = fits && (!started || forge_position(&host->forge, 0, &now));
  }
  for (size_t i = 0; plan->events && i < plan->events->count; ++i) {
    const position_event *e = &plan->events->events[i];
    if (e->at >= begin && e->at < begin + frames) {
      fits = fits && forge_position(&host->forge, (int64_t)(e->at - begin), e);
    }
  }
  if (fits) {
    host_control_end(host);
  }
  return fits;
}

/* One take through an open instance: activate, blocks, deactivate. */
static bool play_take(host_instance *host, size_t block_frames,
                      const control_plan *plan, take_result *result) {
  memset(result, 0, sizeof *result);
  host->descriptor->activate(host->instance);
  bool fits = true;
  for (size_t begin = 0; begin < suite.take_frames; begin += block_frames) {
    size_t left = suite.take_frames - begin;
    size_t frames = left < block_frames ? left : block_frames;
    fits = write_control(host, plan, begin, frames) && fits;
    host_run(host, suite.take + begin, (uint32_t)frames);
    collect(host, result);
  }
  host->descriptor->deactivate(host->instance);
  return fits;
}

static bool drive_take(size_t block_frames, const control_plan *plan,
                       bool logging, take_result *result) {
  host_features features;
  host_features_build(&features, SAMPLE_RATE_HZ, (uint32_t)block_frames);
  host_instance *host =
      host_instance_open(&suite.plugin, &features, SAMPLE_RATE_HZ, logging, HOST_NO_WORKER);
  if (!host) {
    return false;
  }
  bool fits = play_take(host, block_frames, plan, result);
  host_instance_close(host);
  return fits;
}

/* ================================================== checks */

/* The notes are the take's notes, one each, in order. */
static void assert_notes_of_the_take(const take_result *result) {
  assert_int_equal(result->malformed, 0);
  assert_int_equal(result->count, TAKE_NOTES);
  for (size_t i = 0; i < TAKE_NOTES; ++i) {
    const received_note *note = &result->notes[i];
    assert_int_equal(note->index, (int32_t)i);
    if (fabs(note->start_s - take_notes[i].start_s) > ONSET_TOLERANCE_S) {
      fail_msg("note %zu starts at %.4f s, the take's at %.2f s", i,
               note->start_s, take_notes[i].start_s);
    }
  }
}

/* core/include/plumb.h: the onset sample a note's timeline comes from. */
static size_t onset_sample(const received_note *note) {
  return (size_t)llround(fmax(0.0, note->start_s * SAMPLE_RATE_HZ));
}

static unsigned compare_position(const received_note *note,
                                 const expected_position *want, size_t i) {
  unsigned wrong = 0;
  if (!(fabs(note->timeline_s - want->timeline_s) <= TIME_TOLERANCE_S)) {
    fprintf(stderr, "note %zu: timeline_s %.9f, expected %.9f\n", i,
            note->timeline_s, want->timeline_s);
    ++wrong;
  }
  bool beats_wanted = !isnan(want->bar);
  bool beats_given = !isnan(note->bar) && !isnan(note->beat);
  if (beats_wanted != beats_given ||
      (beats_wanted && (note->bar != want->bar ||
                        !(fabs(note->beat - want->beat) <= BEAT_TOLERANCE)))) {
    fprintf(stderr, "note %zu: bar %.0f beat %.9f, expected %.0f %.9f\n", i,
            note->bar, note->beat, want->bar, want->beat);
    ++wrong;
  }
  return wrong;
}

static void assert_positions(const take_result *result,
                             const event_list *events) {
  unsigned wrong = 0;
  for (size_t i = 0; i < result->count && i < MAX_NOTES; ++i) {
    expected_position want =
        expected_at(events, onset_sample(&result->notes[i]));
    wrong += compare_position(&result->notes[i], &want, i);
  }
  assert_int_equal(wrong, 0);
}

static void assert_near(double actual, double expected, double tolerance,
                        const char *what) {
  if (!(fabs(actual - expected) <= tolerance)) {
    fail_msg("%s: %.9f, expected %.9f", what, actual, expected);
  }
}

static double onset_s(const received_note *note) {
  return (double)onset_sample(note) / SAMPLE_RATE_HZ;
}

static double take_s(size_t frame) { return (double)frame / SAMPLE_RATE_HZ; }

/* Each case of plan_scenario by hand, so that a slip shared by the
   test's model and the plugin would still show: a plugin that gave a
   note the latest event's position instead of its onset's, or that
   moved on while stopped, fails here. */
static void assert_scenario_cases(const take_result *result) {
  const received_note *n = result->notes;
  const double tolerance = TIME_TOLERANCE_S;
  double start_s = 480007.0 / SAMPLE_RATE_HZ; /* at AT_START */
  assert_near(n[0].timeline_s, start_s + onset_s(&n[0]) - take_s(AT_START),
              tolerance, "note 0, rolling from the start");
  assert_near(n[1].timeline_s, start_s + onset_s(&n[1]) - take_s(AT_START),
              tolerance, "note 1, sounding at the locate: its own onset's");
  assert_near(n[2].timeline_s, 100.0 + onset_s(&n[2]) - take_s(AT_LOCATE),
              tolerance, "note 2, after the locate to 100 s");
  assert_near(n[3].timeline_s, 100.0 + onset_s(&n[3]) - take_s(AT_LOCATE),
              tolerance, "note 3, sounding at the loop: its own onset's");
  assert_near(n[4].timeline_s, 99.0 + onset_s(&n[4]) - take_s(AT_LOOP),
              tolerance, "note 4, after the loop back to 99 s");
  assert_true(n[4].timeline_s < n[3].timeline_s);
  double stop_s = 99.0 + take_s(AT_STOP) - take_s(AT_LOOP);
  assert_near(n[5].timeline_s, stop_s, tolerance,
              "note 5, begun while stopped: where the transport stopped");
  assert_near(n[6].timeline_s, stop_s + onset_s(&n[6]) - take_s(AT_ROLL),
              tolerance, "note 6, after the roll from there");
  double fast_s = stop_s + take_s(AT_FAST) - take_s(AT_ROLL);
  assert_near(n[7].timeline_s, fast_s + 2.0 * (onset_s(&n[7]) - take_s(AT_FAST)),
              tolerance, "note 7, at double speed");
  /* note 2: 3 beats to the bar at 90 bpm from bar 40 (0-based) beat 0.25 */
  double beats = 40.0 * 3.0 + 0.25 + (onset_s(&n[2]) - take_s(AT_LOCATE)) * 1.5;
  assert_near(n[2].bar, floor(beats / 3.0) + 1.0, 0.0, "note 2's bar");
  assert_near(n[2].beat, beats - floor(beats / 3.0) * 3.0 + 1.0, BEAT_TOLERANCE,
              "note 2's beat");
  /* note 5: stopped, so the beat stands where the stop left it */
  double stopped_beats = 39.0 * 3.0 + 2.0 +
                         (take_s(AT_STOP) - take_s(AT_LOOP)) * 1.5;
  assert_near(n[5].bar, floor(stopped_beats / 3.0) + 1.0, 0.0, "note 5's bar");
  assert_near(n[5].beat, stopped_beats - floor(stopped_beats / 3.0) * 3.0 + 1.0,
              BEAT_TOLERANCE, "note 5's beat");
}

/* ================================================== tests */

static size_t slot_of(size_t block_frames) {
  for (size_t i = 0; i < 5; ++i) {
    if (block_sizes[i] == block_frames) {
      return i;
    }
  }
  return 0;
}

static void test_positions_follow_the_transport(void **state) {
  size_t block_frames = *(const size_t *)*state;
  event_list events;
  plan_scenario(&events);
  control_plan plan = {&events, false, false};
  take_result *result = &suite.by_block[slot_of(block_frames)];
  assert_true(drive_take(block_frames, &plan, false, result));
  assert_notes_of_the_take(result);
  assert_positions(result, &events);
  assert_scenario_cases(result);
  suite.by_block_done[slot_of(block_frames)] = true;
}

/* core/include/plumb.h: results do not depend on the block sizes; the events
   sit at the same take frames, so every block size gives the same
   numbers, bit for bit. */
static void test_block_sizes_agree(void **state) {
  (void)state;
  for (size_t i = 0; i < 5; ++i) {
    assert_true(suite.by_block_done[i]);
  }
  const take_result *reference = &suite.by_block[4];
  for (size_t i = 0; i < 4; ++i) {
    const take_result *other = &suite.by_block[i];
    assert_int_equal(other->count, reference->count);
    for (size_t k = 0; k < reference->count && k < MAX_NOTES; ++k) {
      const received_note *a = &other->notes[k], *b = &reference->notes[k];
      assert_int_equal(a->index, b->index);
      assert_memory_equal(&a->start_s, &b->start_s, sizeof(double));
      assert_memory_equal(&a->timeline_s, &b->timeline_s, sizeof(double));
      assert_memory_equal(&a->bar, &b->bar, sizeof(double));
      assert_memory_equal(&a->beat, &b->beat, sizeof(double));
    }
  }
}

/* Some hosts send time:Position every block while rolling. With the
   same jumps among them, every note must still get its own onset's
   position, although far more positions arrive during one note than the
   core keeps marks for (64; the plugin passes on only the ones that
   change something). */
static void test_position_every_block(void **state) {
  (void)state;
  event_list events;
  plan_scenario(&events);
  control_plan plan = {&events, true, false};
  take_result result;
  assert_true(drive_take(64, &plan, false, &result));
  assert_notes_of_the_take(&result);
  assert_positions(&result, &events);
}

/* docs/ports.md: without any time:Position, timeline_s is the time since
   activation, and there is no bar or beat. A second take in the same
   instance counts from its own activation, after a first take that had
   positions. */
static void test_without_positions_time_since_activation(void **state) {
  (void)state;
  host_features features;
  host_features_build(&features, SAMPLE_RATE_HZ, 512);
  host_instance *host =
      host_instance_open(&suite.plugin, &features, SAMPLE_RATE_HZ, false, HOST_NO_WORKER);
  assert_non_null(host);
  event_list events;
  plan_scenario(&events);
  control_plan with = {&events, false, false};
  control_plan without = {NULL, false, false};
  take_result first, second;
  bool played = play_take(host, 512, &with, &first) &&
                play_take(host, 512, &without, &second);
  host_instance_close(host);
  assert_true(played);
  event_list none = {{{0}}, 0};
  assert_notes_of_the_take(&first);
  assert_positions(&first, &events);
  assert_notes_of_the_take(&second);
  assert_positions(&second, &none);
  for (size_t i = 0; i < second.count; ++i) {
    assert_true(isnan(second.notes[i].bar) && isnan(second.notes[i].beat));
    /* the same audio from its own activation: the same onsets */
    assert_true(second.notes[i].timeline_s < TAKE_S);
  }
}

/* ------------------------------------------------ the session log */

static char *read_text(const char *path) {
  FILE *file = fopen(path, "rb");
  if (!file) {
    return NULL;
  }
  static char text[1 << 16];
  size_t length = fread(text, 1, sizeof text - 1, file);
  text[length] = '\0';
  fclose(file);
  return text;
}

/* Field `column` (from 0) of a comma-separated line, into out. */
static bool csv_field(const char *line, int column, char *out, size_t size) {
  for (int i = 0; i < column; ++i) {
    line = strchr(line, ',');
    if (!line) {
      return false;
    }
    ++line;
  }
  size_t length = strcspn(line, ",\n");
  if (length >= size) {
    return false;
  }
  memcpy(out, line, length);
  out[length] = '\0';
  return true;
}

static int csv_column(const char *header, const char *name) {
  char field[64];
  for (int column = 0; csv_field(header, column, field, sizeof field);
       ++column) {
    if (strcmp(field, name) == 0) {
      return column;
    }
  }
  return -1;
}

/* docs/log-format.md: the log's timeline_s is the note's, as %.4f. */
static void test_log_has_the_positions(void **state) {
  (void)state;
  event_list events;
  plan_scenario(&events);
  control_plan plan = {&events, false, true};
  take_result result;
  assert_true(drive_take(1000, &plan, true, &result));
  assert_notes_of_the_take(&result);
  char path[PATH_MAX];
  snprintf(path, sizeof path, "%s/%s.notes.csv", suite.folder, LABEL);
  const char *text = read_text(path);
  assert_non_null(text);
  int column = csv_column(text, "timeline_s");
  assert_int_equal(column, 3); /* docs/log-format.md: the fourth column */
  const char *line = strchr(text, '\n');
  size_t rows = 0;
  for (; line && line[1]; line = strchr(line + 1, '\n'), ++rows) {
    char field[64], want[64];
    assert_true(rows < result.count);
    assert_true(csv_field(line + 1, column, field, sizeof field));
    snprintf(want, sizeof want, "%.4f", result.notes[rows].timeline_s);
    assert_string_equal(field, want);
  }
  assert_int_equal(rows, TAKE_NOTES);
}

/* ================================================== setup */

static int setup_suite(void **state) {
  (void)state;
  map_uris();
  if (host_folder_make(suite.folder, sizeof suite.folder, "plumb-timeline") != 0 ||
      setenv("PLUMB_LOG_DIR", suite.folder, 1)) {
    perror("log folder");
    return -1;
  }
  suite.take = render_take(&suite.take_frames);
  if (!suite.take) {
    fprintf(stderr, "cannot render the take\n");
    return -1;
  }
  return host_plugin_load(&suite.plugin);
}

static int teardown_suite(void **state) {
  (void)state;
  host_folder_remove(suite.folder);
  free(suite.take);
  host_plugin_unload(&suite.plugin);
  return 0;
}

#define PER_BLOCK(i)                                                          \
  {"positions follow the transport at " #i "-frame blocks",                   \
   test_positions_follow_the_transport, NULL, NULL, &block_sizes[BLOCK_##i]}
enum { BLOCK_1, BLOCK_7, BLOCK_64, BLOCK_1000, BLOCK_4096 };

int main(void) {
  const struct CMUnitTest tests[] = {
      PER_BLOCK(1),
      PER_BLOCK(7),
      PER_BLOCK(64),
      PER_BLOCK(1000),
      PER_BLOCK(4096),
      cmocka_unit_test(test_block_sizes_agree),
      cmocka_unit_test(test_position_every_block),
      cmocka_unit_test(test_without_positions_time_since_activation),
      cmocka_unit_test(test_log_has_the_positions),
  };
  return cmocka_run_group_tests(tests, setup_suite, teardown_suite);
}
