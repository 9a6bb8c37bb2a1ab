/*
  LV2 state: save and restore of the parameters that are not ports, and
  the session folder from state:makePath (docs/ports.md, "State").

  This executable hosts build/plumb.lv2/plumb.so as an LV2 host would
  (urid:map and unmap, log:log), sets the parameters by patch:Set in
  run(), saves them into an in-memory store through a state:mapPath that
  makes paths relative to a "session" folder, restores them into a fresh
  instance and checks that its take is logged where and as the restored
  values say. A host's makePath must only ever be called from a thread
  of the plugin's own, never from instantiate() or run(); with a host
  that has a worker (work:schedule), only from that worker's thread.
*/
#include "urid_table.h"
#include "ports.h"

#include <lv2/atom/atom.h>
#include <lv2/atom/forge.h>
#include <lv2/core/lv2.h>
#include <lv2/log/log.h>
#include <lv2/patch/patch.h>
#include <lv2/state/state.h>
#include <lv2/urid/urid.h>
#include <lv2/worker/worker.h>

#include <dirent.h>
#include <dlfcn.h>
#include <ftw.h>
#include <limits.h>
#include <math.h>
#include <pthread.h>
#include <stdarg.h>
#include <stdatomic.h>
#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#include <setjmp.h>
#include <cmocka.h>

#define SAMPLE_RATE_HZ 48000.0
#define BLOCK_FRAMES 512
#define BLOCKS 40
#define CONTROL_BYTES 16384
#define NOTIFY_BYTES 4096
#define PLUGIN_URI "urn:plumb:intonation"
#define LOG_FOLDER_URI "urn:plumb:logFolder"
#define TAKE_LABEL_URI "urn:plumb:takeLabel"
#define CUSTOM_OFFSETS_URI "urn:plumb:customOffsets"
#define LABEL "restored-take"
#define STATE_FLAGS (LV2_STATE_IS_POD | LV2_STATE_IS_PORTABLE)
#define MAX_ENTRIES 8
#define MAX_CALLS 16

static const float offsets[12] = {12.5f, -7.25f, 0.0f, 3.0f,  0.0f, -1.5f,
                                  0.0f,  25.0f,  0.0f, -3.0f, 0.0f, 0.75f};
static const char offsets_json[] =
    "\"custom_offsets_cents\": [12.50, -7.25, 0.00, 3.00, 0.00, -1.50, 0.00, "
    "25.00, 0.00, -3.00, 0.00, 0.75]";

/* ================================================== URIDs */

/* The shared table: tests/urid_table.c. */
#define map_uri urid_table_map
#define unmap_uri urid_table_unmap

static struct {
  LV2_URID atom_Path, atom_String, atom_Float, atom_Int, atom_Vector;
  LV2_URID patch_Set, patch_property, patch_value;
  LV2_URID log_folder, take_label, custom_offsets;
} uris;

static LV2_URID_Map map = {NULL, map_uri};
static LV2_URID_Unmap unmap = {NULL, unmap_uri};

static void map_uris(void) {
  uris.atom_Path = map_uri(NULL, LV2_ATOM__Path);
  uris.atom_String = map_uri(NULL, LV2_ATOM__String);
  uris.atom_Float = map_uri(NULL, LV2_ATOM__Float);
  uris.atom_Int = map_uri(NULL, LV2_ATOM__Int);
  uris.atom_Vector = map_uri(NULL, LV2_ATOM__Vector);
  uris.patch_Set = map_uri(NULL, LV2_PATCH__Set);
  uris.patch_property = map_uri(NULL, LV2_PATCH__property);
  uris.patch_value = map_uri(NULL, LV2_PATCH__value);
  uris.log_folder = map_uri(NULL, LOG_FOLDER_URI);
  uris.take_label = map_uri(NULL, TAKE_LABEL_URI);
  uris.custom_offsets = map_uri(NULL, CUSTOM_OFFSETS_URI);
}

/* ================================================== host features */

