/*
  Each track's offset against the others, from the pairs.
*/
#ifndef PLUMB_ENSEMBLE_OFFSETS_H
#define PLUMB_ENSEMBLE_OFFSETS_H

#include "plumb_ensemble.h"

/* Writes offsets_cents[0 .. track_count): the offsets o that best
   explain every judged pair's deviation d from its target as
   o_high - o_low, weighted by the pair's overlap, with zero mean over
   each group of tracks linked by pairs; NaN for a track in no judged
   pair. PLUMB_ERR_MEMORY, else PLUMB_OK. */
plumb_status plumb_ensemble_offsets(const plumb_ensemble_pair *pairs, size_t pair_count,
                                    size_t track_count, plumb_interval_target target,
                                    double *offsets_cents);

#endif
