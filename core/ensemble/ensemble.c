/*
  plumb_ensemble_run(): pairs (pairs.c), their intervals, ratios and
  beats (just_ratios.c), the tracks' offsets (offsets.c) and the drifts
  (drift.c).
*/
#include "ensemble/ensemble.h"

#include <math.h>
#include <stdlib.h>

void plumb_ensemble_settings_default(plumb_ensemble_settings *settings) {
  settings->target = PLUMB_INTERVALS_EQUAL;
  settings->tolerance_cents = 10.0;
  settings->min_overlap_s = 0.080;
}

const char *plumb_pair_verdict_name(plumb_pair_verdict verdict) {
  switch (verdict) {
  case PLUMB_PAIR_IN_TUNE:
    return "in-tune";
  case PLUMB_PAIR_WIDE:
    return "wide";
  case PLUMB_PAIR_NARROW:
    return "narrow";
  default:
    return "";
  }
}

void plumb_ensemble_note_from(const plumb_note *note, plumb_ensemble_note *out) {
  double length_s = note->end_s - note->start_s;
  double start_s = isfinite(note->timeline_s) ? note->timeline_s : note->start_s;
  bool pitched = note->verdict != PLUMB_VERDICT_UNPITCHED && note->f0_hz > 0.0;
  *out = (plumb_ensemble_note){.index = note->index,
                               .start_s = start_s,
                               .end_s = start_s + length_s,
                               .f0_hz = pitched ? note->f0_hz : NAN,
                               .inharmonicity_b = note->inharmonicity_b,
                               .vibrato = isfinite(note->vibrato_hz),
                               .bar = note->bar,
                               .beat = note->beat};
}

static bool settings_ok(const plumb_ensemble_settings *settings) {
  return (settings->target == PLUMB_INTERVALS_EQUAL || settings->target == PLUMB_INTERVALS_JUST) &&
         isfinite(settings->tolerance_cents) && settings->tolerance_cents > 0.0 &&
         isfinite(settings->min_overlap_s) && settings->min_overlap_s > 0.0;
}

static void count_pairs(plumb_ensemble_result *result) {
  for (size_t i = 0; i < result->pair_count; ++i) {
    const plumb_ensemble_pair *pair = &result->pairs[i];
    bool flagged = pair->verdict == PLUMB_PAIR_WIDE || pair->verdict == PLUMB_PAIR_NARROW;
    result->tracks[pair->track_low].pairs += 1;
    result->tracks[pair->track_high].pairs += 1;
    result->tracks[pair->track_low].flagged_pairs += flagged;
    result->tracks[pair->track_high].flagged_pairs += flagged;
    result->flagged_pairs += flagged;
  }
}

static plumb_status measure(const plumb_ensemble_track *tracks, size_t count,
                            const plumb_ensemble_settings *settings,
                            plumb_ensemble_result *result) {
  plumb_status status = plumb_ensemble_pairs_find(tracks, count, settings->min_overlap_s,
                                                  &result->pairs, &result->pair_count);
  if (status != PLUMB_OK) return status;
  for (size_t i = 0; i < result->pair_count; ++i)
    plumb_ensemble_pair_measure(tracks, settings, &result->pairs[i]);
  count_pairs(result);
  double *offsets = malloc((count ? count : 1) * sizeof *offsets);
  if (!offsets) return PLUMB_ERR_MEMORY;
  status =
      plumb_ensemble_offsets(result->pairs, result->pair_count, count, settings->target, offsets);
  for (size_t t = 0; status == PLUMB_OK && t < count; ++t)
    result->tracks[t].offset_cents = offsets[t];
  free(offsets);
  if (status != PLUMB_OK) return status;
  result->drift_cents_per_min = plumb_ensemble_drift(tracks, count, result->tracks, &status);
  return status;
}

plumb_status plumb_ensemble_run(const plumb_ensemble_track *tracks, size_t count,
                                const plumb_ensemble_settings *settings,
                                plumb_ensemble_result **result) {
  if (!result) return PLUMB_ERR_ARGUMENT;
  *result = NULL;
  if ((!tracks && count > 0) || !settings || !settings_ok(settings)) return PLUMB_ERR_ARGUMENT;
  for (size_t t = 0; t < count; ++t)
    if (!tracks[t].notes && tracks[t].count > 0) return PLUMB_ERR_ARGUMENT;
  plumb_ensemble_result *made = calloc(1, sizeof *made);
  if (!made) return PLUMB_ERR_MEMORY;
  made->tracks = calloc(count ? count : 1, sizeof *made->tracks);
  made->track_count = count;
  made->drift_cents_per_min = NAN;
  plumb_status status = made->tracks ? PLUMB_OK : PLUMB_ERR_MEMORY;
  for (size_t t = 0; status == PLUMB_OK && t < count; ++t) {
    made->tracks[t].notes = tracks[t].count;
    made->tracks[t].offset_cents = made->tracks[t].drift_cents_per_min = NAN;
  }
  if (status == PLUMB_OK) status = measure(tracks, count, settings, made);
  if (status != PLUMB_OK) {
    plumb_ensemble_free(made);
    return status;
  }
  *result = made;
  return PLUMB_OK;
}

void plumb_ensemble_free(plumb_ensemble_result *result) {
  if (!result) return;
  free(result->pairs);
  free(result->tracks);
  free(result);
}
