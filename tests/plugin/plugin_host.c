/*
  The LV2 host of the project's plugin tests: see plugin_host.h.
*/
#include "plugin_host.h"

#include <lv2/buf-size/buf-size.h>
#include <lv2/parameters/parameters.h>
#include <lv2/patch/patch.h>
#include <lv2/time/time.h>

#include <dlfcn.h>
#include <pthread.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

#define KEPT_LOG_BYTES 65536

LV2_URID host_map(const char *uri) {
  return urid_table_map(NULL, uri);
}

void host_time_uris_map(host_time_uris *time) {
  time->Position = host_map(LV2_TIME__Position);
  time->frame = host_map(LV2_TIME__frame);
  time->speed = host_map(LV2_TIME__speed);
  time->bar = host_map(LV2_TIME__bar);
  time->barBeat = host_map(LV2_TIME__barBeat);
  time->beatsPerBar = host_map(LV2_TIME__beatsPerBar);
  time->beatsPerMinute = host_map(LV2_TIME__beatsPerMinute);
}

/* ------------------------------------------------------------ loading */

static const LV2_Descriptor *find_descriptor(void *library) {
  LV2_Descriptor_Function get = (LV2_Descriptor_Function)dlsym(library, "lv2_descriptor");
  for (uint32_t i = 0; get && get(i); ++i) {
    if (strcmp(get(i)->URI, HOST_PLUGIN_URI) == 0) {
      return get(i);
    }
  }
  return NULL;
}

int host_plugin_load(host_plugin *plugin) {
  memset(plugin, 0, sizeof *plugin);
  char executable[PATH_MAX];
  ssize_t length = readlink("/proc/self/exe", executable, sizeof executable - 1);
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
  snprintf(plugin->bundle, sizeof plugin->bundle, "%.*s/../plumb.lv2/", PATH_MAX - 32, executable);
  char binary[PATH_MAX + 16];
  snprintf(binary, sizeof binary, "%splumb.so", plugin->bundle);
  plugin->library = dlopen(binary, RTLD_NOW | RTLD_LOCAL);
  if (!plugin->library) {
    fprintf(stderr, "cannot load %s: %s (run make all)\n", binary, dlerror());
    return -1;
  }
  plugin->descriptor = find_descriptor(plugin->library);
  if (!plugin->descriptor) {
    fprintf(stderr, "%s has no descriptor for %s\n", binary, HOST_PLUGIN_URI);
    return -1;
  }
  if (plugin->descriptor->extension_data) {
    plugin->worker_interface = plugin->descriptor->extension_data(LV2_WORKER__interface);
  }
  return 0;
}

void host_plugin_unload(host_plugin *plugin) {
  if (plugin->library) {
    dlclose(plugin->library);
  }
  memset(plugin, 0, sizeof *plugin);
}

/* ------------------------------------------------------------ log:log */

/* The handle is the LV2_Log_Log itself, so that printf goes through
   whichever vprintf it has. */
static int log_printf(LV2_Log_Handle handle, LV2_URID type, const char *format, ...) {
  const LV2_Log_Log *log = handle;
  va_list arguments;
  va_start(arguments, format);
  int written = log->vprintf(handle, type, format, arguments);
  va_end(arguments);
  return written;
}

/* To stderr. From run() it is a vfprintf call, as a test that counts
   calls wants to see. */
static int log_vprintf(LV2_Log_Handle handle, LV2_URID type, const char *format,
                       va_list arguments) {
  (void)handle;
  (void)type;
  return vfprintf(stderr, format, arguments);
}

static struct {
  pthread_mutex_t lock;
  char text[KEPT_LOG_BYTES];
  size_t length;
} kept = {PTHREAD_MUTEX_INITIALIZER, "", 0};

static int keep_vprintf(LV2_Log_Handle handle, LV2_URID type, const char *format,
                        va_list arguments) {
  (void)handle;
  (void)type;
  pthread_mutex_lock(&kept.lock);
  size_t room = sizeof kept.text - kept.length;
  int written = vsnprintf(kept.text + kept.length, room, format, arguments);
  if (written > 0) {
    kept.length += (size_t)written < room ? (size_t)written : room - 1;
  }
  pthread_mutex_unlock(&kept.lock);
  return written;
}