static int log_vprintf(LV2_Log_Handle handle, LV2_URID type, const char *format,
                       va_list arguments) {
  (void)handle;
  (void)type;
  return vfprintf(stderr, format, arguments);
}

static int log_printf(LV2_Log_Handle handle, LV2_URID type, const char *format,
                      ...) {
  va_list arguments;
  va_start(arguments, format);
  int written = log_vprintf(handle, type, format, arguments);
  va_end(arguments);
  return written;
}

static LV2_Log_Log host_log = {NULL, log_printf, log_vprintf};

/* The temporary folders of one test: ROOT/session and ROOT/env. */
static struct {
  char root[PATH_MAX - 16];
  char session[PATH_MAX];
  char env[PATH_MAX]; /* $PLUMB_LOG_DIR, which state must win over */
} dirs;

static char *joined(const char *a, const char *b) {
  size_t size = strlen(a) + strlen(b) + 2;
  char *path = malloc(size);
  if (path) {
    snprintf(path, size, "%s/%s", a, b);
  }
  return path;
}

/* ------------------------------------------------ state:mapPath */

static int abstract_calls;
static int absolute_calls;

/* SESSION/x becomes "x"; anything else stays absolute. */
static char *abstract_path(LV2_State_Map_Path_Handle handle,
                           const char *absolute) {
  (void)handle;
  abstract_calls++;
  size_t length = strlen(dirs.session);
  if (strncmp(absolute, dirs.session, length) == 0 &&
      absolute[length] == '/') {
    return strdup(absolute + length + 1);
  }
  return strdup(absolute);
}

static char *absolute_path(LV2_State_Map_Path_Handle handle,
                           const char *abstract) {
  (void)handle;
  absolute_calls++;
  return abstract[0] == '/' ? strdup(abstract) : joined(dirs.session, abstract);
}

static LV2_State_Map_Path map_path = {NULL, abstract_path, absolute_path};

/* ------------------------------------------------ state:makePath */

static pthread_mutex_t make_lock = PTHREAD_MUTEX_INITIALIZER;
static int make_calls;
static int relative_answers; /* make_path answers this many calls with a relative path */
static pthread_t make_threads[MAX_CALLS];

/* SESSION/path, made, as a malloc'd string (the plugin frees it). */
static char *make_path(LV2_State_Make_Path_Handle handle, const char *path) {
  (void)handle;
  pthread_mutex_lock(&make_lock);
  if (make_calls < MAX_CALLS) {
    make_threads[make_calls] = pthread_self();
  }
  make_calls++;
  pthread_mutex_unlock(&make_lock);
  /* A host that does not know its session's folder yet answers with the
     path as given (measured in one workstation, docs/hosts.md). */
  if (relative_answers > 0) {
    relative_answers--;
    return strdup(path);
  }
  char *made = joined(dirs.session, path);
  if (made) {
    mkdir(made, 0777);
  }
  return made;
}

static LV2_State_Make_Path make_path_feature = {NULL, make_path};

static int make_calls_now(void) {
  pthread_mutex_lock(&make_lock);
  int calls = make_calls;
  pthread_mutex_unlock(&make_lock);
  return calls;
}

/* ------------------------------------------------ work:schedule */

/* A host's worker: one thread that hands each scheduled message to the
   plugin's work() (LV2 Worker extension). One message waits at a time
   (the plugin schedules no more); run() only stores it, lock-free. */
static struct {
  const LV2_Worker_Interface *interface;
  LV2_Handle instance;
  pthread_t thread;
  atomic_bool stop;
  atomic_bool waiting; /* a message is there */
  uint32_t size;
  uint8_t message[64];
  atomic_ulong scheduled, worked;
} worker;

static LV2_Worker_Status no_response(LV2_Worker_Respond_Handle handle,
                                     uint32_t size, const void *data) {
  (void)handle;
  (void)size;
  (void)data;
  return LV2_WORKER_ERR_NO_SPACE; /* the plugin sends none */
}

