/*
  libFuzzer harness for the core's public API (core/plumb.h).

  The input is read as: a sample rate, settings, then a script of calls
  (blocks of samples of any length from 0 to 4096, timeline and transport
  marks, plumb_configure, plumb_reset, plumb_finish, popping notes, live
  readings). The samples come from the input, either as raw floats or
  integers or as signals the input parametrises (sines, harmonic tones,
  vibrato, glides, noise, pulses), with NaN, infinities, denormals and
  full-scale values mixed in, so that notes are actually found and
  measured. The audio of one input is capped at MAX_AUDIO_S seconds.

  Checked, besides the sanitizers: settings that the header calls invalid
  are refused with a status, sane ones are taken; every double of a popped
  note is finite or NaN; times are ordered and inside the audio given;
  midi, target_hz and cents agree with each other and with the tuning;
  the verdict agrees with the cents and the tolerance; the counters agree
  with what was popped and with the bad samples fed; each note formats as
  one CSV row of the header's width; and, for one input in four, a second
  instance fed the same script in other block sizes gives bit-identical
  notes and live readings ("results do not depend on block sizes").

  plumb_new() plans FFTs, so instances are kept in a static table (two per
  sample rate: the second is the differential's) and reset between inputs.

  Encoding (tests/fuzz/make_seeds.py writes seeds in it): byte 0 picks a
  sample rate (250 and above: a rate plumb_new must refuse); byte 1 holds
  flags (bits 0-1 both clear: the differential run; bits 4-6 all set:
  plumb_new with the settings too); then the settings (a byte saying which
  fields follow, then each); for the differential, the re-split's mode
  byte and seed; a byte whose bit 0 asks for plumb_finish at the end; then
  operations, each a byte taken mod 32: 0-19 a block (a length byte, then
  a signal), 20-21 a timeline mark, 22-23 a transport mark, 24 configure,
  25 reset, 26 finish, 27-29 pop notes, 30-31 live reading and counts.
  Past the end of the input every read gives 0 (fuzz_input.h).
*/
#include "plumb.h"
#include "note_csv.h"

#include "fuzz_input.h"

#include <float.h>
#include <limits.h>
#include <math.h>
#include <stdbool.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define MAX_AUDIO_S 2.0
#define MAX_POOL_SAMPLES 800000 /* 2 s at 384 kHz would be 768000 */
#define MAX_OPS 1024
#define MAX_BLOCK 4096
#define MAX_RECORDED_NOTES 4096
#define MAX_RECORDED_LIVE 1024

/* ------------------------------------------------------------ rates */

static const double good_rates_hz[] = {8000.0,   11025.0,  16000.0, 22050.0,
                                       32000.0,  44100.0,  48000.0, 88200.0,
                                       96000.0,  176400.0, 192000.0, 384000.0,
                                       12345.678, 383999.5};
#define GOOD_RATES (sizeof good_rates_hz / sizeof good_rates_hz[0])

static double bad_rate(uint8_t choice) {
  static const double rates[] = {0.0,     -48000.0, 7999.999, 384000.001,
                                 1e9,     1e-300,   DBL_MAX,  -DBL_MAX,
                                 4000.0,  768000.0};
  size_t n = sizeof rates / sizeof rates[0];
  if (choice % (n + 3) < n) return rates[choice % (n + 3)];
  if (choice % (n + 3) == n) return NAN;
  return choice % (n + 3) == n + 1 ? INFINITY : -INFINITY;
}

static plumb *cache[GOOD_RATES][2];

static plumb *cached(size_t rate_index, int which) {
  if (!cache[rate_index][which]) {
    plumb_settings settings;
    plumb_settings_default(&settings, good_rates_hz[rate_index]);
    plumb_status status = PLUMB_ERR_ARGUMENT;
    cache[rate_index][which] = plumb_new(&settings, &status);
    FUZZ_CHECK(cache[rate_index][which] && status == PLUMB_OK,
               "plumb_new refused the defaults at %.3f Hz: %s",
               good_rates_hz[rate_index], plumb_strerror(status));
  }
  return cache[rate_index][which];
}

/* ------------------------------------------------------------ settings */

/* The ranges plumb.h gives for plumb_settings; within them plumb_new()
   and plumb_configure() must take the settings, outside them refuse. */
static bool within(double value, double low, double high) {
  return value >= low && value <= high; /* false for NaN */
}

static double positive_value(fuzz_input *in, double normal, double low,
                             double high) {
  switch (fuzz_u8(in) % 14) {
  case 0: return normal;
  case 1: return fuzz_range(in, low, high);
  case 2: return low;
  case 3: return high;
  case 4: return nextafter(low, -INFINITY);
  case 5: return nextafter(high, INFINITY);
  case 6: return 1e-300;
  case 7: return 0.0;
  case 8: return -normal;
  case 9: return fuzz_u8(in) & 1 ? NAN : -NAN;
  case 10: return fuzz_u8(in) & 1 ? INFINITY : -INFINITY;
  case 11: return 1e300;
  case 12: return fuzz_raw_double(in);
  default: return fuzz_range(in, 0.0, 4.0 * high);
  }
}

typedef struct {
  plumb_settings settings;
  bool valid; /* within plumb.h's ranges */
  bool equal; /* equal temperament: |cents| <= 50 for every target */
} decoded_settings;

static void check_built_tuning(const plumb_tuning_spec *spec,
                               const plumb_tuning *tuning) {
  FUZZ_CHECK(tuning->reference_hz == spec->reference_hz, "reference %g != %g",
             tuning->reference_hz, spec->reference_hz);
  FUZZ_CHECK(tuning->offset_cents[9] == 0.0, "A's offset is %g, not 0",
             tuning->offset_cents[9]);
  for (int pc = 0; pc < 12; ++pc)
    FUZZ_CHECK(fabs(tuning->offset_cents[pc]) <= 2.0 * PLUMB_CUSTOM_OFFSET_LIMIT_CENTS,
               "built offset %d is %g", pc, tuning->offset_cents[pc]);
  FUZZ_CHECK(plumb_tuning_target_hz(tuning, 69) == spec->reference_hz,
             "A4 is %.17g Hz, not the reference %.17g Hz",
             plumb_tuning_target_hz(tuning, 69), spec->reference_hz);
  if (spec->temperament == PLUMB_TEMPERAMENT_CUSTOM) return;
  /* Fixed temperaments keep every note within a quarter tone of equal
     temperament, so each target is its own nearest target. */
  for (int midi = 0; midi <= 127; ++midi) {
    double target_hz = plumb_tuning_target_hz(tuning, midi);
    double nearest_hz = NAN;
    double cents = NAN;
    int nearest = plumb_tuning_nearest(tuning, target_hz, &nearest_hz, &cents);
    if (!(target_hz > 0.0 && isfinite(target_hz))) continue; /* tiny refs */
    FUZZ_CHECK(nearest == midi && fabs(cents) < 1e-6,
               "target of %d (%.17g Hz) is nearest to %d, %g cents", midi,
               target_hz, nearest, cents);
  }
}

