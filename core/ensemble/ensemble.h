/*
  The ensemble step as a whole: plumb_ensemble_run() and its settings
  (declared in plumb_ensemble.h); this header ties the folder's parts.
*/
#ifndef PLUMB_ENSEMBLE_ENSEMBLE_H
#define PLUMB_ENSEMBLE_ENSEMBLE_H

#include "drift.h"
#include "offsets.h"
#include "pairs.h"

#endif
