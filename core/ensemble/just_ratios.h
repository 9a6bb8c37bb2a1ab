/*
  The 5-limit just table, interval names and the coincident-partial beat
  (the pure functions of plumb_ensemble.h are defined in just_ratios.c;
  this header only says so, for the other files of the folder).
*/
#ifndef PLUMB_ENSEMBLE_JUST_RATIOS_H
#define PLUMB_ENSEMBLE_JUST_RATIOS_H

#include "plumb_ensemble.h"

/* Largest term of a ratio whose coincident partials are still heard to
   beat; beyond it the partials are weak and the beat is not given
   (common practice, no source). */
#define PLUMB_ENSEMBLE_MAX_BEAT_TERM 6

#endif
