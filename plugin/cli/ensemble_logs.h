/*
  The logs of one session read back for `plumb ensemble`: each
  STEM.notes.csv becomes one track of plumb_ensemble_note records on the
  timeline, and its STEM.run.json says which take it belongs to.
*/
#ifndef PLUMB_CLI_ENSEMBLE_LOGS_H
#define PLUMB_CLI_ENSEMBLE_LOGS_H

#include "plumb_ensemble.h"

#include <limits.h>
#include <stdbool.h>
#include <stddef.h>

typedef struct {
  char path[PATH_MAX]; /* the notes.csv */
  char stem[256];      /* the track's label: the file name less .notes.csv */
  plumb_ensemble_note *notes;
  char (*names)[8]; /* each note's `note` field (its nearest target) */
  size_t count;
  /* From run.json; has_run false when there is none or it does not read. */
  bool has_run;
  char run_id[96];
  long process_id;
  bool from_command; /* run.json names a source_file: a `plumb scan` log */
  char start_time[32], end_time[32];
  int take; /* the take (0, 1 ...) it is grouped into */
} ensemble_log;

typedef struct {
  ensemble_log *logs;
  size_t count;
  int takes;
} ensemble_logs;

/* Reads one notes.csv (and its run.json). False after one message that
   names the file and why (unreadable, a required column missing); a last
   row cut off is left out with a warning and the rest is read. */
bool ensemble_log_read(const char *path, ensemble_log *log);

/* Groups the logs into takes (ensemble_logs.c says how) and sets each
   log's take and logs->takes. */
void ensemble_logs_group(ensemble_logs *logs);

/* Lists the *.notes.csv of a folder, in name order, into *paths
   (malloc'd strings). False after a message. */
bool ensemble_logs_list(const char *folder, char ***paths, size_t *count);

void ensemble_logs_free(ensemble_logs *logs);

#endif