static LV2_Worker_Status schedule_work(LV2_Worker_Schedule_Handle handle,
                                       uint32_t size, const void *data) {
  (void)handle;
  if (atomic_load(&worker.waiting) || size > sizeof worker.message) {
    return LV2_WORKER_ERR_NO_SPACE;
  }
  memcpy(worker.message, data, size);
  worker.size = size;
  atomic_fetch_add(&worker.scheduled, 1ul);
  atomic_store(&worker.waiting, true);
  return LV2_WORKER_SUCCESS;
}

static void *worker_main(void *argument) {
  (void)argument;
  const struct timespec pause = {0, 500000L};
  while (!atomic_load(&worker.stop) || atomic_load(&worker.waiting)) {
    if (atomic_load(&worker.waiting)) {
      uint8_t message[sizeof worker.message];
      uint32_t size = worker.size;
      memcpy(message, worker.message, size);
      atomic_store(&worker.waiting, false);
      worker.interface->work(worker.instance, no_response, NULL, size,
                             message);
      atomic_fetch_add(&worker.worked, 1ul);
    }
    nanosleep(&pause, NULL);
  }
  return NULL;
}

static LV2_Worker_Schedule schedule_feature = {NULL, schedule_work};

/* The features a host gives; with_make_path adds state:makePath,
   with_worker work:schedule. */
typedef struct {
  LV2_Feature features[5];
  const LV2_Feature *list[6];
} host_features;

static const LV2_Feature *const *build_features(host_features *f,
                                                bool with_make_path,
                                                bool with_worker) {
  int count = 0;
  f->features[count++] = (LV2_Feature){LV2_URID__map, &map};
  f->features[count++] = (LV2_Feature){LV2_URID__unmap, &unmap};
  f->features[count++] = (LV2_Feature){LV2_LOG__log, &host_log};
  if (with_make_path) {
    f->features[count++] =
        (LV2_Feature){LV2_STATE__makePath, &make_path_feature};
  }
  if (with_worker) {
    f->features[count++] = (LV2_Feature){LV2_WORKER__schedule, &schedule_feature};
  }
  for (int i = 0; i < count; ++i) {
    f->list[i] = &f->features[i];
  }
  f->list[count] = NULL;
  return f->list;
}

static const LV2_Feature map_path_entry = {LV2_STATE__mapPath, &map_path};
static const LV2_Feature *const with_map_path[] = {&map_path_entry, NULL};

/* ================================================== the store */

typedef struct {
  uint32_t key;
  void *value;
  size_t size;
  uint32_t type;
  uint32_t flags;
} entry;

typedef struct {
  entry entries[MAX_ENTRIES];
  size_t count;
} store;

static LV2_State_Status store_value(LV2_State_Handle handle, uint32_t key,
                                    const void *value, size_t size,
                                    uint32_t type, uint32_t flags) {
  store *s = handle;
  if (s->count == MAX_ENTRIES) {
    return LV2_STATE_ERR_UNKNOWN;
  }
  entry *e = &s->entries[s->count++];
  *e = (entry){key, malloc(size), size, type, flags};
  memcpy(e->value, value, size);
  return LV2_STATE_SUCCESS;
}

static const void *retrieve_value(LV2_State_Handle handle, uint32_t key,
                                  size_t *size, uint32_t *type,
                                  uint32_t *flags) {
  store *s = handle;
  for (size_t i = 0; i < s->count; ++i) {
    if (s->entries[i].key == key) {
      *size = s->entries[i].size;
      *type = s->entries[i].type;
      *flags = s->entries[i].flags;
      return s->entries[i].value;
    }
  }
  return NULL;
}

static const entry *find_entry(const store *s, uint32_t key) {
  for (size_t i = 0; i < s->count; ++i) {
    if (s->entries[i].key == key) {
      return &s->entries[i];
    }
  }
  return NULL;
}

static void free_store(store *s) {
  for (size_t i = 0; i < s->count; ++i) {
    free(s->entries[i].value);
  }
  s->count = 0;
}

/* ================================================== the plugin */

static struct {
  void *library;
  const LV2_Descriptor *descriptor;
  const LV2_State_Interface *state;
  pthread_t main_thread;
} suite;

