/*
  LV2 state: save and restore of the parameters that are not ports, and
  the session folder from state:makePath (docs/ports.md, "State").

  This executable hosts build/plumb.lv2/plumb.so as an LV2 host would
  (tests/plugin/plugin_host.c), sets the parameters by patch:Set in
  run(), saves them into an in-memory store through a state:mapPath that
  makes paths relative to a "session" folder, restores them into a fresh
  instance and checks that its take is logged where and as the restored
  values say. A host's makePath must only ever be called from a thread
  of the plugin's own, never from instantiate() or run(); with a host
  that has a worker (work:schedule), only from that worker's thread.
*/
#include "folder_host.h"
#include "plugin_host.h"

#include <lv2/state/state.h>

#include <dirent.h>
#include <limits.h>
#include <math.h>
#include <pthread.h>
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

static struct {
  LV2_URID atom_Path, atom_String, atom_Float, atom_Int, atom_Vector;
  LV2_URID log_folder, take_label, custom_offsets;
} uris;

static void map_uris(void) {
  uris.atom_Path = host_map(LV2_ATOM__Path);
  uris.atom_String = host_map(LV2_ATOM__String);
  uris.atom_Float = host_map(LV2_ATOM__Float);
  uris.atom_Int = host_map(LV2_ATOM__Int);
  uris.atom_Vector = host_map(LV2_ATOM__Vector);
  uris.log_folder = host_map(LOG_FOLDER_URI);
  uris.take_label = host_map(TAKE_LABEL_URI);
  uris.custom_offsets = host_map(CUSTOM_OFFSETS_URI);
}

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
  host_plugin plugin;
  const LV2_State_Interface *state;
  pthread_t main_thread;
  host_features features;           /* what every host here gives */
  host_features features_make_path; /* and state:makePath */
} suite;

static host_instance *open_host_with(bool with_make_path, host_worker_kind worker,
                                     bool logging) {
  host_features *f = with_make_path ? &suite.features_make_path : &suite.features;
  host_instance *host =
      host_instance_open(&suite.plugin, f, SAMPLE_RATE_HZ, logging, worker);
  assert_non_null(host);
  return host;
}

static host_instance *open_host(bool with_make_path, bool logging) {
  return open_host_with(with_make_path, HOST_NO_WORKER, logging);
}

/* patch:Set of the folder, the label and the offsets at frame 0, in the
   control sequence begun. */
static void forge_parameters(host_instance *host, const char *folder) {
  LV2_Atom_Forge *forge = &host->forge;
  LV2_Atom_Forge_Frame object;
  host_patch_set_begin(host, 0, &object, uris.log_folder);
  lv2_atom_forge_path(forge, folder, (uint32_t)strlen(folder));
  lv2_atom_forge_pop(forge, &object);
  host_patch_set_begin(host, 0, &object, uris.take_label);
  lv2_atom_forge_string(forge, LABEL, (uint32_t)strlen(LABEL));
  lv2_atom_forge_pop(forge, &object);
  host_patch_set_begin(host, 0, &object, uris.custom_offsets);
  lv2_atom_forge_vector(forge, sizeof(float), uris.atom_Float, 12, offsets);
  lv2_atom_forge_pop(forge, &object);
}

/* Block `block` of a take: a quiet 440 Hz tone (-26 dBFS: hearing
   caution) for the first half of the take, then faint noise. */
static void fill_block(float in[BLOCK_FRAMES], int block) {
  for (int i = 0; i < BLOCK_FRAMES; ++i) {
    double t_s = (block * BLOCK_FRAMES + i) / SAMPLE_RATE_HZ;
    in[i] = block < BLOCKS / 2 ? (float)(0.05 * sin(2.0 * M_PI * 440.0 * t_s))
                                     : 0.001f * (float)((i * 7919) % 101 - 50) / 50.0f;
  }
}

/* A take of a quiet 440 Hz tone (-26 dBFS: hearing caution) for the first
   half, then faint noise, so that one note completes and the take's files
   are opened (docs/log-format.md: with the first note); `folder`, if not
   NULL, is set at frame 0. */