void host_features_keep_log(host_features *f) {
  f->log = (LV2_Log_Log){&f->log, log_printf, keep_vprintf};
}

void host_log_clear(void) {
  pthread_mutex_lock(&kept.lock);
  kept.length = 0;
  kept.text[0] = '\0';
  pthread_mutex_unlock(&kept.lock);
}

int host_log_count(const char *needle) {
  pthread_mutex_lock(&kept.lock);
  int count = 0;
  for (const char *at = kept.text; (at = strstr(at, needle)) != NULL; at += strlen(needle)) {
    ++count;
  }
  pthread_mutex_unlock(&kept.lock);
  return count;
}

bool host_log_wait_for(const char *needle) {
  const struct timespec pause = {0, 5000000L};
  for (int tries = 0; tries < 400; ++tries) {
    if (host_log_count(needle) > 0) {
      return true;
    }
    nanosleep(&pause, NULL);
  }
  return false;
}

/* ------------------------------------------------------------ features */

static void set_option(LV2_Options_Option *option, LV2_URID key, LV2_URID type, uint32_t size,
                       const void *value) {
  *option = (LV2_Options_Option){LV2_OPTIONS_INSTANCE, 0, key, size, type, value};
}

void host_features_build(host_features *f, double sample_rate_hz, uint32_t block_frames) {
  memset(f, 0, sizeof *f);
  f->map = (LV2_URID_Map){NULL, urid_table_map};
  f->unmap = (LV2_URID_Unmap){NULL, urid_table_unmap};
  f->log = (LV2_Log_Log){&f->log, log_printf, log_vprintf};
  f->sample_rate_hz = (float)sample_rate_hz;
  f->min_block_frames = 1;
  f->max_block_frames = HOST_MAX_BLOCK_FRAMES;
  f->nominal_block_frames = (int32_t)block_frames;
  LV2_URID atom_Int = host_map(LV2_ATOM__Int);
  set_option(&f->options[0], host_map(LV2_PARAMETERS__sampleRate), host_map(LV2_ATOM__Float),
             sizeof(float), &f->sample_rate_hz);
  set_option(&f->options[1], host_map(LV2_BUF_SIZE__minBlockLength), atom_Int, sizeof(int32_t),
             &f->min_block_frames);
  set_option(&f->options[2], host_map(LV2_BUF_SIZE__maxBlockLength), atom_Int, sizeof(int32_t),
             &f->max_block_frames);
  set_option(&f->options[3], host_map(LV2_BUF_SIZE__nominalBlockLength), atom_Int, sizeof(int32_t),
             &f->nominal_block_frames);
  /* options[4] stays zero: the terminator */
  host_features_add(f, LV2_URID__map, &f->map);
  host_features_add(f, LV2_URID__unmap, &f->unmap);
  host_features_add(f, LV2_LOG__log, &f->log);
  host_features_add(f, LV2_OPTIONS__options, f->options);
  host_features_add(f, LV2_BUF_SIZE__boundedBlockLength, NULL);
}

void host_features_add(host_features *f, const char *uri, void *data) {
  if (f->count < HOST_MAX_FEATURES) {
    f->features[f->count] = (LV2_Feature){uri, data};
    f->list[f->count] = &f->features[f->count];
    f->list[++f->count] = NULL;
  }
}

/* ------------------------------------------------------------ an instance */

void host_control_defaults(float controls[PORT_COUNT], bool logging) {
  controls[PORT_REFERENCE] = 440.0f;
  controls[PORT_TOLERANCE] = 10.0f;
  controls[PORT_TEMPERAMENT] = 0.0f;
  controls[PORT_TONIC] = 0.0f;
  controls[PORT_LOWEST] = 28.0f;
  controls[PORT_HIGHEST] = 96.0f;
  controls[PORT_MIN_NOTE] = 80.0f;
  controls[PORT_LOGGING] = logging ? 1.0f : 0.0f;
}