typedef struct {
  LV2_Handle instance;
  float in[BLOCK_FRAMES];
  float out[BLOCK_FRAMES];
  float controls[PORT_COUNT];
  union {
    LV2_Atom_Sequence sequence;
    uint64_t aligned; /* "Atoms MUST be 64-bit aligned" (atom.meta.ttl) */
    uint8_t bytes[CONTROL_BYTES];
  } control;
  union {
    LV2_Atom_Sequence sequence;
    uint64_t aligned; /* "Atoms MUST be 64-bit aligned" (atom.meta.ttl) */
    uint8_t bytes[NOTIFY_BYTES];
  } notify;
} plugin_host;

static void set_control_defaults(float controls[PORT_COUNT], bool logging) {
  controls[PORT_REFERENCE] = 440.0f;
  controls[PORT_TOLERANCE] = 10.0f;
  controls[PORT_TEMPERAMENT] = 0.0f;
  controls[PORT_TONIC] = 0.0f;
  controls[PORT_LOWEST] = 28.0f;
  controls[PORT_HIGHEST] = 96.0f;
  controls[PORT_MIN_NOTE] = 80.0f;
  controls[PORT_LOGGING] = logging ? 1.0f : 0.0f;
}

static plugin_host *open_host_with(bool with_make_path, bool with_worker,
                                   bool logging) {
  plugin_host *host = calloc(1, sizeof *host);
  assert_non_null(host);
  host_features f;
  host->instance = suite.descriptor->instantiate(
      suite.descriptor, SAMPLE_RATE_HZ, "",
      build_features(&f, with_make_path, with_worker));
  assert_non_null(host->instance);
  set_control_defaults(host->controls, logging);
  const LV2_Descriptor *d = suite.descriptor;
  d->connect_port(host->instance, PORT_IN, host->in);
  d->connect_port(host->instance, PORT_OUT, host->out);
  d->connect_port(host->instance, PORT_CONTROL, &host->control);
  d->connect_port(host->instance, PORT_NOTIFY, &host->notify);
  for (uint32_t port = PORT_NOTIFY + 1; port < PORT_COUNT; ++port) {
    d->connect_port(host->instance, port, &host->controls[port]);
  }
  return host;
}

static plugin_host *open_host(bool with_make_path, bool logging) {
  return open_host_with(with_make_path, false, logging);
}

static void close_host(plugin_host *host) {
  suite.descriptor->cleanup(host->instance);
  free(host);
}

/* An empty control sequence on a forge over the control buffer. */
static void begin_control(plugin_host *host, LV2_Atom_Forge *forge,
                          LV2_Atom_Forge_Frame *frame) {
  lv2_atom_forge_init(forge, &map);
  lv2_atom_forge_set_buffer(forge, host->control.bytes, CONTROL_BYTES);
  lv2_atom_forge_sequence_head(forge, frame, 0);
}

static void forge_set_head(LV2_Atom_Forge *forge, LV2_Atom_Forge_Frame *frame,
                           LV2_URID key) {
  lv2_atom_forge_frame_time(forge, 0);
  lv2_atom_forge_object(forge, frame, 0, uris.patch_Set);
  lv2_atom_forge_key(forge, uris.patch_property);
  lv2_atom_forge_urid(forge, key);
  lv2_atom_forge_key(forge, uris.patch_value);
}

/* patch:Set of the folder, the label and the offsets at frame 0. */
static void forge_parameters(plugin_host *host, const char *folder) {
  LV2_Atom_Forge forge;
  LV2_Atom_Forge_Frame sequence;
  LV2_Atom_Forge_Frame object;
  begin_control(host, &forge, &sequence);
  forge_set_head(&forge, &object, uris.log_folder);
  lv2_atom_forge_path(&forge, folder, (uint32_t)strlen(folder));
  lv2_atom_forge_pop(&forge, &object);
  forge_set_head(&forge, &object, uris.take_label);
  lv2_atom_forge_string(&forge, LABEL, (uint32_t)strlen(LABEL));
  lv2_atom_forge_pop(&forge, &object);
  forge_set_head(&forge, &object, uris.custom_offsets);
  lv2_atom_forge_vector(&forge, sizeof(float), uris.atom_Float, 12, offsets);
  lv2_atom_forge_pop(&forge, &object);
  lv2_atom_forge_pop(&forge, &sequence);
}

