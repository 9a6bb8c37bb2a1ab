/*
  A small LV2 host for the project's plugin tests: it loads
  build/plumb.lv2/plumb.so beside the test binary, gives it what a
  workstation gives (urid:map and unmap from tests/urid_table.c, log:log,
  options with the sample rate and block lengths, and optionally one more
  feature such as work:schedule), connects every port to buffers of its
  own and runs blocks with a control sequence forged beforehand.

  Header-only (static inline), because the Makefile links each test with
  a fixed set of helper objects. Not real-time code.
*/
#ifndef PLUMB_TEST_PLUGIN_HOST_H
#define PLUMB_TEST_PLUGIN_HOST_H

#include "urid_table.h"

#include "ports.h"

#include <lv2/atom/atom.h>
#include <lv2/atom/forge.h>
#include <lv2/atom/util.h>
#include <lv2/buf-size/buf-size.h>
#include <lv2/core/lv2.h>
#include <lv2/log/log.h>
#include <lv2/options/options.h>
#include <lv2/parameters/parameters.h>
#include <lv2/urid/urid.h>

#include <dlfcn.h>
#include <limits.h>
#include <stdarg.h>
#include <stdbool.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#define HOST_PLUGIN_URI "urn:plumb:intonation"
#define HOST_MAX_BLOCK_FRAMES 4096
#define HOST_CONTROL_BYTES 16384
#define HOST_NOTIFY_BYTES 32768

static inline LV2_URID host_map(const char *uri) {
  return urid_table_map(NULL, uri);
}

/* ------------------------------------------------------------ loading */

typedef struct {
  void *library;
  const LV2_Descriptor *descriptor;
  char bundle[PATH_MAX];
} host_plugin;

/* build/tests/<test> -> build/plumb.lv2/plumb.so. Returns 0 or -1 (and
   says why on stderr). */
static inline int host_plugin_load(host_plugin *plugin) {
  char executable[PATH_MAX];
  ssize_t length =
      readlink("/proc/self/exe", executable, sizeof executable - 1);
  char *slash = NULL;
  if (length > 0) {
    executable[length] = '\0';
    slash = strrchr(executable, '/');
  }
  if (!slash) {
    fprintf(stderr, "cannot find the bundle beside /proc/self/exe\n");
    return -1;
  }
  *slash = '\0';
  snprintf(plugin->bundle, sizeof plugin->bundle, "%.*s/../plumb.lv2/",
           PATH_MAX - 32, executable);
  char binary[PATH_MAX + 16];
  snprintf(binary, sizeof binary, "%splumb.so", plugin->bundle);
  plugin->library = dlopen(binary, RTLD_NOW | RTLD_LOCAL);
  if (!plugin->library) {
    fprintf(stderr, "cannot load %s: %s (run make all)\n", binary, dlerror());
    return -1;
  }
  LV2_Descriptor_Function get =
      (LV2_Descriptor_Function)dlsym(plugin->library, "lv2_descriptor");
  for (uint32_t i = 0; get && get(i) && !plugin->descriptor; ++i) {
    if (strcmp(get(i)->URI, HOST_PLUGIN_URI) == 0) {
      plugin->descriptor = get(i);
    }
  }
  if (!plugin->descriptor) {
    fprintf(stderr, "%s has no descriptor for %s\n", binary, HOST_PLUGIN_URI);
    return -1;
  }
  return 0;
}

static inline void host_plugin_unload(host_plugin *plugin) {
  if (plugin->library) {
    dlclose(plugin->library);
  }
  memset(plugin, 0, sizeof *plugin);
}

/* ------------------------------------------------------------ features */

static inline int host_log_vprintf(LV2_Log_Handle handle, LV2_URID type,
                                   const char *format, va_list arguments) {
  (void)handle;
  (void)type;
  return vfprintf(stderr, format, arguments);
}

static inline int host_log_printf(LV2_Log_Handle handle, LV2_URID type,
                                  const char *format, ...) {
  va_list arguments;
  va_start(arguments, format);
  int written = host_log_vprintf(handle, type, format, arguments);
  va_end(arguments);
  return written;
}

typedef struct {
  LV2_URID_Map map;
  LV2_URID_Unmap unmap;
  LV2_Log_Log log;
  float sample_rate_hz;
  int32_t min_block_frames, max_block_frames, nominal_block_frames;
  LV2_Options_Option options[5];
  LV2_Feature features[6];
  const LV2_Feature *list[7];
  int count;
} host_features;

static inline void host_set_option(LV2_Options_Option *option, LV2_URID key,
                                   LV2_URID type, uint32_t size,
                                   const void *value) {
  *option =
      (LV2_Options_Option){LV2_OPTIONS_INSTANCE, 0, key, size, type, value};
}

