/*
  libFuzzer harness for the LV2 plugin's messages, state and log: a small
  host, linked with the plugin's objects (every plugin/lv2 source) and the core,
  that instantiates urn:plumb:intonation with urid:map and unmap (tests/
  urid_table.c), log:log, options, work:schedule (a synchronous worker,
  as a freewheeling host has: work() runs inside schedule_work, so the
  input runs the same way every time; for a quarter of the inputs no
  worker, so that the plugin's own log thread runs) and, when the input
  says so, state:makePath and freePath.

  The input is read as: a sample rate and the features, then a script of
  steps: run() with a block of audio (0 to 4096 frames, signals and
  special values from the input) and a control sequence forged from the
  input (patch:Set of logFolder, takeLabel, customOffsets, sourceFile,
  sourceChannel and unknown properties, with values of every atom type
  and length; patch:Get with and without a property, subject and sequence
  number; time:Position with numbers of every type; unknown objects and
  atoms, and raw bytes inside a valid event size), into a notify buffer
  of the input's size; control port values; activate and deactivate;
  state restore with values taken from the input (any type, size and
  flags), and state save, whose values are checked, restored and saved
  again (they must not change).

  Checked, besides the sanitizers: the audio passes through bit for bit;
  output ports stay finite and within their declared ranges; the notify
  sequence is well formed (every event inside it, answers and notes with
  the types docs/ports.md gives); saved state has the documented types;
  every notes.csv the plugin writes has the core's header and rows of its
  width, and every run.json is valid JSON and valid UTF-8.

  Encoding (tests/fuzz/make_seeds.py writes seeds in it): byte 0 picks
  the sample rate (bits 0-6; some are refused) and whether logging may be
  on (bit 7); byte 1 the features (bit 0 log, 1 makePath, 2 freePath, 3 an
  entry with a NULL URI, 4 in-place audio, 0x28 both: no worker, 0xC0
  both: no urid:map); then steps, each a byte taken mod 16: 0-8 run() (a
  length byte, the events, the notify size, the audio), 9-10 a control
  port value, 11 activate or deactivate, 12-13 restore, 14-15 save.

  Files: every folder the input names, and the defaults (PLUMB_LOG_DIR,
  XDG_STATE_HOME, HOME, makePath) are inside one
  temporary folder, emptied after each input that wrote there. Inputs
  that may write (logging on) only name folders inside it.
*/
#include "plumb.h"
#include "note_csv.h"

#include "../../plugin/lv2/ports.h"
#include "uris.h"
#include "urid_table.h"

#include "fuzz_input.h"

#include <lv2/atom/atom.h>
#include <lv2/atom/forge.h>
#include <lv2/atom/util.h>
#include <lv2/buf-size/buf-size.h>
#include <lv2/core/lv2.h>
#include <lv2/log/log.h>
#include <lv2/options/options.h>
#include <lv2/parameters/parameters.h>
#include <lv2/patch/patch.h>
#include <lv2/state/state.h>
#include <lv2/time/time.h>
#include <lv2/urid/urid.h>
#include <lv2/worker/worker.h>

#include <dirent.h>
#include <errno.h>
#include <float.h>
#include <ftw.h>
#include <limits.h>
#include <math.h>
#include <pthread.h>
#include <stdarg.h>
#include <stdbool.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#define MAX_BLOCK 4096
#define MAX_STEPS 96
#define MAX_AUDIO_S 1.5
#define SCRATCH_BYTES 65536
#define MAX_NOTIFY_BYTES 32768
#define MAX_STORE 16

/* ------------------------------------------------------------ folders */

static char root[1024];      /* the temporary folder of this process */
static char logs_root[1100]; /* where folders the input names go */
static char session_root[1100];

static int remove_entry(const char *path, const struct stat *info, int flag,
                        struct FTW *walk) {
  (void)info;
  (void)flag;
  return walk->level == 0 ? 0 : remove(path);
}

/* Empties the temporary folder but keeps its top folders. */
static void empty_folder(const char *path) {
  nftw(path, remove_entry, 16, FTW_DEPTH | FTW_PHYS);
}

static void remove_root(void) {
  empty_folder(root);
  rmdir(root);
}

/* ------------------------------------------------------------ URIDs */

static LV2_URID_Map map = {NULL, urid_table_map};
static LV2_URID_Unmap unmap = {NULL, urid_table_unmap};
static plumb_uris uris; /* the plugin's own list, mapped the same way */
static LV2_URID atom_Chunk, atom_Sequence, atom_Object, atom_Tuple,
    atom_Bool, atom_Literal, atom_URI, atom_Blank;

static LV2_URID map_uri(const char *uri) { return urid_table_map(NULL, uri); }

/* ------------------------------------------------------------ log:log */

static size_t log_lines;

static int log_vprintf(LV2_Log_Handle handle, LV2_URID type, const char *format,
                       va_list arguments) {
  (void)handle;
  (void)type;
  char line[8192];
  int length = vsnprintf(line, sizeof line, format, arguments);
  FUZZ_CHECK(length >= 0, "a log message that does not format");
  log_lines++;
  return length;
}

static int log_printf(LV2_Log_Handle handle, LV2_URID type, const char *format,
                      ...) {
  va_list arguments;
  va_start(arguments, format);
  int length = log_vprintf(handle, type, format, arguments);
  va_end(arguments);
  return length;
}

static LV2_Log_Log host_log = {NULL, log_printf, log_vprintf};

/* ------------------------------------------------------------ state paths */

static bool has_dot_dot(const char *path) {
  for (const char *p = path; (p = strstr(p, "..")) != NULL; p += 2)
    if ((p == path || p[-1] == '/') && (p[2] == '/' || p[2] == '\0'))
      return true;
  return false;
}

/* With no worker, the plugin steps its log on a thread of its own, and
   only that thread may call makePath (state.h; tests/test_state.c). */
static bool own_thread_mode;
static pthread_t main_thread;

static char *make_path(LV2_State_Make_Path_Handle handle, const char *path) {
  (void)handle;
  FUZZ_CHECK(path && path[0] != '/' && !has_dot_dot(path),
             "makePath asked for '%s'", path ? path : "(null)");
  FUZZ_CHECK(!own_thread_mode || !pthread_equal(pthread_self(), main_thread),
             "makePath called on the host's thread, with the plugin's own "
             "log thread running");
  size_t size = strlen(session_root) + strlen(path) + 2;
  char *made = malloc(size);
  snprintf(made, size, "%s/%s", session_root, path);
  mkdir(made, 0777);
  return made;
}

static LV2_State_Make_Path make_path_feature = {NULL, make_path};

static void free_path(LV2_State_Free_Path_Handle handle, char *path) {
  (void)handle;
  free(path);
}

static LV2_State_Free_Path free_path_feature = {NULL, free_path};

/* SESSION/x <-> "x"; anything else stays as it is. */
static char *abstract_path(LV2_State_Map_Path_Handle handle,
                           const char *absolute) {
  (void)handle;
  size_t length = strlen(session_root);
  if (strncmp(absolute, session_root, length) == 0 && absolute[length] == '/')
    return strdup(absolute + length + 1);
  return strdup(absolute);
}

static char *absolute_path(LV2_State_Map_Path_Handle handle,
                           const char *abstract) {
  (void)handle;
  if (abstract[0] == '/') return strdup(abstract);
  if (abstract[0] == '!') return NULL; /* a host that cannot map it */
  size_t size = strlen(session_root) + strlen(abstract) + 2;
  char *path = malloc(size);
  snprintf(path, size, "%s/%s", session_root, abstract);
  return path;
}

