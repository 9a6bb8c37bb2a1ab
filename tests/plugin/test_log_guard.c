/*
  The session log keeps the user's other files safe and says what it
  refused (docs/log-format.md, docs/ports.md):

  - a symbolic link, a FIFO or a folder at a log file's name is never
    opened through, truncated or replaced; the take moves on to STEM-2
    and one log:log line says so (POSIX open() with O_NOFOLLOW fails with
    ELOOP on a link; a FIFO opened O_NONBLOCK for writing without a reader
    fails with ENXIO; a folder opened for writing fails with EISDIR);
  - a relative log folder is refused with a log:log line and the previous
    folder stays;
  - labels cut to 255 bytes keep whole UTF-8 characters (RFC 3629), and
    run.json holds only valid UTF-8, with control characters and bytes
    that are not UTF-8 escaped as \u00XX (RFC 8259), so nothing is lost;
  - run.json records the source file and channel a host sends, and a
    run_id that differs between activations;
  - a restored state value over 4 KB, or a saved folder that the host's
    state:mapPath cannot map back, keeps the previous value and says so.

  This executable hosts build/plumb.lv2/plumb.so (tests/plugin/plugin_host.c)
  with a log:log that keeps every line for the checks.
*/
#include "folder_host.h"
#include "plugin_host.h"

#include <lv2/state/state.h>

#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include <setjmp.h>
#include <stddef.h>

#include <cmocka.h>

#define SAMPLE_RATE_HZ 48000.0
#define BLOCK_FRAMES   512
#define TAKE_BLOCKS    90 /* 0.96 s: a 0.5 s tone, then silence */
#define LOG_TEXT_BYTES 65536

/* ================================================== the host */

static struct {
  host_plugin plugin;
  host_features features;
  char root[PATH_MAX - 64];
  char logs[PATH_MAX];
  LV2_URID log_folder, take_label, source_file, source_channel;
  LV2_URID atom_Path, atom_String, atom_Int;
} suite;

static host_instance *open_instance(void) {
  host_instance *host = host_instance_open(&suite.plugin, &suite.features, SAMPLE_RATE_HZ, true,
                                             HOST_NO_WORKER);
  assert_non_null(host);
  return host;
}

static void set_text(host_instance *host, LV2_URID key, LV2_URID type, const char *text) {
  LV2_Atom_Forge_Frame frame;
  host_patch_set_begin(host, 0, &frame, key);
  uint32_t length = (uint32_t)strlen(text);
  lv2_atom_forge_atom(&host->forge, length + 1, type);
  lv2_atom_forge_write(&host->forge, text, length + 1);
  lv2_atom_forge_pop(&host->forge, &frame);
}

static void set_int(host_instance *host, LV2_URID key, int32_t value) {
  LV2_Atom_Forge_Frame frame;
  host_patch_set_begin(host, 0, &frame, key);
  lv2_atom_forge_int(&host->forge, value);
  lv2_atom_forge_pop(&host->forge, &frame);
}

/* What a take's first run() carries at frame 0; NULL: not sent. */
typedef struct {
  const char *folder;
  const char *second_folder; /* sent after the first, in the same block */
  const char *label;
  const char *source_file;
  int32_t source_channel; /* 0: not sent */
} take_messages;

static void forge_messages(host_instance *host, const take_messages *m) {
  if (m->folder) {
    set_text(host, suite.log_folder, suite.atom_Path, m->folder);
  }
  if (m->second_folder) {
    set_text(host, suite.log_folder, suite.atom_Path, m->second_folder);
  }
  if (m->label) {
    set_text(host, suite.take_label, suite.atom_String, m->label);
  }
  if (m->source_file) {
    set_text(host, suite.source_file, suite.atom_Path, m->source_file);
  }
  if (m->source_channel) {
    set_int(host, suite.source_channel, m->source_channel);
  }
}

/* One take: 0.5 s of a 440 Hz sine (-20 dBFS: hearing caution), then
   silence, so that one note completes and the log opens with it. */
static void run_take(host_instance *host, const take_messages *m) {
  host->descriptor->activate(host->instance);
  float block[BLOCK_FRAMES];
  for (int b = 0; b < TAKE_BLOCKS; ++b) {
    for (int i = 0; i < BLOCK_FRAMES; ++i) {
      double t_s = (double)(b * BLOCK_FRAMES + i) / SAMPLE_RATE_HZ;
      block[i] = t_s < 0.5 ? (float)(0.1 * sin(2.0 * M_PI * 440.0 * t_s)) : 0.0f;
    }
    host_control_begin(host);
    if (b == 0 && m) {
      forge_messages(host, m);
    }
    host_control_end(host);
    host_run(host, block, BLOCK_FRAMES);
  }
  host->descriptor->deactivate(host->instance);
}

