/*
  The stiff-string model f_n = n f0 sqrt(1 + B n^2) of a note's partials
  (Fletcher 1964), fitted by weighted least squares over its steady part.
*/
#ifndef PLUMB_MEASURES_PARTIAL_FIT_H
#define PLUMB_MEASURES_PARTIAL_FIT_H

#include "internal.h"
#include "measures/measure_context.h"
#include "measures/steady_part.h"

/* The stiff-string model f_n = n f0 sqrt(1 + B n^2) of a note's partials. */
typedef struct {
  double b;                  /* fitted B; NaN with fewer than three partials */
  double b_error;            /* its standard error */
  bool stiff;                /* B stands clear of zero: pitch is read under it */
  double noise_scale;        /* a partial's relative variance is this / (a^2 n^2) */
  double independent_frames; /* of the steady part */
  int partials;              /* found in at least half the steady frames */
  /* Every frame's fundamental under the model, once computed: the note's
     measures ask for it many times (plumb_partial_model_cache). */
  const frame_record *cached_frames;
  const double *cached_f0_hz;
  int cached_count;
} partial_model;

partial_model plumb_partial_model_fit(const measure_context *context, const frame_record *frames,
                                const steady_part *part);
/* A frame's fundamental under the model. */
double plumb_partial_model_f0_hz(const partial_model *model, const frame_record *frame);
/* Compute it once for frames [0, count) into f0_hz (count doubles), which
   plumb_partial_model_f0_hz then reads for them. */
void plumb_partial_model_cache(partial_model *model, const frame_record *frames, int count,
                         double *f0_hz);

#endif /* PLUMB_MEASURES_PARTIAL_FIT_H */
