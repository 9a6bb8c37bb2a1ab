/*
  plumb LV2: one take's CSV file, STEM.notes.csv.

  [non-RT], log writer thread only. The file is held with an exclusive
  flock() for as long as the take lasts, so two live instances (in one
  process or in two) never write the same file: the second one moves on
  to STEM-2, STEM-3 ... A file of the same name that nobody holds is an
  older, finished take; it is truncated and written anew. A name taken
  by anything but a regular file (a symbolic link, a folder, a FIFO ...)
  is never opened through, truncated or replaced: it is left alone and
  the take moves on to the next free name, as for a held one.

  Crash guarantee: every row is flushed with fflush() as soon as it is
  written, which hands it to the operating system. A host that crashes
  loses at most the row being written; rows already flushed survive in
  the kernel's cache and reach the disk even though the process died.
  (A power cut can still lose what the kernel had not yet written out.)
*/
#ifndef PLUMB_LV2_LOG_FILE_H
#define PLUMB_LV2_LOG_FILE_H

#include "log_path.h"

#include <stdbool.h>
#include <stdint.h>
#include <stdio.h>

#define LOG_FILE_PATH_MAX 4200
#define LOG_FILE_MAX_SUFFIX 999 /* STEM-2 .. STEM-999 */
/* errno-like: the name is not a regular file's (never an errno value). */
#define LOG_FILE_REFUSED (-2)

typedef struct {
  FILE *csv;                        /* NULL when no take is open */
  char stem[LOG_PATH_STEM_MAX + 8]; /* with its -N suffix, if any */
  char csv_path[LOG_FILE_PATH_MAX];
  char json_path[LOG_FILE_PATH_MAX];
  uint64_t rows; /* rows written and flushed */
  bool failed;   /* a row could not be written */
  /* The first name log_file_open() left alone because something other
     than a regular file was there; "" when none. */
  char refused[LOG_FILE_PATH_MAX];
} log_file;

/* Make the folder (mkdir -p), claim the first free STEM[-N].notes.csv
   (free: held by no live instance, and both names either absent or
   regular files; `refused` names the first that was not) and write the
   header row. Returns 0, or an errno with `why` naming the
   step that failed ("create the folder", "open", ...). */
int log_file_open(log_file *file, const char *folder, const char *stem,
                  const char **why);

/* Append one row and a newline, and flush. Returns 0 or an errno; after
   an error the file is marked failed and takes no more rows (a row cut
   in half must not be followed by more). */
int log_file_append(log_file *file, const char *row);

/* Flush and close (which also drops the lock). Returns 0 or an errno. */
int log_file_close(log_file *file);

#endif /* PLUMB_LV2_LOG_FILE_H */
