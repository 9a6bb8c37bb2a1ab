/*
  Finding the notes of different tracks that sound together, and
  measuring each such pair's interval.
*/
#ifndef PLUMB_ENSEMBLE_PAIRS_H
#define PLUMB_ENSEMBLE_PAIRS_H

#include "plumb_ensemble.h"

/* Every two notes of two different tracks that overlap by at least
   min_overlap_s, in order of the overlap's start. Only where the notes
   lie is set (start_s, end_s, tracks, notes; the first track given is
   `low` for now). Sorts by start and sweeps, keeping the notes still
   sounding: O(N log N + N A + pairs) for N notes, A sounding at once.
   PLUMB_ERR_MEMORY, or PLUMB_OK with *pairs malloc'd (NULL when none). */
plumb_status plumb_ensemble_pairs_find(const plumb_ensemble_track *tracks, size_t count,
                                       double min_overlap_s, plumb_ensemble_pair **pairs,
                                       size_t *pair_count);

/* Orders the pair low/high by f0 and fills its interval, deviations,
   ratio, beat and verdict. */
void plumb_ensemble_pair_measure(const plumb_ensemble_track *tracks,
                                 const plumb_ensemble_settings *settings,
                                 plumb_ensemble_pair *pair);

/* The pair's deviation from the chosen target (et_dev_cents or
   just_dev_cents); NaN with no verdict. */
double plumb_ensemble_pair_target_dev(const plumb_ensemble_pair *pair,
                                      plumb_interval_target target);

#endif