static bool tuning_in_range(const plumb_tuning *tuning) {
  bool ok = within(tuning->reference_hz, PLUMB_SETTINGS_MIN_REFERENCE_HZ,
                   PLUMB_SETTINGS_MAX_REFERENCE_HZ);
  for (int pc = 0; pc < 12; ++pc)
    ok = ok && within(tuning->offset_cents[pc],
                      -2.0 * PLUMB_CUSTOM_OFFSET_LIMIT_CENTS,
                      2.0 * PLUMB_CUSTOM_OFFSET_LIMIT_CENTS);
  return ok;
}

static double custom_offset(fuzz_input *in, int how) {
  double limit = PLUMB_CUSTOM_OFFSET_LIMIT_CENTS;
  switch (how) {
  case 0: return 0.0;
  case 1: return fuzz_range(in, -100.0, 100.0);
  case 2: return fuzz_range(in, -limit, limit);
  case 3: return fuzz_u8(in) & 1 ? limit : -limit;
  case 4: return nextafter(fuzz_u8(in) & 1 ? limit : -limit, 0.0) * 1.0000001;
  case 5: return fuzz_range(in, -4.0 * limit, 4.0 * limit);
  case 6: return fuzz_u8(in) & 1 ? NAN : INFINITY;
  default: return fuzz_raw_double(in);
  }
}

static void decode_tuning(fuzz_input *in, decoded_settings *d) {
  plumb_tuning_spec spec;
  plumb_tuning_spec_default(&spec);
  spec.reference_hz = positive_value(in, 440.0, PLUMB_SETTINGS_MIN_REFERENCE_HZ,
                                     PLUMB_SETTINGS_MAX_REFERENCE_HZ);
  uint8_t choice = fuzz_u8(in);
  spec.temperament = (plumb_temperament)((int)(choice % 11) - 1); /* -1..9 */
  spec.tonic_pitch_class = choice & 0x80 ? (int)(int8_t)fuzz_u8(in)
                                         : fuzz_u8(in) % 12;
  bool spec_valid = within(spec.reference_hz, PLUMB_SETTINGS_MIN_REFERENCE_HZ,
                           PLUMB_SETTINGS_MAX_REFERENCE_HZ) &&
                    (int)spec.temperament >= 0 &&
                    spec.temperament < PLUMB_TEMPERAMENT_COUNT &&
                    spec.tonic_pitch_class >= 0 && spec.tonic_pitch_class <= 11;
  if (spec.temperament == PLUMB_TEMPERAMENT_CUSTOM) {
    uint32_t how = fuzz_u32(in);
    for (int degree = 0; degree < 12; ++degree) {
      double offset = custom_offset(in, (int)((how >> (degree % 10 * 3)) & 7));
      spec.custom_offsets_cents[degree] = offset;
      spec_valid = spec_valid && fabs(offset) <= PLUMB_CUSTOM_OFFSET_LIMIT_CENTS;
    }
  }
  plumb_tuning before;
  memset(&before, 0x5a, sizeof before);
  plumb_tuning built = before;
  plumb_status status = plumb_tuning_build(&spec, &built);
  if (!spec_valid) {
    FUZZ_CHECK(status == PLUMB_ERR_ARGUMENT,
               "plumb_tuning_build took an invalid spec (ref %g, "
               "temperament %d, tonic %d): %d",
               spec.reference_hz, (int)spec.temperament,
               spec.tonic_pitch_class, (int)status);
    FUZZ_CHECK(memcmp(&built, &before, sizeof built) == 0,
               "a refused build wrote the tuning");
    /* Equal temperament with the fuzzed reference, so that a bad
       reference still reaches the settings' own check. */
    d->settings.tuning.reference_hz = spec.reference_hz;
    return;
  }
  FUZZ_CHECK(status == PLUMB_OK, "plumb_tuning_build refused a valid spec: %d",
             (int)status);
  check_built_tuning(&spec, &built);
  d->settings.tuning = built;
  d->equal = spec.temperament == PLUMB_TEMPERAMENT_EQUAL;
}

/* A resolved tuning that plumb_tuning_build never made. */
static void decode_raw_tuning(fuzz_input *in, decoded_settings *d) {
  plumb_tuning *tuning = &d->settings.tuning;
  tuning->reference_hz = positive_value(in, 440.0, PLUMB_SETTINGS_MIN_REFERENCE_HZ,
                                        PLUMB_SETTINGS_MAX_REFERENCE_HZ);
  uint32_t how = fuzz_u32(in);
  for (int pc = 0; pc < 12; ++pc)
    tuning->offset_cents[pc] = 2.0 * custom_offset(in, (int)((how >> (pc % 10 * 3)) & 7));
  d->equal = false;
}

static int midi_value(fuzz_input *in) {
  switch (fuzz_u8(in) % 8) {
  case 0: return PLUMB_SETTINGS_LOWEST_MIDI;
  case 1: return PLUMB_SETTINGS_HIGHEST_MIDI;
  case 2: return PLUMB_SETTINGS_LOWEST_MIDI - 1;
  case 3: return PLUMB_SETTINGS_HIGHEST_MIDI + 1;
  case 4: return fuzz_u8(in) & 1 ? INT_MIN : INT_MAX;
  case 5: return (int)fuzz_u32(in);
  default: return PLUMB_SETTINGS_LOWEST_MIDI + fuzz_u8(in) % 88;
  }
}

