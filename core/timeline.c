/* Host transport marks: which timeline position belongs to which sample. */
#include "internal.h"

#include <math.h>

void timeline_reset(timeline_marks *marks) { marks->count = 0; }

void timeline_mark(timeline_marks *marks, uint64_t sample, double position_s,
                   double speed) {
  if (!isfinite(position_s) || !isfinite(speed)) return;
  uint32_t slot = marks->count & (PLUMB_TIMELINE_MARKS - 1);
  marks->sample[slot] = sample;
  marks->position_s[slot] = position_s;
  marks->speed[slot] = speed;
  marks->count++;
}

double timeline_position(const timeline_marks *marks, uint64_t sample,
                         double sample_rate_hz) {
  /* The newest mark at or before the sample; marks arrive in order. */
  uint32_t kept = marks->count < PLUMB_TIMELINE_MARKS ? marks->count
                                                      : PLUMB_TIMELINE_MARKS;
  for (uint32_t i = 0; i < kept; ++i) {
    uint32_t slot = (marks->count - 1 - i) & (PLUMB_TIMELINE_MARKS - 1);
    if (marks->sample[slot] <= sample)
      return marks->position_s[slot] +
             marks->speed[slot] * (double)(sample - marks->sample[slot]) /
                 sample_rate_hz;
  }
  if (kept > 0) {
    /* Older than every mark kept: extrapolate back from the oldest. */
    uint32_t slot = (marks->count - kept) & (PLUMB_TIMELINE_MARKS - 1);
    return marks->position_s[slot] -
           marks->speed[slot] * (double)(marks->sample[slot] - sample) /
               sample_rate_hz;
  }
  return (double)sample / sample_rate_hz;
}
