/*
  What every note measure needs to know of the analysis and the settings.
*/
#ifndef PLUMB_MEASURES_MEASURE_CONTEXT_H
#define PLUMB_MEASURES_MEASURE_CONTEXT_H

#include "plumb.h"

#include <stdbool.h>

typedef struct {
  double sample_rate_hz;
  double hop_s;
  double frame_s;         /* analysis frame length, for window corrections */
  int fft_size;
  int hop;
  plumb_tuning tuning;
  double tolerance_cents;
  bool previous_unpitched; /* a legato continuation of such a sound is too */
} measure_context;

#endif /* PLUMB_MEASURES_MEASURE_CONTEXT_H */
