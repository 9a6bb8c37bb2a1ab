/*
  Decimation by two for the pitch search. YIN needs only a coarse pitch
  (the harmonic refinement measures it precisely on the full-rate
  spectrum), so it runs at half the sample rate: half the transform length
  and half the lags. The filter is a windowed-sinc half-band lowpass
  (cutoff a quarter of the input rate, Blackman window; Oppenheim & Schafer,
  "Discrete-Time Signal Processing", window method), whose every other tap
  is zero.
*/
#include "frame/halfband.h"

#include <math.h>

void plumb_halfband_init(halfband_filter *filter) {
  const int centre = PLUMB_HALFBAND_TAPS / 2;
  double sum = 0.0;
  for (int k = 0; k < PLUMB_HALFBAND_TAPS; ++k) {
    int m = k - centre;
    double sinc = m == 0 ? 0.5 : sin(0.5 * M_PI * m) / (M_PI * m);
    double x = (double)k / (PLUMB_HALFBAND_TAPS - 1);
    double blackman = 0.42 - 0.5 * cos(2.0 * M_PI * x) + 0.08 * cos(4.0 * M_PI * x);
    filter->taps[k] = sinc * blackman;
    sum += filter->taps[k];
  }
  for (int k = 0; k < PLUMB_HALFBAND_TAPS; ++k) filter->taps[k] /= sum; /* unity at DC */
}

void plumb_halfband_decimate(const halfband_filter *filter, const float *input, int count,
                       float *output) {
  const int centre = PLUMB_HALFBAND_TAPS / 2;
  for (int j = 0; j < count / 2; ++j) {
    const float *x = input + 2 * j + 1; /* the newest sample of the pair */
    double y = filter->taps[centre] * x[-centre];
    for (int k = 1; k <= centre; k += 2) /* the zero taps are skipped */
      y += filter->taps[centre - k] * ((double)x[-centre + k] + x[-centre - k]);
    output[j] = (float)y;
  }
}