/* Must not move after this (the list points into it). */
static inline void host_features_build(host_features *f, double sample_rate_hz,
                                       uint32_t block_frames) {
  memset(f, 0, sizeof *f);
  f->map = (LV2_URID_Map){NULL, urid_table_map};
  f->unmap = (LV2_URID_Unmap){NULL, urid_table_unmap};
  f->log = (LV2_Log_Log){NULL, host_log_printf, host_log_vprintf};
  f->sample_rate_hz = (float)sample_rate_hz;
  f->min_block_frames = 1;
  f->max_block_frames = HOST_MAX_BLOCK_FRAMES;
  f->nominal_block_frames = (int32_t)block_frames;
  LV2_URID atom_Int = host_map(LV2_ATOM__Int);
  host_set_option(&f->options[0], host_map(LV2_PARAMETERS__sampleRate),
                  host_map(LV2_ATOM__Float), sizeof(float), &f->sample_rate_hz);
  host_set_option(&f->options[1], host_map(LV2_BUF_SIZE__minBlockLength),
                  atom_Int, sizeof(int32_t), &f->min_block_frames);
  host_set_option(&f->options[2], host_map(LV2_BUF_SIZE__maxBlockLength),
                  atom_Int, sizeof(int32_t), &f->max_block_frames);
  host_set_option(&f->options[3], host_map(LV2_BUF_SIZE__nominalBlockLength),
                  atom_Int, sizeof(int32_t), &f->nominal_block_frames);
  f->features[0] = (LV2_Feature){LV2_URID__map, &f->map};
  f->features[1] = (LV2_Feature){LV2_URID__unmap, &f->unmap};
  f->features[2] = (LV2_Feature){LV2_LOG__log, &f->log};
  f->features[3] = (LV2_Feature){LV2_OPTIONS__options, f->options};
  f->features[4] = (LV2_Feature){LV2_BUF_SIZE__boundedBlockLength, NULL};
  f->count = 5;
  for (int i = 0; i < f->count; ++i) {
    f->list[i] = &f->features[i];
  }
  f->list[f->count] = NULL;
}

/* One more feature (work:schedule, state:makePath ...). */
static inline void host_features_add(host_features *f, const char *uri,
                                     void *data) {
  if (f->count < 6) {
    f->features[f->count] = (LV2_Feature){uri, data};
    f->list[f->count] = &f->features[f->count];
    f->list[++f->count] = NULL;
  }
}

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
  LV2_Atom_Forge forge; /* writes the control sequence, outside run() */
  LV2_Atom_Forge_Frame sequence;
  LV2_URID atom_Chunk;
} host_instance;

/* The defaults of ttl/plumb.ttl, with logging as asked. */
static inline void host_control_defaults(float controls[PORT_COUNT],
                                         bool logging) {
  controls[PORT_REFERENCE] = 440.0f;
  controls[PORT_TOLERANCE] = 10.0f;
  controls[PORT_TEMPERAMENT] = 0.0f;
  controls[PORT_TONIC] = 0.0f;
  controls[PORT_LOWEST] = 28.0f;
  controls[PORT_HIGHEST] = 96.0f;
  controls[PORT_MIN_NOTE] = 80.0f;
  controls[PORT_LOGGING] = logging ? 1.0f : 0.0f;
}

/* Instantiate and connect every port. NULL when the plugin refuses. */
static inline host_instance *host_instance_open(const host_plugin *plugin,
                                                host_features *features,
                                                double sample_rate_hz,
                                                bool logging) {
  host_instance *host = calloc(1, sizeof *host);
  if (!host) {
    return NULL;
  }
  host->descriptor = plugin->descriptor;
  host->instance = plugin->descriptor->instantiate(
      plugin->descriptor, sample_rate_hz, plugin->bundle, features->list);
  if (!host->instance) {
    free(host);
    return NULL;
  }
  lv2_atom_forge_init(&host->forge, &features->map);
  host->atom_Chunk = host_map(LV2_ATOM__Chunk);
  host_control_defaults(host->controls, logging);
  const LV2_Descriptor *d = host->descriptor;
  d->connect_port(host->instance, PORT_IN, host->in);
  d->connect_port(host->instance, PORT_OUT, host->out);
  d->connect_port(host->instance, PORT_CONTROL, &host->control);
  d->connect_port(host->instance, PORT_NOTIFY, &host->notify);
  for (uint32_t port = PORT_NOTIFY + 1; port < PORT_COUNT; ++port) {
    d->connect_port(host->instance, port, &host->controls[port]);
  }
  return host;
}

static inline void host_instance_close(host_instance *host) {
  if (host) {
    host->descriptor->cleanup(host->instance);
    free(host);
  }
}

/* Start the control sequence of the next run(); events are then forged
   on host->forge, each after lv2_atom_forge_frame_time(). */
static inline bool host_control_begin(host_instance *host) {
  lv2_atom_forge_set_buffer(&host->forge, host->control.bytes,
                            sizeof host->control.bytes);
  return lv2_atom_forge_sequence_head(&host->forge, &host->sequence, 0) != 0;
}

static inline void host_control_end(host_instance *host) {
  lv2_atom_forge_pop(&host->forge, &host->sequence);
}

/* One run() of `frames` samples from `samples`; the control sequence
   must have been written (begin, events, end). Notify is offered as lilv
   does: an empty Chunk whose size is the space there is. */
static inline void host_run(host_instance *host, const float *samples,
                            uint32_t frames) {
  memcpy(host->in, samples, frames * sizeof(float));
  host->notify.sequence.atom.type = host->atom_Chunk;
  host->notify.sequence.atom.size = HOST_NOTIFY_BYTES - sizeof(LV2_Atom);
  host->descriptor->run(host->instance, frames);
}

#endif /* PLUMB_TEST_PLUGIN_HOST_H */
