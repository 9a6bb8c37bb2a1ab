/*
  plumb LV2: the own log thread (see log_thread.h).
*/
#include "log_thread.h"

#include <errno.h>
#include <pthread.h>
#include <stdatomic.h>
#include <stdlib.h>
#include <time.h>

/* How often the thread steps the writer: a row reaches the file within
   this of its note completing (common practice, no source). */
#define POLL_NS 20000000L

struct log_thread {
  log_writer *writer;
  pthread_t thread;
  atomic_bool quit;
};

static void *thread_main(void *argument) {
  log_thread *self = argument;
  const struct timespec pause = {0, POLL_NS};
  while (!atomic_load(&self->quit)) {
    log_writer_step(self->writer);
    nanosleep(&pause, NULL);
  }
  return NULL;
}

log_thread *log_thread_start(log_writer *writer, int *error) {
  log_thread *self = calloc(1, sizeof *self);
  if (!self) {
    if (error) {
      *error = ENOMEM;
    }
    return NULL;
  }
  self->writer = writer;
  atomic_init(&self->quit, false);
  int started = pthread_create(&self->thread, NULL, thread_main, self);
  if (started != 0) {
    free(self);
    if (error) {
      *error = started;
    }
    return NULL;
  }
  return self;
}

void log_thread_stop(log_thread *self) {
  if (!self) {
    return;
  }
  atomic_store(&self->quit, true);
  pthread_join(self->thread, NULL);
  free(self);
}
