#include "out_folder.h"

#include "progress.h"

#include <errno.h>
#include <limits.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

/* mkdir for `path` and each of its parents; an existing folder is fine. */
static bool make_folders(const char *path) {
  char partial[PATH_MAX];
  size_t length = strlen(path);
  if (length >= sizeof partial) {
    errno = ENAMETOOLONG;
    return false;
  }
  memcpy(partial, path, length + 1);
  for (size_t i = 1; i <= length; ++i) {
    if (partial[i] != '/' && partial[i] != '\0') {
      continue;
    }
    char kept = partial[i];
    partial[i] = '\0';
    if (mkdir(partial, 0777) != 0 && errno != EEXIST) {
      return false;
    }
    partial[i] = kept;
  }
  struct stat info;
  if (stat(path, &info) != 0) {
    return false;
  }
  if (!S_ISDIR(info.st_mode)) {
    errno = ENOTDIR;
    return false;
  }
  return true;
}

bool out_folder_prepare(const char *given, char *absolute, size_t size) {
  if (!make_folders(given)) {
    console_error("--out: cannot make the folder '%s': %s", given,
                  strerror(errno));
    return false;
  }
  if (access(given, W_OK | X_OK) != 0) {
    console_error("--out: cannot write in the folder '%s': %s", given,
                  strerror(errno));
    return false;
  }
  char resolved[PATH_MAX];
  if (!realpath(given, resolved) || strlen(resolved) >= size) {
    console_error("--out: cannot resolve the folder '%s': %s", given,
                  strerror(errno));
    return false;
  }
  memcpy(absolute, resolved, strlen(resolved) + 1);
  return true;
}
