/*
  One track through one plugin instance: open the file, instantiate,
  connect every port, run the audio in blocks, deactivate (the plugin then
  completes its last note and flushes its log) and clean up.
*/
#ifndef PLUMB_CLI_HOST_H
#define PLUMB_CLI_HOST_H

#include "control_messages.h"
#include "ports.h"
#include "host_uris.h"

#include <lilv/lilv.h>
#include <pthread.h>
#include <stdbool.h>
#include <stdint.h>

/* What every track shares; read-only while the tracks run. */
typedef struct {
  const LilvPlugin *plugin;
  const port_layout *layout;
  const float *control_values; /* per port; the inputs' values */
  urid_table *urids;
  const host_uris *uris;
  const char *log_folder; /* absolute */
  const double
      *custom_offsets_cents; /* NULL unless the temperament is custom */
  uint32_t block_frames;
  /* An offline timeline (control_messages.h); NULL: none. Its sample
     rate is each track's own. */
  const control_timeline *timeline;
  pthread_mutex_t *lilv_mutex; /* held to instantiate and to free */
} host_context;

typedef struct {
  const char *name; /* the take as given: a path, or "-" */
  const char *path; /* what to open: the path, or a stream's copy */
  int channel;      /* 0 = the first */
  char label[256]; /* the log's stem: <stem> or <stem>-ch<N> */
  uint64_t frames; /* from the first look at the file, for progress */
} host_track;

/* What a track's run left behind, read from the plugin's output ports
   after its last block. */
typedef struct {
  bool ran;      /* the audio went through the plugin */
  long notes;    /* the plugin's "notes" counter after the last run (the
                    note that deactivation completes is not in it); -1
                    when unknown */
} host_outcome;

/* Runs one track (any thread). Returns false after reporting what went
   wrong: the file could not be read, the plugin would not start, or it
   could not write its log. */
bool host_run_track(const host_context *context, const host_track *track,
                    host_outcome *outcome);

#endif