static LV2_State_Map_Path map_path_feature = {NULL, abstract_path,
                                              absolute_path};

/* ------------------------------------------------------------ the host */

extern const LV2_Descriptor *lv2_descriptor(uint32_t index);

typedef struct {
  const LV2_Descriptor *descriptor;
  const LV2_State_Interface *state;
  const LV2_Worker_Interface *worker;
  LV2_Handle instance;
  double rate_hz;
  float in[MAX_BLOCK];
  float out[MAX_BLOCK];
  float *audio_in, *audio_out; /* in and out, or out twice (in place) */
  float controls[PORT_COUNT];
  bool in_place;
  bool active;
  bool logging_allowed; /* the input may turn logging on: folders are safe */
  uint64_t frames;
} host;

static LV2_Worker_Status no_response(LV2_Worker_Respond_Handle handle,
                                     uint32_t size, const void *data) {
  (void)handle;
  (void)size;
  (void)data;
  return LV2_WORKER_ERR_NO_SPACE;
}

static host *the_host; /* for the synchronous worker */
static int worker_depth;

static LV2_Worker_Status schedule_work(LV2_Worker_Schedule_Handle handle,
                                       uint32_t size, const void *data) {
  (void)handle;
  FUZZ_CHECK(worker_depth == 0, "schedule_work from inside work()");
  FUZZ_CHECK(size > 0 && size <= 1024 && data, "a worker message of %u bytes",
             size);
  worker_depth++;
  LV2_Worker_Status status = the_host->worker->work(the_host->instance,
                                                    no_response, NULL, size,
                                                    data);
  worker_depth--;
  return status;
}

static LV2_Worker_Schedule schedule_feature = {NULL, schedule_work};

/* ------------------------------------------------------------ strings */

/* A folder the plugin may write into: inside logs_root, whatever the
   input's bytes (no "..", no NUL). */
static size_t safe_folder(fuzz_input *in, char *out, size_t size) {
  size_t length = (size_t)snprintf(out, size, "%s/", logs_root);
  size_t tail = 0;
  const uint8_t *bytes = fuzz_bytes(in, fuzz_u8(in) % 48, &tail);
  for (size_t i = 0; i < tail && length + 1 < size; ++i) {
    char c = (char)bytes[i];
    if (c == '\0') c = '_';
    if (c == '.' && (out[length - 1] == '.' || out[length - 1] == '/')) c = '_';
    out[length++] = c;
  }
  if (length > 0 && out[length - 1] == '.') out[length - 1] = '_';
  out[length] = '\0';
  return length;
}

/* Bytes for a string atom: from the input, or a long run of one byte (to
   reach the plugin's length limits). `for_folder`: a path the plugin may
   take as its log folder. */
static size_t string_bytes(host *h, fuzz_input *in, char *out, size_t size,
                           bool for_folder) {
  uint8_t how = fuzz_u8(in);
  if (for_folder && h->logging_allowed) {
    size_t length = safe_folder(in, out, size);
    if (how % 8 == 7) { /* too long, or just within the limit */
      size_t wanted = 4090 + fuzz_u8(in) % 12;
      while (length < wanted && length + 1 < size) out[length++] = 'a';
      out[length] = '\0';
    }
    if (how % 8 == 6) return (size_t)snprintf(out, size, "relative/x");
    if (how % 8 == 5) return 0;
    return length;
  }
  size_t length = 0;
  switch (how % 6) {
  case 0: case 1: case 2: {
    const uint8_t *bytes = fuzz_bytes(in, how % 64, &length);
    memcpy(out, bytes, length);
    break;
  }
  case 3: { /* long runs: 255/256 bytes for a label, 4095/4096 for a path */
    static const size_t lengths[] = {254, 255, 256, 257, 600, 4094, 4095,
                                     4096, 4097, 5000};
    length = lengths[fuzz_u8(in) % 10];
    if (length >= size) length = size - 1;
    uint8_t fill = fuzz_u8(in);
    memset(out, fill ? fill : 'x', length);
    if (fill >= 0xC0) /* UTF-8: a lead byte, then continuations */
      for (size_t i = 1; i < length; ++i) out[i] = (char)(0x80 | (i & 0x3F));
    break;
  }
  case 4:
    length = (size_t)snprintf(out, size, "%s", "Take 1 (é) / ü");
    break;
  default:
    length = (size_t)snprintf(out, size, "/");
    break;
  }
  out[length] = '\0';
  return length;
}

/* ------------------------------------------------------------ atoms */

static void forge_string_atom(LV2_Atom_Forge *forge, LV2_URID type,
                              const char *text, size_t length, bool nul) {
  lv2_atom_forge_atom(forge, (uint32_t)(length + nul), type);
  lv2_atom_forge_raw(forge, text, (uint32_t)length);
  if (nul) lv2_atom_forge_raw(forge, "", 1);
  lv2_atom_forge_pad(forge, (uint32_t)(length + nul));
}

static void forge_vector(fuzz_input *in, LV2_Atom_Forge *forge) {
  uint8_t how = fuzz_u8(in);
  uint32_t count = how & 0x80 ? fuzz_u8(in) % 20 : 12;
  bool doubles = how & 1;
  LV2_URID child = how & 2 ? (doubles ? uris.atom_Double : uris.atom_Float)
                   : how & 4 ? uris.atom_Int
                             : fuzz_u32(in) % 300;
  uint32_t child_size = doubles ? 8 : 4;
  if (how & 0x40) child_size = fuzz_u8(in) % 17;
  double values[32];
  for (uint32_t i = 0; i < count && i < 32; ++i) {
    uint8_t kind = fuzz_u8(in);
    values[i] = kind < 160   ? fuzz_range(in, -100.0, 100.0)
                : kind < 200 ? fuzz_range(in, -700.0, 700.0)
                : kind < 210 ? (kind & 1 ? 600.0 : -600.0)
                : kind < 220 ? NAN
                : kind < 230 ? INFINITY
                             : fuzz_raw_double(in);
  }
  uint8_t body[32 * 16];
  memset(body, 0, sizeof body);
  for (uint32_t i = 0; i < count && i < 32; ++i) {
    if (child_size == 8) memcpy(body + 8 * i, &values[i], 8);
    else if (child_size == 4) {
      float f = (float)values[i];
      memcpy(body + 4 * i, &f, 4);
    } else {
      memcpy(body + child_size * i, &values[i],
             child_size < 8 ? child_size : 8);
    }
  }
  uint32_t bytes = count * child_size;
  if (bytes > sizeof body) bytes = sizeof body;
  LV2_Atom_Vector_Body header = {child_size, child};
  lv2_atom_forge_atom(forge, (uint32_t)(sizeof header + bytes), uris.atom_Vector);
  lv2_atom_forge_raw(forge, &header, sizeof header);
  lv2_atom_forge_raw(forge, body, bytes);
  lv2_atom_forge_pad(forge, (uint32_t)(sizeof header + bytes));
}

static LV2_URID any_type(fuzz_input *in) {
  LV2_URID types[] = {uris.atom_Path,   uris.atom_String, uris.atom_Int,
                      uris.atom_Long,   uris.atom_Float,  uris.atom_Double,
                      uris.atom_URID,   uris.atom_Vector, atom_Bool,
                      atom_Chunk,       atom_Tuple,       atom_Object,
                      atom_Literal,     atom_URI,         0};
  uint8_t pick = fuzz_u8(in);
  size_t n = sizeof types / sizeof types[0];
  return pick < 240 ? types[pick % n] : fuzz_u32(in);
}

