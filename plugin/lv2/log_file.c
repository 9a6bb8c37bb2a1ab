/*
  plumb LV2: one take's CSV file, held with flock() (see log_file.h).
*/
#include "log_file.h"

#include "plumb_csv.h"

#include <errno.h>
#include <fcntl.h>
#include <string.h>
#include <sys/file.h>
#include <unistd.h>

/* Both paths for STEM, or STEM-N when suffix > 1. */
static int name_files(log_file *file, const char *folder, const char *stem,
                      int suffix) {
  int length = suffix > 1 ? snprintf(file->stem, sizeof file->stem, "%s-%d",
                                     stem, suffix)
                          : snprintf(file->stem, sizeof file->stem, "%s", stem);
  if (length < 0 || (size_t)length >= sizeof file->stem ||
      log_path_join(file->csv_path, sizeof file->csv_path, folder, file->stem,
                    ".notes.csv") != 0 ||
      log_path_join(file->json_path, sizeof file->json_path, folder, file->stem,
                    ".run.json") != 0) {
    return ENAMETOOLONG;
  }
  return 0;
}

/* Opens csv_path and takes the lock. Returns the descriptor, -1 with
   errno EWOULDBLOCK when a live instance holds it, or -1 with errno. */
static int claim(const char *path) {
  int descriptor = open(path, O_WRONLY | O_CREAT | O_CLOEXEC, 0666);
  if (descriptor < 0) {
    return -1;
  }
  if (flock(descriptor, LOCK_EX | LOCK_NB) != 0) {
    int error = errno;
    close(descriptor);
    errno = error;
    return -1;
  }
  /* Ours now: an older take's rows go only once we hold the lock. */
  if (ftruncate(descriptor, 0) != 0) {
    int error = errno;
    close(descriptor);
    errno = error;
    return -1;
  }
  return descriptor;
}

static int start_csv(log_file *file, int descriptor) {
  file->csv = fdopen(descriptor, "w");
  if (!file->csv) {
    int error = errno;
    close(descriptor);
    return error;
  }
  file->rows = 0;
  file->failed = false;
  if (fputs(plumb_csv_header(), file->csv) == EOF ||
      fputc('\n', file->csv) == EOF || fflush(file->csv) != 0) {
    int error = errno ? errno : EIO;
    fclose(file->csv);
    file->csv = NULL;
    return error;
  }
  return 0;
}

int log_file_open(log_file *file, const char *folder, const char *stem,
                  const char **why) {
  file->csv = NULL;
  *why = "create the folder";
  int error = log_path_make_folders(folder);
  for (int suffix = 1; !error && suffix <= LOG_FILE_MAX_SUFFIX; ++suffix) {
    *why = "name the files in";
    error = name_files(file, folder, stem, suffix);
    if (error) {
      break;
    }
    *why = "open the notes file in";
    int descriptor = claim(file->csv_path);
    if (descriptor >= 0) {
      *why = "write the header row in";
      return start_csv(file, descriptor);
    }
    error = (errno == EWOULDBLOCK || errno == EAGAIN) ? 0 : errno;
  }
  if (!error) {
    *why = "find a free file name (all suffixes in use) in";
    error = EEXIST;
  }
  return error;
}

int log_file_append(log_file *file, const char *row) {
  if (!file->csv || file->failed) {
    return EBADF;
  }
  errno = 0;
  if (fputs(row, file->csv) == EOF || fputc('\n', file->csv) == EOF ||
      fflush(file->csv) != 0) {
    file->failed = true;
    return errno ? errno : EIO;
  }
  ++file->rows;
  return 0;
}

int log_file_close(log_file *file) {
  if (!file->csv) {
    return 0;
  }
  errno = 0;
  int error = fclose(file->csv) == 0 ? 0 : (errno ? errno : EIO);
  file->csv = NULL;
  return error;
}