static void run_block(plugin_host *host) {
  host->notify.sequence.atom.type = map_uri(NULL, LV2_ATOM__Chunk);
  host->notify.sequence.atom.size = NOTIFY_BYTES - sizeof(LV2_Atom);
  suite.descriptor->run(host->instance, BLOCK_FRAMES);
}

/* Block `block` of a take: a quiet 440 Hz tone (-26 dBFS: hearing
   caution) for the first half of the take, then faint noise. */
static void fill_block(plugin_host *host, int block) {
  for (int i = 0; i < BLOCK_FRAMES; ++i) {
    double t_s = (block * BLOCK_FRAMES + i) / SAMPLE_RATE_HZ;
    host->in[i] = block < BLOCKS / 2 ? (float)(0.05 * sin(2.0 * M_PI * 440.0 * t_s))
                                     : 0.001f * (float)((i * 7919) % 101 - 50) / 50.0f;
  }
}

/* A take of a quiet 440 Hz tone (-26 dBFS: hearing caution) for the first
   half, then faint noise, so that one note completes and the take's files
   are opened (docs/log-format.md: with the first note); `folder`, if not
   NULL, is set at frame 0. */
static void run_take(plugin_host *host, const char *folder) {
  suite.descriptor->activate(host->instance);
  for (int block = 0; block < BLOCKS; ++block) {
    LV2_Atom_Forge forge;
    LV2_Atom_Forge_Frame sequence;
    begin_control(host, &forge, &sequence);
    lv2_atom_forge_pop(&forge, &sequence);
    if (block == 0 && folder) {
      forge_parameters(host, folder);
    }
    fill_block(host, block);
    run_block(host);
  }
  suite.descriptor->deactivate(host->instance);
}

/* ================================================== files */

static bool read_file(const char *path, char *text, size_t size) {
  FILE *file = fopen(path, "r");
  if (!file) {
    return false;
  }
  size_t length = fread(text, 1, size - 1, file);
  text[length] = '\0';
  fclose(file);
  return true;
}

static bool exists(const char *folder, const char *name) {
  char path[PATH_MAX];
  snprintf(path, sizeof path, "%s/%s", folder, name);
  struct stat info;
  return stat(path, &info) == 0;
}

/* How many files in folder end with suffix (0 if it is not there). */
static int count_ending(const char *folder, const char *suffix) {
  DIR *dir = opendir(folder);
  int count = 0;
  size_t tail = strlen(suffix);
  for (struct dirent *e = dir ? readdir(dir) : NULL; e; e = readdir(dir)) {
    size_t length = strlen(e->d_name);
    count += length > tail && strcmp(e->d_name + length - tail, suffix) == 0;
  }
  if (dir) {
    closedir(dir);
  }
  return count;
}

static int remove_one(const char *path, const struct stat *info, int flag,
                      struct FTW *walk) {
  (void)info;
  (void)flag;
  (void)walk;
  return remove(path);
}

/* Fresh ROOT/session and ROOT/env, the latter as $PLUMB_LOG_DIR. */
static int make_dirs(void **state) {
  (void)state;
  snprintf(dirs.root, sizeof dirs.root, "%s/plumb-state.XXXXXX",
           getenv("TMPDIR") ? getenv("TMPDIR") : "/tmp");
  if (!mkdtemp(dirs.root)) {
    return -1;
  }
  snprintf(dirs.session, sizeof dirs.session, "%s/session", dirs.root);
  snprintf(dirs.env, sizeof dirs.env, "%s/env", dirs.root);
  abstract_calls = absolute_calls = make_calls = 0;
  return mkdir(dirs.session, 0777) || mkdir(dirs.env, 0777) ||
         setenv("PLUMB_LOG_DIR", dirs.env, 1);
}

