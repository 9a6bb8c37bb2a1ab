/* Finding the log the plugin wrote for one of our tracks. */
#ifndef PLUMB_CLI_LOG_LOCATE_H
#define PLUMB_CLI_LOG_LOCATE_H

#include <stdbool.h>
#include <stddef.h>
#include <time.h>

/* Write into path (capacity size) the CSV log of the take labelled `label`
   in `folder` that this run wrote: the plugin names it after
   plumb_log_stem(label), with -2, -3 ... when another live instance held
   that name, and records in <stem>.run.json the process that wrote it.
   Only a log whose run.json names this process and was written at or
   after `since` counts, so that an earlier run's log of the same name is
   never taken for this one's. Returns false when there is none (a take
   with no notes leaves no files) or the path does not fit. */
bool log_locate(const char *folder, const char *label, struct timespec since,
                char *path, size_t size);

#endif