static void run_take(host_instance *host, const char *folder) {
  host->descriptor->activate(host->instance);
  float in[BLOCK_FRAMES];
  for (int block = 0; block < BLOCKS; ++block) {
    host_control_begin(host);
    if (block == 0 && folder) {
      forge_parameters(host, folder);
    }
    host_control_end(host);
    fill_block(in, block);
    host_run(host, in, BLOCK_FRAMES);
  }
  host->descriptor->deactivate(host->instance);
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

/* Fresh ROOT/session and ROOT/env, the latter as $PLUMB_LOG_DIR. */
static int make_dirs(void **state) {
  (void)state;
  if (host_folder_make(dirs.root, sizeof dirs.root, "plumb-state") != 0) {
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
  return host_folder_remove(dirs.root);
}

/* ================================================== tests */

static void save_into(host_instance *host, store *s) {
  LV2_State_Status status = suite.state->save(
      host->instance, store_value, s, LV2_STATE_IS_POD | LV2_STATE_IS_PORTABLE,
      with_map_path);
  assert_int_equal(status, LV2_STATE_SUCCESS);
}

static void restore_from(host_instance *host, store *s) {
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
  host_instance *first = open_host(false, false);
  run_take(first, folder);
  store s = {0};
  save_into(first, &s);
  host_instance_close(first);
  check_saved(&s);

  host_instance *second = open_host(false, true);
  restore_from(second, &s);
  assert_int_equal(absolute_calls, 1);
  run_take(second, NULL);
  host_instance_close(second);
  check_logged(folder);
  free_store(&s);
  free(folder);
}

/* After restoring `bad`, the values of `good` are all still saved. */
static void check_kept(store *good, store *bad) {
  host_instance *host = open_host(false, false);
  restore_from(host, good);
  restore_from(host, bad);
  store again = {0};
  abstract_calls = 0;
  save_into(host, &again);
  host_instance_close(host);
  check_saved(&again);
  free_store(&again);
}

static void test_missing_and_wrong_types(void **state) {
  (void)state;
  host_instance *host = open_host(false, false);
  store empty = {0};
  restore_from(host, &empty);
  store saved = {0};
  save_into(host, &saved);
  host_instance_close(host);
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
  host_instance *host = open_host(true, true);
  assert_int_equal(make_calls_now(), 0); /* never in instantiate */
  run_take(host, NULL);
  host_instance_close(host);
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
  host_instance *host = open_host(true, true);
  relative_answers = 1;
  host->descriptor->activate(host->instance); /* the probe: one silent block */
  host_control_begin(host);
  host_control_end(host);
  static const float silence[BLOCK_FRAMES];
  host_run(host, silence, BLOCK_FRAMES);
  host->descriptor->deactivate(host->instance);
  run_take(host, NULL); /* the real take, with a note */
  host_instance_close(host);
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
  assert_non_null(suite.plugin.worker_interface);
  host_instance *host = open_host_with(true, HOST_WORKER_THREAD, true);
  assert_int_equal(make_calls_now(), 0); /* never in instantiate */
  host->descriptor->activate(host->instance);
  float in[BLOCK_FRAMES];
  for (int block = 0; block < BLOCKS; ++block) {
    host_control_begin(host);
    host_control_end(host);
    fill_block(in, block); /* a note: the take's files open with it */
    host_run(host, in, BLOCK_FRAMES);
  }
  host_worker_wait_idle(&host->worker);
  host->descriptor->deactivate(host->instance);
  host_worker_stop(&host->worker);
  unsigned long worked = atomic_load(&host->worker.work_calls);
  pthread_t worker_thread = host->worker.thread;
  host_instance_close(host);
  assert_true(worked >= 1);
  int calls = make_calls_now();
  assert_int_equal(calls, 1); /* docs/ports.md: once per instance */
  assert_true(pthread_equal(make_threads[0], worker_thread));
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
  host_instance *host = open_host(false, true);
  run_take(host, NULL);
  host_instance_close(host);
  assert_int_equal(make_calls_now(), 0);
  assert_int_equal(count_ending(dirs.env, ".notes.csv"), 1);
}

/* ================================================== setup */

static int setup_suite(void **state) {
  (void)state;
  suite.main_thread = pthread_self();
  map_uris();
  if (host_plugin_load(&suite.plugin) != 0) {
    return -1;
  }
  host_features_build(&suite.features, SAMPLE_RATE_HZ, BLOCK_FRAMES);
  host_features_build(&suite.features_make_path, SAMPLE_RATE_HZ, BLOCK_FRAMES);
  host_features_add(&suite.features_make_path, LV2_STATE__makePath, &make_path_feature);
  suite.state = suite.plugin.descriptor->extension_data(LV2_STATE__interface);
  if (!suite.state || !suite.state->save || !suite.state->restore) {
    fprintf(stderr, "the plugin has no state interface\n");
    return -1;
  }
  return 0;
}

static int teardown_suite(void **state) {
  (void)state;
  host_plugin_unload(&suite.plugin);
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
