/*
  A user tuning file for --temperament PATH: twelve offsets in cents from
  equal temperament, scale degree 0 (the tonic) first. The format is the
  one plumb_tuning_parse_offsets() reads.
*/
#ifndef PLUMB_CLI_TUNING_FILE_H
#define PLUMB_CLI_TUNING_FILE_H

#include <stdbool.h>
#include <stddef.h>

/* Reads and parses `path`. On failure writes a reason (no file name, no
   newline) and returns false; `open_failed` says whether the file could
   not be opened at all, as opposed to holding the wrong content. */
bool tuning_file_read(const char *path, double offsets_cents[12],
                      bool *open_failed, char *reason, size_t reason_size);

#endif
