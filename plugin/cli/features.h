/*
  The LV2 features one plugin instance gets: urid:map and urid:unmap (the
  shared table), log:log (to stderr, named by the track), options (sample
  rate and block lengths) and bufsz:boundedBlockLength. No worker: the
  plugin writes its log on its own thread.
*/
#ifndef PLUMB_CLI_FEATURES_H
#define PLUMB_CLI_FEATURES_H

#include "host_uris.h"

#include <lv2/core/lv2.h>
#include <lv2/log/log.h>
#include <lv2/options/options.h>
#include <stdatomic.h>

enum { FEATURES_COUNT = 5, FEATURES_OPTION_COUNT = 4 };

/* Lives as long as the instance: the plugin may keep pointers into it. */
typedef struct {
  const char *track_label;
  const host_uris *uris;
  atomic_uint messages_shown; /* the plugin's log may run on its own thread */
  float sample_rate_hz;
  int32_t min_block_frames;
  int32_t max_block_frames;
  LV2_Log_Log log;
  LV2_Options_Option options[FEATURES_OPTION_COUNT + 1];
  LV2_Feature features[FEATURES_COUNT];
  const LV2_Feature *list[FEATURES_COUNT + 1]; /* NULL-terminated */
} instance_features;

/* Fills *set for one track; `features->list` is then what to pass to
   lilv_plugin_instantiate. */
void features_init(instance_features *set, urid_table *table,
                   const host_uris *uris, const char *track_label,
                   double sample_rate_hz, uint32_t max_block_frames);

#endif