static void decode_settings(fuzz_input *in, double rate_hz, decoded_settings *d) {
  plumb_settings *s = &d->settings;
  plumb_settings_default(s, rate_hz);
  d->equal = true;
  uint8_t fields = fuzz_u8(in);
  if (fields & 1) {
    if (fields & 2) decode_raw_tuning(in, d);
    else decode_tuning(in, d);
  }
  if (fields & 4) s->tolerance_cents = positive_value(in, 10.0, 1.0, 50.0);
  if (fields & 8) {
    s->lowest_midi = midi_value(in);
    s->highest_midi = midi_value(in);
  }
  if (fields & 16) s->min_note_ms = positive_value(in, 80.0, 20.0, 1000.0);
  d->valid = tuning_in_range(&s->tuning) && s->tolerance_cents > 0.0 &&
             within(s->tolerance_cents, 0.0, PLUMB_SETTINGS_MAX_TOLERANCE_CENTS) &&
             within(s->min_note_ms, PLUMB_SETTINGS_MIN_NOTE_MS,
                    PLUMB_SETTINGS_MAX_NOTE_MS) &&
             s->lowest_midi >= PLUMB_SETTINGS_LOWEST_MIDI &&
             s->highest_midi <= PLUMB_SETTINGS_HIGHEST_MIDI &&
             s->lowest_midi <= s->highest_midi;
  plumb_status check = plumb_settings_check(s);
  FUZZ_CHECK((check == PLUMB_OK) == d->valid,
             "plumb_settings_check says %d for settings %s plumb.h's ranges: "
             "ref %g tol %g range %d..%d min %g",
             (int)check, d->valid ? "within" : "outside",
             s->tuning.reference_hz, s->tolerance_cents, s->lowest_midi,
             s->highest_midi, s->min_note_ms);
}

static void check_status(const decoded_settings *d, plumb_status status,
                         const char *call) {
  const plumb_settings *s = &d->settings;
  FUZZ_CHECK((status == PLUMB_OK) == d->valid &&
                 (status == PLUMB_OK || status == PLUMB_ERR_ARGUMENT),
             "%s gave %d (%s) for settings %s plumb.h's ranges: ref %g tol %g "
             "range %d..%d min %g",
             call, (int)status, plumb_strerror(status),
             d->valid ? "within" : "outside", s->tuning.reference_hz,
             s->tolerance_cents, s->lowest_midi, s->highest_midi,
             s->min_note_ms);
}

/* ------------------------------------------------------------ signals */

typedef struct {
  double phase; /* of the current voice, in cycles, kept across blocks */
  uint32_t noise;
} voice;

static float special_value(uint8_t choice) {
  static const float values[] = {
      1e-40f, -1e-45f, FLT_MIN, FLT_MAX, -FLT_MAX, 1.0f, -1.0f,   0.0f,
      -0.0f,  1e30f,   999.9f,  1000.1f, -1e6f,    0.5f, 1e-20f};
  size_t n = sizeof values / sizeof values[0];
  uint8_t pick = choice % (n + 3);
  if (pick < n) return values[pick];
  if (pick == n) return choice & 0x80 ? -NAN : NAN;
  return pick == n + 1 ? INFINITY : -INFINITY;
}

static double frequency_hz(fuzz_input *in) {
  return 20.0 * exp2(9.0 * fuzz_u16(in) / 65535.0); /* 20 Hz .. 10 kHz */
}

static double amplitude(fuzz_input *in) {
  uint8_t a = fuzz_u8(in);
  return a == 255 ? 1.0 : a / 256.0;
}

static uint32_t lcg(uint32_t *state) {
  *state = *state * 1664525u + 1013904223u;
  return *state;
}

/* Raw bytes of the input as samples: `width` bytes each, cycled when the
   input has fewer. */
static void raw_samples(fuzz_input *in, float *out, size_t n, int width) {
  size_t length = 0;
  const uint8_t *bytes = fuzz_bytes(in, n * (size_t)width, &length);
  size_t whole = length / (size_t)width;
  for (size_t i = 0; i < n; ++i) {
    if (whole == 0) {
      out[i] = 0.0f;
      continue;
    }
    const uint8_t *b = bytes + (i % whole) * (size_t)width;
    if (width == 4) memcpy(&out[i], b, 4);
    else if (width == 2) out[i] = (float)(int16_t)(b[0] | b[1] << 8) / 32768.0f;
    else out[i] = (float)(int8_t)b[0] / 128.0f;
  }
}

static void synthesise(fuzz_input *in, voice *v, double rate_hz, float *out,
                       size_t n) {
  uint8_t kind = fuzz_u8(in) % 14;
  double f_hz = 0.0, a = 0.0, step = 0.0;
  switch (kind) {
  case 0: raw_samples(in, out, n, 4); return;
  case 1: raw_samples(in, out, n, 2); return;
  case 2: raw_samples(in, out, n, 1); return;
  case 3: /* sine */
    f_hz = frequency_hz(in);
    a = amplitude(in);
    for (size_t i = 0; i < n; ++i) {
      out[i] = (float)(a * sin(2.0 * M_PI * v->phase));
      v->phase = fmod(v->phase + f_hz / rate_hz, 1.0);
    }
    return;
  case 4: { /* harmonic tone, optionally stiff */
    f_hz = frequency_hz(in);
    a = amplitude(in);
    int partials = 1 + fuzz_u8(in) % 24;
    double b = fuzz_u8(in) * 2e-5;
    for (size_t i = 0; i < n; ++i) {
      double x = 0.0;
      for (int k = 1; k <= partials; ++k) {
        double fk = k * sqrt(1.0 + b * k * k);
        if (fk * f_hz < 0.5 * rate_hz) x += sin(2.0 * M_PI * fk * v->phase) / k;
      }
      out[i] = (float)(0.5 * a * x);
      v->phase += f_hz / rate_hz;
      if (v->phase > 1e6) v->phase = fmod(v->phase, 1.0);
    }
    return;
  }
  case 5: { /* vibrato */
    f_hz = frequency_hz(in);
    a = amplitude(in);
    double rate = fuzz_range(in, 0.5, 12.0);
    double depth_cents = fuzz_range(in, 0.0, 150.0);
    double t0 = fuzz_u8(in) / 10.0;
    for (size_t i = 0; i < n; ++i) {
      double t = t0 + i / rate_hz;
      double f = f_hz * exp2(depth_cents / 1200.0 * sin(2.0 * M_PI * rate * t));
      out[i] = (float)(a * sin(2.0 * M_PI * v->phase));
      v->phase = fmod(v->phase + f / rate_hz, 1.0);
    }
    return;
  }
  case 6: /* silence, either sign */
    for (size_t i = 0; i < n; ++i) out[i] = fuzz_u8(in) & 1 ? -0.0f : 0.0f;
    return;
  case 7: /* noise */
    v->noise ^= fuzz_u32(in);
    a = amplitude(in);
    for (size_t i = 0; i < n; ++i)
      out[i] = (float)(a * ((double)lcg(&v->noise) / 2147483648.0 - 1.0));
    return;
  case 8: { /* special values, cycled from the input */
    size_t length = 0;
    const uint8_t *bytes = fuzz_bytes(in, n < 64 ? n : 64, &length);
    for (size_t i = 0; i < n; ++i)
      out[i] = length ? special_value(bytes[i % length]) : NAN;
    return;
  }
  case 9: { /* sine with special values sprinkled in */
    f_hz = frequency_hz(in);
    a = amplitude(in);
    size_t every = 1 + fuzz_u8(in);
    uint8_t which = fuzz_u8(in);
    for (size_t i = 0; i < n; ++i) {
      out[i] = (float)(a * sin(2.0 * M_PI * v->phase));
      if (i % every == every - 1) out[i] = special_value((uint8_t)(which + i));
      v->phase = fmod(v->phase + f_hz / rate_hz, 1.0);
    }
    return;
  }
  case 10: /* pulse wave: every harmonic, aliased */
    f_hz = frequency_hz(in);
    a = amplitude(in);
    step = fuzz_range(in, 0.01, 0.99);
    for (size_t i = 0; i < n; ++i) {
      out[i] = (float)(v->phase < step ? a : -a);
      v->phase = fmod(v->phase + f_hz / rate_hz, 1.0);
    }
    return;
  case 11: { /* offset sine, clipped */
    f_hz = frequency_hz(in);
    a = amplitude(in) * 4.0;
    double dc = fuzz_range(in, -1.0, 1.0);
    for (size_t i = 0; i < n; ++i) {
      double x = dc + a * sin(2.0 * M_PI * v->phase);
      out[i] = (float)(x > 1.0 ? 1.0 : x < -1.0 ? -1.0 : x);
      v->phase = fmod(v->phase + f_hz / rate_hz, 1.0);
    }
    return;
  }
  case 12: { /* glide */
    double from_hz = frequency_hz(in);
    double to_hz = frequency_hz(in);
    a = amplitude(in);
    for (size_t i = 0; i < n; ++i) {
      double f = from_hz * pow(to_hz / from_hz, n > 1 ? (double)i / (n - 1) : 0.0);
      out[i] = (float)(a * sin(2.0 * M_PI * v->phase));
      v->phase = fmod(v->phase + f / rate_hz, 1.0);
    }
    return;
  }
  default: { /* plucked: decaying harmonics with a sharp attack */
    f_hz = frequency_hz(in);
    a = amplitude(in);
    double tau_s = fuzz_range(in, 0.005, 2.0);
    for (size_t i = 0; i < n; ++i) {
      double env = exp(-(double)i / (tau_s * rate_hz));
      double x = sin(2.0 * M_PI * v->phase) + 0.5 * sin(4.0 * M_PI * v->phase) +
                 0.25 * sin(6.0 * M_PI * v->phase);
      out[i] = (float)(a * env * x / 1.75);
      v->phase = fmod(v->phase + f_hz / rate_hz, 1.0);
    }
    return;
  }
  }
}

