/*
  One note measured from its frames, in order: its edges (note_edges.c),
  its steady part (steady_part.c), the stiff-string fit of its partials
  and the pitch under it (partial_fit.c), its steadiness (steadiness.c),
  whether it has a definite pitch at all (definite_pitch.c), the nearest
  target and the verdict, then its timbre (timbre.c) and its envelope
  (envelope.c).
*/
#include "measures/note_measures.h"

#include "measures/definite_pitch.h"
#include "measures/envelope.h"
#include "measures/note_edges.h"
#include "measures/partial_fit.h"
#include "measures/steadiness.h"
#include "measures/steady_part.h"
#include "measures/timbre.h"

#include <math.h>
#include <string.h>

/* Common practice, no source; tuned on the project's test takes. */
#define MIN_VOICED_FRACTION 0.4    /* below this an event has no definite pitch */
#define MIN_NOTE_HARMONIC_RATIO 0.5
#define UNSTEADY_SPREAD_FACTOR 1.5 /* of the tolerance, without vibrato */

static void leave_unpitched(plumb_note *note) {
  note->midi = -1;
  note->target_hz = note->f0_hz = note->cents = NAN;
  note->spread_cents = note->drift_cents_per_s = NAN;
  note->vibrato_hz = note->vibrato_cents = NAN;
  note->inharmonicity_b = NAN;
  note->partials = -1;
  note->verdict = PLUMB_VERDICT_UNPITCHED;
}

static void clear_note(plumb_note *note) {
  memset(note, 0, sizeof *note);
  note->midi = -1;
  note->partials = -1;
  note->target_hz = note->f0_hz = note->cents = NAN;
  note->spread_cents = note->drift_cents_per_s = NAN;
  note->vibrato_hz = note->vibrato_cents = note->confidence = NAN;
  note->inharmonicity_b = note->hnr_db = note->odd_even_db = NAN;
  note->centroid_hz = note->attack_ms = note->decay_ms = NAN;
  note->sustain_db = note->release_ms = note->peak_dbfs = NAN;
  note->decay_db_per_s = NAN;
  for (int k = 0; k < 3; ++k) note->tristimulus[k] = NAN;
  note->timeline_s = note->bar = note->beat = NAN;
  for (int k = 0; k < PLUMB_MAX_PARTIALS; ++k) note->partial_cents[k] = NAN;
}

static plumb_verdict judge(const measure_context *context, const plumb_note *note,
                           bool vibrato) {
  if (note->cents > context->tolerance_cents) return PLUMB_VERDICT_SHARP;
  if (note->cents < -context->tolerance_cents) return PLUMB_VERDICT_FLAT;
  if (!vibrato && note->spread_cents > UNSTEADY_SPREAD_FACTOR * context->tolerance_cents)
    return PLUMB_VERDICT_UNSTEADY;
  return PLUMB_VERDICT_IN_TUNE;
}

/* Pitch and harmonicity; false, with the note left unpitched, for an
   event with no definite pitch. */
static bool measure_pitch(const measure_context *context, const frame_record *frames,
                          int count, double *scratch, plumb_note *note) {
  note->start_s = plumb_note_edges_start_s(context, frames, count);
  note->end_s = plumb_note_edges_end_s(context, frames, count);
  /* A sound shorter than the frame has no step-shaped edges for the lead
     of the onset's refinement, and the frames before the first whole one
     all sit at sample 0, so the refined onset can pass the refined offset
     (tests/fuzz/regressions/core/): keep them in order, with the onset at
     the frame the note was found at. */
  if (note->start_s > note->end_s)
    note->start_s = fmin(plumb_note_edges_frame_time_s(context, &frames[0]), note->end_s);
  float peak = 0.0f;
  int voiced = 0;
  for (int i = 0; i < count; ++i) {
    if (frames[i].peak > peak) peak = frames[i].peak;
    voiced += frames[i].voiced;
  }
  /* A note with no sample above zero has no peak level: NaN, as plumb.h
     has it, not -inf (process.c drops such segments before they get here). */
  note->peak_dbfs = peak > 0.0f ? 20.0 * log10((double)peak) : NAN;
  steady_part part;
  if (voiced < 3 || voiced < MIN_VOICED_FRACTION * count ||
      !plumb_steady_part_find(context, frames, count, note->start_s, note->end_s,
                        scratch, &part)) {
    leave_unpitched(note);
    return false;
  }
  partial_model model = plumb_partial_model_fit(context, frames, &part);
  plumb_partial_model_cache(&model, frames, count, scratch + 4 * count);
  note->inharmonicity_b = model.b;
  note->partials = model.partials > 0 ? model.partials : -1;
  double *cents = scratch;
  int n = plumb_steadiness_uniform_cents(frames, &part, &model, cents);
  vibrato_reading vibrato;
  plumb_steadiness_drift_and_vibrato(context, cents, n, scratch + n, &vibrato,
                               &note->drift_cents_per_s);
  double centre_cents = vibrato.present ? vibrato.centre_cents
                                        : plumb_steadiness_robust_mean(cents, n, scratch + n);
  double sum_probability, sum_ratio;
  int steady_voiced;
  note->spread_cents = plumb_steadiness_spread(frames, &part, &model, centre_cents,
                                         &sum_probability, &sum_ratio, &steady_voiced);
  if (sum_ratio / steady_voiced < MIN_NOTE_HARMONIC_RATIO) {
    leave_unpitched(note);
    return false;
  }
  if (vibrato.present) {
    note->vibrato_hz = vibrato.rate_hz;
    note->vibrato_cents = vibrato.extent_cents;
  }
  /* The cents are of the model's fundamental, so the centre is f0 itself. */
  note->f0_hz = part.reference_hz * exp2(centre_cents / 1200.0);
  if (frames[0].legato_start ? context->previous_unpitched
                             : plumb_definite_pitch_fits_no_series(context, frames, count, note->f0_hz,
                                                            &model)) {
    leave_unpitched(note);
    return false;
  }
  note->midi = plumb_tuning_nearest(&context->tuning, note->f0_hz,
                                    &note->target_hz, &note->cents);
  note->confidence = (sum_probability / steady_voiced) * (sum_ratio / steady_voiced);
  note->verdict = judge(context, note, vibrato.present);
  plumb_note_timbre(context, frames, &part, &model, note);
  return true;
}

void plumb_note_measure(const measure_context *context, const frame_record *frames,
                  int count, double *scratch, float *levels_db, plumb_note *note) {
  clear_note(note);
  bool pitched = measure_pitch(context, frames, count, scratch, note);
  if (!pitched) plumb_note_mode_cents(context, frames, count, note);
  plumb_note_envelope(context, frames, count, pitched ? note->f0_hz : 0.0, levels_db, note);
}
