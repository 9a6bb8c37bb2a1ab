#include "log_locate.h"

#include "log_stem.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#define SUFFIXES_TRIED 16
#define RUN_JSON_MAX 65536

/* The "process_id" of a run.json, or -1. */
static long run_json_process(const char *path) {
  FILE *file = fopen(path, "rb");
  if (!file) return -1;
  static char text[RUN_JSON_MAX + 1];
  size_t length = fread(text, 1, RUN_JSON_MAX, file);
  fclose(file);
  text[length] = '\0';
  const char *key = strstr(text, "\"process_id\":");
  return key ? strtol(key + strlen("\"process_id\":"), NULL, 10) : -1;
}

static bool written_since(const char *path, struct timespec since) {
  struct stat status;
  if (stat(path, &status) != 0) return false;
  return status.st_mtim.tv_sec > since.tv_sec ||
         (status.st_mtim.tv_sec == since.tv_sec && status.st_mtim.tv_nsec >= since.tv_nsec);
}

bool log_locate(const char *folder, const char *label, struct timespec since, char *path,
                size_t size) {
  char stem[PLUMB_LOG_STEM_MAX + 1];
  plumb_log_stem(label, stem);
  long own = (long)getpid();
  for (int n = 1; n <= SUFFIXES_TRIED; ++n) {
    char candidate[PLUMB_LOG_STEM_MAX + 16];
    if (n == 1) snprintf(candidate, sizeof candidate, "%s", stem);
    else snprintf(candidate, sizeof candidate, "%s-%d", stem, n);
    char run_json[4096];
    int length = snprintf(run_json, sizeof run_json, "%s/%s.run.json", folder, candidate);
    if (length < 0 || (size_t)length >= sizeof run_json) break;
    if (run_json_process(run_json) != own || !written_since(run_json, since)) continue;
    length = snprintf(path, size, "%s/%s.notes.csv", folder, candidate);
    return length >= 0 && (size_t)length < size;
  }
  return false;
}