/* A value atom for property `key`: mostly the type the plugin wants. */
static void forge_value(host *h, fuzz_input *in, LV2_Atom_Forge *forge,
                        LV2_URID key) {
  static char text[8192];
  uint8_t how = fuzz_u8(in);
  bool folder = key == uris.plumb_logFolder;
  if (how < 160 && (folder || key == uris.plumb_takeLabel ||
                    key == uris.plumb_sourceFile)) {
    size_t length = string_bytes(h, in, text, sizeof text, folder);
    LV2_URID type = key == uris.plumb_takeLabel || how & 1 ? uris.atom_String
                                                           : uris.atom_Path;
    forge_string_atom(forge, type, text, length, how % 16 != 3);
    return;
  }
  if (how < 160 && key == uris.plumb_customOffsets) {
    forge_vector(in, forge);
    return;
  }
  if (how < 200 && key == uris.plumb_sourceChannel) {
    lv2_atom_forge_int(forge, (int32_t)(how & 1 ? fuzz_u8(in) % 9 : fuzz_u32(in)));
    return;
  }
  LV2_URID type = any_type(in);
  if (type == uris.atom_Vector) {
    forge_vector(in, forge);
  } else if (type == uris.atom_Int) {
    lv2_atom_forge_int(forge, (int32_t)fuzz_u32(in));
  } else if (type == uris.atom_Long) {
    lv2_atom_forge_long(forge, (int64_t)fuzz_u64(in));
  } else if (type == uris.atom_Float) {
    lv2_atom_forge_float(forge, fuzz_raw_float(in));
  } else if (type == uris.atom_Double) {
    lv2_atom_forge_double(forge, fuzz_raw_double(in));
  } else if (type == uris.atom_URID) {
    lv2_atom_forge_urid(forge, fuzz_u32(in) % 300);
  } else if (type == atom_Tuple) {
    LV2_Atom_Forge_Frame frame;
    lv2_atom_forge_tuple(forge, &frame);
    lv2_atom_forge_int(forge, 1);
    lv2_atom_forge_pop(forge, &frame);
  } else if (type == atom_Object) {
    LV2_Atom_Forge_Frame frame;
    lv2_atom_forge_object(forge, &frame, 0, fuzz_u32(in) % 300);
    lv2_atom_forge_pop(forge, &frame);
  } else if (folder && h->logging_allowed &&
             (type == uris.atom_Path || type == uris.atom_String)) {
    size_t length = string_bytes(h, in, text, sizeof text, true);
    forge_string_atom(forge, type, text, length, true);
  } else { /* raw bytes of any size, any type */
    size_t length = 0;
    const uint8_t *bytes = fuzz_bytes(in, fuzz_u8(in) % 40, &length);
    forge_string_atom(forge, type, (const char *)bytes, length, false);
  }
}

static LV2_URID any_property(fuzz_input *in) {
  LV2_URID keys[] = {uris.plumb_logFolder,   uris.plumb_takeLabel,
                     uris.plumb_customOffsets, uris.plumb_sourceFile,
                     uris.plumb_sourceChannel, uris.patch_value,
                     uris.time_frame,        0};
  uint8_t pick = fuzz_u8(in);
  size_t n = sizeof keys / sizeof keys[0];
  return pick < 240 ? keys[pick % n] : fuzz_u32(in) % 300;
}

static void forge_set(host *h, fuzz_input *in, LV2_Atom_Forge *forge) {
  uint8_t how = fuzz_u8(in);
  LV2_URID key = any_property(in);
  LV2_Atom_Forge_Frame frame;
  lv2_atom_forge_object(forge, &frame, how & 0x80 ? fuzz_u32(in) % 300 : 0,
                        uris.patch_Set);
  if (how & 0x40) { /* a subject, which a Set may have */
    lv2_atom_forge_key(forge, uris.patch_subject);
    lv2_atom_forge_urid(forge, map_uri(PLUMB_URI));
  }
  if (!(how & 1)) { /* the property, as a URID or not */
    lv2_atom_forge_key(forge, uris.patch_property);
    if (how & 2) lv2_atom_forge_int(forge, (int32_t)key);
    else lv2_atom_forge_urid(forge, key);
  }
  if (!(how & 4)) {
    lv2_atom_forge_key(forge, uris.patch_value);
    forge_value(h, in, forge, key);
  }
  if (how & 8) { /* the same property again, with another value */
    lv2_atom_forge_key(forge, uris.patch_value);
    forge_value(h, in, forge, key);
  }
  lv2_atom_forge_pop(forge, &frame);
}

static void forge_get(fuzz_input *in, LV2_Atom_Forge *forge) {
  uint8_t how = fuzz_u8(in);
  LV2_Atom_Forge_Frame frame;
  lv2_atom_forge_object(forge, &frame, 0, uris.patch_Get);
  if (how & 1) {
    lv2_atom_forge_key(forge, uris.patch_property);
    if (how & 0x10) lv2_atom_forge_int(forge, 5);
    else lv2_atom_forge_urid(forge, any_property(in));
  }
  if (how & 2) {
    lv2_atom_forge_key(forge, uris.patch_subject);
    if (how & 0x20) {
      char text[128];
      size_t length = 0;
      const uint8_t *bytes = fuzz_bytes(in, fuzz_u8(in) % 100, &length);
      memcpy(text, bytes, length);
      forge_string_atom(forge, uris.atom_String, text, length, true);
    } else {
      lv2_atom_forge_urid(forge, map_uri(PLUMB_URI));
    }
  }
  if (how & 4) {
    lv2_atom_forge_key(forge, uris.patch_sequenceNumber);
    if (how & 0x40) lv2_atom_forge_long(forge, (int64_t)fuzz_u64(in));
    else lv2_atom_forge_int(forge, (int32_t)fuzz_u32(in));
  }
  lv2_atom_forge_pop(forge, &frame);
}

static void forge_number(fuzz_input *in, LV2_Atom_Forge *forge, double sane) {
  uint8_t how = fuzz_u8(in);
  double value = how & 0x80 ? fuzz_raw_double(in) : sane * fuzz_range(in, 0.0, 2.0);
  switch (how % 5) {
  case 0: lv2_atom_forge_long(forge, (int64_t)fmax(fmin(value, 9e18), -9e18)); break;
  case 1: lv2_atom_forge_int(forge, (int32_t)fmax(fmin(value, 2e9), -2e9)); break;
  case 2: lv2_atom_forge_float(forge, (float)value); break;
  case 3: lv2_atom_forge_double(forge, value); break;
  default: forge_string_atom(forge, uris.atom_String, "12", 2, true); break;
  }
}

static void forge_position(fuzz_input *in, LV2_Atom_Forge *forge) {
  uint8_t which = fuzz_u8(in);
  LV2_Atom_Forge_Frame frame;
  lv2_atom_forge_object(forge, &frame, 0, uris.time_Position);
  const LV2_URID keys[6] = {uris.time_frame,        uris.time_speed,
                            uris.time_bar,          uris.time_barBeat,
                            uris.time_beatsPerBar,  uris.time_beatsPerMinute};
  const double sane[6] = {48000.0, 1.0, 10.0, 2.0, 4.0, 120.0};
  for (int k = 0; k < 6; ++k) {
    if (which & (1u << k)) {
      lv2_atom_forge_key(forge, keys[k]);
      forge_number(in, forge, sane[k]);
    }
  }
  lv2_atom_forge_pop(forge, &frame);
}

