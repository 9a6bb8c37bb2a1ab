/*
  Pairing by a sweep over the notes sorted by start (a sweep line over
  interval overlaps; common practice, no source): a note can
  only overlap a note that starts before it and still sounds, so each
  note is compared with the notes in the sounding list alone, never with
  the whole session.
*/
#include "ensemble/pairs.h"

#include "ensemble/just_ratios.h"

#include <math.h>
#include <stdlib.h>

/* Times in the logs have four decimals: overlaps this close to the
   minimum count as reaching it. */
#define OVERLAP_SLACK_S 1e-6

typedef struct {
  double start_s, end_s;
  size_t track, note;
} note_ref;

static int compare_refs(const void *a, const void *b) {
  const note_ref *x = a;
  const note_ref *y = b;
  if (x->start_s != y->start_s) return x->start_s < y->start_s ? -1 : 1;
  if (x->track != y->track) return x->track < y->track ? -1 : 1;
  return x->note < y->note ? -1 : (x->note > y->note);
}

static bool usable(const plumb_ensemble_note *note) {
  return isfinite(note->start_s) && isfinite(note->end_s) && note->end_s > note->start_s;
}

/* Every usable note as a reference, sorted by start. */
static note_ref *sorted_refs(const plumb_ensemble_track *tracks, size_t count, size_t *n) {
  size_t total = 0;
  for (size_t t = 0; t < count; ++t) total += tracks[t].count;
  note_ref *refs = malloc((total ? total : 1) * sizeof *refs);
  if (!refs) return NULL;
  *n = 0;
  for (size_t t = 0; t < count; ++t) {
    for (size_t i = 0; i < tracks[t].count; ++i) {
      const plumb_ensemble_note *note = &tracks[t].notes[i];
      if (usable(note)) refs[(*n)++] = (note_ref){note->start_s, note->end_s, t, i};
    }
  }
  if (*n > 1) qsort(refs, *n, sizeof *refs, compare_refs);
  return refs;
}

typedef struct {
  plumb_ensemble_pair *items;
  size_t count, capacity;
} pair_list;

static bool push_pair(pair_list *list, const note_ref *earlier, const note_ref *later) {
  if (list->count == list->capacity) {
    size_t wanted = list->capacity ? 2 * list->capacity : 256;
    plumb_ensemble_pair *grown = realloc(list->items, wanted * sizeof *grown);
    if (!grown) return false;
    list->items = grown;
    list->capacity = wanted;
  }
  bool first = earlier->track < later->track;
  const note_ref *a = first ? earlier : later;
  const note_ref *b = first ? later : earlier;
  list->items[list->count++] = (plumb_ensemble_pair){.start_s = later->start_s,
                                                     .end_s = fmin(earlier->end_s, later->end_s),
                                                     .track_low = a->track,
                                                     .note_low = a->note,
                                                     .track_high = b->track,
                                                     .note_high = b->note};
  return true;
}

/* The sweep; `sounding` has room for every note. */
static bool sweep(const note_ref *refs, size_t n, double min_overlap_s, size_t *sounding,
                  pair_list *list) {
  size_t live = 0;
  for (size_t i = 0; i < n; ++i) {
    const note_ref *next = &refs[i];
    size_t kept = 0;
    for (size_t k = 0; k < live; ++k) {
      const note_ref *old = &refs[sounding[k]];
      /* Later notes start no earlier than this one: an old note that
         cannot overlap it long enough cannot overlap them either. */
      if (old->end_s - next->start_s + OVERLAP_SLACK_S < min_overlap_s) continue;
      sounding[kept++] = sounding[k];
      double overlap_s = fmin(old->end_s, next->end_s) - next->start_s;
      if (old->track != next->track && overlap_s + OVERLAP_SLACK_S >= min_overlap_s &&
          !push_pair(list, old, next))
        return false;
    }
    live = kept;
    if (next->end_s - next->start_s + OVERLAP_SLACK_S >= min_overlap_s) sounding[live++] = i;
  }
  return true;
}

