/*
  plumb LV2: the control ports, in and out (see controls.h).
*/
#include "controls.h"

#include <math.h>
#include <string.h>

/* Ranges and defaults, the same as ttl/plumb.ttl declares. */
#define REFERENCE_MIN_HZ 380.0
#define REFERENCE_MAX_HZ 480.0
#define REFERENCE_DEFAULT_HZ 440.0
#define TOLERANCE_MIN_CENTS 1.0
#define TOLERANCE_MAX_CENTS 50.0
#define TOLERANCE_DEFAULT_CENTS 10.0
#define MIDI_MIN 21
#define MIDI_MAX 108
#define LOWEST_DEFAULT_MIDI 28  /* E1 */
#define HIGHEST_DEFAULT_MIDI 96 /* C7 */
#define MIN_NOTE_MIN_MS 20.0
#define MIN_NOTE_MAX_MS 1000.0
#define MIN_NOTE_DEFAULT_MS 80.0
#define CENTS_SHOWN_MAX 50.0
/* The shown ranges of the newer last-note ports, as ttl/plumb.ttl
   declares them; a reading beyond one shows at its end. */
#define HNR_SHOWN_MIN_DB (-20.0)
#define HNR_SHOWN_MAX_DB 80.0
#define ODD_EVEN_SHOWN_MAX_DB 40.0
#define ATTACK_SHOWN_MAX_MS 2000.0
#define VERDICT_NONE (-1.0f)

void controls_default(take_settings *settings, bool *logging) {
  memset(settings, 0, sizeof *settings);
  plumb_tuning_spec_default(&settings->tuning);
  settings->tuning.reference_hz = REFERENCE_DEFAULT_HZ;
  settings->tuning.temperament = PLUMB_TEMPERAMENT_EQUAL;
  settings->tuning.tonic_pitch_class = 0;
  settings->tolerance_cents = TOLERANCE_DEFAULT_CENTS;
  settings->lowest_midi = LOWEST_DEFAULT_MIDI;
  settings->highest_midi = HIGHEST_DEFAULT_MIDI;
  settings->min_note_ms = MIN_NOTE_DEFAULT_MS;
  *logging = true;
}

static double clamp(double value, double low, double high) {
  return value < low ? low : value > high ? high : value;
}

/* The port's value, or `previous` when it is unconnected or NaN. */
static double port_value(float *const ports[PORT_COUNT], plumb_port port,
                         double previous) {
  const float *value = ports[port];
  return (value && isfinite(*value)) ? (double)*value : previous;
}

static int port_integer(float *const ports[PORT_COUNT], plumb_port port,
                        int previous, int low, int high) {
  double value = port_value(ports, port, (double)previous);
  return (int)lround(clamp(value, (double)low, (double)high));
}

void controls_read(float *const ports[PORT_COUNT], take_settings *settings,
                   bool *logging) {
  plumb_tuning_spec *tuning = &settings->tuning;
  tuning->reference_hz =
      clamp(port_value(ports, PORT_REFERENCE, tuning->reference_hz),
            REFERENCE_MIN_HZ, REFERENCE_MAX_HZ);
  tuning->temperament = (plumb_temperament)port_integer(
      ports, PORT_TEMPERAMENT, (int)tuning->temperament, 0,
      PLUMB_TEMPERAMENT_COUNT - 1);
  tuning->tonic_pitch_class =
      port_integer(ports, PORT_TONIC, tuning->tonic_pitch_class, 0, 11);
  settings->tolerance_cents =
      clamp(port_value(ports, PORT_TOLERANCE, settings->tolerance_cents),
            TOLERANCE_MIN_CENTS, TOLERANCE_MAX_CENTS);
  int lowest = port_integer(ports, PORT_LOWEST, settings->lowest_midi, MIDI_MIN,
                            MIDI_MAX);
  int highest = port_integer(ports, PORT_HIGHEST, settings->highest_midi,
                             MIDI_MIN, MIDI_MAX);
  /* A range given upside down is still the range the user meant. */
  settings->lowest_midi = lowest <= highest ? lowest : highest;
  settings->highest_midi = lowest <= highest ? highest : lowest;
  settings->min_note_ms =
      clamp(port_value(ports, PORT_MIN_NOTE, settings->min_note_ms),
            MIN_NOTE_MIN_MS, MIN_NOTE_MAX_MS);
  *logging = port_value(ports, PORT_LOGGING, *logging ? 1.0 : 0.0) >= 0.5;
}