/* ================================================== files */

static void path_in(char *path, size_t size, const char *folder, const char *name) {
  int length = snprintf(path, size, "%s/", folder);
  assert_true(length > 0 && (size_t)length + strlen(name) < size);
  memcpy(path + length, name, strlen(name) + 1);
}

static size_t read_whole(const char *path, char *text, size_t size) {
  FILE *file = fopen(path, "rb");
  if (!file) {
    text[0] = '\0';
    return 0;
  }
  size_t length = fread(text, 1, size - 1, file);
  text[length] = '\0';
  fclose(file);
  return length;
}

static void write_whole(const char *path, const char *text) {
  FILE *file = fopen(path, "wb");
  assert_non_null(file);
  fputs(text, file);
  fclose(file);
}

static bool is_regular(const char *folder, const char *name) {
  char path[PATH_MAX];
  path_in(path, sizeof path, folder, name);
  struct stat info;
  return lstat(path, &info) == 0 && S_ISREG(info.st_mode);
}

static mode_t kind_of(const char *folder, const char *name) {
  char path[PATH_MAX];
  path_in(path, sizeof path, folder, name);
  struct stat info;
  return lstat(path, &info) == 0 ? (info.st_mode & S_IFMT) : 0;
}

/* The CSV has its header row and at least one note's row. */
static bool has_rows(const char *folder, const char *name) {
  char path[PATH_MAX];
  path_in(path, sizeof path, folder, name);
  static char text[65536];
  read_whole(path, text, sizeof text);
  const char *first = strchr(text, '\n');
  return strncmp(text, "index,", 6) == 0 && first && first[1] == '0';
}

static char *read_json(const char *folder, const char *name) {
  static char text[65536];
  char path[PATH_MAX];
  path_in(path, sizeof path, folder, name);
  read_whole(path, text, sizeof text);
  return text;
}

/* RFC 3629: well-formed UTF-8 only, no overlong forms or surrogates. */
static bool valid_utf8(const unsigned char *s) {
  while (*s) {
    unsigned char c = *s;
    size_t n = c < 0x80 ? 1 : c < 0xC2 ? 0 : c < 0xE0 ? 2 : c < 0xF0 ? 3 : c < 0xF5 ? 4 : 0;
    if (n == 0) {
      return false;
    }
    unsigned char low = c == 0xE0 ? 0xA0 : c == 0xF0 ? 0x90 : 0x80;
    unsigned char high = c == 0xED ? 0x9F : c == 0xF4 ? 0x8F : 0xBF;
    if (n > 1 && (s[1] < low || s[1] > high)) {
      return false;
    }
    for (size_t i = 2; i < n; ++i) {
      if ((s[i] & 0xC0) != 0x80) {
        return false;
      }
    }
    s += n;
  }
  return true;
}

static int fresh_folders(void **state) {
  (void)state;
  if (host_folder_make(suite.root, sizeof suite.root, "plumb-guard") != 0) {
    return -1;
  }
  snprintf(suite.logs, sizeof suite.logs, "%s/logs", suite.root);
  host_log_clear();
  return mkdir(suite.logs, 0777) || setenv("PLUMB_LOG_DIR", suite.logs, 1);
}

static int remove_folders(void **state) {
  if (getenv("PLUMB_TEST_KEEP")) return 0;
  (void)state;
  return host_folder_remove(suite.root);
}

/* ================================================== the tests */

/* ln -s ../victim.txt logs/good.notes.csv, and the same for a run.json:
   both victims stay byte for byte, the links stay links, the take goes
   to good-2 and one line says so. */
