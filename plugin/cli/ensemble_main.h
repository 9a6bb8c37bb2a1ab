/*
  `plumb ensemble [options] DIR | FILE.notes.csv...`: every track of one
  take compared with the others (docs/ensemble.md).
*/
#ifndef PLUMB_CLI_ENSEMBLE_MAIN_H
#define PLUMB_CLI_ENSEMBLE_MAIN_H

#include "plumb_ensemble.h"

#include <stdbool.h>
#include <stddef.h>

/* Options shared with `plumb scan --ensemble`. */
typedef struct {
  plumb_ensemble_settings settings;
  const char *out_dir; /* NULL: the folder of the logs */
  const char *take;    /* NULL, or the STEM of a log of the take to use */
} ensemble_options;

void ensemble_options_default(ensemble_options *options);

/* Reads the logs at `paths`, compares the tracks of their take, writes
   the files and prints the summary. `chosen`: the paths were named one
   by one (several takes are then compared together, with a warning),
   else they are a folder's logs (several takes are refused unless
   options->take picks one). Returns an exit status. */
int ensemble_run_paths(char *const *paths, size_t count, const ensemble_options *options,
                       bool chosen);

/* "equal" or "just" into settings->target; false after a message. */
bool ensemble_option_intervals(const char *text, plumb_ensemble_settings *settings);

int ensemble_main(int argc, char **argv);

#endif