/* The test's features, then work:schedule of the instance's worker. */
static const LV2_Feature *const *instance_features(host_instance *host, host_features *features,
                                                   host_worker_kind worker) {
  int count = 0;
  for (; count < features->count; ++count) {
    host->list[count] = features->list[count];
  }
  if (worker != HOST_NO_WORKER) {
    host->schedule = (LV2_Feature){LV2_WORKER__schedule, &host->worker.schedule};
    host->list[count++] = &host->schedule;
  }
  host->list[count] = NULL;
  return host->list;
}

host_instance *host_instance_instantiate(const host_plugin *plugin, host_features *features,
                                         double sample_rate_hz, bool logging,
                                         host_worker_kind worker) {
  host_instance *host = calloc(1, sizeof *host);
  if (!host) {
    return NULL;
  }
  host->descriptor = plugin->descriptor;
  host_worker_init(&host->worker, worker, plugin->worker_interface);
  host->instance =
      plugin->descriptor->instantiate(plugin->descriptor, sample_rate_hz, plugin->bundle,
                                      instance_features(host, features, worker));
  if (!host->instance || !host_worker_start(&host->worker, host->instance)) {
    if (host->instance) {
      host->descriptor->cleanup(host->instance);
    }
    free(host);
    return NULL;
  }
  lv2_atom_forge_init(&host->forge, &features->map);
  host->notify_space_bytes = HOST_NOTIFY_BYTES - sizeof(LV2_Atom);
  host->atom_Chunk = host_map(LV2_ATOM__Chunk);
  host->patch_Set = host_map(LV2_PATCH__Set);
  host->patch_property = host_map(LV2_PATCH__property);
  host->patch_value = host_map(LV2_PATCH__value);
  host_control_defaults(host->controls, logging);
  return host;
}

void host_instance_connect(host_instance *host) {
  const LV2_Descriptor *d = host->descriptor;
  d->connect_port(host->instance, PORT_IN, host->in);
  d->connect_port(host->instance, PORT_OUT, host->out);
  d->connect_port(host->instance, PORT_CONTROL, &host->control);
  d->connect_port(host->instance, PORT_NOTIFY, &host->notify);
  for (uint32_t port = PORT_NOTIFY + 1; port < PORT_COUNT; ++port) {
    d->connect_port(host->instance, port, &host->controls[port]);
  }
}

host_instance *host_instance_open(const host_plugin *plugin, host_features *features,
                                  double sample_rate_hz, bool logging, host_worker_kind worker) {
  host_instance *host =
      host_instance_instantiate(plugin, features, sample_rate_hz, logging, worker);
  if (host) {
    host_instance_connect(host);
  }
  return host;
}

void host_instance_close(host_instance *host) {
  if (host) {
    host_worker_stop(&host->worker);
    host->descriptor->cleanup(host->instance);
    free(host);
  }
}

/* ------------------------------------------------------------ running */

bool host_control_begin(host_instance *host) {
  lv2_atom_forge_set_buffer(&host->forge, host->control.bytes, sizeof host->control.bytes);
  return lv2_atom_forge_sequence_head(&host->forge, &host->sequence, 0) != 0;
}

void host_control_end(host_instance *host) {
  lv2_atom_forge_pop(&host->forge, &host->sequence);
}

bool host_patch_set_begin(host_instance *host, int64_t frame, LV2_Atom_Forge_Frame *object,
                          LV2_URID property) {
  LV2_Atom_Forge *forge = &host->forge;
  return lv2_atom_forge_frame_time(forge, frame) &&
         lv2_atom_forge_object(forge, object, 0, host->patch_Set) &&
         lv2_atom_forge_key(forge, host->patch_property) && lv2_atom_forge_urid(forge, property) &&
         lv2_atom_forge_key(forge, host->patch_value);
}

void host_block_in(host_instance *host, const float *samples, uint32_t frames) {
  memcpy(host->in, samples, frames * sizeof(float));
  host->notify.sequence.atom.type = host->atom_Chunk;
  host->notify.sequence.atom.size = host->notify_space_bytes;
}

void host_block_run(host_instance *host, uint32_t frames) {
  host->descriptor->run(host->instance, frames);
  if (host->worker.kind != HOST_NO_WORKER) {
    host_worker_end_of_run(&host->worker);
  }
}

void host_run(host_instance *host, const float *samples, uint32_t frames) {
  host_block_in(host, samples, frames);
  host_block_run(host, frames);
}
