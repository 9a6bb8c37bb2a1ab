#include "input_stream.h"

#include <errno.h>
#include <fcntl.h>
#include <poll.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#define COPY_CHUNK_BYTES 65536

bool input_is_stream(const char *name) {
  if (strcmp(name, "-") == 0) return true;
  struct stat status;
  return stat(name, &status) == 0 && (S_ISFIFO(status.st_mode) || S_ISSOCK(status.st_mode));
}

/* Opens the source without blocking: opening a FIFO that has no writer
   would otherwise wait for ever. */
static int open_source(const char *name, char *reason, size_t reason_size) {
  if (strcmp(name, "-") == 0) {
    if (isatty(STDIN_FILENO)) {
      snprintf(reason, reason_size, "standard input is a terminal, not audio");
      return -1;
    }
    return STDIN_FILENO;
  }
  int fd = open(name, O_RDONLY | O_NONBLOCK | O_CLOEXEC);
  if (fd < 0) snprintf(reason, reason_size, "%s", strerror(errno));
  return fd;
}

static int temporary_file(char *reason, size_t reason_size) {
  const char *folder = getenv("TMPDIR");
  char path[4096];
  snprintf(path, sizeof path, "%s/plumb-input.XXXXXX", folder && *folder ? folder : "/tmp");
  int fd = mkstemp(path);
  if (fd < 0) {
    snprintf(reason, reason_size, "cannot make a temporary copy in %s: %s",
             folder && *folder ? folder : "/tmp", strerror(errno));
    return -1;
  }
  unlink(path); /* gone with the process, whatever happens */
  return fd;
}

/* Waits for data; false after INPUT_STREAM_IDLE_S without any. */
static bool wait_for_data(int fd) {
  struct pollfd watch = {fd, POLLIN, 0};
  int ready;
  do {
    ready = poll(&watch, 1, INPUT_STREAM_IDLE_S * 1000);
  } while (ready < 0 && errno == EINTR);
  return ready > 0;
}

static bool write_all(int fd, const char *data, size_t length) {
  while (length > 0) {
    ssize_t written = write(fd, data, length);
    if (written < 0 && errno == EINTR) continue;
    if (written <= 0) return false;
    data += written;
    length -= (size_t)written;
  }
  return true;
}

/* Copies source to copy until the end of the stream. */
static bool copy_stream(int source, int copy, char *reason, size_t reason_size) {
  char chunk[COPY_CHUNK_BYTES];
  uint64_t total = 0;
  for (;;) {
    if (!wait_for_data(source)) {
      snprintf(reason, reason_size, "no data came for %d s (is anything writing to it?)",
               INPUT_STREAM_IDLE_S);
      return false;
    }
    ssize_t got = read(source, chunk, sizeof chunk);
    if (got < 0 && (errno == EINTR || errno == EAGAIN)) continue;
    if (got < 0) {
      snprintf(reason, reason_size, "reading stopped: %s", strerror(errno));
      return false;
    }
    if (got == 0) return true;
    total += (uint64_t)got;
    if (total > INPUT_STREAM_MAX_BYTES) {
      snprintf(reason, reason_size, "is longer than the 4 GiB a stream may bring");
      return false;
    }
    if (!write_all(copy, chunk, (size_t)got)) {
      snprintf(reason, reason_size, "cannot write its temporary copy: %s", strerror(errno));
      return false;
    }
  }
}

bool input_stream_copy(const char *name, input_stream *stream, char *reason,
                       size_t reason_size) {
  stream->fd = -1;
  stream->path[0] = '\0';
  int source = open_source(name, reason, reason_size);
  if (source < 0) return false;
  int copy = temporary_file(reason, reason_size);
  bool ok = copy >= 0 && copy_stream(source, copy, reason, reason_size);
  if (source != STDIN_FILENO) close(source);
  if (!ok) {
    if (copy >= 0) close(copy);
    return false;
  }
  stream->fd = copy;
  snprintf(stream->path, sizeof stream->path, "/proc/self/fd/%d", copy);
  return true;
}

void input_stream_close(input_stream *stream) {
  if (stream->fd >= 0) close(stream->fd);
  stream->fd = -1;
}
