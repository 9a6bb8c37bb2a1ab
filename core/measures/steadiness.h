/*
  A note's steadiness: drift, vibrato rate and extent (the extent corrected
  for the analysis window, Cohen 1995), centre over whole cycles, spread.
*/
#ifndef PLUMB_MEASURES_STEADINESS_H
#define PLUMB_MEASURES_STEADINESS_H

#include "internal.h"
#include "measures/measure_context.h"
#include "measures/partial_fit.h"
#include "measures/steady_part.h"

typedef struct {
  bool present;
  double rate_hz;
  double extent_cents;
  double centre_cents; /* mean over whole cycles */
  bool has_cycle_drift;
  double cycle_drift_cents_per_s;
} vibrato_reading;

/* Cents of every frame of the steady part against its reference, under
   the model, on a uniform grid (frames without the note's pitch bridged
   linearly). Returns the count. */
int plumb_steadiness_uniform_cents(const frame_record *frames, const steady_part *part,
                             const partial_model *model, double *cents);
/* Drift (cents per second) and vibrato of the uniform cents[0, n);
   scratch holds 2 n doubles. */
void plumb_steadiness_drift_and_vibrato(const measure_context *context, const double *cents,
                                  int n, double *scratch, vibrato_reading *vibrato,
                                  double *drift);
/* The mean of values[0, n) within 3 scaled MADs of their median, under a
   Tukey taper; scratch holds n doubles. */
double plumb_steadiness_robust_mean(const double *values, int n, double *scratch);
/* The standard deviation of the steady frames' cents about centre_cents,
   with the sums of their voicing probability and harmonic ratio and their
   count. */
double plumb_steadiness_spread(const frame_record *frames, const steady_part *part,
                         const partial_model *model, double centre_cents,
                         double *sum_probability, double *sum_ratio, int *voiced);

#endif /* PLUMB_MEASURES_STEADINESS_H */
