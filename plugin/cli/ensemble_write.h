/*
  The three ensemble files: ensemble.pairs.csv, ensemble.tracks.csv and
  ensemble.json (docs/ensemble.md).
*/
#ifndef PLUMB_CLI_ENSEMBLE_WRITE_H
#define PLUMB_CLI_ENSEMBLE_WRITE_H

#include "ensemble_logs.h"
#include "plumb_ensemble.h"

/* The logs of the take that were compared, in the result's track order. */
typedef struct {
  const ensemble_log *const *logs;
  size_t count;
  const plumb_ensemble_settings *settings;
  const plumb_ensemble_result *result;
} ensemble_outcome;

/* Writes the three files into `folder`. False after a message naming the
   file that could not be written. */
bool ensemble_write_files(const char *folder, const ensemble_outcome *outcome);

#endif
