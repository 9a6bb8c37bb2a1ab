/*
  The folders of the project's plugin tests: see folder_host.h.
*/
#include "folder_host.h"

#include <ftw.h>
#include <stdio.h>
#include <stdlib.h>
#include <sys/stat.h>

int host_folder_make(char *folder, size_t size, const char *prefix) {
  const char *tmp = getenv("TMPDIR");
  int length = snprintf(folder, size, "%s/%s.XXXXXX", tmp && tmp[0] ? tmp : "/tmp", prefix);
  if (length <= 0 || (size_t)length >= size || !mkdtemp(folder)) {
    perror("temporary folder");
    return -1;
  }
  return 0;
}

static int remove_one(const char *path, const struct stat *info, int flag, struct FTW *walk) {
  (void)info;
  (void)flag;
  (void)walk;
  return remove(path);
}

int host_folder_remove(const char *folder) {
  return nftw(folder, remove_one, 16, FTW_DEPTH | FTW_PHYS);
}
