/*
  A work queue over numbered items, run by a fixed number of threads. Each
  thread takes the next item as soon as it is free, so long and short
  takes mix without leaving a thread idle.
*/
#ifndef PLUMB_CLI_JOBS_H
#define PLUMB_CLI_JOBS_H

#include <stdbool.h>
#include <stddef.h>

/* Works on item `index`; returns false when it failed. */
typedef bool (*job_function)(size_t index, void *context);

/* Runs work(0) .. work(count - 1) on up to `threads` threads and waits for
   all of them. Returns how many returned false. If threads cannot be
   started, the items run on the calling thread instead. */
size_t jobs_run(size_t count, unsigned threads, job_function work,
                void *context);

/* The number of online cores, at least 1. */
unsigned jobs_default_threads(void);

#endif
