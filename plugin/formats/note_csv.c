/*
  One note record to one row of the session log (docs/log-format.md).
*/
#include "note_csv.h"

#include "number_text.h"
#include "text_sink.h"

#include <math.h>
#include <stdbool.h>

/* ------------------------------------------------------------- the row */

static const char csv_header[] =
    "index,start_s,end_s,timeline_s,note,midi,target_hz,f0_hz,cents,"
    "spread_cents,drift_cents_per_s,vibrato_hz,vibrato_cents,confidence,"
    "inharmonicity_b,partials,hnr_db,odd_even_db,centroid_hz,attack_ms,"
    "decay_ms,sustain_db,release_ms,peak_dbfs,verdict,"
    "bar,beat,tristimulus_1,tristimulus_2,tristimulus_3,decay_db_per_s,partial_cents";

const char *plumb_csv_header(void) { return csv_header; }

/* Decimals per unit, as the log format fixes them (docs/log-format.md). */
enum {
  SECONDS_DECIMALS = 4,
  HZ_DECIMALS = 3,
  CENTS_DECIMALS = 2,
  CENTS_PER_S_DECIMALS = 2,
  VIBRATO_HZ_DECIMALS = 2,
  CONFIDENCE_DECIMALS = 3,
  B_DECIMALS = 3,
  DB_DECIMALS = 2,
  MS_DECIMALS = 1,
  BEAT_DECIMALS = 3,
  SHARE_DECIMALS = 4,
  DB_PER_S_DECIMALS = 2
};

/* Each field is preceded by the comma that ends the one before. */
static void field_fixed(text_sink *sink, double value, int decimals) {
  text_sink_char(sink, ',');
  number_text_put_fixed(sink, value, decimals);
}

static void field_count(text_sink *sink, int value) {
  text_sink_char(sink, ',');
  if (value >= 0) {
    text_sink_int(sink, value);
  }
}

static void field_note_name(text_sink *sink, int midi) {
  text_sink_char(sink, ',');
  if (midi >= 0 && midi <= 127) {
    char name[8];
    plumb_note_name(midi, name);
    text_sink_text(sink, name);
  }
}

static void field_verdict(text_sink *sink, plumb_verdict verdict) {
  text_sink_char(sink, ',');
  const char *name = plumb_verdict_name(verdict); /* NULL if not a verdict */
  if (name) {
    text_sink_text(sink, name);
  }
}

static void put_pitch_fields(text_sink *sink, const plumb_note *note) {
  field_note_name(sink, note->midi);
  field_count(sink, note->midi);
  field_fixed(sink, note->target_hz, HZ_DECIMALS);
  field_fixed(sink, note->f0_hz, HZ_DECIMALS);
  field_fixed(sink, note->cents, CENTS_DECIMALS);
  field_fixed(sink, note->spread_cents, CENTS_DECIMALS);
  field_fixed(sink, note->drift_cents_per_s, CENTS_PER_S_DECIMALS);
  field_fixed(sink, note->vibrato_hz, VIBRATO_HZ_DECIMALS);
  field_fixed(sink, note->vibrato_cents, CENTS_DECIMALS);
  field_fixed(sink, note->confidence, CONFIDENCE_DECIMALS);
}

static void put_sound_fields(text_sink *sink, const plumb_note *note) {
  text_sink_char(sink, ',');
  number_text_put_scientific(sink, note->inharmonicity_b, B_DECIMALS);
  field_count(sink, note->partials);
  field_fixed(sink, note->hnr_db, DB_DECIMALS);
  field_fixed(sink, note->odd_even_db, DB_DECIMALS);
  field_fixed(sink, note->centroid_hz, HZ_DECIMALS);
  field_fixed(sink, note->attack_ms, MS_DECIMALS);
  field_fixed(sink, note->decay_ms, MS_DECIMALS);
  field_fixed(sink, note->sustain_db, DB_DECIMALS);
  field_fixed(sink, note->release_ms, MS_DECIMALS);
  field_fixed(sink, note->peak_dbfs, DB_DECIMALS);
  field_verdict(sink, note->verdict);
}

/* The partials' deviations as "k:cents" entries separated by spaces, for
   the partials found (docs/log-format.md). */
static void field_partial_cents(text_sink *sink, const plumb_note *note) {
  text_sink_char(sink, ',');
  bool first = true;
  for (int k = 0; k < PLUMB_MAX_PARTIALS; ++k) {
    double cents = note->partial_cents[k];
    if (!isfinite(cents)) {
      continue;
    }
    if (!first) {
      text_sink_char(sink, ' ');
    }
    first = false;
    text_sink_unsigned(sink, (uint64_t)k + 1, 1);
    text_sink_char(sink, ':');
    if (!signbit(cents)) {
      text_sink_char(sink, '+');
    }
    number_text_put_fixed(sink, cents, CENTS_DECIMALS);
  }
}

/* The columns after the required ones. */
static void put_extra_fields(text_sink *sink, const plumb_note *note) {
  field_fixed(sink, note->bar, 0);
  field_fixed(sink, note->beat, BEAT_DECIMALS);
  for (int t = 0; t < 3; ++t) {
    field_fixed(sink, note->tristimulus[t], SHARE_DECIMALS);
  }
  field_fixed(sink, note->decay_db_per_s, DB_PER_S_DECIMALS);
  field_partial_cents(sink, note);
}

int plumb_note_to_csv(const plumb_note *note, char *buffer, size_t size) {
  if (!note) {
    return -1;
  }
  text_sink sink = text_sink_start(buffer, size);
  text_sink_unsigned(&sink, note->index, 1);
  field_fixed(&sink, note->start_s, SECONDS_DECIMALS);
  field_fixed(&sink, note->end_s, SECONDS_DECIMALS);
  field_fixed(&sink, note->timeline_s, SECONDS_DECIMALS);
  put_pitch_fields(&sink, note);
  put_sound_fields(&sink, note);
  put_extra_fields(&sink, note);
  return text_sink_finish(&sink);
}