/* ------------------------------------------------------------ the script */

typedef enum {
  OP_PROCESS,
  OP_MARK_TIMELINE,
  OP_MARK_TRANSPORT,
  OP_CONFIGURE,
  OP_RESET,
  OP_FINISH,
  OP_POP,
  OP_LIVE
} op_kind;

typedef struct {
  op_kind kind;
  size_t offset, count;   /* OP_PROCESS: samples in the pool */
  plumb_transport transport; /* the marks */
  bool marks_sane;        /* the mark is finite and moderate, or ignored */
  decoded_settings settings; /* OP_CONFIGURE */
  int pop_main, pop_here; /* OP_POP: at most this many */
} op;

static float pool[MAX_POOL_SAMPLES];
static op script[MAX_OPS];

/* Mark values: moderate ones (sane), then what a broken host might send. */
static double mark_value(fuzz_input *in, double low, double high, bool *sane) {
  uint8_t choice = fuzz_u8(in);
  switch (choice % 10) {
  case 0: case 1: case 2: case 3: return fuzz_range(in, low, high);
  case 4: return low;
  case 5: return NAN; /* ignored by the core: still sane */
  case 6: return choice & 0x80 ? INFINITY : -INFINITY;
  case 7: *sane = false; return choice & 0x80 ? 1e308 : -1e308;
  case 8: *sane = false; return choice & 0x80 ? DBL_MIN : -DBL_MIN;
  default: {
    double value = fuzz_raw_double(in);
    if (isfinite(value) && !(value >= low && value <= high)) *sane = false;
    return value;
  }
  }
}

static void decode_mark(fuzz_input *in, op *o, bool with_beats) {
  bool sane = true;
  plumb_transport *t = &o->transport;
  memset(t, 0, sizeof *t);
  t->position_s = mark_value(in, -100.0, 10000.0, &sane);
  t->speed = fuzz_u8(in) & 1 ? 1.0 : mark_value(in, -2.0, 2.0, &sane);
  bool finite_position = isfinite(t->position_s) && isfinite(t->speed);
  if (with_beats) {
    bool beats_sane = true;
    t->has_beats = fuzz_u8(in) & 1;
    t->bar = mark_value(in, 0.0, 10000.0, &beats_sane);
    t->bar_beat = mark_value(in, 0.0, 16.0, &beats_sane);
    t->beats_per_bar = mark_value(in, 0.25, 32.0, &beats_sane);
    t->beats_per_minute = mark_value(in, 20.0, 400.0, &beats_sane);
    /* Beats the core does not use (timeline.c, beats_usable) are harmless;
       a non-positive measure is refused there too. */
    bool usable = t->has_beats && isfinite(t->bar) && isfinite(t->bar_beat) &&
                  isfinite(t->beats_per_bar) && t->beats_per_bar > 0.0 &&
                  isfinite(t->beats_per_minute) && t->beats_per_minute > 0.0;
    if (usable && finite_position && !beats_sane) sane = false;
  }
  /* A mark with a non-finite position or speed is ignored. */
  o->marks_sane = sane || !finite_position;
}

typedef struct {
  size_t ops;
  size_t samples;
  bool finish_at_end;
} script_info;