bool controls_equal(const take_settings *a, const take_settings *b) {
  const plumb_tuning_spec *ta = &a->tuning;
  const plumb_tuning_spec *tb = &b->tuning;
  for (int degree = 0; degree < 12; ++degree) {
    if (ta->custom_offsets_cents[degree] != tb->custom_offsets_cents[degree]) {
      return false;
    }
  }
  return ta->reference_hz == tb->reference_hz &&
         ta->temperament == tb->temperament &&
         ta->tonic_pitch_class == tb->tonic_pitch_class &&
         a->tolerance_cents == b->tolerance_cents &&
         a->lowest_midi == b->lowest_midi &&
         a->highest_midi == b->highest_midi && a->min_note_ms == b->min_note_ms;
}

plumb_status controls_to_core(const take_settings *settings,
                              double sample_rate_hz, plumb_settings *core) {
  plumb_settings_default(core, sample_rate_hz);
  plumb_status status = plumb_tuning_build(&settings->tuning, &core->tuning);
  if (status != PLUMB_OK) {
    return status;
  }
  core->tolerance_cents = settings->tolerance_cents;
  core->lowest_midi = settings->lowest_midi;
  core->highest_midi = settings->highest_midi;
  core->min_note_ms = settings->min_note_ms;
  return PLUMB_OK;
}

static void put(float *const ports[PORT_COUNT], plumb_port port, double value) {
  if (ports[port]) {
    *ports[port] = (float)value;
  }
}

/* Output ports never carry NaN: hosts show it badly or not at all. */
static double finite_or(double value, double fallback) {
  return isfinite(value) ? value : fallback;
}

static void write_live(float *const ports[PORT_COUNT], const plumb_live *live) {
  bool voiced = live->voiced && live->midi >= 0;
  put(ports, PORT_NOTE, voiced ? live->midi : -1);
  put(ports, PORT_CENTS,
      voiced ? clamp(finite_or(live->cents, 0.0), -CENTS_SHOWN_MAX,
                     CENTS_SHOWN_MAX)
             : 0.0);
  put(ports, PORT_CONFIDENCE, clamp(finite_or(live->confidence, 0.0), 0, 1));
}

/* A last-note reading for its port: 0 when there is no note yet or the
   reading is NaN (docs/ports.md), else held within the declared range
   (an infinite one shows at its end). */
static double last_reading(bool has_last, double value, double low,
                           double high) {
  return has_last && !isnan(value) ? clamp(value, low, high) : 0.0;
}

static void write_last_timbre(float *const ports[PORT_COUNT],
                              const plumb_counts *counts) {
  const plumb_note *last = &counts->last_note;
  bool has_last = counts->has_last;
  put(ports, PORT_LAST_HNR,
      last_reading(has_last, last->hnr_db, HNR_SHOWN_MIN_DB, HNR_SHOWN_MAX_DB));
  put(ports, PORT_LAST_ODD_EVEN,
      last_reading(has_last, last->odd_even_db, -ODD_EVEN_SHOWN_MAX_DB,
                   ODD_EVEN_SHOWN_MAX_DB));
  put(ports, PORT_LAST_ATTACK,
      last_reading(has_last, last->attack_ms, 0.0, ATTACK_SHOWN_MAX_MS));
}

static void write_last_note(float *const ports[PORT_COUNT],
                            const plumb_counts *counts) {
  const plumb_note *last = &counts->last_note;
  bool has_last = counts->has_last;
  put(ports, PORT_LAST_CENTS, has_last ? finite_or(last->cents, 0.0) : 0.0);
  put(ports, PORT_LAST_VERDICT,
      has_last ? (double)last->verdict : VERDICT_NONE);
  put(ports, PORT_LAST_B,
      has_last ? finite_or(last->inharmonicity_b, 0.0) : 0.0);
}

void controls_write(float *const ports[PORT_COUNT],
                    const control_readings *readings) {
  write_live(ports, &readings->live);
  write_last_note(ports, &readings->counts);
  write_last_timbre(ports, &readings->counts);
  put(ports, PORT_NOTES, readings->counts.notes);
  put(ports, PORT_FLAGGED, readings->counts.flagged);
  put(ports, PORT_LOG_OK, readings->log_ok ? 1.0 : 0.0);
  put(ports, PORT_LATENCY, 0.0); /* the audio is never delayed */
}
