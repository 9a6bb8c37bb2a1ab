/*
  A half-band FIR decimator by two, so that YIN runs at half the rate.
*/
#ifndef PLUMB_FRAME_HALFBAND_H
#define PLUMB_FRAME_HALFBAND_H



#define PLUMB_HALFBAND_TAPS 31 /* odd; the filter delays by 15 input samples */

typedef struct {
  double taps[PLUMB_HALFBAND_TAPS];
} halfband_filter;

void plumb_halfband_init(halfband_filter *filter);
/* Decimate input[0 .. count) (count even) into count / 2 samples; input
   must be preceded by PLUMB_HALFBAND_TAPS - 1 samples of history. */
void plumb_halfband_decimate(const halfband_filter *filter, const float *input, int count,
                       float *output);

#endif /* PLUMB_FRAME_HALFBAND_H */