static script_info decode_script(fuzz_input *in, double rate_hz) {
  script_info info = {0, 0, false};
  size_t cap = (size_t)(MAX_AUDIO_S * rate_hz);
  if (cap > MAX_POOL_SAMPLES) cap = MAX_POOL_SAMPLES;
  voice v = {0.0, 12345u};
  info.finish_at_end = fuzz_u8(in) & 1;
  while (!fuzz_input_done(in) && info.ops < MAX_OPS) {
    op *o = &script[info.ops];
    memset(o, 0, sizeof *o);
    uint8_t kind = fuzz_u8(in) % 32;
    if (kind < 20) {
      uint8_t length = fuzz_u8(in);
      size_t n = length < 48    ? length % 8
                 : length < 112 ? fuzz_u8(in)
                 : length < 224 ? fuzz_u16(in) % (MAX_BLOCK + 1)
                                : (size_t)(length % 8 + 1) * 512;
      if (info.samples + n > cap) n = cap - info.samples;
      o->kind = OP_PROCESS;
      o->offset = info.samples;
      o->count = n;
      synthesise(in, &v, rate_hz, pool + info.samples, n);
      info.samples += n;
      if (info.samples >= cap) {
        info.ops++;
        break;
      }
    } else if (kind < 22) {
      o->kind = OP_MARK_TIMELINE;
      decode_mark(in, o, false);
    } else if (kind < 24) {
      o->kind = OP_MARK_TRANSPORT;
      decode_mark(in, o, true);
    } else if (kind < 25) {
      o->kind = OP_CONFIGURE;
      decode_settings(in, rate_hz, &o->settings);
    } else if (kind < 26) {
      o->kind = OP_RESET;
    } else if (kind < 27) {
      o->kind = OP_FINISH;
    } else if (kind < 30) {
      o->kind = OP_POP;
      o->pop_main = fuzz_u8(in) % 64;
      o->pop_here = fuzz_u8(in) % 64;
    } else {
      o->kind = OP_LIVE;
    }
    info.ops++;
  }
  return info;
}

/* ------------------------------------------------------------ checks */

/* What is known about the notes of the current epoch (since a reset). */
typedef struct {
  plumb *analyser;
  double rate_hz;
  uint32_t hop, frame;
  bool equal;
  double tolerance_cents;
  bool tolerance_fixed; /* no configure since the epoch began */
  bool marks_sane;
  uint64_t samples;     /* fed since the reset, finish's silence included */
  uint64_t bad_samples; /* NaN or Inf among them */
  uint32_t popped;      /* from plumb_pop_note since the reset */
  uint32_t popped_flagged;
  long last_index_main, last_index_here;
  bool have_last;
  plumb_note last_popped;
  /* what run A recorded, for run B to compare */
  bool recording, comparing;
  size_t notes_seen, live_seen;
  bool diverged_ok; /* the record overflowed: compare what fits */
} epoch;

static plumb_note recorded_notes[MAX_RECORDED_NOTES];
static plumb_live recorded_live[MAX_RECORDED_LIVE];
static plumb_counts recorded_counts;

static bool finite_or_nan(double x) { return isfinite(x) || isnan(x); }

static void check_csv(const plumb_note *note) {
  static char row[PLUMB_CSV_ROW_MAX];
  int length = plumb_note_to_csv(note, row, sizeof row);
  FUZZ_CHECK(length > 0 && length < PLUMB_CSV_ROW_MAX,
             "a note formats to %d bytes", length);
  FUZZ_CHECK((size_t)length == strlen(row), "length %d but strlen %zu", length,
             strlen(row));
  size_t commas = 0, header_commas = 0;
  for (const char *c = row; *c; ++c) commas += *c == ',';
  for (const char *c = plumb_csv_header(); *c; ++c) header_commas += *c == ',';
  FUZZ_CHECK(commas == header_commas, "row has %zu commas, header %zu: %s",
             commas, header_commas, row);
  for (const char *c = row; *c; ++c)
    FUZZ_CHECK(*c != '\n' && *c != '\r' && *c != '"', "row holds %#x", *c);
  /* snprintf semantics: a short buffer gets a NUL-terminated prefix. */
  char small[24];
  size_t size = (size_t)(note->index % sizeof small) + 1;
  int again = plumb_note_to_csv(note, small, size);
  FUZZ_CHECK(again == length, "short buffer: %d, full: %d", again, length);
  FUZZ_CHECK(strlen(small) == size - 1 && memcmp(small, row, size - 1) == 0,
             "short buffer of %zu holds '%s'", size, small);
}

