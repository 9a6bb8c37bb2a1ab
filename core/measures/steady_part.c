/*
  A note's steady part. The frames that see the note's neighbours, its
  onset transient, its attack and its dying tail are left out, then the
  frames whose pitch lies outside a band around the median: what is left
  is the pitch the player held.
*/
#include "measures/steady_part.h"

#include "util/stats.h"

#include <math.h>

/* Common practice, no source; tuned on the project's test takes. */
#define EDGE_TRIM_FRAMES 2         /* window overlap with what comes before/after */
#define STEADY_BAND_CENTS 25.0     /* attack scoops and release glides lie outside */
#define STEADY_LEVEL_RANGE_DB 20.0 /* common practice, no source */
#define ATTACK_END_DB 3.0          /* common practice, no source */
#define ATTACK_SKIP_MAX_S 0.15

static double frame_cents(const frame_record *frame, double reference_hz) {
  return 1200.0 * log2(frame->f0_hz / reference_hz);
}

bool plumb_steady_frame(const frame_record *f, const steady_part *part) {
  return f->voiced && fabs(1200.0 * log2(f->f0_hz / part->reference_hz)) <= part->band_cents;
}

/* The steady part: trim the window overlap at both ends, then attack and
   release frames whose pitch lies outside a band around the note's median. */
bool plumb_steady_part_find(const measure_context *context, const frame_record *frames,
                      int count, double start_s, double end_s, double *scratch,
                      steady_part *part) {
  /* Frames whose window reaches over the note's start or end by more than
     a quarter of its length see the neighbouring sound too. */
  double margin_s = 0.25 * context->frame_s;
  /* ... and the onset's own transient: the first tenth of the note, at
     most ATTACK_SKIP_MAX_S (common practice, no source). */
  double attack_skip_s = fmin(ATTACK_SKIP_MAX_S, 0.1 * (end_s - start_s));
  int first = 0, last = count - 1;
  while (first < last && (double)frames[first].centre_sample / context->sample_rate_hz <
                             start_s + fmax(margin_s, attack_skip_s))
    ++first;
  while (last > first &&
         (double)frames[last].centre_sample / context->sample_rate_hz > end_s - margin_s)
    --last;
  if (last - first < 2) {
    first = count > 3 * EDGE_TRIM_FRAMES ? EDGE_TRIM_FRAMES : 0;
    last = count - 1 - first;
  }
  /* A dying note's tail (a piano string's slower second decay, a release
     that rings on) is not its pitch: the steady part ends where the level
     has fallen STEADY_LEVEL_RANGE_DB below the note's peak. */
  double peak_dbfs = frames[first].level_dbfs;
  for (int i = first; i <= last; ++i)
    if (frames[i].level_dbfs > peak_dbfs) peak_dbfs = frames[i].level_dbfs;
  int loudest = first;
  while (frames[loudest].level_dbfs < peak_dbfs) ++loudest;
  /* The attack is not the pitch either: the steady part starts where the
     level has risen to within ATTACK_END_DB of the peak (at once for a
     struck or plucked note; after the bow, breath or voice has settled). */
  int attack_end = first;
  while (attack_end < loudest && frames[attack_end].level_dbfs < peak_dbfs - ATTACK_END_DB)
    ++attack_end;
  int end = last;
  for (int i = loudest; i <= last; ++i)
    if (frames[i].level_dbfs < peak_dbfs - STEADY_LEVEL_RANGE_DB) {
      end = i - 1;
      break;
    }
  if (end - first >= 2) last = end;
  if (last - attack_end >= 2) first = attack_end;
  int n = 0;
  for (int i = first; i <= last; ++i)
    if (frames[i].voiced) scratch[n++] = frames[i].f0_hz;
  if (n < 3) return false;
  double reference_hz = plumb_stats_median(scratch, n);
  int m = 0;
  for (int i = first; i <= last; ++i)
    if (frames[i].voiced) scratch[m++] = fabs(frame_cents(&frames[i], reference_hz));
  /* Sinusoidal vibrato of extent e has a median |deviation| of e/sqrt(2). */
  double band = STEADY_BAND_CENTS + 1.6 * plumb_stats_median(scratch, m);
  while (first < last && !(frames[first].voiced &&
                           fabs(frame_cents(&frames[first], reference_hz)) <= band))
    ++first;
  while (last > first && !(frames[last].voiced &&
                           fabs(frame_cents(&frames[last], reference_hz)) <= band))
    --last;
  part->first = first;
  part->last = last;
  part->reference_hz = reference_hz;
  part->band_cents = band;
  return last - first >= 2;
}
