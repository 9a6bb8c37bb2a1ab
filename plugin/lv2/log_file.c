/*
  plumb LV2: one take's CSV file, held with flock() (see log_file.h).
*/
#include "log_file.h"

#include "note_csv.h"

#include <errno.h>
#include <fcntl.h>
#include <string.h>
#include <sys/file.h>
#include <sys/stat.h>
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

/* Whether `path` names something other than a regular file (a symbolic
   link, a folder, a FIFO, a device ...); nothing there at all is fine. */
static bool taken_by_other_kind(const char *path) {
  struct stat info;
  return lstat(path, &info) == 0 && !S_ISREG(info.st_mode);
}

static int fail_closing(int descriptor, int error) {
  close(descriptor);
  errno = error;
  return -1;
}

/* Opens csv_path and takes the lock. Returns the descriptor; -1 with
   errno EWOULDBLOCK when a live instance holds it, LOG_FILE_REFUSED when
   the name is not a regular file's, or another errno. O_NOFOLLOW: a
   symbolic link at the name is never followed, so a link planted there
   cannot send the truncation below to another file; O_NONBLOCK: a FIFO
   cannot hang the open; fstat: whatever was opened must be a regular
   file (POSIX open(), fstat()). */
static int claim(const char *path) {
  int descriptor = open(path, O_WRONLY | O_CREAT | O_CLOEXEC | O_NOFOLLOW |
                                  O_NONBLOCK | O_NOCTTY,
                        0666);
  if (descriptor < 0) {
    int error = errno;
    errno = (error == ELOOP || error == EISDIR || error == ENXIO)
                ? LOG_FILE_REFUSED
                : error;
    return -1;
  }
  struct stat info;
  if (fstat(descriptor, &info) != 0) {
    return fail_closing(descriptor, errno);
  }
  if (!S_ISREG(info.st_mode)) {
    return fail_closing(descriptor, LOG_FILE_REFUSED);
  }
  int flags = fcntl(descriptor, F_GETFL);
  if (flags < 0 || fcntl(descriptor, F_SETFL, flags & ~O_NONBLOCK) != 0) {
    return fail_closing(descriptor, errno);
  }
  if (flock(descriptor, LOCK_EX | LOCK_NB) != 0) {
    return fail_closing(descriptor, errno);
  }
  /* Ours now: an older take's rows go only once we hold the lock. */
  if (ftruncate(descriptor, 0) != 0) {
    return fail_closing(descriptor, errno);
  }
  return descriptor;
}

/* Notes the first name that was refused, for the writer to report. */
static void note_refused(log_file *file, const char *path) {
  if (!file->refused[0]) {
    snprintf(file->refused, sizeof file->refused, "%s", path);
  }
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
  file->refused[0] = '\0';
  *why = "create the folder";
  int error = log_path_make_folders(folder);
  for (int suffix = 1; !error && suffix <= LOG_FILE_MAX_SUFFIX; ++suffix) {
    *why = "name the files in";
    error = name_files(file, folder, stem, suffix);
    if (error) {
      break;
    }
    /* run.json is renamed into place, which replaces a link rather than
       following it; a folder or FIFO there would still make it fail. */
    if (taken_by_other_kind(file->json_path)) {
      note_refused(file, file->json_path);
      continue;
    }
    *why = "open the notes file in";
    int descriptor = claim(file->csv_path);
    if (descriptor >= 0) {
      *why = "write the header row in";
      return start_csv(file, descriptor);
    }
    if (errno == LOG_FILE_REFUSED) {
      note_refused(file, file->csv_path);
      error = 0;
    } else {
      error = (errno == EWOULDBLOCK || errno == EAGAIN) ? 0 : errno;
    }
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
