/*
  plumb LV2: the plugin's own thread for the session log, used when the
  host offers no worker (lv2file, lv2apply and the plumb command have
  none). It calls log_writer_step() every 20 ms. It polls rather than
  being woken, because waking a thread from run() could take a lock.

  Both calls are [instantiation]: from instantiate() and cleanup().
*/
#ifndef PLUMB_LV2_LOG_THREAD_H
#define PLUMB_LV2_LOG_THREAD_H

#include "log_writer.h"

typedef struct log_thread log_thread;

/* Start stepping `writer`. NULL when memory or the thread could not be
   had (*error, if not NULL, gets the errno). */
log_thread *log_thread_start(log_writer *writer, int *error);

/* Stop and join the thread (at most one poll interval); NULL does
   nothing. The writer is left as it is, for log_writer_free(). */
void log_thread_stop(log_thread *self);

#endif /* PLUMB_LV2_LOG_THREAD_H */
