/*
  The ensemble step as a whole: plumb_ensemble_run() and its settings
  (declared in plumb_ensemble.h); this header ties the folder's parts.
*/
#ifndef PLUMB_ENSEMBLE_ENSEMBLE_H
#define PLUMB_ENSEMBLE_ENSEMBLE_H

#include "ensemble/drift.h"
#include "ensemble/offsets.h"
#include "ensemble/pairs.h"

#endif