static void test_symbolic_links_are_never_followed(void **state) {
  (void)state;
  const char victim_text[] = "precious data\n\x01\xff not a log\n";
  char victim[PATH_MAX];
  char victim_json[PATH_MAX];
  path_in(victim, sizeof victim, suite.root, "victim.txt");
  path_in(victim_json, sizeof victim_json, suite.root, "victim.json");
  write_whole(victim, victim_text);
  write_whole(victim_json, victim_text);
  char link[PATH_MAX];
  path_in(link, sizeof link, suite.logs, "good.notes.csv");
  assert_int_equal(symlink("../victim.txt", link), 0);
  path_in(link, sizeof link, suite.logs, "other.run.json");
  assert_int_equal(symlink("../victim.json", link), 0);

  host_instance *host = open_instance();
  take_messages good = {suite.logs, NULL, "good", NULL, 0};
  run_take(host, &good);
  take_messages other = {suite.logs, NULL, "other", NULL, 0};
  run_take(host, &other);
  host_instance_close(host);

  char text[256];
  assert_int_equal(read_whole(victim, text, sizeof text), sizeof victim_text - 1);
  assert_memory_equal(text, victim_text, sizeof victim_text - 1);
  assert_int_equal(read_whole(victim_json, text, sizeof text), sizeof victim_text - 1);
  assert_memory_equal(text, victim_text, sizeof victim_text - 1);
  assert_int_equal(kind_of(suite.logs, "good.notes.csv"), S_IFLNK);
  assert_int_equal(kind_of(suite.logs, "other.run.json"), S_IFLNK);
  assert_false(is_regular(suite.logs, "other.notes.csv")); /* nothing made */
  assert_true(has_rows(suite.logs, "good-2.notes.csv"));
  assert_true(has_rows(suite.logs, "other-2.notes.csv"));
  assert_non_null(strstr(read_json(suite.logs, "good-2.run.json"), "\"take\": \"good-2\""));
  assert_int_equal(host_log_count("good.notes.csv is not a regular file"), 1);
  assert_int_equal(host_log_count("other.run.json is not a regular file"), 1);
}

/* A FIFO (no reader: the open must not block) and a folder at the name. */
static void test_fifo_and_folder_are_left_alone(void **state) {
  (void)state;
  char path[PATH_MAX];
  path_in(path, sizeof path, suite.logs, "pipe.notes.csv");
  assert_int_equal(mkfifo(path, 0666), 0);
  path_in(path, sizeof path, suite.logs, "dir.notes.csv");
  assert_int_equal(mkdir(path, 0777), 0);
  host_instance *host = open_instance();
  take_messages pipe = {suite.logs, NULL, "pipe", NULL, 0};
  run_take(host, &pipe);
  take_messages dir = {suite.logs, NULL, "dir", NULL, 0};
  run_take(host, &dir);
  host_instance_close(host);
  assert_int_equal(kind_of(suite.logs, "pipe.notes.csv"), S_IFIFO);
  assert_int_equal(kind_of(suite.logs, "dir.notes.csv"), S_IFDIR);
  assert_true(has_rows(suite.logs, "pipe-2.notes.csv"));
  assert_true(has_rows(suite.logs, "dir-2.notes.csv"));
  assert_int_equal(host_log_count("pipe.notes.csv is not a regular file"), 1);
  assert_int_equal(host_log_count("dir.notes.csv is not a regular file"), 1);
}

/* A relative folder after an absolute one: refused, the absolute one
   stays, nothing is made under the working folder. */
static void test_relative_folder_is_refused(void **state) {
  (void)state;
  char chosen[PATH_MAX];
  path_in(chosen, sizeof chosen, suite.root, "chosen");
  char here[PATH_MAX];
  assert_non_null(getcwd(here, sizeof here));
  assert_int_equal(chdir(suite.root), 0);
  host_instance *host = open_instance();
  take_messages m = {chosen, "relative/logs", "rel", NULL, 0};
  run_take(host, &m);
  float log_ok = host->controls[PORT_LOG_OK];
  host_instance_close(host);
  assert_int_equal(chdir(here), 0);
  assert_true(has_rows(chosen, "rel.notes.csv"));
  assert_int_equal(kind_of(suite.root, "relative"), 0);
  assert_false(is_regular(suite.logs, "rel.notes.csv"));
  assert_int_equal(host_log_count("must be an absolute path"), 1);
  assert_true(log_ok == 1.0f);
}

/* 150 x U+00E9 (2 bytes) and 100 x U+20AC (3 bytes): 300 bytes each, cut
   to at most 255 at a character boundary: 127 and 85 whole characters. */