static int remove_dirs(void **state) {
  (void)state;
  return nftw(dirs.root, remove_one, 16, FTW_DEPTH | FTW_PHYS);
}

/* ================================================== tests */

static void save_into(plugin_host *host, store *s) {
  LV2_State_Status status = suite.state->save(
      host->instance, store_value, s, LV2_STATE_IS_POD | LV2_STATE_IS_PORTABLE,
      with_map_path);
  assert_int_equal(status, LV2_STATE_SUCCESS);
}

static void restore_from(plugin_host *host, store *s) {
  LV2_State_Status status = suite.state->restore(
      host->instance, retrieve_value, s, 0, with_map_path);
  assert_int_equal(status, LV2_STATE_SUCCESS);
}

static void check_saved(const store *s) {
  assert_int_equal(s->count, 3);
  const entry *folder = find_entry(s, uris.log_folder);
  const entry *label = find_entry(s, uris.take_label);
  const entry *vector = find_entry(s, uris.custom_offsets);
  assert_non_null(folder);
  assert_non_null(label);
  assert_non_null(vector);
  assert_int_equal(folder->type, uris.atom_Path);
  assert_int_equal(folder->size, sizeof "takes");
  assert_string_equal(folder->value, "takes"); /* the abstract path */
  assert_int_equal(label->type, uris.atom_String);
  assert_int_equal(label->size, sizeof LABEL);
  assert_string_equal(label->value, LABEL);
  assert_int_equal(vector->type, uris.atom_Vector);
  const LV2_Atom_Vector_Body *body = vector->value;
  assert_int_equal(vector->size, sizeof *body + sizeof offsets);
  assert_int_equal(body->child_type, uris.atom_Float);
  assert_int_equal(body->child_size, sizeof(float));
  assert_memory_equal(body + 1, offsets, sizeof offsets);
  for (size_t i = 0; i < s->count; ++i) {
    assert_int_equal(s->entries[i].flags, STATE_FLAGS);
  }
  assert_int_equal(abstract_calls, 1);
}

static void check_logged(const char *folder) {
  assert_true(exists(folder, LABEL ".notes.csv"));
  char path[PATH_MAX];
  snprintf(path, sizeof path, "%s/%s", folder, LABEL ".run.json");
  static char json[65536];
  assert_true(read_file(path, json, sizeof json));
  assert_non_null(strstr(json, offsets_json));
  assert_non_null(strstr(json, "\"take_label\": \"" LABEL "\""));
  assert_int_equal(count_ending(dirs.env, ".notes.csv"), 0);
}

static void test_save_and_restore(void **state) {
  (void)state;
  char *folder = joined(dirs.session, "takes");
  plugin_host *first = open_host(false, false);
  run_take(first, folder);
  store s = {0};
  save_into(first, &s);
  close_host(first);
  check_saved(&s);

  plugin_host *second = open_host(false, true);
  restore_from(second, &s);
  assert_int_equal(absolute_calls, 1);
  run_take(second, NULL);
  close_host(second);
  check_logged(folder);
  free_store(&s);
  free(folder);
}

/* After restoring `bad`, the values of `good` are all still saved. */
static void check_kept(store *good, store *bad) {
  plugin_host *host = open_host(false, false);
  restore_from(host, good);
  restore_from(host, bad);
  store again = {0};
  abstract_calls = 0;
  save_into(host, &again);
  close_host(host);
  check_saved(&again);
  free_store(&again);
}

