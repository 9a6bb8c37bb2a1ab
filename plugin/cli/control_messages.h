/*
  What the host sends on the plugin's control atom port: on the first run
  one patch:Set for each parameter the plugin cannot get from a control
  port (log folder, take label, custom offsets, source file and channel),
  all at frame 0, then a time:Position for an offline timeline; on every later run an empty sequence.
*/
#ifndef PLUMB_CLI_CONTROL_MESSAGES_H
#define PLUMB_CLI_CONTROL_MESSAGES_H

#include "host_uris.h"

#include <lv2/atom/forge.h>
#include <stdbool.h>
#include <stdint.h>

/* An offline timeline (plumb scan --start-s, --tempo, --meter): where
   the take's first sample sits on the timeline, and its musical time. */
typedef struct {
  double start_s;          /* timeline position of the first sample */
  double beats_per_minute; /* 0: no musical time (only the position) */
  int beats_per_bar;
  int beat_unit;
  double sample_rate_hz;
} control_timeline;

typedef struct {
  const char *log_folder; /* absolute path */
  const char *take_label;
  const double *custom_offsets_cents; /* 12 values, or NULL */
  /* The take's audio file as given; sent as an absolute path (resolved
     with realpath() when relative). NULL or "-" (standard input): not
     sent. */
  const char *source_file;
  int source_channel; /* 1 = the first; 0: not sent */
  /* NULL: no time:Position is sent (the plugin then counts from 0). */
  const control_timeline *timeline;
} control_parameters;

/* Writes the first run's sequence into `buffer` (8-byte aligned). False
   when it does not fit in capacity_bytes. */
bool control_messages_write_parameters(LV2_Atom_Forge *forge,
                                       const host_uris *uris, void *buffer,
                                       uint32_t capacity_bytes,
                                       const control_parameters *parameters);

/* Resets `buffer` to an empty atom:Sequence. */
void control_messages_write_empty(const host_uris *uris, void *buffer);

#endif
