/*
  The tracks a set of files makes: one per channel, labelled <stem> for a
  mono file and <stem>-ch1, <stem>-ch2 ... otherwise. Labels are made
  unique within the run (a second "take" becomes "take-2"), because each
  label names a log file in the one --out folder.
*/
#ifndef PLUMB_CLI_TRACKS_H
#define PLUMB_CLI_TRACKS_H

#include "host.h"

#include <stddef.h>

typedef struct {
  host_track *tracks;
  size_t count;
  size_t failed_files; /* files that could not be opened, already reported */
  uint64_t total_frames;
} track_plan;

/* Looks at every file. Returns false only when memory runs out. */
bool tracks_plan(char *const *files, int file_count, track_plan *plan);

void tracks_free(track_plan *plan);

#endif