plumb_status plumb_ensemble_pairs_find(const plumb_ensemble_track *tracks, size_t count,
                                       double min_overlap_s, plumb_ensemble_pair **pairs,
                                       size_t *pair_count) {
  *pairs = NULL;
  *pair_count = 0;
  size_t n = 0;
  note_ref *refs = sorted_refs(tracks, count, &n);
  size_t *sounding = malloc((n ? n : 1) * sizeof *sounding);
  pair_list list = {NULL, 0, 0};
  bool ok = refs && sounding && sweep(refs, n, min_overlap_s, sounding, &list);
  free(refs);
  free(sounding);
  if (!ok) {
    free(list.items);
    return PLUMB_ERR_MEMORY;
  }
  *pairs = list.items;
  *pair_count = list.count;
  return PLUMB_OK;
}

static bool pitched(const plumb_ensemble_note *note) {
  return isfinite(note->f0_hz) && note->f0_hz > 0.0;
}

static plumb_pair_verdict judge(double deviation_cents, double tolerance_cents) {
  if (deviation_cents > tolerance_cents) return PLUMB_PAIR_WIDE;
  if (deviation_cents < -tolerance_cents) return PLUMB_PAIR_NARROW;
  return PLUMB_PAIR_IN_TUNE;
}

double plumb_ensemble_pair_target_dev(const plumb_ensemble_pair *pair,
                                      plumb_interval_target target) {
  if (pair->verdict == PLUMB_PAIR_NO_VERDICT) return NAN;
  return target == PLUMB_INTERVALS_JUST ? pair->just_dev_cents : pair->et_dev_cents;
}

/* The beat of the ratio's coincident partials, where it is heard. */
static double pair_beat(const plumb_ensemble_note *low, const plumb_ensemble_note *high, int p,
                        int q) {
  if (low->vibrato || high->vibrato || p < 1 || q < 1 || p > PLUMB_ENSEMBLE_MAX_BEAT_TERM ||
      q > PLUMB_ENSEMBLE_MAX_BEAT_TERM)
    return NAN;
  return plumb_beat_hz(low->f0_hz, low->inharmonicity_b, p, high->f0_hz, high->inharmonicity_b, q);
}

void plumb_ensemble_pair_measure(const plumb_ensemble_track *tracks,
                                 const plumb_ensemble_settings *settings,
                                 plumb_ensemble_pair *pair) {
  const plumb_ensemble_note *a = &tracks[pair->track_low].notes[pair->note_low];
  const plumb_ensemble_note *b = &tracks[pair->track_high].notes[pair->note_high];
  pair->interval_cents = pair->et_dev_cents = pair->just_dev_cents = pair->beat_hz = NAN;
  pair->semitones = -1;
  pair->just_p = pair->just_q = 0;
  pair->verdict = PLUMB_PAIR_NO_VERDICT;
  if (!pitched(a) || !pitched(b)) return;
  if (b->f0_hz < a->f0_hz) {
    size_t track = pair->track_low, note = pair->note_low;
    pair->track_low = pair->track_high;
    pair->note_low = pair->note_high;
    pair->track_high = track;
    pair->note_high = note;
    const plumb_ensemble_note *swap = a;
    a = b;
    b = swap;
  }
  /* 1200 log2 of the frequency ratio (Ellis 1885). */
  pair->interval_cents = 1200.0 * log2(b->f0_hz / a->f0_hz);
  pair->semitones = (int)lround(pair->interval_cents / 100.0);
  pair->et_dev_cents = pair->interval_cents - 100.0 * pair->semitones;
  pair->just_dev_cents = plumb_just_nearest(pair->interval_cents, &pair->just_p, &pair->just_q);
  if (pair->just_p == 0) {
    pair->semitones = -1; /* beyond the table's ten octaves */
    return;
  }
  pair->beat_hz = pair_beat(a, b, pair->just_p, pair->just_q);
  double deviation_cents =
      settings->target == PLUMB_INTERVALS_JUST ? pair->just_dev_cents : pair->et_dev_cents;
  pair->verdict = judge(deviation_cents, settings->tolerance_cents);
}
