/*
  Pitch drift over a take, of one track and of the whole ensemble.
*/
#ifndef PLUMB_ENSEMBLE_DRIFT_H
#define PLUMB_ENSEMBLE_DRIFT_H

#include "plumb_ensemble.h"

/* Writes every track's own drift into tracks[t].drift_cents_per_min and
   returns the ensemble's (NaN when unknown); *status gets
   PLUMB_ERR_MEMORY when memory ran out (the drifts are then NaN). */
double plumb_ensemble_drift(const plumb_ensemble_track *tracks, size_t count,
                            plumb_ensemble_track_result *results, plumb_status *status);

#endif