static void test_missing_and_wrong_types(void **state) {
  (void)state;
  plugin_host *host = open_host(false, false);
  store empty = {0};
  restore_from(host, &empty);
  store saved = {0};
  save_into(host, &saved);
  close_host(host);
  assert_int_equal(saved.count, 0); /* all defaults: nothing set */

  store good = {0};
  char *folder = joined(dirs.session, "takes");
  store_value(&good, uris.log_folder, "takes", sizeof "takes", uris.atom_Path,
              STATE_FLAGS);
  store_value(&good, uris.take_label, LABEL, sizeof LABEL, uris.atom_String,
              STATE_FLAGS);
  struct {
    LV2_Atom_Vector_Body body;
    float cents[12];
  } vector = {{sizeof(float), uris.atom_Float}, {0}};
  memcpy(vector.cents, offsets, sizeof offsets);
  store_value(&good, uris.custom_offsets, &vector, sizeof vector,
              uris.atom_Vector, STATE_FLAGS);

  int32_t number = 7;
  store bad = {0};
  store_value(&bad, uris.log_folder, &number, sizeof number, uris.atom_Int, 0);
  store_value(&bad, uris.take_label, &number, sizeof number, uris.atom_Float,
              0);
  store_value(&bad, uris.custom_offsets, &vector, sizeof vector - 4,
              uris.atom_Vector, 0); /* 11 floats and a bit */
  check_kept(&good, &bad);
  check_kept(&good, &empty);
  free_store(&good);
  free_store(&bad);
  free(folder);
}

static void test_make_path(void **state) {
  (void)state;
  plugin_host *host = open_host(true, true);
  assert_int_equal(make_calls_now(), 0); /* never in instantiate */
  run_take(host, NULL);
  close_host(host);
  int calls = make_calls_now();
  assert_true(calls >= 1);
  for (int i = 0; i < calls && i < MAX_CALLS; ++i) {
    assert_false(pthread_equal(make_threads[i], suite.main_thread));
  }
  char *made = joined(dirs.session, "plumb-logs");
  assert_int_equal(count_ending(made, ".notes.csv"), 1);
  assert_int_equal(count_ending(made, ".run.json"), 1);
  assert_int_equal(count_ending(dirs.env, ".notes.csv"), 0);
  free(made);
}

/* With a host worker the plugin's log is written from work() (docs/ports.md,
   "Who writes the session log"), so makePath is called on the host's
   worker thread, and only there. The host lets its worker finish what
   run() scheduled before it deactivates, as a live host has time to. */
/* A host that runs the plugin before it knows where its session is (one
   workstation runs a block to learn the latency, and makePath then answers
   "plumb-logs" as given): that take has no notes and leaves no files, the
   relative answer is not taken for a folder, and the next take asks again
   and logs inside the session. */
static void test_make_path_relative_first(void **state) {
  (void)state;
  plugin_host *host = open_host(true, true);
  relative_answers = 1;
  suite.descriptor->activate(host->instance); /* the probe: one silent block */
  LV2_Atom_Forge forge;
  LV2_Atom_Forge_Frame sequence;
  begin_control(host, &forge, &sequence);
  lv2_atom_forge_pop(&forge, &sequence);
  memset(host->in, 0, sizeof host->in);
  run_block(host);
  suite.descriptor->deactivate(host->instance);
  run_take(host, NULL); /* the real take, with a note */
  close_host(host);
  relative_answers = 0;
  assert_true(make_calls_now() >= 1);
  char *made = joined(dirs.session, "plumb-logs");
  assert_int_equal(count_ending(made, ".notes.csv"), 1);
  assert_int_equal(count_ending(made, ".run.json"), 1);
  assert_int_equal(count_ending(dirs.env, ".notes.csv"), 0);
  free(made);
  /* nothing was made relative to the working folder */
  struct stat info;
  assert_true(stat("plumb-logs", &info) != 0);
}