#define CHECK_FINITE_OR_NAN(field)                                             \
  FUZZ_CHECK(finite_or_nan(note->field), #field " is %g", note->field)

/* PLUMB_FUZZ_VERBOSE=1: every popped note on stderr, to read a finding. */
static bool verbose(void) {
  static int on = -1;
  if (on < 0) on = getenv("PLUMB_FUZZ_VERBOSE") != NULL;
  return on;
}

static void print_note(const plumb_note *note, bool main_queue) {
  static char row[PLUMB_CSV_ROW_MAX];
  plumb_note_to_csv(note, row, sizeof row);
  fprintf(stderr, "%s note: %s\n", main_queue ? "main" : "here", row);
}

static void check_note(epoch *e, const plumb_note *note, bool main_queue) {
  if (verbose()) print_note(note, main_queue);
  long *last = main_queue ? &e->last_index_main : &e->last_index_here;
  FUZZ_CHECK((long)note->index > *last, "index %u after %ld (%s queue)",
             note->index, *last, main_queue ? "main" : "here");
  *last = note->index;
  CHECK_FINITE_OR_NAN(timeline_s);
  CHECK_FINITE_OR_NAN(bar);
  CHECK_FINITE_OR_NAN(beat);
  CHECK_FINITE_OR_NAN(target_hz);
  CHECK_FINITE_OR_NAN(f0_hz);
  CHECK_FINITE_OR_NAN(cents);
  CHECK_FINITE_OR_NAN(spread_cents);
  CHECK_FINITE_OR_NAN(drift_cents_per_s);
  CHECK_FINITE_OR_NAN(vibrato_hz);
  CHECK_FINITE_OR_NAN(vibrato_cents);
  CHECK_FINITE_OR_NAN(confidence);
  CHECK_FINITE_OR_NAN(inharmonicity_b);
  CHECK_FINITE_OR_NAN(hnr_db);
  CHECK_FINITE_OR_NAN(odd_even_db);
  CHECK_FINITE_OR_NAN(centroid_hz);
  CHECK_FINITE_OR_NAN(attack_ms);
  CHECK_FINITE_OR_NAN(decay_ms);
  CHECK_FINITE_OR_NAN(sustain_db);
  CHECK_FINITE_OR_NAN(release_ms);
  CHECK_FINITE_OR_NAN(decay_db_per_s);
  CHECK_FINITE_OR_NAN(peak_dbfs);
  for (int k = 0; k < 3; ++k)
    FUZZ_CHECK(finite_or_nan(note->tristimulus[k]), "tristimulus[%d] is %g", k,
               note->tristimulus[k]);
  for (int k = 0; k < PLUMB_MAX_PARTIALS; ++k)
    FUZZ_CHECK(finite_or_nan(note->partial_cents[k]), "partial_cents[%d] is %g",
               k, (double)note->partial_cents[k]);

  /* Times: inside the audio given since the reset. */
  double audio_s = (double)e->samples / e->rate_hz;
  FUZZ_CHECK(isfinite(note->start_s) && isfinite(note->end_s),
             "start %g end %g", note->start_s, note->end_s);
  FUZZ_CHECK(note->end_s >= note->start_s, "end %.9g before start %.9g",
             note->end_s, note->start_s);
  FUZZ_CHECK(note->start_s >= 0.0, "start %.9g before the audio", note->start_s);
  FUZZ_CHECK(note->end_s <= audio_s + 1e-9,
             "end %.9g after the %.9g s of audio given", note->end_s, audio_s);
  if (e->marks_sane) {
    FUZZ_CHECK(isfinite(note->timeline_s), "timeline %g with sane marks",
               note->timeline_s);
    FUZZ_CHECK(isnan(note->bar) == isnan(note->beat), "bar %g beat %g",
               note->bar, note->beat);
    if (!isnan(note->bar)) {
      FUZZ_CHECK(note->bar == floor(note->bar), "bar %.17g not whole", note->bar);
      FUZZ_CHECK(note->beat >= 1.0 - 0.0005 - 1e-6 && note->beat < 33.0 + 1e-6,
                 "beat %.17g outside the bar", note->beat);
    }
  }

  /* Pitch: midi, target and cents go together. */
  FUZZ_CHECK(note->verdict >= 0 && note->verdict < PLUMB_VERDICT_COUNT,
             "verdict %d", (int)note->verdict);
  FUZZ_CHECK(plumb_verdict_name(note->verdict) != NULL, "verdict without name");
  bool has_target = note->midi != -1;
  FUZZ_CHECK(has_target == !isnan(note->target_hz) &&
                 has_target == !isnan(note->cents),
             "midi %d target %g cents %g", note->midi, note->target_hz,
             note->cents);
  if (has_target) {
    FUZZ_CHECK(note->target_hz > 0.0 && note->f0_hz > 0.0,
               "target %g f0 %g", note->target_hz, note->f0_hz);
    double cents = 1200.0 * log2(note->f0_hz / note->target_hz);
    FUZZ_CHECK(fabs(cents - note->cents) <= 1e-9 * fmax(1.0, fabs(cents)),
               "cents %.17g but 1200 log2(f0/target) = %.17g", note->cents,
               cents);
    FUZZ_CHECK(note->verdict != PLUMB_VERDICT_UNPITCHED,
               "a note with a target is unpitched");
  }
  if (note->verdict == PLUMB_VERDICT_UNPITCHED)
    FUZZ_CHECK(note->midi == -1, "unpitched note has midi %d", note->midi);
  {
    FUZZ_CHECK(note->midi == -1 || (note->midi >= 0 && note->midi <= 127),
               "midi %d", note->midi);
    if (has_target && e->equal)
      FUZZ_CHECK(fabs(note->cents) <= 50.0 + 1e-6,
                 "%g cents from the nearest equal-tempered note", note->cents);
    if (has_target && e->tolerance_fixed) {
      double tol = e->tolerance_cents;
      if (note->verdict == PLUMB_VERDICT_SHARP)
        FUZZ_CHECK(note->cents > tol, "sharp at %g cents (tol %g)", note->cents,
                   tol);
      if (note->verdict == PLUMB_VERDICT_FLAT)
        FUZZ_CHECK(note->cents < -tol, "flat at %g cents (tol %g)", note->cents,
                   tol);
      if (note->verdict == PLUMB_VERDICT_IN_TUNE)
        FUZZ_CHECK(fabs(note->cents) <= tol, "in tune at %g cents (tol %g)",
                   note->cents, tol);
    }
  }
  if (!isnan(note->confidence))
    FUZZ_CHECK(note->confidence >= 0.0 && note->confidence <= 1.0 + 1e-12,
               "confidence %g", note->confidence);
  FUZZ_CHECK(note->partials == -1 ||
                 (note->partials >= 1 && note->partials <= PLUMB_MAX_PARTIALS),
             "partials %d", note->partials);
  if (!isnan(note->spread_cents))
    FUZZ_CHECK(note->spread_cents >= 0.0, "spread %g", note->spread_cents);
  if (!isnan(note->vibrato_hz))
    FUZZ_CHECK(note->vibrato_hz > 0.0, "vibrato rate %g", note->vibrato_hz);
  if (!isnan(note->peak_dbfs))
    FUZZ_CHECK(note->peak_dbfs <= 60.0 + 1e-6, "peak %g dBFS above the limit",
               note->peak_dbfs);
  /* A note holds sound: one made only of the window's tail over digital
     silence has no peak (tests/fuzz/regressions/core/silent-note-*). */
  FUZZ_CHECK(!isnan(note->peak_dbfs) || fuzz_waived("silent-note"),
             "note %u (%.6f .. %.6f s) holds no sample above zero",
             note->index, note->start_s, note->end_s);
  if (!isnan(note->tristimulus[0]) && !isnan(note->tristimulus[1]) &&
      !isnan(note->tristimulus[2])) {
    double sum = note->tristimulus[0] + note->tristimulus[1] + note->tristimulus[2];
    FUZZ_CHECK(fabs(sum - 1.0) < 1e-6, "tristimulus sums to %.17g", sum);
    for (int k = 0; k < 3; ++k)
      FUZZ_CHECK(note->tristimulus[k] >= -1e-12 && note->tristimulus[k] <= 1.0 + 1e-12,
                 "tristimulus[%d] = %g", k, note->tristimulus[k]);
  }
  check_csv(note);
}

static bool same_double(double a, double b) {
  return a == b || (isnan(a) && isnan(b));
}

static bool same_note(const plumb_note *a, const plumb_note *b) {
  bool same = a->index == b->index && a->midi == b->midi &&
              a->partials == b->partials && a->verdict == b->verdict;
  const double *da[] = {&a->start_s, &a->end_s, &a->timeline_s, &a->bar,
                        &a->beat, &a->target_hz, &a->f0_hz, &a->cents,
                        &a->spread_cents, &a->drift_cents_per_s,
                        &a->vibrato_hz, &a->vibrato_cents, &a->confidence,
                        &a->inharmonicity_b, &a->hnr_db, &a->odd_even_db,
                        &a->centroid_hz, &a->attack_ms, &a->decay_ms,
                        &a->sustain_db, &a->release_ms, &a->decay_db_per_s,
                        &a->peak_dbfs, &a->tristimulus[0], &a->tristimulus[1],
                        &a->tristimulus[2]};
  for (size_t i = 0; i < sizeof da / sizeof da[0]; ++i) {
    const double *db = (const double *)((const char *)b +
                                        ((const char *)da[i] - (const char *)a));
    same = same && same_double(*da[i], *db);
  }
  for (int k = 0; k < PLUMB_MAX_PARTIALS; ++k)
    same = same && same_double(a->partial_cents[k], b->partial_cents[k]);
  return same;
}

static void record_or_compare_note(epoch *e, const plumb_note *note) {
  size_t i = e->notes_seen++;
  if (i >= MAX_RECORDED_NOTES) return;
  if (e->recording) recorded_notes[i] = *note;
  if (e->comparing)
    FUZZ_CHECK(same_note(note, &recorded_notes[i]),
               "block sizes changed note %zu (index %u): start %.17g/%.17g "
               "f0 %.17g/%.17g cents %.17g/%.17g",
               i, note->index, note->start_s, recorded_notes[i].start_s,
               note->f0_hz, recorded_notes[i].f0_hz, note->cents,
               recorded_notes[i].cents);
}

static void pop_notes(epoch *e, int max_main, int max_here) {
  plumb_note note;
  for (int i = 0; i < max_main && plumb_pop_note(e->analyser, &note); ++i) {
    check_note(e, &note, true);
    e->popped++;
    e->popped_flagged += plumb_verdict_is_flagged(note.verdict);
    e->last_popped = note;
    e->have_last = true;
    record_or_compare_note(e, &note);
  }
  for (int i = 0; i < max_here && plumb_pop_note_here(e->analyser, &note); ++i)
    check_note(e, &note, false);
}

static void check_live_and_counts(epoch *e, bool drained) {
  plumb_live live;
  plumb_get_live(e->analyser, &live);
  if (live.voiced) {
    FUZZ_CHECK(isfinite(live.f0_hz) && live.f0_hz > 0.0, "live f0 %g",
               live.f0_hz);
    FUZZ_CHECK(live.confidence >= 0.0 && live.confidence <= 1.0 + 1e-12,
               "live confidence %g", live.confidence);
    FUZZ_CHECK(live.midi >= 0 && live.midi <= 127 && isfinite(live.cents),
                 "live midi %d cents %g", live.midi, live.cents);
    if (e->equal)
      FUZZ_CHECK(fabs(live.cents) <= 50.0 + 1e-6, "live cents %g", live.cents);
  } else {
    FUZZ_CHECK(live.midi == -1 && isnan(live.f0_hz) && isnan(live.cents),
               "unvoiced live reading: midi %d f0 %g cents %g", live.midi,
               live.f0_hz, live.cents);
  }
  FUZZ_CHECK(isfinite(live.time_s) &&
                 live.time_s <= (double)e->samples / e->rate_hz + 1e-9,
             "live time %g", live.time_s);
  size_t i = e->live_seen++;
  if (i < MAX_RECORDED_LIVE) {
    if (e->recording) recorded_live[i] = live;
    if (e->comparing) {
      const plumb_live *r = &recorded_live[i];
      FUZZ_CHECK(r->voiced == live.voiced && r->midi == live.midi &&
                     same_double(r->f0_hz, live.f0_hz) &&
                     same_double(r->cents, live.cents) &&
                     same_double(r->confidence, live.confidence) &&
                     same_double(r->time_s, live.time_s),
                 "block sizes changed live reading %zu: f0 %.17g/%.17g", i,
                 live.f0_hz, r->f0_hz);
    }
  }

  plumb_counts counts;
  plumb_get_counts(e->analyser, &counts);
  FUZZ_CHECK(counts.bad_samples == e->bad_samples,
             "bad samples %llu, fed %llu", (unsigned long long)counts.bad_samples,
             (unsigned long long)e->bad_samples);
  FUZZ_CHECK(counts.flagged <= counts.notes && counts.dropped <= counts.notes,
             "counts %u notes %u flagged %u dropped", counts.notes,
             counts.flagged, counts.dropped);
  FUZZ_CHECK(counts.has_last == (counts.notes > 0), "has_last %d, %u notes",
             counts.has_last, counts.notes);
  if (drained) {
    FUZZ_CHECK(e->popped + counts.dropped == counts.notes,
               "%u popped + %u dropped != %u notes", e->popped, counts.dropped,
               counts.notes);
    if (counts.dropped == 0) {
      FUZZ_CHECK(e->popped_flagged == counts.flagged, "%u flagged popped, %u counted",
                 e->popped_flagged, counts.flagged);
      if (e->have_last)
        FUZZ_CHECK(same_note(&e->last_popped, &counts.last_note),
                   "last note differs from the last popped");
    }
  }
}

/* ------------------------------------------------------------ running */

static void begin_epoch(epoch *e) {
  e->samples = 0;
  e->bad_samples = 0;
  e->popped = e->popped_flagged = 0;
  e->last_index_main = e->last_index_here = -1;
  e->have_last = false;
  e->tolerance_fixed = true;
}

static void drain(epoch *e) {
  pop_notes(e, INT_MAX, INT_MAX);
  check_live_and_counts(e, true);
}

static void feed(epoch *e, const float *samples, size_t n) {
  plumb_process(e->analyser, samples, n);
  e->samples += n;
  for (size_t i = 0; i < n; ++i) e->bad_samples += !isfinite(samples[i]);
}

/* Run B re-splits every run of consecutive process ops into chunks of
   sizes from `pattern`, independent of how the script split them. */
typedef struct {
  bool resplit;
  uint32_t seed;
  uint8_t mode;
} split;

static size_t chunk_size(split *s, plumb *analyser) {
  switch (s->mode % 6) {
  case 0: return 1;
  case 1: return 1 + lcg(&s->seed) % MAX_BLOCK;
  case 2: return plumb_hop_frames(analyser);
  case 3: return plumb_hop_frames(analyser) + 1;
  case 4: return 1 + lcg(&s->seed) % 17;
  default: return MAX_BLOCK;
  }
}

static void run_script(epoch *e, const script_info *info, split *s) {
  size_t i = 0;
  while (i < info->ops) {
    const op *o = &script[i];
    if (o->kind == OP_PROCESS && s->resplit) {
      size_t begin = o->offset, end = o->offset + o->count;
      while (i + 1 < info->ops && script[i + 1].kind == OP_PROCESS) {
        ++i;
        end = script[i].offset + script[i].count;
      }
      for (size_t at = begin; at < end;) {
        size_t n = chunk_size(s, e->analyser);
        if (n > end - at) n = end - at;
        feed(e, pool + at, n);
        at += n;
      }
      ++i;
      continue;
    }
    if (verbose() && o->kind != OP_MARK_TRANSPORT)
      fprintf(stderr, "op %d at sample %llu (%zu samples)\n", (int)o->kind,
              (unsigned long long)e->samples,
              o->kind == OP_PROCESS ? o->count : 0);
    switch (o->kind) {
    case OP_PROCESS:
      feed(e, pool + o->offset, o->count);
      break;
    case OP_MARK_TIMELINE:
      plumb_mark_timeline(e->analyser, o->transport.position_s, o->transport.speed);
      e->marks_sane = e->marks_sane && o->marks_sane;
      break;
    case OP_MARK_TRANSPORT:
      if (verbose())
        fprintf(stderr, "mark at %llu: %.17g s speed %g beats %d bar %.17g "
                "beat %.17g per bar %.17g bpm %.17g\n",
                (unsigned long long)e->samples, o->transport.position_s,
                o->transport.speed, o->transport.has_beats, o->transport.bar,
                o->transport.bar_beat, o->transport.beats_per_bar,
                o->transport.beats_per_minute);
      plumb_mark_transport(e->analyser, &o->transport);
      e->marks_sane = e->marks_sane && o->marks_sane;
      break;
    case OP_CONFIGURE: {
      plumb_status status = plumb_configure(e->analyser, &o->settings.settings);
      check_status(&o->settings, status, "plumb_configure");
      if (status == PLUMB_OK) {
        e->equal = e->equal && o->settings.equal;
        e->tolerance_fixed = false;
      }
      break;
    }
    case OP_RESET:
      drain(e);
      plumb_reset(e->analyser);
      begin_epoch(e);
      break;
    case OP_FINISH:
      plumb_finish(e->analyser);
      /* plumb.c: a frame and the decoder's lag and look-ahead of silence. */
      e->samples += plumb_frame_frames(e->analyser) +
                    (8u + 3u) * plumb_hop_frames(e->analyser);
      break;
    case OP_POP:
      pop_notes(e, o->pop_main, o->pop_here);
      break;
    case OP_LIVE:
      check_live_and_counts(e, false);
      break;
    }
    ++i;
  }
  if (info->finish_at_end) {
    plumb_finish(e->analyser);
    e->samples += plumb_frame_frames(e->analyser) +
                  (8u + 3u) * plumb_hop_frames(e->analyser);
  }
  drain(e);
}

/* A cached instance as if new, then the input's settings. */
static void prepare(epoch *e, plumb *analyser, double rate_hz,
                    const decoded_settings *d) {
  memset(e, 0, sizeof *e);
  e->analyser = analyser;
  e->rate_hz = rate_hz;
  plumb_settings defaults;
  plumb_settings_default(&defaults, rate_hz);
  FUZZ_CHECK(plumb_configure(analyser, &defaults) == PLUMB_OK,
             "plumb_configure refused the defaults");
  /* Notes of the previous input still queued for the consumer. */
  plumb_note note;
  while (plumb_pop_note(analyser, &note)) {}
  plumb_reset(analyser);
  while (plumb_pop_note_here(analyser, &note)) {}
  plumb_status status = plumb_configure(analyser, &d->settings);
  check_status(d, status, "plumb_configure");
  bool taken = status == PLUMB_OK;
  e->equal = taken ? d->equal : true;
  e->tolerance_cents = taken ? d->settings.tolerance_cents : 10.0;
  e->marks_sane = true;
  e->hop = plumb_hop_frames(analyser);
  e->frame = plumb_frame_frames(analyser);
  FUZZ_CHECK(e->hop > 0 && e->frame >= e->hop &&
                 plumb_analysis_delay_frames(analyser) > 0,
             "hop %u frame %u", e->hop, e->frame);
  begin_epoch(e);
}

static void try_bad_rate(fuzz_input *in) {
  double rate_hz = bad_rate(fuzz_u8(in));
  decoded_settings d;
  decode_settings(in, 48000.0, &d);
  d.settings.sample_rate_hz = rate_hz;
  plumb_status status = PLUMB_OK;
  plumb *analyser = plumb_new(&d.settings, &status);
  FUZZ_CHECK(analyser == NULL && (status == PLUMB_ERR_SAMPLE_RATE ||
                                  status == PLUMB_ERR_ARGUMENT),
             "plumb_new at %g Hz: %p, status %d", rate_hz, (void *)analyser,
             (int)status);
  plumb_free(analyser);
  FUZZ_CHECK(plumb_new(NULL, &status) == NULL && status == PLUMB_ERR_ARGUMENT,
             "plumb_new(NULL) gave status %d", (int)status);
}

/* plumb_new with the input's settings, for a few of the inputs: the same
   validation as plumb_configure, and a fresh instance must behave as a
   reset cached one. */
static void try_new(double rate_hz, const decoded_settings *d) {
  plumb_settings settings = d->settings;
  settings.sample_rate_hz = rate_hz;
  plumb_status status = PLUMB_ERR_MEMORY;
  plumb *analyser = plumb_new(&settings, &status);
  check_status(d, status, "plumb_new");
  FUZZ_CHECK((analyser != NULL) == (status == PLUMB_OK), "instance %p status %d",
             (void *)analyser, (int)status);
  plumb_free(analyser);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size) {
  if (verbose()) fprintf(stderr, "input of %zu bytes\n", size);
  fuzz_input in = fuzz_input_of(data, size);
  uint8_t first = fuzz_u8(&in);
  if (first >= 250) {
    try_bad_rate(&in);
    return 0;
  }
  size_t rate_index = first % GOOD_RATES;
  double rate_hz = good_rates_hz[rate_index];
  uint8_t flags = fuzz_u8(&in);
  decoded_settings d;
  decode_settings(&in, rate_hz, &d);
  if ((flags & 0x70) == 0x70) try_new(rate_hz, &d);
  bool differential = (flags & 3) == 0;
  split s = {false, 0, 0};
  if (differential) {
    s.mode = fuzz_u8(&in);
    s.seed = fuzz_u32(&in);
  }
  script_info info = decode_script(&in, rate_hz);

  epoch a;
  prepare(&a, cached(rate_index, 0), rate_hz, &d);
  a.recording = differential;
  split whole = {false, 0, 0};
  run_script(&a, &info, &whole);
  if (differential) {
    plumb_get_counts(a.analyser, &recorded_counts);
    epoch b;
    prepare(&b, cached(rate_index, 1), rate_hz, &d);
    b.comparing = true;
    s.resplit = true;
    run_script(&b, &info, &s);
    FUZZ_CHECK(b.notes_seen == a.notes_seen && b.live_seen == a.live_seen,
               "block sizes changed the number of notes: %zu, then %zu",
               a.notes_seen, b.notes_seen);
    plumb_counts counts;
    plumb_get_counts(b.analyser, &counts);
    FUZZ_CHECK(counts.notes == recorded_counts.notes &&
                   counts.flagged == recorded_counts.flagged &&
                   counts.dropped == recorded_counts.dropped &&
                   counts.bad_samples == recorded_counts.bad_samples,
               "block sizes changed the counts");
  }
  return 0;
}
