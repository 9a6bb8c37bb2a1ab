/*
  The tracks a set of files makes: one per channel, labelled <stem> for a
  mono file and <stem>-ch1, <stem>-ch2 ... otherwise ("stdin" for "-").
  Each label names a log file in the one --out folder through
  plumb_log_stem(), which replaces the characters a file name should not
  hold; labels are made unique after that (a second "take", or "a b"
  beside "a_b", gets -2), so that no take's log overwrites another's.
  A stream (standard input, a FIFO) is copied once before it is planned.
*/
#ifndef PLUMB_CLI_TRACKS_H
#define PLUMB_CLI_TRACKS_H

#include "host.h"
#include "input_stream.h"

#include <stddef.h>

typedef struct {
  host_track *tracks;
  size_t count;
  input_stream *streams; /* the copies of the stream inputs */
  size_t stream_count;
  size_t failed_files; /* files that could not be opened, already reported */
  uint64_t total_frames;
} track_plan;

/* Looks at every file. Returns false only when memory runs out. */
bool tracks_plan(char *const *files, int file_count, track_plan *plan);

void tracks_free(track_plan *plan);

#endif
