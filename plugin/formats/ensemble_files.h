/*
  The ensemble files, written from the result of the ensemble module
  (plumb_ensemble.h) and the tracks it compared.
*/
#ifndef PLUMB_FORMATS_ENSEMBLE_FILES_H
#define PLUMB_FORMATS_ENSEMBLE_FILES_H

#include "plumb_ensemble.h"

#include <stddef.h>
#include <stdio.h>

/* One compared track, in the result's track order. */
typedef struct {
  const char *stem;                  /* the track's label */
  const char *path;                  /* its notes.csv */
  const char *run_id;                /* from its run.json; NULL or "" when none */
  const plumb_ensemble_note *notes;  /* as given to the ensemble module */
  const char (*names)[8];            /* each note's `note` field */
} ensemble_files_track;

typedef struct {
  const ensemble_files_track *tracks;
  size_t count;
  const plumb_ensemble_settings *settings;
  const plumb_ensemble_result *result;
} ensemble_files;

void ensemble_files_pairs_csv(FILE *out, const ensemble_files *files);
void ensemble_files_tracks_csv(FILE *out, const ensemble_files *files);
void ensemble_files_json(FILE *out, const ensemble_files *files);

#endif /* PLUMB_FORMATS_ENSEMBLE_FILES_H */