static void test_long_labels_keep_whole_characters(void **state) {
  (void)state;
  const struct {
    const char *character;
    size_t repeat, kept;
  } cases[] = {{"\xc3\xa9", 150, 127}, {"\xe2\x82\xac", 100, 85}};
  for (size_t c = 0; c < 2; ++c) {
    char label[320] = "";
    char expected[320] = "";
    for (size_t i = 0; i < cases[c].repeat; ++i) {
      strcat(label, cases[c].character);
      if (i < cases[c].kept) {
        strcat(expected, cases[c].character);
      }
    }
    assert_int_equal(strlen(label), 300);
    host_log_clear();
    host_instance *host = open_instance();
    take_messages m = {suite.logs, NULL, label, NULL, 0};
    run_take(host, &m);
    host_instance_close(host);
    /* every non-ASCII character gives one '_', at most 100 are kept
       (docs/log-format.md, "File names") */
    char stem[128];
    size_t underscores = cases[c].kept < 100 ? cases[c].kept : 100;
    memset(stem, '_', underscores);
    snprintf(stem + underscores, sizeof stem - underscores, ".run.json");
    const char *json = read_json(suite.logs, stem);
    assert_true(valid_utf8((const unsigned char *)json));
    char field[400];
    snprintf(field, sizeof field, "\"take_label\": \"%s\",", expected);
    assert_non_null(strstr(json, field));
    assert_int_equal(host_log_count("shortened to 255 bytes"), 1);
    char path[PATH_MAX];
    path_in(path, sizeof path, suite.logs, stem);
    unlink(path);
  }
}

/* Control characters escaped, and each byte that is not UTF-8 escaped as
   its own number: a lone continuation byte, a lead byte cut short, 0xFF,
   an overlong "/", an encoded surrogate (RFC 3629 section 3 forbids the
   last two). A valid U+20AC stays as it is. */
static void test_run_json_escapes_and_replaces(void **state) {
  (void)state;
  const char label[] = "a\x01\tb\"\\\x7f"
                       "\x80"
                       "c\xc3"
                       "d\xff\xc0\xaf\xed\xa0\x80"
                       "\xe2\x82\xac";
  host_instance *host = open_instance();
  take_messages m = {suite.logs, NULL, label, NULL, 0};
  run_take(host, &m);
  host_instance_close(host);
  /* The stem has one '_' for each byte that is kept out and is not a
     continuation byte (docs/log-format.md, "File names"). */
  const char *json = read_json(suite.logs, "a__b___c_d____.run.json");
  assert_true(valid_utf8((const unsigned char *)json));
  assert_non_null(strstr(json, "\"take_label\": \"a\\u0001\\u0009b\\\"\\\\"
                               "\\u007f\\u0080c\\u00c3d\\u00ff\\u00c0\\u00af"
                               "\\u00ed\\u00a0\\u0080\xe2\x82\xac\","));
}

/* The source a host tells, 1-based channel; absent when not told; a new
   run_id for each activation. */
static void test_source_and_run_id(void **state) {
  (void)state;
  host_instance *host = open_instance();
  take_messages told = {suite.logs, NULL, "told", "/music/a/x.wav", 2};
  run_take(host, &told);
  take_messages second = {suite.logs, NULL, "second", NULL, 0};
  run_take(host, &second);
  host_instance_close(host);
  const char *json = read_json(suite.logs, "told.run.json");
  assert_non_null(strstr(json, "\"source_file\": \"/music/a/x.wav\",\n"));
  assert_non_null(strstr(json, "\"source_channel\": 2,\n"));
  const char *id = strstr(json, "\"run_id\": \"");
  assert_non_null(id);
  char first_id[80];
  snprintf(first_id, sizeof first_id, "%.*s", (int)strcspn(id + 11, "\""), id + 11);
  assert_true(strlen(first_id) > 20);
  /* the second take keeps what the host told (parameters persist) */
  json = read_json(suite.logs, "second.run.json");
  id = strstr(json, "\"run_id\": \"");
  assert_non_null(id);
  assert_true(strncmp(id + 11, first_id, strlen(first_id)) != 0);

  host = open_instance();
  take_messages untold = {suite.logs, NULL, "untold", NULL, 0};
  run_take(host, &untold);
  host->descriptor->activate(host->instance);
  host_control_begin(host);
  set_int(host, suite.source_channel, 0);
  set_text(host, suite.source_file, suite.atom_Int, "x");
  host_control_end(host);
  float silence[BLOCK_FRAMES] = {0};
  host_run(host, silence, BLOCK_FRAMES);
  host->descriptor->deactivate(host->instance);
  host_instance_close(host);
  json = read_json(suite.logs, "untold.run.json");
  assert_null(strstr(json, "source_file"));
  assert_null(strstr(json, "source_channel"));
  assert_non_null(strstr(json, "\"run_id\": \""));
  assert_int_equal(host_log_count("the source channel must be"), 1);
  assert_int_equal(host_log_count("the source file must be"), 1);
}

/* ------------------------------------------------ state */

typedef struct {
  LV2_URID key;
  const void *value;
  size_t size;
  LV2_URID type;
} one_value;

