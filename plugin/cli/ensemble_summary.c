#include "ensemble_summary.h"

#include "terminal_text.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static void put_signed(FILE *out, const char *format, double value, int width) {
  if (isfinite(value))
    fprintf(out, format, width, value);
  else
    fprintf(out, "%*s", width, "-");
}

static double pair_dev(const ensemble_outcome *o, const plumb_ensemble_pair *pair) {
  return o->settings->target == PLUMB_INTERVALS_JUST ? pair->just_dev_cents : pair->et_dev_cents;
}

static void print_tracks(FILE *out, const ensemble_outcome *o) {
  fprintf(out, "%-16s %6s %6s %8s %11s %8s\n", "track", "notes", "pairs", "offset", "drift/min",
          "flagged");
  for (size_t t = 0; t < o->count; ++t) {
    const plumb_ensemble_track_result *r = &o->result->tracks[t];
    char name[256];
    fprintf(out, "%-16s %6zu %6zu ", terminal_text(o->logs[t]->stem, name, sizeof name), r->notes,
            r->pairs);
    put_signed(out, "%+*.1f", r->offset_cents, 8);
    fputc(' ', out);
    put_signed(out, "%+*.1f", r->drift_cents_per_min, 11);
    fprintf(out, " %8zu\n", r->flagged_pairs);
  }
}

/* Indices of the flagged pairs, worst first, at most `most`. */
static size_t worst_pairs(const ensemble_outcome *o, size_t *best, size_t most) {
  size_t kept = 0;
  for (size_t i = 0; i < o->result->pair_count; ++i) {
    const plumb_ensemble_pair *pair = &o->result->pairs[i];
    if (pair->verdict != PLUMB_PAIR_WIDE && pair->verdict != PLUMB_PAIR_NARROW) continue;
    double size = fabs(pair_dev(o, pair));
    size_t at = kept < most ? kept++ : most;
    while (at > 0 && fabs(pair_dev(o, &o->result->pairs[best[at - 1]])) < size) {
      if (at < most) best[at] = best[at - 1];
      --at;
    }
    if (at < most) best[at] = i;
  }
  return kept;
}

static void print_pair(FILE *out, const ensemble_outcome *o, const plumb_ensemble_pair *pair) {
  const ensemble_log *low = o->logs[pair->track_low];
  const ensemble_log *high = o->logs[pair->track_high];
  const plumb_ensemble_note *a = &low->notes[pair->note_low];
  const plumb_ensemble_note *b = &high->notes[pair->note_high];
  const plumb_ensemble_note *later = b->start_s >= a->start_s ? b : a;
  char place[32] = "-";
  if (isfinite(later->bar) && isfinite(later->beat))
    snprintf(place, sizeof place, "%.0f:%.2f", later->bar, later->beat);
  char interval[8], names[2][256];
  plumb_interval_name(pair->semitones, interval);
  int minutes = (int)(pair->start_s / 60.0);
  fprintf(out, "%3d:%06.3f %9s  %s/%s %s-%s %-4s ", minutes, pair->start_s - 60.0 * minutes, place,
          terminal_text(low->stem, names[0], sizeof names[0]),
          terminal_text(high->stem, names[1], sizeof names[1]), low->names[pair->note_low],
          high->names[pair->note_high], interval);
  put_signed(out, "%+*.1f", pair_dev(o, pair), 7);
  fputs(" c ", out);
  if (isfinite(pair->beat_hz)) fprintf(out, " beats %.2f Hz", pair->beat_hz);
  fprintf(out, "  %s\n", plumb_pair_verdict_name(pair->verdict));
}

void ensemble_summary_print(FILE *out, const ensemble_outcome *o, const char *folder) {
  fprintf(out, "Ensemble: %zu tracks, %zu pairs, %zu flagged (%s intervals, +-%.1f cents)\n",
          o->count, o->result->pair_count, o->result->flagged_pairs,
          o->settings->target == PLUMB_INTERVALS_JUST ? "just" : "equal-tempered",
          o->settings->tolerance_cents);
  print_tracks(out, o);
  fputs("ensemble drift: ", out);
  put_signed(out, "%+*.1f", o->result->drift_cents_per_min, 1);
  fputs(" cents/min\n", out);
  size_t best[ENSEMBLE_SUMMARY_WORST_PAIRS];
  size_t n = worst_pairs(o, best, ENSEMBLE_SUMMARY_WORST_PAIRS);
  if (n == 0) {
    fputs("No flagged pairs.\n", out);
  } else {
    fputs("Worst pairs\n     time  bar:beat  tracks notes interval  dev\n", out);
    for (size_t i = 0; i < n; ++i) print_pair(out, o, &o->result->pairs[best[i]]);
  }
  char shown[1024];
  fprintf(out, "Ensemble files: %s/ensemble.{pairs.csv,tracks.csv,json}\n",
          terminal_text(folder, shown, sizeof shown));
}