/* Raw bytes as an event body, inside a size the sequence holds. */
static void forge_raw_event(fuzz_input *in, LV2_Atom_Forge *forge) {
  size_t length = 0;
  const uint8_t *bytes = fuzz_bytes(in, fuzz_u8(in), &length);
  uint8_t how = fuzz_u8(in);
  LV2_URID type = how & 1 ? atom_Object : any_type(in);
  forge_string_atom(forge, type, (const char *)bytes, length, false);
}

static void forge_other_object(fuzz_input *in, LV2_Atom_Forge *forge) {
  LV2_Atom_Forge_Frame frame;
  lv2_atom_forge_object(forge, &frame, fuzz_u32(in) % 300,
                        fuzz_u8(in) & 1 ? atom_Blank : fuzz_u32(in) % 300);
  int count = fuzz_u8(in) % 4;
  for (int i = 0; i < count; ++i) {
    lv2_atom_forge_key(forge, fuzz_u32(in) % 300);
    lv2_atom_forge_int(forge, (int32_t)fuzz_u32(in));
  }
  lv2_atom_forge_pop(forge, &frame);
}

/* ------------------------------------------------------------ audio */

static double phase;

static void fill_audio(fuzz_input *in, float *samples, uint32_t n,
                       double rate_hz) {
  uint8_t kind = fuzz_u8(in) % 6;
  double f_hz = 55.0 * exp2(6.0 * fuzz_u8(in) / 255.0);
  double amp = fuzz_u8(in) / 255.0;
  for (uint32_t i = 0; i < n; ++i) {
    float x = 0.0f;
    switch (kind) {
    case 0: case 1: case 2:
      x = (float)(amp * (sin(2.0 * M_PI * phase) + 0.4 * sin(4.0 * M_PI * phase)));
      break;
    case 3: x = 0.0f; break;
    case 4: {
      static const float specials[] = {NAN, INFINITY, -INFINITY, 1e-40f,
                                       FLT_MAX, -1.0f, 1.0f, 0.0f};
      x = specials[(i + (uint32_t)(amp * 255)) % 8];
      break;
    }
    default: x = (float)(amp * ((double)((i * 7919u) % 101) / 50.0 - 1.0)); break;
    }
    samples[i] = x;
    phase = fmod(phase + f_hz / rate_hz, 1.0);
  }
}

/* ------------------------------------------------------------ checking */