static const void *retrieve_one(LV2_State_Handle handle, uint32_t key, size_t *size, uint32_t *type,
                                uint32_t *flags) {
  const one_value *v = handle;
  if (key != v->key) {
    return NULL;
  }
  *size = v->size;
  *type = v->type;
  *flags = LV2_STATE_IS_POD | LV2_STATE_IS_PORTABLE;
  return v->value;
}

static char *no_absolute_path(LV2_State_Map_Path_Handle handle, const char *abstract) {
  (void)handle;
  (void)abstract;
  return NULL; /* a host that cannot map it back */
}

static char *same_path(LV2_State_Map_Path_Handle handle, const char *path) {
  (void)handle;
  return strdup(path);
}

/* A 5000-byte label and a folder mapPath gives no path for: both said
   once, and the take is still logged under the previous label and
   folder. */
static void test_state_refusals_are_said(void **state) {
  (void)state;
  const LV2_State_Interface *interface =
      suite.plugin.descriptor->extension_data(LV2_STATE__interface);
  assert_non_null(interface);
  char chosen[PATH_MAX];
  path_in(chosen, sizeof chosen, suite.root, "chosen");
  host_instance *host = open_instance();
  take_messages m = {chosen, NULL, "kept", NULL, 0};
  run_take(host, &m);

  static char long_label[5000];
  memset(long_label, 'x', sizeof long_label - 1);
  one_value label = {suite.take_label, long_label, sizeof long_label, suite.atom_String};
  assert_int_equal(interface->restore(host->instance, retrieve_one, &label, 0, NULL),
                   LV2_STATE_SUCCESS);
  LV2_State_Map_Path unmappable = {NULL, same_path, no_absolute_path};
  const LV2_Feature map_feature = {LV2_STATE__mapPath, &unmappable};
  const LV2_Feature *const with_map[] = {&map_feature, NULL};
  one_value folder = {suite.log_folder, "elsewhere", sizeof "elsewhere", suite.atom_Path};
  assert_int_equal(interface->restore(host->instance, retrieve_one, &folder, 0, with_map),
                   LV2_STATE_SUCCESS);
  assert_true(host_log_wait_for("too large to restore"));
  assert_true(host_log_wait_for("could not map the saved log folder"));
  char path[PATH_MAX];
  path_in(path, sizeof path, chosen, "kept.notes.csv");
  assert_int_equal(unlink(path), 0);
  run_take(host, NULL); /* the previous folder and label are still set */
  host_instance_close(host);
  assert_true(has_rows(chosen, "kept.notes.csv"));
  assert_int_equal(host_log_count("too large to restore"), 1);
  assert_int_equal(host_log_count("could not map the saved log folder"), 1);
}

/* ================================================== setup */

static int setup_suite(void **state) {
  (void)state;
  if (host_plugin_load(&suite.plugin) != 0) {
    return -1;
  }
  host_features_build(&suite.features, SAMPLE_RATE_HZ, BLOCK_FRAMES);
  host_features_keep_log(&suite.features);
  suite.log_folder = host_map("urn:plumb:logFolder");
  suite.take_label = host_map("urn:plumb:takeLabel");
  suite.source_file = host_map("urn:plumb:sourceFile");
  suite.source_channel = host_map("urn:plumb:sourceChannel");
  suite.atom_Path = host_map(LV2_ATOM__Path);
  suite.atom_String = host_map(LV2_ATOM__String);
  suite.atom_Int = host_map(LV2_ATOM__Int);
  return 0;
}

static int teardown_suite(void **state) {
  (void)state;
  host_plugin_unload(&suite.plugin);
  return 0;
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test_setup_teardown(test_symbolic_links_are_never_followed, fresh_folders,
                                      remove_folders),
      cmocka_unit_test_setup_teardown(test_fifo_and_folder_are_left_alone, fresh_folders,
                                      remove_folders),
      cmocka_unit_test_setup_teardown(test_relative_folder_is_refused, fresh_folders,
                                      remove_folders),
      cmocka_unit_test_setup_teardown(test_long_labels_keep_whole_characters, fresh_folders,
                                      remove_folders),
      cmocka_unit_test_setup_teardown(test_run_json_escapes_and_replaces, fresh_folders,
                                      remove_folders),
      cmocka_unit_test_setup_teardown(test_source_and_run_id, fresh_folders, remove_folders),
      cmocka_unit_test_setup_teardown(test_state_refusals_are_said, fresh_folders, remove_folders),
  };
  return cmocka_run_group_tests(tests, setup_suite, teardown_suite);
}
