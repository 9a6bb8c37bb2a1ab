/*
  The file name a take's log gets from its label.
*/
#ifndef PLUMB_FORMATS_LOG_STEM_H
#define PLUMB_FORMATS_LOG_STEM_H

#include <stddef.h>

/* The file stem a take label gives its log (docs/log-format.md): every
   character but A-Z a-z 0-9 . _ - becomes '_' (one '_' for a whole UTF-8
   sequence), a leading '.' becomes '_', and at most PLUMB_LOG_STEM_MAX
   characters are kept. The plugin names its files with it and the command
   finds them with it. stem needs PLUMB_LOG_STEM_MAX + 1 bytes. Returns the
   length. */
#define PLUMB_LOG_STEM_MAX 100
size_t plumb_log_stem(const char *label, char *stem);

#endif /* PLUMB_FORMATS_LOG_STEM_H */
