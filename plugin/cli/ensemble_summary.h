/*
  The short summary `plumb ensemble` prints: each track's offset and
  drift, the ensemble's drift, and the worst pairs with their place.
*/
#ifndef PLUMB_CLI_ENSEMBLE_SUMMARY_H
#define PLUMB_CLI_ENSEMBLE_SUMMARY_H

#include "ensemble_write.h"

#include <stdio.h>

#define ENSEMBLE_SUMMARY_WORST_PAIRS 8

void ensemble_summary_print(FILE *out, const ensemble_outcome *outcome, const char *folder);

#endif
