/* Finding the log the plugin wrote for one of our tracks. */
#ifndef PLUMB_CLI_LOG_LOCATE_H
#define PLUMB_CLI_LOG_LOCATE_H

#include <stdbool.h>
#include <stddef.h>

/* Write into path (capacity size) the CSV log of the take labelled `label`
   in `folder`: the plugin names it after plumb_log_stem(label), with -2,
   -3 ... when another live instance held that name, and records in
   <stem>.run.json the process that wrote it. The one written by this
   process is chosen; failing that, the plain stem. Returns false when the
   path does not fit or no run.json of this process was found. */
bool log_locate(const char *folder, const char *label, char *path, size_t size);

#endif
