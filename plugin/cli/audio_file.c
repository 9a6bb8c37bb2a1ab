#include "audio_file.h"

#include <errno.h>
#include <pthread.h>
#include <stdio.h>
#include <string.h>
#include <sys/stat.h>

/* sf_strerror(NULL) reports the last failed open of the whole process, so
   an open and the reading of its reason must not interleave with another
   thread's. */
static pthread_mutex_t open_mutex = PTHREAD_MUTEX_INITIALIZER;

SNDFILE *audio_file_open(const char *path, SF_INFO *info, char *reason,
                         size_t size) {
  memset(info, 0, sizeof *info);
  /* libsndfile calls a folder an unknown format, which misleads. */
  struct stat status;
  if (stat(path, &status) != 0) {
    snprintf(reason, size, "%s", strerror(errno));
    return NULL;
  }
  if (S_ISDIR(status.st_mode)) {
    snprintf(reason, size, "is a folder, not an audio file");
    return NULL;
  }
  if (!S_ISREG(status.st_mode)) {
    snprintf(reason, size, "is a device or other special file, not an audio file");
    return NULL;
  }
  pthread_mutex_lock(&open_mutex);
  SNDFILE *file = sf_open(path, SFM_READ, info);
  if (!file) {
    snprintf(reason, size, "%s", sf_strerror(NULL));
  }
  pthread_mutex_unlock(&open_mutex);
  if (file &&
      (info->channels < 1 || info->samplerate < 1 || info->frames < 0)) {
    snprintf(reason, size, "libsndfile reports %d channels at %d Hz",
             info->channels, info->samplerate);
    sf_close(file);
    return NULL;
  }
  return file;
}

/* libsndfile notes such a chunk in its log as "data : N (should be M)". */
bool audio_file_header_disagrees(SNDFILE *file) {
  char log[8192];
  sf_command(file, SFC_GET_LOG_INFO, log, sizeof log);
  log[sizeof log - 1] = '\0';
  for (const char *line = log; line && *line; line = strchr(line, '\n')) {
    line += *line == '\n';
    if (strncmp(line, "data", 4) == 0) {
      const char *end = strchr(line, '\n');
      const char *should = strstr(line, "(should be");
      return should && (!end || should < end);
    }
  }
  return false;
}
