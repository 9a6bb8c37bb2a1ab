/*
  Takes that arrive as a stream: standard input ("-"), a pipe or a FIFO.
  A stream can be read only once and not rewound, while the command reads
  a take twice (a first look for its channels, then once per channel), so
  each stream is copied once into an unlinked temporary file, which the
  tracks then open as /proc/self/fd/N. The copy is bounded in size and in
  how long it waits for data, so that a FIFO nobody writes to cannot hang
  the scan.
*/
#ifndef PLUMB_CLI_INPUT_STREAM_H
#define PLUMB_CLI_INPUT_STREAM_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

/* The longest stream taken: 4 GiB, over 6 hours of 48 kHz stereo float. */
#define INPUT_STREAM_MAX_BYTES (UINT64_C(4) << 30)
/* A stream that brings no data for this long is given up. */
#define INPUT_STREAM_IDLE_S 10

typedef struct {
  int fd;        /* the temporary copy, or -1 */
  char path[48]; /* /proc/self/fd/N */
} input_stream;

/* True when `name` is to be read as a stream: "-", or a path to a FIFO,
   a pipe or a socket. */
bool input_is_stream(const char *name);

/* Copies the stream `name` into a temporary file. False with a reason
   (no data, too long, a terminal, a read error). */
bool input_stream_copy(const char *name, input_stream *stream, char *reason,
                       size_t reason_size);

void input_stream_close(input_stream *stream);

#endif