static void test_make_path_from_the_hosts_worker(void **state) {
  (void)state;
  worker.interface = suite.descriptor->extension_data(LV2_WORKER__interface);
  assert_non_null(worker.interface);
  plugin_host *host = open_host_with(true, true, true);
  assert_int_equal(make_calls_now(), 0); /* never in instantiate */
  worker.instance = host->instance;
  atomic_store(&worker.stop, false);
  assert_int_equal(pthread_create(&worker.thread, NULL, worker_main, NULL), 0);
  suite.descriptor->activate(host->instance);
  for (int block = 0; block < BLOCKS; ++block) {
    LV2_Atom_Forge forge;
    LV2_Atom_Forge_Frame sequence;
    begin_control(host, &forge, &sequence);
    lv2_atom_forge_pop(&forge, &sequence);
    fill_block(host, block); /* a note: the take's files open with it */
    run_block(host);
  }
  const struct timespec pause = {0, 1000000L};
  for (int tries = 0; tries < 2000 && atomic_load(&worker.worked) <
                                          atomic_load(&worker.scheduled);
       ++tries) {
    nanosleep(&pause, NULL);
  }
  suite.descriptor->deactivate(host->instance);
  atomic_store(&worker.stop, true);
  pthread_join(worker.thread, NULL);
  close_host(host);
  assert_true(atomic_load(&worker.worked) >= 1);
  int calls = make_calls_now();
  assert_int_equal(calls, 1); /* docs/ports.md: once per instance */
  assert_true(pthread_equal(make_threads[0], worker.thread));
  char *made = joined(dirs.session, "plumb-logs");
  assert_int_equal(count_ending(made, ".notes.csv"), 1);
  assert_int_equal(count_ending(made, ".run.json"), 1);
  assert_int_equal(count_ending(dirs.env, ".notes.csv"), 0);
  free(made);
}

/* Control: without makePath the same take goes to $PLUMB_LOG_DIR, so
   the tests above can tell the two apart. */
static void test_without_make_path(void **state) {
  (void)state;
  plugin_host *host = open_host(false, true);
  run_take(host, NULL);
  close_host(host);
  assert_int_equal(make_calls_now(), 0);
  assert_int_equal(count_ending(dirs.env, ".notes.csv"), 1);
}

/* ================================================== setup */

/* build/tests/test_state -> build/plumb.lv2/plumb.so */
static int load_plugin(void) {
  char executable[PATH_MAX];
  ssize_t length = readlink("/proc/self/exe", executable, sizeof executable - 1);
  if (length <= 0) {
    return -1;
  }
  executable[length] = '\0';
  char *slash = strrchr(executable, '/');
  if (!slash) {
    return -1;
  }
  *slash = '\0';
  char binary[PATH_MAX + 32];
  snprintf(binary, sizeof binary, "%s/../plumb.lv2/plumb.so", executable);
  suite.library = dlopen(binary, RTLD_NOW | RTLD_LOCAL);
  if (!suite.library) {
    fprintf(stderr, "cannot load %s: %s (run make all)\n", binary, dlerror());
    return -1;
  }
  LV2_Descriptor_Function get =
      (LV2_Descriptor_Function)dlsym(suite.library, "lv2_descriptor");
  for (uint32_t i = 0; get && get(i) && !suite.descriptor; ++i) {
    if (strcmp(get(i)->URI, PLUGIN_URI) == 0) {
      suite.descriptor = get(i);
    }
  }
  return suite.descriptor ? 0 : -1;
}

static int setup_suite(void **state) {
  (void)state;
  suite.main_thread = pthread_self();
  map_uris();
  if (load_plugin() != 0) {
    return -1;
  }
  suite.state = suite.descriptor->extension_data(LV2_STATE__interface);
  if (!suite.state || !suite.state->save || !suite.state->restore) {
    fprintf(stderr, "the plugin has no state interface\n");
    return -1;
  }
  return 0;
}

static int teardown_suite(void **state) {
  (void)state;
  if (suite.library) {
    dlclose(suite.library);
  }
  return 0;
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test_setup_teardown(test_save_and_restore, make_dirs,
                                      remove_dirs),
      cmocka_unit_test_setup_teardown(test_missing_and_wrong_types, make_dirs,
                                      remove_dirs),
      cmocka_unit_test_setup_teardown(test_make_path, make_dirs, remove_dirs),
      cmocka_unit_test_setup_teardown(test_make_path_relative_first, make_dirs, remove_dirs),
      cmocka_unit_test_setup_teardown(test_make_path_from_the_hosts_worker,
                                      make_dirs, remove_dirs),
      cmocka_unit_test_setup_teardown(test_without_make_path, make_dirs,
                                      remove_dirs),
  };
  return cmocka_run_group_tests(tests, setup_suite, teardown_suite);
}
