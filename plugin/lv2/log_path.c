/*
  plumb LV2: the log folder, file stems and mkdir -p (see log_path.h).
*/
#include "log_path.h"
#include "log_stem.h"

#include <errno.h>
#include <pwd.h>
#include <stdatomic.h>
#include <stdbool.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#define PATH_BUFFER 4096

static int copy_joined(char *folder, size_t size, const char *base,
                       const char *tail) {
  int length = snprintf(folder, size, "%s%s", base, tail);
  return (length > 0 && (size_t)length < size) ? 0 : -1;
}

static const char *password_home(char *buffer, size_t size) {
  struct passwd entry;
  struct passwd *found = NULL;
  if (getpwuid_r(getuid(), &entry, buffer, size, &found) != 0 || !found) {
    return NULL;
  }
  return found->pw_dir;
}

int log_path_default_folder(char *folder, size_t size) {
  const char *chosen = getenv("PLUMB_LOG_DIR");
  if (chosen && chosen[0]) {
    return copy_joined(folder, size, chosen, "");
  }
  const char *state_home = getenv("XDG_STATE_HOME");
  if (state_home && state_home[0] == '/') {
    return copy_joined(folder, size, state_home, "/plumb");
  }
  const char *home = getenv("HOME");
  char password_buffer[PATH_BUFFER];
  if (!home || !home[0]) {
    home = password_home(password_buffer, sizeof password_buffer);
  }
  if (!home || !home[0]) {
    return -1;
  }
  return copy_joined(folder, size, home, "/.local/state/plumb");
}

int log_path_session_folder(const LV2_State_Make_Path *make_path,
                            const LV2_State_Free_Path *free_path,
                            char *folder, size_t size) {
  char *made = make_path->path(make_path->handle, "plumb-logs");
  if (!made) {
    return -1;
  }
  /* Only an absolute path is a folder of the session's: a relative one
     would land wherever the host happens to run. */
  int result = made[0] == '/' ? copy_joined(folder, size, made, "") : -1;
  if (free_path) {
    free_path->free_path(free_path->handle, made);
  } else {
    free(made);
  }
  return result;
}

size_t log_path_sanitise_label(const char *label, char *stem) {
  return plumb_log_stem(label, stem); /* the rule the command relies on too */
}

void log_path_automatic_stem(time_t now, char *stem) {
  static atomic_uint takes_started;
  unsigned take = atomic_fetch_add(&takes_started, 1u) + 1u;
  struct tm utc;
  char when[32] = "00000000-000000";
  if (gmtime_r(&now, &utc)) {
    strftime(when, sizeof when, "%Y%m%d-%H%M%S", &utc);
  }
  snprintf(stem, LOG_PATH_STEM_MAX + 1, "take-%s-%ld-%u", when, (long)getpid(),
           take);
}

int log_path_join(char *path, size_t size, const char *folder, const char *stem,
                  const char *suffix) {
  size_t folder_length = strlen(folder);
  const char *separator =
      (folder_length > 0 && folder[folder_length - 1] == '/') ? "" : "/";
  int length =
      snprintf(path, size, "%s%s%s%s", folder, separator, stem, suffix);
  return (length > 0 && (size_t)length < size) ? 0 : -1;
}

/* One step of mkdir -p: an existing folder is fine. */
static int make_one(const char *path) {
  if (mkdir(path, 0777) == 0) {
    return 0;
  }
  int error = errno;
  struct stat info;
  if (error == EEXIST && stat(path, &info) == 0 && S_ISDIR(info.st_mode)) {
    return 0;
  }
  return error == EEXIST ? ENOTDIR : error;
}

int log_path_make_folders(const char *folder) {
  char path[PATH_BUFFER];
  size_t length = strlen(folder);
  if (length == 0) {
    return ENOENT;
  }
  if (length >= sizeof path) {
    return ENAMETOOLONG;
  }
  memcpy(path, folder, length + 1);
  for (size_t i = 1; i < length; ++i) {
    if (path[i] == '/' && path[i - 1] != '/') {
      path[i] = '\0';
      int error = make_one(path);
      path[i] = '/';
      if (error) {
        return error;
      }
    }
  }
  return make_one(path);
}
