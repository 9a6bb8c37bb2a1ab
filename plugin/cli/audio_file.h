/*
  Opening a take with libsndfile, in any format it reads, with its reason
  when it cannot.
*/
#ifndef PLUMB_CLI_AUDIO_FILE_H
#define PLUMB_CLI_AUDIO_FILE_H

#include <sndfile.h>
#include <stdbool.h>
#include <stddef.h>

/* Opens `path` for reading and fills *info. On failure returns NULL and
   writes libsndfile's reason (any thread). */
SNDFILE *audio_file_open(const char *path, SF_INFO *info, char *reason,
                         size_t size);

/* True when libsndfile found the file shorter (or longer) than its header
   says, and read only the audio that is there: a file cut off while it
   was written, or a header that lies. */
bool audio_file_header_disagrees(SNDFILE *file);

#endif