static void check_note_object(const LV2_Atom_Object *object) {
  LV2_ATOM_OBJECT_FOREACH(object, property) {
    const LV2_Atom *value = &property->value;
    LV2_URID key = property->key;
#define CHECK_INT(name)                                                        \
  if (key == uris.note_##name)                                                 \
    FUZZ_CHECK(value->type == uris.atom_Int && value->size == 4,               \
               "note field " #name " of type %u", value->type);
#define CHECK_DOUBLE(name)                                                     \
  if (key == uris.note_##name)                                                 \
    FUZZ_CHECK(value->type == uris.atom_Double && value->size == 8,            \
               "note field " #name " of type %u", value->type);
    PLUMB_NOTE_INT_FIELDS(CHECK_INT)
    PLUMB_NOTE_DOUBLE_FIELDS(CHECK_DOUBLE)
#undef CHECK_INT
#undef CHECK_DOUBLE
    if (key == uris.note_tristimulus || key == uris.note_partial_cents) {
      const LV2_Atom_Vector *vector = (const LV2_Atom_Vector *)value;
      FUZZ_CHECK(value->type == uris.atom_Vector &&
                     value->size >= sizeof vector->body,
                 "note vector of type %u", value->type);
      uint32_t child = vector->body.child_size;
      FUZZ_CHECK(child == (key == uris.note_tristimulus ? 8u : 4u) &&
                     (value->size - sizeof vector->body) % child == 0,
                 "note vector of %u-byte children, %u bytes", child,
                 value->size);
    }
  }
}

static void check_answer(const LV2_Atom_Object *object) {
  LV2_ATOM_OBJECT_FOREACH(object, property) {
    const LV2_Atom *value = &property->value;
    LV2_URID key = property->key;
    if (key == uris.plumb_logFolder || key == uris.plumb_sourceFile) {
      FUZZ_CHECK(value->type == uris.atom_Path && value->size >= 1 &&
                     ((const char *)(value + 1))[value->size - 1] == '\0',
                 "a path answer of type %u", value->type);
    } else if (key == uris.plumb_takeLabel) {
      FUZZ_CHECK(value->type == uris.atom_String && value->size >= 1 &&
                     ((const char *)(value + 1))[value->size - 1] == '\0' &&
                     value->size <= 256,
                 "a label answer of type %u, %u bytes", value->type,
                 value->size);
    } else if (key == uris.plumb_customOffsets) {
      const LV2_Atom_Vector *vector = (const LV2_Atom_Vector *)value;
      FUZZ_CHECK(value->type == uris.atom_Vector &&
                     value->size == sizeof vector->body + 12 * sizeof(float) &&
                     vector->body.child_type == uris.atom_Float &&
                     vector->body.child_size == sizeof(float),
                 "an offsets answer of type %u, %u bytes", value->type,
                 value->size);
    } else if (key == uris.plumb_sourceChannel) {
      FUZZ_CHECK(value->type == uris.atom_Int && value->size == 4,
                 "a channel answer of type %u", value->type);
    } else if (key == uris.patch_body) {
      FUZZ_CHECK(value->type == atom_Object, "a Put body of type %u",
                 value->type);
      check_answer((const LV2_Atom_Object *)value);
    }
  }
}

/* Walks the notify sequence with bounds of its own: every event inside
   the buffer, in time order, within the block. */
static void check_notify(const uint8_t *buffer, uint32_t capacity,
                         uint32_t frames) {
  const LV2_Atom_Sequence *sequence = (const LV2_Atom_Sequence *)buffer;
  if (sequence->atom.type == atom_Chunk) return; /* nothing was written */
  FUZZ_CHECK(sequence->atom.type == atom_Sequence,
             "notify holds an atom of type %u", sequence->atom.type);
  FUZZ_CHECK(sizeof(LV2_Atom) + sequence->atom.size <= capacity &&
                 sequence->atom.size >= sizeof(LV2_Atom_Sequence_Body),
             "notify sequence of %u bytes in %u", sequence->atom.size, capacity);
  const uint8_t *end = buffer + sizeof(LV2_Atom) + sequence->atom.size;
  const uint8_t *at = buffer + sizeof(LV2_Atom_Sequence);
  int64_t last = 0;
  while (at < end) {
    FUZZ_CHECK(at + sizeof(LV2_Atom_Event) <= end, "an event header past the end");
    const LV2_Atom_Event *event = (const LV2_Atom_Event *)at;
    FUZZ_CHECK(at + sizeof(LV2_Atom_Event) + event->body.size <= end,
               "an event of %u bytes past the end", event->body.size);
    FUZZ_CHECK(event->time.frames >= last &&
                   event->time.frames <= (int64_t)(frames ? frames - 1 : 0),
               "event at frame %lld after %lld, block of %u",
               (long long)event->time.frames, (long long)last, frames);
    last = event->time.frames;
    FUZZ_CHECK(event->body.type == atom_Object,
               "a notify event of type %u", event->body.type);
    const LV2_Atom_Object *object = (const LV2_Atom_Object *)&event->body;
    LV2_URID otype = object->body.otype;
    FUZZ_CHECK(otype == uris.plumb_Note || otype == uris.patch_Set ||
                   otype == uris.patch_Put,
               "a notify object of class %u", otype);
    if (otype == uris.plumb_Note) check_note_object(object);
    else check_answer(object);
    at += lv2_atom_pad_size(sizeof(LV2_Atom_Event) + event->body.size);
  }
}

static void check_outputs(const host *h, const float *input, uint32_t n) {
  FUZZ_CHECK(memcmp(h->audio_out, input, n * sizeof(float)) == 0,
             "the audio did not pass through unchanged");
  const float *c = h->controls;
  for (int port = PORT_NOTE; port < PORT_COUNT; ++port)
    FUZZ_CHECK(isfinite(c[port]), "output port %d is %g", port, (double)c[port]);
  FUZZ_CHECK(c[PORT_NOTE] >= -1.0f && c[PORT_NOTE] <= 127.0f &&
                 c[PORT_NOTE] == floorf(c[PORT_NOTE]),
             "note port %g", (double)c[PORT_NOTE]);
  FUZZ_CHECK(fabsf(c[PORT_CENTS]) <= 50.0f, "cents port %g", (double)c[PORT_CENTS]);
  FUZZ_CHECK(c[PORT_CONFIDENCE] >= 0.0f && c[PORT_CONFIDENCE] <= 1.0f,
             "confidence port %g", (double)c[PORT_CONFIDENCE]);
  FUZZ_CHECK(c[PORT_LAST_VERDICT] >= -1.0f && c[PORT_LAST_VERDICT] <= 4.0f,
             "verdict port %g", (double)c[PORT_LAST_VERDICT]);
  FUZZ_CHECK(c[PORT_NOTES] >= 0.0f && c[PORT_FLAGGED] >= 0.0f &&
                 c[PORT_FLAGGED] <= c[PORT_NOTES],
             "notes %g flagged %g", (double)c[PORT_NOTES], (double)c[PORT_FLAGGED]);
  FUZZ_CHECK(c[PORT_LOG_OK] == 0.0f || c[PORT_LOG_OK] == 1.0f, "log_ok %g",
             (double)c[PORT_LOG_OK]);
  FUZZ_CHECK(c[PORT_LATENCY] == 0.0f, "latency %g", (double)c[PORT_LATENCY]);
  FUZZ_CHECK(c[PORT_LAST_HNR] >= -20.0f && c[PORT_LAST_HNR] <= 80.0f,
             "hnr port %g", (double)c[PORT_LAST_HNR]);
  FUZZ_CHECK(fabsf(c[PORT_LAST_ODD_EVEN]) <= 40.0f, "odd/even port %g",
             (double)c[PORT_LAST_ODD_EVEN]);
  FUZZ_CHECK(c[PORT_LAST_ATTACK] >= 0.0f && c[PORT_LAST_ATTACK] <= 2000.0f,
             "attack port %g", (double)c[PORT_LAST_ATTACK]);
}

/* ------------------------------------------------------------ one run */

static _Alignas(8) uint8_t scratch[SCRATCH_BYTES];

static void run_block(host *h, fuzz_input *in, uint32_t n) {
  LV2_Atom_Forge forge;
  lv2_atom_forge_init(&forge, &map);
  lv2_atom_forge_set_buffer(&forge, scratch, sizeof scratch);
  LV2_Atom_Forge_Frame sequence;
  lv2_atom_forge_sequence_head(&forge, &sequence, 0);
  uint8_t events = fuzz_u8(in) % 8;
  int64_t time = 0;
  for (uint8_t e = 0; e < events && forge.offset + 12000 < sizeof scratch; ++e) {
    uint8_t kind = fuzz_u8(in);
    uint8_t when = fuzz_u8(in);
    /* Mostly in order within the block; some before the last, some past
       the end, one negative: the plugin must clamp, not index with it. */
    if (when < 200) time += n ? when % (n + 1) / 4 : 0;
    else if (when < 220) time = n + when;
    else if (when < 230) time = -1;
    lv2_atom_forge_frame_time(&forge, time);
    switch (kind % 8) {
    case 0: case 1: case 2: forge_set(h, in, &forge); break;
    case 3: forge_get(in, &forge); break;
    case 4: forge_position(in, &forge); break;
    case 5: forge_other_object(in, &forge); break;
    case 6:
      /* Raw bytes could hold a patch:Set of any folder: only when
         nothing is written. */
      if (h->logging_allowed) forge_get(in, &forge);
      else forge_raw_event(in, &forge);
      break;
    default: /* a non-object atom */
      lv2_atom_forge_int(&forge, (int32_t)fuzz_u32(in));
      break;
    }
  }
  lv2_atom_forge_pop(&forge, &sequence);
  if (getenv("PLUMB_FUZZ_VERBOSE")) {
    LV2_ATOM_SEQUENCE_FOREACH((const LV2_Atom_Sequence *)scratch, event) {
      const LV2_Atom_Object *o = (const LV2_Atom_Object *)&event->body;
      fprintf(stderr, "event at %lld: type %s, %u bytes, class %s\n",
              (long long)event->time.frames, urid_table_unmap(NULL, event->body.type),
              event->body.size,
              event->body.type == atom_Object ? urid_table_unmap(NULL, o->body.otype)
                                              : "-");
    }
  }
  /* The sequence in a buffer of its own size, so that a read past its
     end meets AddressSanitizer. */
  const LV2_Atom *atom = (const LV2_Atom *)scratch;
  size_t control_bytes = sizeof(LV2_Atom) + atom->size;
  uint8_t *control = malloc(control_bytes);
  memcpy(control, scratch, control_bytes);

  uint32_t capacity = fuzz_u8(in) < 32 ? 8 + 8 * (uint32_t)fuzz_u8(in)
                                       : MAX_NOTIFY_BYTES;
  uint8_t *notify = malloc(capacity);
  LV2_Atom *notify_atom = (LV2_Atom *)notify;
  notify_atom->type = atom_Chunk;
  notify_atom->size = capacity - (uint32_t)sizeof(LV2_Atom);

  static float input[MAX_BLOCK];
  fill_audio(in, h->audio_in, n, h->rate_hz);
  memcpy(input, h->audio_in, n * sizeof(float));
  const LV2_Descriptor *d = h->descriptor;
  d->connect_port(h->instance, PORT_CONTROL, control);
  d->connect_port(h->instance, PORT_NOTIFY, notify);
  d->run(h->instance, n);
  check_outputs(h, input, n);
  check_notify(notify, capacity, n);
  d->connect_port(h->instance, PORT_CONTROL, NULL);
  d->connect_port(h->instance, PORT_NOTIFY, NULL);
  free(control);
  free(notify);
  h->frames += n;
}

/* ------------------------------------------------------------ state */

typedef struct {
  uint32_t key;
  void *value;
  size_t size;
  uint32_t type;
  uint32_t flags;
} entry;

typedef struct {
  entry entries[MAX_STORE];
  size_t count;
} store;

static void free_store(store *s) {
  for (size_t i = 0; i < s->count; ++i) free(s->entries[i].value);
  s->count = 0;
}

static LV2_State_Status store_value(LV2_State_Handle handle, uint32_t key,
                                    const void *value, size_t size,
                                    uint32_t type, uint32_t flags) {
  store *s = handle;
  FUZZ_CHECK(value && size > 0, "stored %zu bytes at %p", size, value);
  FUZZ_CHECK(flags & LV2_STATE_IS_POD, "stored without IS_POD");
  for (size_t i = 0; i < s->count; ++i)
    FUZZ_CHECK(s->entries[i].key != key, "key %u stored twice", key);
  if (key == uris.plumb_logFolder || key == uris.plumb_sourceFile)
    FUZZ_CHECK(type == uris.atom_Path, "a path saved as type %u", type);
  if (key == uris.plumb_takeLabel)
    FUZZ_CHECK(type == uris.atom_String, "a label saved as type %u", type);
  if (type == uris.atom_Path || type == uris.atom_String)
    FUZZ_CHECK(((const char *)value)[size - 1] == '\0' &&
                   strlen(value) == size - 1,
               "a saved string of %zu bytes is not one NUL-terminated string",
               size);
  if (key == uris.plumb_customOffsets) {
    const LV2_Atom_Vector_Body *body = value;
    FUZZ_CHECK(type == uris.atom_Vector &&
                   size == sizeof *body + 12 * sizeof(float) &&
                   body->child_type == uris.atom_Float &&
                   body->child_size == sizeof(float),
               "offsets saved as type %u, %zu bytes", type, size);
    for (int i = 0; i < 12; ++i) {
      float offset;
      memcpy(&offset, (const uint8_t *)(body + 1) + 4 * i, 4);
      FUZZ_CHECK(fabsf(offset) <= 600.0f, "saved offset %g", (double)offset);
    }
  }
  if (s->count == MAX_STORE) return LV2_STATE_ERR_NO_SPACE;
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

static const LV2_Feature map_path_entry = {LV2_STATE__mapPath, &map_path_feature};
static const LV2_Feature free_path_entry = {LV2_STATE__freePath,
                                            &free_path_feature};

static bool same_store(const store *a, const store *b) {
  if (a->count != b->count) return false;
  for (size_t i = 0; i < a->count; ++i) {
    const entry *x = &a->entries[i];
    const void *value = NULL;
    size_t size = 0;
    uint32_t type = 0, flags = 0;
    value = retrieve_value((LV2_State_Handle)b, x->key, &size, &type, &flags);
    if (!value || size != x->size || type != x->type ||
        memcmp(value, x->value, size) != 0)
      return false;
  }
  return true;
}

/* save, restore what was saved, save again: the same values. */
static void save_and_check(host *h, fuzz_input *in) {
  uint8_t how = fuzz_u8(in);
  const LV2_Feature *features[3] = {NULL, NULL, NULL};
  int count = 0;
  if (how & 1) features[count++] = &map_path_entry;
  if (how & 2) features[count++] = &free_path_entry;
  store first = {.count = 0}, second = {.count = 0};
  LV2_State_Status status = h->state->save(
      h->instance, store_value, &first,
      LV2_STATE_IS_POD | LV2_STATE_IS_PORTABLE, features);
  FUZZ_CHECK(status == LV2_STATE_SUCCESS, "save gave %d", (int)status);
  status = h->state->restore(h->instance, retrieve_value, &first, 0, features);
  FUZZ_CHECK(status == LV2_STATE_SUCCESS, "restore of a save gave %d",
             (int)status);
  status = h->state->save(h->instance, store_value, &second,
                          LV2_STATE_IS_POD | LV2_STATE_IS_PORTABLE, features);
  FUZZ_CHECK(status == LV2_STATE_SUCCESS, "second save gave %d", (int)status);
  FUZZ_CHECK(same_store(&first, &second) && same_store(&second, &first),
             "saved state changed through restore: %zu then %zu values",
             first.count, second.count);
  free_store(&first);
  free_store(&second);
}

/* restore() with values made from the input. */
static void restore_from_input(host *h, fuzz_input *in) {
  static _Alignas(8) uint8_t values[MAX_STORE][8192];
  store s = {.count = 0};
  uint8_t how = fuzz_u8(in);
  int count = 1 + how % 6;
  const LV2_URID keys[] = {uris.plumb_logFolder,    uris.plumb_takeLabel,
                           uris.plumb_customOffsets, uris.plumb_sourceFile,
                           uris.plumb_sourceChannel};
  for (int i = 0; i < count; ++i) {
    LV2_URID key = fuzz_u8(in) < 240 ? keys[fuzz_u8(in) % 5] : fuzz_u32(in) % 300;
    bool duplicate = false;
    for (size_t k = 0; k < s.count; ++k) duplicate |= s.entries[k].key == key;
    if (duplicate) continue;
    /* Forge the value as an atom, then store its body, as a host would. */
    LV2_Atom_Forge forge;
    lv2_atom_forge_init(&forge, &map);
    lv2_atom_forge_set_buffer(&forge, scratch, sizeof scratch);
    uint8_t choice = fuzz_u8(in);
    if (key == uris.plumb_logFolder && choice < 64) {
      /* An abstract path as mapPath gives it: relative to the session,
         or one it cannot map ("!"). */
      char text[64];
      size_t length = (size_t)snprintf(text, sizeof text, "%s",
                                       choice & 1 ? "takes" : "!unmappable");
      forge_string_atom(&forge, uris.atom_Path, text, length, true);
    } else {
      forge_value(h, in, &forge, key);
    }
    const LV2_Atom *atom = (const LV2_Atom *)scratch;
    size_t size = atom->size;
    if (size > sizeof values[0]) size = sizeof values[0];
    memcpy(values[s.count], atom + 1, size);
    entry *e = &s.entries[s.count++];
    *e = (entry){key, values[s.count - 1], size, atom->type,
                 choice & 0x80 ? 0 : LV2_STATE_IS_POD | LV2_STATE_IS_PORTABLE};
    if (choice % 16 == 15 && size > 0) e->size = size - 1; /* cut short */
  }
  const LV2_Feature *features[3] = {NULL, NULL, NULL};
  int n = 0;
  if (how & 0x40) features[n++] = &map_path_entry;
  if (how & 0x80) features[n++] = &free_path_entry;
  LV2_State_Status status =
      h->state->restore(h->instance, retrieve_value, &s, 0, features);
  FUZZ_CHECK(status == LV2_STATE_SUCCESS, "restore gave %d", (int)status);
}

/* ------------------------------------------------------------ the files */

/* RFC 8259, with RFC 3629 UTF-8. */
typedef struct {
  const unsigned char *at, *end;
  int depth;
} json;

static void json_space(json *j) {
  while (j->at < j->end && (*j->at == ' ' || *j->at == '\t' || *j->at == '\n' ||
                            *j->at == '\r'))
    ++j->at;
}

static bool json_value(json *j);

static bool json_string(json *j) {
  if (j->at >= j->end || *j->at != '"') return false;
  ++j->at;
  while (j->at < j->end && *j->at != '"') {
    unsigned char c = *j->at;
    if (c < 0x20) return false;
    if (c == '\\') {
      if (++j->at >= j->end) return false;
      c = *j->at;
      if (c == 'u') {
        for (int k = 0; k < 4; ++k) {
          if (++j->at >= j->end) return false;
          unsigned char h = *j->at;
          if (!((h >= '0' && h <= '9') || (h >= 'a' && h <= 'f') ||
                (h >= 'A' && h <= 'F')))
            return false;
        }
      } else if (!strchr("\"\\/bfnrt", c)) {
        return false;
      }
      ++j->at;
      continue;
    }
    size_t length = c < 0x80 ? 1 : c >= 0xF0 ? 4 : c >= 0xE0 ? 3 : c >= 0xC2 ? 2 : 0;
    if (length == 0 || c > 0xF4 || j->at + length > j->end) return false;
    for (size_t k = 1; k < length; ++k)
      if ((j->at[k] & 0xC0) != 0x80) return false;
    if (length == 3 && ((c == 0xE0 && j->at[1] < 0xA0) ||
                        (c == 0xED && j->at[1] >= 0xA0)))
      return false;
    if (length == 4 && ((c == 0xF0 && j->at[1] < 0x90) ||
                        (c == 0xF4 && j->at[1] >= 0x90)))
      return false;
    j->at += length;
  }
  if (j->at >= j->end) return false;
  ++j->at;
  return true;
}

static bool json_number(json *j) {
  const unsigned char *start = j->at;
  if (j->at < j->end && *j->at == '-') ++j->at;
  if (j->at >= j->end) return false;
  if (*j->at == '0') ++j->at;
  else if (*j->at >= '1' && *j->at <= '9')
    while (j->at < j->end && *j->at >= '0' && *j->at <= '9') ++j->at;
  else return false;
  if (j->at < j->end && *j->at == '.') {
    ++j->at;
    const unsigned char *digits = j->at;
    while (j->at < j->end && *j->at >= '0' && *j->at <= '9') ++j->at;
    if (j->at == digits) return false;
  }
  if (j->at < j->end && (*j->at == 'e' || *j->at == 'E')) {
    ++j->at;
    if (j->at < j->end && (*j->at == '+' || *j->at == '-')) ++j->at;
    const unsigned char *digits = j->at;
    while (j->at < j->end && *j->at >= '0' && *j->at <= '9') ++j->at;
    if (j->at == digits) return false;
  }
  return j->at > start;
}

static bool json_literal(json *j, const char *word) {
  size_t length = strlen(word);
  if ((size_t)(j->end - j->at) < length || memcmp(j->at, word, length) != 0)
    return false;
  j->at += length;
  return true;
}

static bool json_container(json *j, char open, char close, bool keys) {
  if (++j->depth > 64) return false;
  ++j->at; /* open */
  (void)open;
  json_space(j);
  if (j->at < j->end && *j->at == close) {
    ++j->at;
    --j->depth;
    return true;
  }
  for (;;) {
    json_space(j);
    if (keys) {
      if (!json_string(j)) return false;
      json_space(j);
      if (j->at >= j->end || *j->at != ':') return false;
      ++j->at;
    }
    if (!json_value(j)) return false;
    json_space(j);
    if (j->at < j->end && *j->at == ',') {
      ++j->at;
      continue;
    }
    if (j->at < j->end && *j->at == close) {
      ++j->at;
      --j->depth;
      return true;
    }
    return false;
  }
}

static bool json_value(json *j) {
  json_space(j);
  if (j->at >= j->end) return false;
  switch (*j->at) {
  case '{': return json_container(j, '{', '}', true);
  case '[': return json_container(j, '[', ']', false);
  case '"': return json_string(j);
  case 't': return json_literal(j, "true");
  case 'f': return json_literal(j, "false");
  case 'n': return json_literal(j, "null");
  default: return json_number(j);
  }
}

static char *read_whole(const char *path, size_t *length) {
  FILE *file = fopen(path, "rb");
  if (!file) return NULL;
  size_t capacity = 1 << 16, used = 0;
  char *text = malloc(capacity + 1);
  size_t got;
  while ((got = fread(text + used, 1, capacity - used, file)) > 0) {
    used += got;
    if (used == capacity) {
      capacity *= 2;
      text = realloc(text, capacity + 1);
    }
  }
  fclose(file);
  text[used] = '\0';
  *length = used;
  return text;
}

static bool ends_with(const char *name, const char *suffix) {
  size_t a = strlen(name), b = strlen(suffix);
  return a >= b && strcmp(name + a - b, suffix) == 0;
}

static size_t files_checked;

static int check_file(const char *path, const struct stat *info, int flag,
                      struct FTW *walk) {
  (void)info;
  (void)walk;
  if (flag != FTW_F) return 0;
  if (getenv("PLUMB_FUZZ_VERBOSE")) fprintf(stderr, "file %s\n", path);
  size_t length = 0;
  if (ends_with(path, ".run.json")) {
    char *text = read_whole(path, &length);
    FUZZ_CHECK(text != NULL, "cannot read %s", path);
    json j = {(const unsigned char *)text, (const unsigned char *)text + length, 0};
    bool valid = json_value(&j);
    json_space(&j);
    FUZZ_CHECK(valid && j.at == j.end, "%s is not valid JSON (at byte %zu)",
               path, (size_t)((const char *)j.at - text));
    free(text);
    files_checked++;
  } else if (ends_with(path, ".notes.csv")) {
    char *text = read_whole(path, &length);
    FUZZ_CHECK(text != NULL, "cannot read %s", path);
    const char *header = plumb_csv_header();
    size_t header_length = strlen(header);
    FUZZ_CHECK(strncmp(text, header, header_length) == 0 &&
                   text[header_length] == '\n',
               "%s does not start with the header", path);
    size_t commas = 0;
    for (const char *c = header; *c; ++c) commas += *c == ',';
    size_t row_commas = 0;
    for (const char *c = text + header_length + 1; *c; ++c) {
      if (*c == '\n') {
        FUZZ_CHECK(row_commas == commas, "%s: a row of %zu commas, header %zu",
                   path, row_commas, commas);
        row_commas = 0;
      }
      row_commas += *c == ',';
    }
    FUZZ_CHECK(length > 0 && text[length - 1] == '\n',
               "%s does not end with a whole row", path);
    free(text);
    files_checked++;
  }
  return 0;
}

/* ------------------------------------------------------------ an input */

static const double rates_hz[] = {48000.0, 44100.0, 8000.0,  96000.0,
                                  22050.0, 192000.0, 384000.0, 1000.0,
                                  0.0,     1e9};

static void set_control(host *h, fuzz_input *in) {
  uint8_t port = (uint8_t)(PORT_REFERENCE + fuzz_u8(in) % (PORT_LOGGING - PORT_REFERENCE + 1));
  uint8_t how = fuzz_u8(in);
  float value;
  switch (how % 6) {
  case 0: value = fuzz_raw_float(in); break;
  case 1: value = (float)fuzz_range(in, -10.0, 1100.0); break;
  case 2: value = how & 0x80 ? NAN : INFINITY; break;
  case 3: value = (float)(fuzz_u8(in) % 13); break;
  case 4: value = (float)fuzz_range(in, 0.0, 1.0); break;
  default: value = -1e30f; break;
  }
  if (port == PORT_LOGGING && !h->logging_allowed) value = 0.0f;
  h->controls[port] = value;
}

static void control_defaults(host *h) {
  float *c = h->controls;
  c[PORT_REFERENCE] = 440.0f;
  c[PORT_TOLERANCE] = 10.0f;
  c[PORT_TEMPERAMENT] = 0.0f;
  c[PORT_TONIC] = 0.0f;
  c[PORT_LOWEST] = 28.0f;
  c[PORT_HIGHEST] = 96.0f;
  c[PORT_MIN_NOTE] = 80.0f;
  c[PORT_LOGGING] = h->logging_allowed ? 1.0f : 0.0f;
}

int LLVMFuzzerInitialize(int *argc, char ***argv) {
  (void)argc;
  (void)argv;
  const char *tmp = getenv("TMPDIR") ? getenv("TMPDIR") : "/tmp";
  snprintf(root, sizeof root, "%s/plumb-fuzz-plugin.XXXXXX", tmp);
  FUZZ_CHECK(mkdtemp(root) != NULL, "mkdtemp: %s", strerror(errno));
  atexit(remove_root);
  fuzz_cleanup = remove_root;
  snprintf(logs_root, sizeof logs_root, "%s/logs", root);
  snprintf(session_root, sizeof session_root, "%s/session", root);
  char path[1200];
  static const char *const folders[] = {"logs", "session", "env", "xdg",
                                        "home"};
  for (size_t i = 0; i < sizeof folders / sizeof folders[0]; ++i) {
    snprintf(path, sizeof path, "%s/%s", root, folders[i]);
    FUZZ_CHECK(mkdir(path, 0777) == 0, "mkdir %s: %s", path, strerror(errno));
  }
  /* Every default the plugin may fall back on is in the temporary folder. */
  snprintf(path, sizeof path, "%s/env", root);
  setenv("PLUMB_LOG_DIR", path, 1);
  snprintf(path, sizeof path, "%s/xdg", root);
  setenv("XDG_STATE_HOME", path, 1);
  snprintf(path, sizeof path, "%s/home", root);
  setenv("HOME", path, 1);
  /* Not chdir(): libFuzzer reads its inputs and writes its artifacts by
     relative paths after this. The plugin refuses relative folders. */

  plumb_uris_map(&uris, &map);
  atom_Chunk = map_uri(LV2_ATOM__Chunk);
  atom_Sequence = map_uri(LV2_ATOM__Sequence);
  atom_Object = map_uri(LV2_ATOM__Object);
  atom_Tuple = map_uri(LV2_ATOM__Tuple);
  atom_Bool = map_uri(LV2_ATOM__Bool);
  atom_Literal = map_uri(LV2_ATOM__Literal);
  atom_URI = map_uri(LV2_ATOM__URI);
  atom_Blank = map_uri(LV2_ATOM__Blank);
  return 0;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size) {
  fuzz_input in = fuzz_input_of(data, size);
  static host h;
  memset(&h, 0, sizeof h);
  the_host = &h;
  uint8_t first = fuzz_u8(&in);
  uint8_t features_wanted = fuzz_u8(&in);
  h.rate_hz = rates_hz[(first & 0x7F) % (sizeof rates_hz / sizeof rates_hz[0])];
  h.logging_allowed = first & 0x80;
  h.in_place = features_wanted & 0x10;
  h.descriptor = lv2_descriptor(0);
  FUZZ_CHECK(h.descriptor && lv2_descriptor(1) == NULL &&
                 strcmp(h.descriptor->URI, PLUMB_URI) == 0,
             "descriptors");

  float rate_option = (float)h.rate_hz;
  int32_t min_block = 1, max_block = MAX_BLOCK, nominal = 512;
  LV2_URID atom_Int = uris.atom_Int;
  LV2_Options_Option options[] = {
      {LV2_OPTIONS_INSTANCE, 0, map_uri(LV2_PARAMETERS__sampleRate),
       sizeof(float), uris.atom_Float, &rate_option},
      {LV2_OPTIONS_INSTANCE, 0, map_uri(LV2_BUF_SIZE__minBlockLength),
       sizeof(int32_t), atom_Int, &min_block},
      {LV2_OPTIONS_INSTANCE, 0, map_uri(LV2_BUF_SIZE__maxBlockLength),
       sizeof(int32_t), atom_Int, &max_block},
      {LV2_OPTIONS_INSTANCE, 0, map_uri(LV2_BUF_SIZE__nominalBlockLength),
       sizeof(int32_t), atom_Int, &nominal},
      {LV2_OPTIONS_INSTANCE, 0, 0, 0, 0, NULL}};
  LV2_Feature list[10];
  const LV2_Feature *features[11];
  int count = 0;
  if (!(features_wanted & 0x80 && features_wanted & 0x40)) /* rarely none */
    list[count++] = (LV2_Feature){LV2_URID__map, &map};
  list[count++] = (LV2_Feature){LV2_URID__unmap, &unmap};
  if (features_wanted & 1) list[count++] = (LV2_Feature){LV2_LOG__log, &host_log};
  list[count++] = (LV2_Feature){LV2_OPTIONS__options, options};
  /* A quarter of the inputs: no worker, so the plugin's own log thread
     (log_thread.c); the only inputs that do not run the same way twice. */
  own_thread_mode = (features_wanted & 0x28) == 0x28;
  main_thread = pthread_self();
  if (!own_thread_mode)
    list[count++] = (LV2_Feature){LV2_WORKER__schedule, &schedule_feature};
  if (features_wanted & 2)
    list[count++] = (LV2_Feature){LV2_STATE__makePath, &make_path_feature};
  if (features_wanted & 4)
    list[count++] = (LV2_Feature){LV2_STATE__freePath, &free_path_feature};
  if (features_wanted & 8) list[count++] = (LV2_Feature){NULL, NULL};
  FUZZ_CHECK(count <= 10, "too many features");
  for (int i = 0; i < count; ++i) features[i] = &list[i];
  features[count] = NULL;

  h.instance = h.descriptor->instantiate(h.descriptor, h.rate_hz, "/nonexistent/",
                                         features);
  bool rate_ok = h.rate_hz >= 8000.0 && h.rate_hz <= 384000.0;
  bool has_map = !(features_wanted & 0x80 && features_wanted & 0x40);
  if (!rate_ok || !has_map) {
    FUZZ_CHECK(h.instance == NULL, "instantiated at %g Hz%s", h.rate_hz,
               has_map ? "" : " without urid:map");
    return 0;
  }
  FUZZ_CHECK(h.instance != NULL, "refused to instantiate at %g Hz", h.rate_hz);
  h.state = h.descriptor->extension_data(LV2_STATE__interface);
  h.worker = h.descriptor->extension_data(LV2_WORKER__interface);
  FUZZ_CHECK(h.state && h.worker && !h.descriptor->extension_data("urn:nothing"),
             "extension data");
  control_defaults(&h);
  const LV2_Descriptor *d = h.descriptor;
  h.audio_in = h.in_place ? h.out : h.in;
  h.audio_out = h.out;
  d->connect_port(h.instance, PORT_IN, h.audio_in);
  d->connect_port(h.instance, PORT_OUT, h.audio_out);
  for (uint32_t port = PORT_NOTIFY + 1; port < PORT_COUNT; ++port)
    d->connect_port(h.instance, port, &h.controls[port]);
  d->connect_port(h.instance, PORT_COUNT + 3, h.out); /* no such port */

  uint64_t cap = (uint64_t)(MAX_AUDIO_S * h.rate_hz);
  for (int step = 0; step < MAX_STEPS && !fuzz_input_done(&in); ++step) {
    uint8_t kind = fuzz_u8(&in) % 16;
    if (kind < 9) {
      if (!h.active) {
        d->activate(h.instance);
        h.active = true;
      }
      uint8_t length = fuzz_u8(&in);
      uint32_t n = length < 64    ? length % 4
                   : length < 200 ? fuzz_u16(&in) % (MAX_BLOCK + 1)
                                  : MAX_BLOCK;
      if (h.frames + n > cap) break;
      run_block(&h, &in, n);
    } else if (kind < 11) {
      set_control(&h, &in);
    } else if (kind < 12) {
      if (h.active) d->deactivate(h.instance);
      else d->activate(h.instance);
      h.active = !h.active;
    } else if (kind < 14) {
      restore_from_input(&h, &in);
    } else {
      save_and_check(&h, &in);
    }
  }
  if (h.active) d->deactivate(h.instance);
  d->cleanup(h.instance);
  if (h.logging_allowed) {
    size_t before = files_checked;
    nftw(root, check_file, 16, FTW_PHYS);
    if (getenv("PLUMB_FUZZ_VERBOSE"))
      fprintf(stderr, "%llu frames, %zu log files checked, %zu log lines\n",
              (unsigned long long)h.frames, files_checked - before, log_lines);
    empty_folder(logs_root);
    empty_folder(session_root);
    char path[1200];
    static const char *const others[] = {"env", "xdg", "home"};
    for (size_t i = 0; i < sizeof others / sizeof others[0]; ++i) {
      snprintf(path, sizeof path, "%s/%s", root, others[i]);
      empty_folder(path);
    }
  }
  return 0;
}
