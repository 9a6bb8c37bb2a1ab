/* Host transport marks: which timeline position belongs to which sample. */
#include "notes/timeline.h"

#include <math.h>

#define BEAT_ROUNDING 0.0005 /* half the log's 0.001 beat */

void plumb_timeline_reset(timeline_marks *marks) { marks->count = 0; }

static bool beats_usable(const plumb_transport *t) {
  return t->has_beats && isfinite(t->bar) && isfinite(t->bar_beat) &&
         isfinite(t->beats_per_bar) && t->beats_per_bar > 0.0 &&
         isfinite(t->beats_per_minute) && t->beats_per_minute > 0.0;
}

void plumb_timeline_mark(timeline_marks *marks, uint64_t sample, const plumb_transport *transport) {
  if (!isfinite(transport->position_s) || !isfinite(transport->speed)) return;
  uint32_t slot = marks->count & (PLUMB_TIMELINE_MARKS - 1);
  marks->sample[slot] = sample;
  marks->transport[slot] = *transport;
  marks->transport[slot].has_beats = beats_usable(transport);
  marks->count++;
}

/* Bar and beat (both counted from 1, as a musician counts) `seconds` of
   audio after the mark. */
static void beats_after(const plumb_transport *t, double seconds, double *bar,
                        double *beat) {
  double beats = t->bar * t->beats_per_bar + t->bar_beat +
                 t->speed * seconds * t->beats_per_minute / 60.0;
  double whole_bars = floor(beats / t->beats_per_bar);
  *bar = whole_bars + 1.0;
  *beat = beats - whole_bars * t->beats_per_bar + 1.0;
  /* Within half a thousandth of a beat of the bar line (the log's
     resolution), the onset is on the next bar's first beat, not on a
     beat the bar does not have. */
  if (*beat >= t->beats_per_bar + 1.0 - BEAT_ROUNDING) {
    *bar += 1.0;
    *beat -= t->beats_per_bar;
  }
}

void plumb_timeline_locate(const timeline_marks *marks, uint64_t sample, double sample_rate_hz,
                     double *position_s, double *bar, double *beat) {
  *bar = *beat = NAN;
  uint32_t kept = marks->count < PLUMB_TIMELINE_MARKS ? marks->count : PLUMB_TIMELINE_MARKS;
  if (kept == 0) {
    *position_s = (double)sample / sample_rate_hz;
    return;
  }
  /* The newest mark at or before the sample (marks arrive in order);
     older than every mark kept, extrapolate back from the oldest. */
  uint32_t slot = (marks->count - kept) & (PLUMB_TIMELINE_MARKS - 1);
  for (uint32_t i = 0; i < kept; ++i) {
    uint32_t s = (marks->count - 1 - i) & (PLUMB_TIMELINE_MARKS - 1);
    if (marks->sample[s] <= sample) {
      slot = s;
      break;
    }
  }
  const plumb_transport *t = &marks->transport[slot];
  double seconds = ((double)sample - (double)marks->sample[slot]) / sample_rate_hz;
  *position_s = t->position_s + t->speed * seconds;
  if (t->has_beats) beats_after(t, seconds, bar, beat);
  /* A host's finite but enormous values (a bar of 1e308) overflow here: a
     reading that is not a number does not apply (plumb.h), so NaN. */
  if (!isfinite(*position_s)) *position_s = NAN;
  if (!isfinite(*bar) || !isfinite(*beat)) *bar = *beat = NAN;
}
