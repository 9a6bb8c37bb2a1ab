/*
  The analysis context the measures' module tests share: 48 kHz, a frame
  of 2048 samples and a hop of 256, as plumb_new() sizes them at that
  rate (core/analyser/plumb.c).
*/
#ifndef PLUMB_TESTS_MEASURE_FIXTURE_H
#define PLUMB_TESTS_MEASURE_FIXTURE_H

#include "measures/measure_context.h"

#include <string.h>

#define RATE_HZ 48000.0
#define FFT     2048
#define HOP     256

static inline measure_context context_48k(void) {
  measure_context c;
  memset(&c, 0, sizeof c);
  c.sample_rate_hz = RATE_HZ;
  c.fft_size = FFT;
  c.hop = HOP;
  c.hop_s = HOP / RATE_HZ;
  c.frame_s = FFT / RATE_HZ;
  return c;
}

#endif /* PLUMB_TESTS_MEASURE_FIXTURE_H */
