/*
  The LV2 host of the project's plugin tests (plugin_host.c): it loads
  build/plumb.lv2/plumb.so beside the test binary, gives it what a
  workstation gives (urid:map and unmap from tests/lib/urid_table.c,
  log:log, options with the sample rate and block lengths, and, as a
  test asks, work:schedule from worker_host.c or any other feature such
  as state:makePath), connects every port to buffers of its own and runs
  blocks with a control sequence forged beforehand.

  Every C plugin test uses it; what a test checks about the host's side
  (counted calls, its own makePath or mapPath) stays in the test, which
  plugs it in through the hooks below. Not real-time code, except
  host_block_run(), which is what the audio thread of a host does.
*/
#ifndef PLUMB_TEST_PLUGIN_HOST_H
#define PLUMB_TEST_PLUGIN_HOST_H

#include "urid_table.h"
#include "worker_host.h"

#include "ports.h"

#include <lv2/atom/atom.h>
#include <lv2/atom/forge.h>
#include <lv2/atom/util.h>
#include <lv2/core/lv2.h>
#include <lv2/log/log.h>
#include <lv2/options/options.h>
#include <lv2/urid/urid.h>
#include <lv2/worker/worker.h>

#include <limits.h>
#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#define HOST_PLUGIN_URI       "urn:plumb:intonation"
#define HOST_MAX_BLOCK_FRAMES 4096
#define HOST_CONTROL_BYTES    16384
#define HOST_NOTIFY_BYTES     32768
#define HOST_MAX_FEATURES     8

/* The shared URID table, outside the plugin's calls. */
LV2_URID host_map(const char *uri);

/* The class and keys of the time:Position a host sends (time.lv2). */
typedef struct {
  LV2_URID Position, frame, speed, bar, barBeat, beatsPerBar, beatsPerMinute;
} host_time_uris;

void host_time_uris_map(host_time_uris *time);

/* ------------------------------------------------------------ loading */

typedef struct {
  void *library;
  const LV2_Descriptor *descriptor;
  const LV2_Worker_Interface *worker_interface; /* NULL if it has none */
  char bundle[PATH_MAX];
} host_plugin;

/* build/tests/<test> -> build/plumb.lv2/plumb.so. Returns 0 or -1 (and
   says why on stderr). */
int host_plugin_load(host_plugin *plugin);
void host_plugin_unload(host_plugin *plugin);

/* ------------------------------------------------------------ features */

/* Everything one instance is given. A test may replace map.map and
   unmap.unmap (to count calls, say) after host_features_build(). */
typedef struct {
  LV2_URID_Map map;
  LV2_URID_Unmap unmap;
  LV2_Log_Log log; /* to stderr, or kept (host_features_keep_log) */
  float sample_rate_hz;
  int32_t min_block_frames, max_block_frames, nominal_block_frames;
  LV2_Options_Option options[5];
  LV2_Feature features[HOST_MAX_FEATURES];
  const LV2_Feature *list[HOST_MAX_FEATURES + 1];
  int count;
} host_features;

/* urid:map, urid:unmap, log:log, options (sample rate, block lengths
   1 .. HOST_MAX_BLOCK_FRAMES, nominal `block_frames`) and
   buf-size:boundedBlockLength. Must not move after this (the list
   points into it). */
void host_features_build(host_features *f, double sample_rate_hz, uint32_t block_frames);
/* One more feature (state:makePath ...). */
void host_features_add(host_features *f, const char *uri, void *data);
/* log:log lines are kept, for host_log_count(), instead of printed. */
void host_features_keep_log(host_features *f);

/* The kept log, one for the process; locked, since the plugin's own
   thread logs too. */
void host_log_clear(void);
/* How many times `needle` stands in the kept lines. */
int host_log_count(const char *needle);
/* Until `needle` is kept, for at most 2 s (the plugin's own thread
   reports within a 20 ms poll). */
bool host_log_wait_for(const char *needle);

/* ------------------------------------------------------------ an instance */

typedef union {
  LV2_Atom_Sequence sequence;
  uint64_t aligned; /* "Atoms MUST be 64-bit aligned" (atom.meta.ttl) */
  uint8_t bytes[HOST_CONTROL_BYTES];
} host_control_buffer;

typedef union {
  LV2_Atom_Sequence sequence;
  uint64_t aligned; /* "Atoms MUST be 64-bit aligned" (atom.meta.ttl) */
  uint8_t bytes[HOST_NOTIFY_BYTES];
} host_notify_buffer;

typedef struct {
  const LV2_Descriptor *descriptor;
  LV2_Handle instance;
  float in[HOST_MAX_BLOCK_FRAMES];
  float out[HOST_MAX_BLOCK_FRAMES];
  float controls[PORT_COUNT];
  host_control_buffer control;
  host_notify_buffer notify;
  /* The space offered on notify before each run(), after the atom
     header: all of the buffer unless a test offers less. */
  uint32_t notify_space_bytes;
  LV2_Atom_Forge forge; /* writes the control sequence, outside run() */
  LV2_Atom_Forge_Frame sequence;
  LV2_URID atom_Chunk, patch_Set, patch_property, patch_value;
  host_worker worker; /* kind HOST_NO_WORKER unless asked for */
  LV2_Feature schedule;
  const LV2_Feature *list[HOST_MAX_FEATURES + 2]; /* features + schedule */
} host_instance;

/* The defaults of ttl/plumb.ttl, with logging as asked. */
void host_control_defaults(float controls[PORT_COUNT], bool logging);

/* Instantiate with `features` (plus work:schedule of the instance's own
   worker, started here, for a kind that has one), controls at their
   defaults; no port connected yet. NULL when the plugin refuses. */
host_instance *host_instance_instantiate(const host_plugin *plugin, host_features *features,
                                         double sample_rate_hz, bool logging,
                                         host_worker_kind worker);
/* connect_port() for every port. */
void host_instance_connect(host_instance *host);
/* Instantiate and connect. */
host_instance *host_instance_open(const host_plugin *plugin, host_features *features,
                                  double sample_rate_hz, bool logging, host_worker_kind worker);
/* Stops the worker, if any, and cleans up. NULL is a no-op. */
void host_instance_close(host_instance *host);

/* Start the control sequence of the next run(); events are then forged
   on host->forge, each after lv2_atom_forge_frame_time(). */
bool host_control_begin(host_instance *host);
void host_control_end(host_instance *host);
/* A patch:Set of `property` at `frame` of the block, up to its
   patch:value key: the caller forges the value, then pops `object`. */
bool host_patch_set_begin(host_instance *host, int64_t frame, LV2_Atom_Forge_Frame *object,
                          LV2_URID property);

/* What a host does before run(): the input block, and notify offered as
   lilv does, an empty Chunk whose size is the space there is. */
void host_block_in(host_instance *host, const float *samples, uint32_t frames);
/* run(), then the worker's end of the run (the audio thread's part). */
void host_block_run(host_instance *host, uint32_t frames);
/* Both: one run() of `frames` samples from `samples`; the control
   sequence must have been written (begin, events, end). */
void host_run(host_instance *host, const float *samples, uint32_t frames);

#endif /* PLUMB_TEST_PLUGIN_HOST_H */
