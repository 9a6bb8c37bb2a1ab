/*
  Real-time safety of run(), proved by interposition.

  The rule comes from the LV2 core specification (lv2core.meta.ttl,
  lv2:hardRTCapable, which ttl/plumb.ttl claims): in run() and
  connect_port() there is "no use of malloc(), free() or any other heap
  memory management functions" and "no access to files, devices, pipes,
  sockets, system calls, or any other mechanism that might result in the
  process or thread blocking". plugin/lv2/plugin.c says the same of run().

  How: this executable defines the forbidden functions itself (malloc,
  locks, stdio, file and sleep calls). The dynamic linker looks symbols
  up in the executable first, so the dlopen'ed plugin, and FFTW under it,
  call these definitions. (The static linker puts them in the dynamic
  symbol table without -rdynamic, because the C library on the link line
  defines them too; they only need default visibility.) Each one forwards to the C library's own
  function (found with dlsym(RTLD_NEXT, ...)) and, while the thread-local
  flag inside_run is set, counts the call by name. The flag is set only
  around descriptor->run() and connect_port() on the test's own thread,
  so the plugin's log writer thread, which legitimately opens files,
  allocates and sleeps, is never counted. Control tests show the counting
  works on calls made from this file and from the plugin itself, so the
  zero counts below can fail.

  Groups:
  - the plugin through its LV2 descriptor, at block sizes 1, 7, 64, 1000
    and 4096, with patch:Set, patch:Get and time:Position events arriving
    mid-block, a control change mid-take, silence, loud notes and NaN/Inf
    samples; the audio must pass bit for bit and a session log must be
    left behind. Three hosts: one with no worker (the plugin logs from a
    thread of its own), one whose worker runs work() on a thread of the
    host's (LV2 Worker extension, worker.h: "the host MAY call this method
    from any non-real-time thread"), and one that runs work() at once
    inside schedule_work, as a freewheeling host may (worker.h: "the
    worker may be executed immediately"). That host's work() is the
    host's own non-real-time business, so the counting pauses inside it;
    run() around it must still be clean, nothing may deadlock, and every
    host must leave the same log;
  - the analysis core's [RT] calls directly (core/include/plumb.h);
  - a loud note followed by denormal-range silence: bit-exact output, and
    the run() time per block printed (the specification bounds run() by
    A + B * sample_count "not depending on input signals"; timing is
    measured here, never asserted).
*/
#define _GNU_SOURCE /* RTLD_NEXT, RTLD_DEFAULT, O_TMPFILE, usleep */

#include "folder_host.h"
#include "plugin_host.h"
#include "take_host.h"

#include "plumb.h"

#include <lv2/patch/patch.h>

#include <dirent.h>
#include <dlfcn.h>
#include <fcntl.h>
#include <limits.h>
#include <math.h>
#include <pthread.h>
#include <semaphore.h>
#include <stdalign.h>
#include <stdarg.h>
#include <stdatomic.h>
#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/file.h>
#include <sys/mman.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>
#if defined(__SSE__)
#include <xmmintrin.h>
#endif

#include <setjmp.h>
#include <cmocka.h>

/* ================================================== the interposer */

/* Every call counted inside run(): heap, locks and waits, threads,
   stdio, files and sleeping. The list also holds the calls the plugin's
   log writer uses (fdopen, fputs, fputc, fsync, ftruncate, flock, stat,
   mkdir, rename, unlink) and puts and printf, which the compiler makes of
   some printf calls. The memory calls come first: they are resolved
   first, so dlsym's own allocations find them ready. */
#define INTERPOSED_CALLS(X)                                                    \
  X(malloc) X(calloc) X(realloc) X(free) X(posix_memalign) X(aligned_alloc)   \
  X(pthread_mutex_lock) X(pthread_mutex_trylock) X(pthread_cond_wait)          \
  X(pthread_cond_timedwait) X(pthread_cond_signal) X(pthread_cond_broadcast)   \
  X(pthread_create) X(pthread_join)                                            \
  X(fopen) X(fdopen) X(fclose) X(fwrite) X(fputs) X(fputc) X(puts)             \
  X(fflush) X(fprintf) X(printf) X(vfprintf)                                   \
  X(open) X(close) X(read) X(write) X(fsync) X(ftruncate) X(flock) X(stat)     \
  X(mkdir) X(rename) X(unlink)                                                 \
  X(nanosleep) X(usleep) X(sleep) X(clock_nanosleep) X(sem_wait)               \
  X(mmap) X(munmap)

#define AS_ENUM(name) CALL_##name,
#define AS_NAME(name) #name,

typedef enum {
  INTERPOSED_CALLS(AS_ENUM) CALL_INTERPOSED_COUNT,
  /* The host's URID map may lock or allocate, so run() must not call it
     either; the test host counts its own map and unmap. */
  CALL_urid_map = CALL_INTERPOSED_COUNT,
  CALL_urid_unmap,
  CALL_COUNT
} forbidden_call;

static const char *const call_names[CALL_COUNT] = {
    INTERPOSED_CALLS(AS_NAME) "urid:map", "urid:unmap"};

/* Set only around run() and connect_port() on the test's thread. */
static _Thread_local bool inside_run;
/* Touched only by the thread that has inside_run set. */
static unsigned long forbidden_counts[CALL_COUNT];

static void note_call(forbidden_call call) {
  if (inside_run) {
    ++forbidden_counts[call];
  }
}

static void counting_reset(void) {
  memset(forbidden_counts, 0, sizeof forbidden_counts);
}

static unsigned long counting_total(void) {
  unsigned long total = 0;
  for (int call = 0; call < CALL_COUNT; ++call) {
    total += forbidden_counts[call];
  }
  return total;
}

static void counting_report(const char *where) {
  fprintf(stderr, "forbidden calls inside %s:", where);
  for (int call = 0; call < CALL_COUNT; ++call) {
    if (forbidden_counts[call]) {
      fprintf(stderr, " %s %lu", call_names[call], forbidden_counts[call]);
    }
  }
  fprintf(stderr, "\n");
}

/* dlsym() may allocate while the real malloc is being looked up; those
   few blocks come from here and are never given back. Each block keeps
   its size just before it, for realloc. */
#define BOOTSTRAP_BYTES (64 * 1024)
static alignas(max_align_t) unsigned char bootstrap_arena[BOOTSTRAP_BYTES];
static size_t bootstrap_used;

static void *bootstrap_alloc(size_t size) {
  const size_t align = alignof(max_align_t);
  size_t rounded = (size + align - 1) / align * align;
  if (size > BOOTSTRAP_BYTES ||
      align + rounded > BOOTSTRAP_BYTES - bootstrap_used) {
    abort(); /* nothing can be reported yet */
  }
  unsigned char *block = bootstrap_arena + bootstrap_used + align;
  bootstrap_used += align + rounded;
  memcpy(block - sizeof size, &size, sizeof size);
  return block; /* static memory: already zero, as calloc wants */
}

static bool from_bootstrap(const void *pointer) {
  uintptr_t address = (uintptr_t)pointer;
  uintptr_t begin = (uintptr_t)bootstrap_arena;
  return address >= begin && address < begin + BOOTSTRAP_BYTES;
}

static size_t bootstrap_size(const void *pointer) {
  size_t size;
  memcpy(&size, (const unsigned char *)pointer - sizeof size, sizeof size);
  return size;
}

static void *real_functions[CALL_INTERPOSED_COUNT];
static bool resolving;

/* Runs single-threaded: from the constructor below, or from the first
   interposed call, which comes earlier still, before main. */
static void resolve_real_functions(void) {
  resolving = true;
  for (int call = 0; call < CALL_INTERPOSED_COUNT; ++call) {
    real_functions[call] = dlsym(RTLD_NEXT, call_names[call]);
  }
  resolving = false;
}

__attribute__((constructor)) static void resolve_before_main(void) {
  if (!real_functions[CALL_malloc]) {
    resolve_real_functions();
  }
}

static void *real_function(forbidden_call call) {
  if (!real_functions[call] && !resolving) {
    resolve_real_functions();
  }
  if (!real_functions[call]) {
    abort(); /* the C library lacks it: nothing sensible to forward to */
  }
  return real_functions[call];
}

/* The C library's own function of that name, with its own type. */
#define REAL(name) ((__typeof__(&name))real_function(CALL_##name))

/* Exported from the executable despite -fvisibility=hidden, so the
   dynamic linker binds the plugin's (and FFTW's) calls here. */
#define INTERPOSER __attribute__((visibility("default")))

/* ---------------------------------------------------------- memory */

INTERPOSER void *malloc(size_t size) {
  if (resolving) {
    return bootstrap_alloc(size);
  }
  note_call(CALL_malloc);
  return REAL(malloc)(size);
}

INTERPOSER void *calloc(size_t count, size_t size) {
  if (resolving) {
    bool overflows = size && count > SIZE_MAX / size;
    return overflows ? NULL : bootstrap_alloc(count * size);
  }
  note_call(CALL_calloc);
  return REAL(calloc)(count, size);
}

INTERPOSER void *realloc(void *pointer, size_t size) {
  if (!from_bootstrap(pointer) && !resolving) {
    note_call(CALL_realloc);
    return REAL(realloc)(pointer, size);
  }
  /* A bootstrap block moves (while resolving, every block is one: the
     first allocation of the process is what starts the resolving). */
  void *moved = resolving ? bootstrap_alloc(size) : REAL(malloc)(size);
  if (moved && pointer) {
    size_t old_size = bootstrap_size(pointer);
    memcpy(moved, pointer, old_size < size ? old_size : size);
  }
  return moved;
}

INTERPOSER void free(void *pointer) {
  if (!pointer || from_bootstrap(pointer)) {
    return;
  }
  note_call(CALL_free);
  REAL(free)(pointer);
}

/* A plain forwarder: count, then call the C library's own function. */
#define FORWARD(type, name, parameters, arguments)                             \
  INTERPOSER type name parameters {                                            \
    note_call(CALL_##name);                                                    \
    return REAL(name) arguments;                                               \
  }

FORWARD(int, posix_memalign, (void **pointer, size_t alignment, size_t size),
        (pointer, alignment, size))
FORWARD(void *, aligned_alloc, (size_t alignment, size_t size),
        (alignment, size))

/* ---------------------------------------------------------- threads */

FORWARD(int, pthread_mutex_lock, (pthread_mutex_t * mutex), (mutex))
FORWARD(int, pthread_mutex_trylock, (pthread_mutex_t * mutex), (mutex))
FORWARD(int, pthread_cond_wait,
        (pthread_cond_t *restrict condition, pthread_mutex_t *restrict mutex),
        (condition, mutex))
FORWARD(int, pthread_cond_timedwait,
        (pthread_cond_t *restrict condition, pthread_mutex_t *restrict mutex,
         const struct timespec *restrict until),
        (condition, mutex, until))
FORWARD(int, pthread_cond_signal, (pthread_cond_t * condition), (condition))
FORWARD(int, pthread_cond_broadcast, (pthread_cond_t * condition), (condition))
FORWARD(int, pthread_create,
        (pthread_t *restrict thread, const pthread_attr_t *restrict attributes,
         void *(*start)(void *), void *restrict argument),
        (thread, attributes, start, argument))
FORWARD(int, pthread_join, (pthread_t thread, void **result), (thread, result))
FORWARD(int, sem_wait, (sem_t * semaphore), (semaphore))

/* ---------------------------------------------------------- stdio */

FORWARD(FILE *, fopen, (const char *restrict path, const char *restrict mode),
        (path, mode))
FORWARD(FILE *, fdopen, (int descriptor, const char *mode), (descriptor, mode))
FORWARD(int, fclose, (FILE * stream), (stream))
FORWARD(size_t, fwrite,
        (const void *restrict data, size_t size, size_t count,
         FILE *restrict stream),
        (data, size, count, stream))
FORWARD(int, fputs, (const char *restrict text, FILE *restrict stream),
        (text, stream))
FORWARD(int, fputc, (int character, FILE *stream), (character, stream))
FORWARD(int, puts, (const char *text), (text))
FORWARD(int, fflush, (FILE * stream), (stream))
FORWARD(int, vfprintf,
        (FILE *restrict stream, const char *restrict format, va_list arguments),
        (stream, format, arguments))

/* fprintf and printf count under their own names, then print through
   the real vfprintf (so one call counts once). */
INTERPOSER int fprintf(FILE *restrict stream, const char *restrict format,
                       ...) {
  note_call(CALL_fprintf);
  va_list arguments;
  va_start(arguments, format);
  int written = REAL(vfprintf)(stream, format, arguments);
  va_end(arguments);
  return written;
}

INTERPOSER int printf(const char *restrict format, ...) {
  note_call(CALL_printf);
  va_list arguments;
  va_start(arguments, format);
  int written = REAL(vfprintf)(stdout, format, arguments);
  va_end(arguments);
  return written;
}

/* ---------------------------------------------------------- files */

/* The mode argument is there only when the flags create a file. */
INTERPOSER int open(const char *path, int flags, ...) {
  note_call(CALL_open);
  mode_t mode = 0;
  if ((flags & O_CREAT) || (flags & O_TMPFILE) == O_TMPFILE) {
    va_list arguments;
    va_start(arguments, flags);
    mode = va_arg(arguments, mode_t);
    va_end(arguments);
  }
  return REAL(open)(path, flags, mode);
}

FORWARD(int, close, (int descriptor), (descriptor))
FORWARD(ssize_t, read, (int descriptor, void *data, size_t size),
        (descriptor, data, size))
FORWARD(ssize_t, write, (int descriptor, const void *data, size_t size),
        (descriptor, data, size))
FORWARD(int, fsync, (int descriptor), (descriptor))
FORWARD(int, ftruncate, (int descriptor, off_t length), (descriptor, length))
FORWARD(int, flock, (int descriptor, int operation), (descriptor, operation))
FORWARD(int, stat, (const char *restrict path, struct stat *restrict info),
        (path, info))
FORWARD(int, mkdir, (const char *path, mode_t mode), (path, mode))
FORWARD(int, rename, (const char *from, const char *to), (from, to))
FORWARD(int, unlink, (const char *path), (path))
FORWARD(void *, mmap,
        (void *address, size_t length, int protection, int flags,
         int descriptor, off_t offset),
        (address, length, protection, flags, descriptor, offset))
FORWARD(int, munmap, (void *address, size_t length), (address, length))

/* ---------------------------------------------------------- sleeping */

FORWARD(int, nanosleep,
        (const struct timespec *request, struct timespec *remaining),
        (request, remaining))
FORWARD(int, usleep, (useconds_t microseconds), (microseconds))
FORWARD(unsigned int, sleep, (unsigned int seconds), (seconds))
FORWARD(int, clock_nanosleep,
        (clockid_t clock, int flags, const struct timespec *request,
         struct timespec *remaining),
        (clock, flags, request, remaining))

/* ================================================== the test host */

#define SAMPLE_RATE_HZ 48000.0

/* The parameters, as docs/ports.md names them. */
#define LOG_FOLDER_URI "urn:plumb:logFolder"
#define TAKE_LABEL_URI "urn:plumb:takeLabel"
#define CUSTOM_OFFSETS_URI "urn:plumb:customOffsets"

/* The host (tests/plugin/plugin_host.c) maps with the shared table
   (tests/lib/urid_table.c); here every call the plugin makes is counted:
   it maps only in instantiate(). */
static LV2_URID map_uri(LV2_URID_Map_Handle handle, const char *uri) {
  note_call(CALL_urid_map);
  return urid_table_map(handle, uri);
}

static const char *unmap_uri(LV2_URID_Unmap_Handle handle, LV2_URID urid) {
  note_call(CALL_urid_unmap);
  return urid_table_unmap(handle, urid);
}

typedef struct {
  LV2_URID atom_Chunk, atom_Float, atom_Int, atom_Long, atom_Path, atom_String,
      atom_URID, patch_Get, patch_property, log_folder, take_label,
      custom_offsets;
  host_time_uris time;
} host_uris;

static void map_host_uris(host_uris *uris, LV2_URID_Map *map) {
  LV2_URID (*get)(LV2_URID_Map_Handle, const char *) = map->map;
  uris->atom_Chunk = get(NULL, LV2_ATOM__Chunk);
  uris->atom_Float = get(NULL, LV2_ATOM__Float);
  uris->atom_Int = get(NULL, LV2_ATOM__Int);
  uris->atom_Long = get(NULL, LV2_ATOM__Long);
  uris->atom_Path = get(NULL, LV2_ATOM__Path);
  uris->atom_String = get(NULL, LV2_ATOM__String);
  uris->atom_URID = get(NULL, LV2_ATOM__URID);
  uris->patch_Get = get(NULL, LV2_PATCH__Get);
  uris->patch_property = get(NULL, LV2_PATCH__property);
  host_time_uris_map(&uris->time);
  uris->log_folder = get(NULL, LOG_FOLDER_URI);
  uris->take_label = get(NULL, TAKE_LABEL_URI);
  uris->custom_offsets = get(NULL, CUSTOM_OFFSETS_URI);
}

/* The host's features (plugin_host.c), with the counted map and unmap. */
static void build_features(host_features *f, uint32_t block_frames) {
  host_features_build(f, SAMPLE_RATE_HZ, block_frames);
  f->map.map = map_uri;
  f->unmap.unmap = unmap_uri;
}

/* ================================================== the host's worker */

/* The hosts the plugin is driven in (see the top comment), by the
   worker of tests/plugin/worker_host.c. */
static const char *const host_kind_names[HOST_WORKER_KINDS] = {
    "no-worker", "worker-thread", "synchronous-worker"};

/* The freewheeling host's work() inside run() is the host's own
   non-real-time business, so the counting pauses inside it. */
static _Thread_local bool counting_before_work;

static void pause_counting(bool entering) {
  if (entering) {
    counting_before_work = inside_run;
    inside_run = false;
  } else {
    inside_run = counting_before_work;
  }
}

/* ================================================== the takes */

/* A few seconds of notes: silence first, a loud note, a note with
   vibrato, a few NaN and Inf samples (the analysis must take them as 0),
   and silence between and after. */
#define TAKE_S 3.6
#define LOUD_DB 10.0

static const sig_note take_notes[] = {
    /* start_s end_s midi detune vib_hz vib_cents glide_s level_db */
    {0.30, 0.80, 57, 0.0, 0.0, 0.0, 0.0, 0.0},
    {0.95, 1.55, 64, 0.0, 0.0, 0.0, 0.0, LOUD_DB},
    {1.70, 2.60, 69, 0.0, 5.5, 20.0, 0.0, 0.0},
    {2.80, 3.20, 60, 0.0, 0.0, 0.0, 0.0, 0.0},
};
#define TAKE_NOTES (sizeof take_notes / sizeof take_notes[0])

static const double bad_sample_times_s[] = {1.20, 1.2001, 1.2002, 2.70};
#define BAD_SAMPLES (sizeof bad_sample_times_s / sizeof bad_sample_times_s[0])

/* The denormal take: a loud note, then 2 s of samples of +-1e-40, far
   below FLT_MIN (1.18e-38), where x86 arithmetic without FTZ/DAZ slows. */
#define DENORMAL_NOTE_START_S 0.20
#define DENORMAL_NOTE_END_S 1.00
#define DENORMAL_TAIL_START_S 1.20
#define DENORMAL_TAIL_S 2.0
#define DENORMAL_TAKE_S (DENORMAL_TAIL_START_S + DENORMAL_TAIL_S)
#define DENORMAL_SAMPLE 1e-40f
#define DENORMAL_BLOCK_FRAMES 256

static size_t seconds_to_frames(double seconds) {
  return (size_t)lround(seconds * SAMPLE_RATE_HZ);
}

static float *render_take(size_t *n) {
  float *samples =
      host_take_render(take_notes, TAKE_NOTES, TAKE_S, SAMPLE_RATE_HZ, 11, n);
  if (!samples) {
    return NULL;
  }
  for (size_t i = 0; i < BAD_SAMPLES; ++i) {
    samples[seconds_to_frames(bad_sample_times_s[i])] =
        i + 1 < BAD_SAMPLES ? NAN : INFINITY;
  }
  return samples;
}

static float *render_denormal_take(size_t *n) {
  const sig_note loud = {DENORMAL_NOTE_START_S, DENORMAL_NOTE_END_S, 64, 0.0,
                         0.0, 0.0, 0.0, LOUD_DB};
  float *samples =
      host_take_render(&loud, 1, DENORMAL_TAKE_S, SAMPLE_RATE_HZ, 11, n);
  if (!samples) {
    return NULL;
  }
  for (size_t i = seconds_to_frames(DENORMAL_TAIL_START_S); i < *n; ++i) {
    samples[i] = (i & 1u) ? DENORMAL_SAMPLE : -DENORMAL_SAMPLE;
  }
  return samples;
}

/* ================================================== the events */

typedef enum {
  EVENT_SET_FOLDER,
  EVENT_SET_LABEL,
  EVENT_SET_OFFSETS,
  EVENT_GET_LABEL,
  EVENT_POSITION
} event_kind;

typedef struct {
  size_t frame; /* in the take */
  event_kind kind;
  int64_t transport_frame; /* EVENT_POSITION */
  float speed;             /* EVENT_POSITION */
} take_event;

#define MAX_EVENTS 16
#define TRANSPORT_START_FRAMES 28800000 /* the host's timeline at 600 s */
#define TRANSPORT_JUMP_FRAMES 4800000   /* 100 s */
#define TRANSPORT_STOP_FRAMES 57600000  /* 1200 s */
#define NO_FRAME SIZE_MAX

typedef struct {
  const char *folder;
  const char *label;
  take_event events[MAX_EVENTS]; /* in frame order */
  size_t count;
  size_t tolerance_change_frame; /* the first block from here on: 15 cents */
  size_t gets;                   /* patch:Get events, each to be answered */
  size_t rows_wanted;            /* the log's rows once the take is played */
} take_plan;

static void add_event(take_plan *plan, size_t frame, event_kind kind,
                      int64_t transport_frame, float speed) {
  if (plan->count < MAX_EVENTS) {
    plan->events[plan->count++] =
        (take_event){frame, kind, transport_frame, speed};
    plan->gets += kind == EVENT_GET_LABEL;
  }
}

/* The folder, label and first transport position come mid-block in the
   first run() (at frame 0 when blocks are 1 frame long). The position
   says the timeline stands at TRANSPORT_START_FRAMES at take frame 0, so
   the notes' timeline_s is the same whatever the block size. Later
   events sit at odd frames, so they land mid-block too. */
static void plan_first_run(take_plan *plan, size_t first_block_frames) {
  size_t middle = first_block_frames / 2;
  add_event(plan, middle, EVENT_SET_FOLDER, 0, 0.0f);
  add_event(plan, middle, EVENT_SET_LABEL, 0, 0.0f);
  add_event(plan, middle, EVENT_POSITION,
            TRANSPORT_START_FRAMES + (int64_t)middle, 1.0f);
}

static void plan_take(take_plan *plan, const char *folder, const char *label,
                      size_t block_frames) {
  memset(plan, 0, sizeof *plan);
  plan->folder = folder;
  plan->label = label;
  plan_first_run(plan, block_frames);
  /* the transport jumps 100 s ahead, a parameter is read and offsets set */
  size_t jump = seconds_to_frames(1.25) + 17;
  add_event(plan, jump, EVENT_POSITION,
            TRANSPORT_START_FRAMES + TRANSPORT_JUMP_FRAMES + (int64_t)jump,
            1.0f);
  add_event(plan, jump, EVENT_GET_LABEL, 0, 0.0f);
  add_event(plan, jump + 1, EVENT_SET_OFFSETS, 0, 0.0f);
  /* the transport stops in the silence before the last note, then rolls */
  size_t stop = seconds_to_frames(2.65) + 3;
  size_t roll = seconds_to_frames(2.75) + 5;
  add_event(plan, stop, EVENT_POSITION, TRANSPORT_STOP_FRAMES, 0.0f);
  add_event(plan, roll, EVENT_POSITION, TRANSPORT_STOP_FRAMES, 1.0f);
  /* the same label again changes nothing */
  add_event(plan, seconds_to_frames(3.0) + 9, EVENT_SET_LABEL, 0, 0.0f);
  /* the tolerance port changes during the A4, which completes later */
  plan->tolerance_change_frame = seconds_to_frames(2.0);
  plan->rows_wanted = TAKE_NOTES;
}

static const float custom_offsets_cents[12] = {0, -2, 4, 0, -14, 2, -10,
                                               2, 0, -16, 4, -12};

/* A patch:Set at `offset` in the block, value and all. */
static bool forge_set(host_instance *host, int64_t offset, const host_uris *uris,
                      const take_plan *plan, event_kind kind,
                      LV2_Atom_Forge_Frame *object) {
  LV2_Atom_Forge *forge = &host->forge;
  switch (kind) {
  case EVENT_SET_FOLDER:
    return host_patch_set_begin(host, offset, object, uris->log_folder) &&
           lv2_atom_forge_path(forge, plan->folder,
                               (uint32_t)strlen(plan->folder));
  case EVENT_SET_LABEL:
    return host_patch_set_begin(host, offset, object, uris->take_label) &&
           lv2_atom_forge_string(forge, plan->label,
                                 (uint32_t)strlen(plan->label));
  default:
    return host_patch_set_begin(host, offset, object, uris->custom_offsets) &&
           lv2_atom_forge_vector(forge, sizeof(float), uris->atom_Float, 12,
                                 custom_offsets_cents);
  }
}

static bool forge_event(host_instance *host, int64_t offset, const host_uris *uris,
                        const take_plan *plan, const take_event *event) {
  LV2_Atom_Forge *forge = &host->forge;
  LV2_Atom_Forge_Frame object;
  bool fits;
  if (event->kind == EVENT_POSITION) {
    fits = lv2_atom_forge_frame_time(forge, offset) &&
           lv2_atom_forge_object(forge, &object, 0, uris->time.Position) &&
           lv2_atom_forge_key(forge, uris->time.frame) &&
           lv2_atom_forge_long(forge, event->transport_frame) &&
           lv2_atom_forge_key(forge, uris->time.speed) &&
           lv2_atom_forge_float(forge, event->speed);
  } else if (event->kind == EVENT_GET_LABEL) {
    fits = lv2_atom_forge_frame_time(forge, offset) &&
           lv2_atom_forge_object(forge, &object, 0, uris->patch_Get) &&
           lv2_atom_forge_key(forge, uris->patch_property) &&
           lv2_atom_forge_urid(forge, uris->take_label);
  } else {
    fits = forge_set(host, offset, uris, plan, event->kind, &object);
  }
  if (fits) {
    lv2_atom_forge_pop(forge, &object);
  }
  return fits;
}

/* ================================================== driving the plugin */

typedef struct {
  size_t runs;
  size_t runs_not_bit_exact;   /* out differed from in */
  size_t runs_mxcsr_changed;   /* the host's float mode was not restored */
  size_t runs_notify_overflow; /* notify claimed more than its capacity */
  size_t runs_control_overflow;
  size_t notify_events;
  double *run_seconds; /* per run, when not NULL */
  /* The host's worker, for hosts that have one. */
  unsigned long work_calls;
  unsigned long work_on_run_thread;
  unsigned long work_refused;
  /* Rows in the log after the last run(), before deactivate: written by
     the host's worker or the plugin's thread, not by deactivate. */
  size_t rows_before_deactivate;
} take_result;

/* The suite's shared state, made by the group setup. */
static struct {
  host_plugin plugin;
  char folder[PATH_MAX];
  host_uris uris;
  float *take;
  size_t take_frames;
  float *denormal_take;
  size_t denormal_frames;
  char *logs[HOST_WORKER_KINDS][5]; /* each host's and block size's notes.csv */
} suite;

static size_t block_sizes[5] = {1, 7, 64, 1000, 4096};

/* connect_port is of the audio threading class too, so it is counted. */
static void connect_every_port(host_instance *host) {
  inside_run = true;
  host_instance_connect(host);
  inside_run = false;
}

static bool write_control(host_instance *host, const take_plan *plan,
                          size_t begin, size_t frames) {
  bool fits = host_control_begin(host);
  for (size_t i = 0; i < plan->count && fits; ++i) {
    const take_event *event = &plan->events[i];
    if (event->frame >= begin && event->frame < begin + frames) {
      int64_t offset = (int64_t)(event->frame - begin);
      fits = forge_event(host, offset, &suite.uris, plan, event);
    }
  }
  if (fits) {
    host_control_end(host);
  }
  return fits;
}

/* host_block_in() offers notify as lilv and jalv do: an empty Chunk
   whose size is the space there is. */
static size_t count_notify_events(const host_instance *host, bool *overflow) {
  const LV2_Atom_Sequence *sequence = &host->notify.sequence;
  *overflow = sequence->atom.size > host->notify_space_bytes;
  if (*overflow || sequence->atom.type == suite.uris.atom_Chunk) {
    return 0;
  }
  size_t events = 0;
  LV2_ATOM_SEQUENCE_FOREACH(sequence, event) { ++events; }
  return events;
}

static unsigned int read_mxcsr(void) {
#if defined(__SSE__)
  return _mm_getcsr();
#else
  return 0;
#endif
}

static double monotonic_s(void) {
  struct timespec now;
  clock_gettime(CLOCK_MONOTONIC, &now);
  return (double)now.tv_sec + 1e-9 * (double)now.tv_nsec;
}

/* One run() of `frames` frames from take[begin]; everything the host
   prepares happens before the flag is set, every check after. */
static void run_block(host_instance *host, const take_plan *plan,
                      const float *take, size_t begin, size_t frames,
                      take_result *result) {
  host_block_in(host, take + begin, (uint32_t)frames);
  memset(host->out, 0x5a, sizeof host->out); /* not a copy of anything */
  if (plan->tolerance_change_frame != NO_FRAME &&
      begin >= plan->tolerance_change_frame) {
    host->controls[PORT_TOLERANCE] = 15.0f;
  }
  result->runs_control_overflow += !write_control(host, plan, begin, frames);
  unsigned int mxcsr_before = read_mxcsr();
  double start_s = result->run_seconds ? monotonic_s() : 0.0;
  inside_run = true;
  host_block_run(host, (uint32_t)frames); /* the worker's end of run too */
  inside_run = false;
  if (result->run_seconds) {
    result->run_seconds[result->runs] = monotonic_s() - start_s;
  }
  result->runs_mxcsr_changed += read_mxcsr() != mxcsr_before;
  result->runs_not_bit_exact +=
      memcmp(host->out, host->in, frames * sizeof(float)) != 0;
  bool overflow = false;
  result->notify_events += count_notify_events(host, &overflow);
  result->runs_notify_overflow += overflow;
  result->runs++;
}

static char *read_log(const char *label);
static size_t count_rows(const char *text);

/* The rows of the take's log once the writer has caught up: at once for
   a synchronous worker, after the worker thread is idle, or within 2 s
   for the plugin's own thread (it writes every 20 ms). */
static size_t rows_written_so_far(host_instance *host, const char *label,
                                  size_t wanted) {
  host_worker_wait_idle(&host->worker);
  const struct timespec pause = {0, 5000000L};
  size_t rows = 0;
  for (int tries = 0; tries < 400; ++tries) {
    char *log = read_log(label);
    rows = log ? count_rows(log) : 0;
    free(log);
    if (rows >= wanted || host->worker.kind != HOST_NO_WORKER) {
      break;
    }
    nanosleep(&pause, NULL);
  }
  return rows;
}

static void copy_worker_counts(const host_worker *worker,
                               take_result *result) {
  result->work_calls = atomic_load(&worker->work_calls);
  result->work_on_run_thread = atomic_load(&worker->work_on_run_thread);
  result->work_refused = atomic_load(&worker->work_refused);
}

/* A whole take through one instance in a host of `kind`: instantiate,
   connect, activate, run block by block, deactivate (a worker thread
   still running), stop the worker, cleanup. Counts only inside run()
   and connect_port(). Returns false when the plugin would not
   instantiate. */
static bool drive_take_in(host_worker_kind kind, const float *take, size_t n,
                          size_t block_frames, const take_plan *plan,
                          take_result *result) {
  host_features features;
  build_features(&features, (uint32_t)block_frames);
  host_instance *host = host_instance_instantiate(&suite.plugin, &features,
                                                  SAMPLE_RATE_HZ, true, kind);
  if (!host) {
    return false;
  }
  host->worker.around_synchronous_work = pause_counting;
  counting_reset();
  connect_every_port(host);
  host->descriptor->activate(host->instance);
  for (size_t begin = 0; begin < n; begin += block_frames) {
    size_t frames = n - begin < block_frames ? n - begin : block_frames;
    run_block(host, plan, take, begin, frames, result);
  }
  if (plan->label) {
    result->rows_before_deactivate =
        rows_written_so_far(host, plan->label, plan->rows_wanted);
  }
  host->descriptor->deactivate(host->instance);
  host_worker_stop(&host->worker);
  copy_worker_counts(&host->worker, result);
  host_instance_close(host);
  return true;
}

static bool drive_take(const float *take, size_t n, size_t block_frames,
                       const take_plan *plan, take_result *result) {
  return drive_take_in(HOST_NO_WORKER, take, n, block_frames, plan, result);
}

/* ================================================== the session log */

/* docs/log-format.md, "notes.csv": the columns in this order (more may be
   added at the end later). */
static const char documented_header[] =
    "index,start_s,end_s,timeline_s,note,midi,target_hz,f0_hz,cents,"
    "spread_cents,drift_cents_per_s,vibrato_hz,vibrato_cents,confidence,"
    "inharmonicity_b,partials,hnr_db,odd_even_db,centroid_hz,attack_ms,"
    "decay_ms,sustain_db,release_ms,peak_dbfs,verdict";

/* The whole file, NUL-terminated; NULL when it cannot be read. */
static char *read_text(const char *path) {
  FILE *file = fopen(path, "rb");
  if (!file) {
    return NULL;
  }
  size_t capacity = 1 << 16;
  size_t length = 0;
  char *text = malloc(capacity);
  while (text) {
    length += fread(text + length, 1, capacity - 1 - length, file);
    if (length < capacity - 1) {
      break;
    }
    char *larger = realloc(text, capacity * 2);
    if (!larger) {
      free(text);
    }
    text = larger;
    capacity *= 2;
  }
  fclose(file);
  if (text) {
    text[length] = '\0';
  }
  return text;
}

static bool header_is_documented(const char *text) {
  size_t length = strlen(documented_header);
  return strncmp(text, documented_header, length) == 0 &&
         (text[length] == '\n' || text[length] == ',');
}

static size_t count_rows(const char *text) {
  size_t lines = 0;
  for (const char *c = text; *c; ++c) {
    lines += *c == '\n';
  }
  return lines > 0 ? lines - 1 : 0; /* the header is not a row */
}

/* <folder>/<label>.notes.csv, as docs/log-format.md names it. */
static char *read_log(const char *label) {
  char path[PATH_MAX + 128];
  snprintf(path, sizeof path, "%s/%s.notes.csv", suite.folder, label);
  return read_text(path);
}

/* ================================================== checks */

static void assert_no_forbidden_calls(const char *where) {
  unsigned long total = counting_total();
  if (total != 0) {
    counting_report(where);
  }
  assert_int_equal(total, 0);
}

static void assert_take_clean(const take_result *result, size_t expected_runs,
                              const char *where) {
  assert_no_forbidden_calls(where);
  assert_int_equal(result->runs, expected_runs);
  /* docs/ports.md: out is a bit-exact copy of in */
  assert_int_equal(result->runs_not_bit_exact, 0);
  /* plugin/lv2/denormals.h: the host's MXCSR is restored before run()
     returns (common practice, no source beyond the plugin's contract) */
  assert_int_equal(result->runs_mxcsr_changed, 0);
  assert_int_equal(result->runs_notify_overflow, 0);
  assert_int_equal(result->runs_control_overflow, 0);
}

/* ================================================== tests: the interposer */

/* Calls from this file are counted, and only while the flag is set. */
static void test_interposer_counts_direct_calls(void **state) {
  (void)state;
  static pthread_mutex_t mutex = PTHREAD_MUTEX_INITIALIZER;
  void *volatile kept = NULL; /* volatile: the pair cannot be elided */
  counting_reset();
  inside_run = true;
  kept = malloc(64);
  pthread_mutex_lock(&mutex);
  inside_run = false;
  pthread_mutex_unlock(&mutex);
  free(kept);
  assert_non_null(kept);
  assert_int_equal(forbidden_counts[CALL_malloc], 1);
  assert_int_equal(forbidden_counts[CALL_pthread_mutex_lock], 1);
  assert_int_equal(forbidden_counts[CALL_free], 0); /* after the flag */
  assert_int_equal(counting_total(), 2);
}

/* instantiate() and cleanup() with `features`, every call counted as if
   inside run(). Returns whether the plugin instantiated. */
static bool instantiate_counted(const host_features *features) {
  const LV2_Descriptor *descriptor = suite.plugin.descriptor;
  counting_reset();
  inside_run = true;
  LV2_Handle instance = descriptor->instantiate(
      descriptor, SAMPLE_RATE_HZ, suite.plugin.bundle, features->list);
  if (instance) {
    descriptor->cleanup(instance);
  }
  inside_run = false;
  return instance != NULL;
}

/* Calls from shared objects reach the interposer too: the executable's
   malloc is the one the dynamic linker hands out, and the plugin's own
   instantiate (which allocates and starts the log writer thread, as
   docs/log-format.md says it has one) and cleanup are seen. */
static void test_interposer_sees_the_plugins_calls(void **state) {
  (void)state;
  assert_ptr_equal(dlsym(RTLD_DEFAULT, "malloc"), (void *)malloc);
  assert_ptr_equal(dlsym(RTLD_DEFAULT, "pthread_mutex_lock"),
                   (void *)pthread_mutex_lock);
  host_features features;
  build_features(&features, 64);
  assert_true(instantiate_counted(&features)); /* it instantiated */
  unsigned long allocations = forbidden_counts[CALL_malloc] +
                              forbidden_counts[CALL_calloc] +
                              forbidden_counts[CALL_posix_memalign] +
                              forbidden_counts[CALL_aligned_alloc];
  if (allocations == 0 || forbidden_counts[CALL_pthread_create] != 1) {
    counting_report("instantiate + cleanup");
  }
  assert_true(allocations >= 1);
  assert_true(forbidden_counts[CALL_free] >= 1);
  assert_int_equal(forbidden_counts[CALL_pthread_create], 1);
  assert_int_equal(forbidden_counts[CALL_pthread_join], 1);
}

/* docs/ports.md: with the host's work:schedule the plugin starts no
   thread of its own (the same count as above, which sees one without). */
static void test_no_own_thread_with_a_host_worker(void **state) {
  (void)state;
  host_features features;
  build_features(&features, 64);
  host_worker worker;
  host_worker_init(&worker, HOST_WORKER_THREAD, suite.plugin.worker_interface);
  host_features_add(&features, LV2_WORKER__schedule, &worker.schedule);
  assert_true(instantiate_counted(&features)); /* it instantiated */
  assert_true(forbidden_counts[CALL_malloc] + forbidden_counts[CALL_calloc] >=
              1);
  assert_int_equal(forbidden_counts[CALL_pthread_create], 0);
  assert_int_equal(forbidden_counts[CALL_pthread_join], 0);
}

/* ================================================== tests: the plugin */

/* One test for each host and block size. */
typedef struct {
  host_worker_kind kind;
  size_t block_frames;
  size_t slot; /* in block_sizes */
} host_case;

#define HOST_CASES(kind)                                                      \
  {kind, 1, 0}, {kind, 7, 1}, {kind, 64, 2}, {kind, 1000, 3}, {kind, 4096, 4}
static host_case host_cases[HOST_WORKER_KINDS * 5] = {
    HOST_CASES(HOST_NO_WORKER), HOST_CASES(HOST_WORKER_THREAD),
    HOST_CASES(HOST_SYNCHRONOUS_WORKER)};

/* worker.h: work() is called "from any non-real-time thread" by a live
   host, or "immediately", in run()'s thread, by a freewheeling one;
   docs/ports.md: with work:schedule the log is written from the host's
   worker, without it from the plugin's own thread, so a host without a
   worker never sees work() called. */
static void assert_worker_use(host_worker_kind kind, const take_result *result) {
  assert_int_equal(result->work_refused, 0);
  switch (kind) {
  case HOST_NO_WORKER:
    assert_int_equal(result->work_calls, 0);
    break;
  case HOST_WORKER_THREAD:
    assert_true(result->work_calls >= 1);
    assert_int_equal(result->work_on_run_thread, 0);
    break;
  default:
    assert_true(result->work_calls >= 1);
    assert_int_equal(result->work_on_run_thread, result->work_calls);
    break;
  }
}

static void test_plugin_run_is_real_time_safe(void **state) {
  const host_case *c = *state;
  char label[64];
  snprintf(label, sizeof label, "realtime-%s-block-%zu",
           host_kind_names[c->kind], c->block_frames);
  take_plan plan;
  plan_take(&plan, suite.folder, label, c->block_frames);
  take_result result;
  memset(&result, 0, sizeof result);
  /* A deadlock with a synchronous worker would hang here: the alarm ends
     the process instead, which counts as a failure (tests/run.sh). */
  alarm(120);
  bool driven = drive_take_in(c->kind, suite.take, suite.take_frames,
                              c->block_frames, &plan, &result);
  alarm(0);
  assert_true(driven);
  char where[96];
  snprintf(where, sizeof where, "run() at %zu-frame blocks, host: %s",
           c->block_frames, host_kind_names[c->kind]);
  size_t runs = (suite.take_frames + c->block_frames - 1) / c->block_frames;
  assert_take_clean(&result, runs, where);
  assert_worker_use(c->kind, &result);
  /* docs/ports.md: a patch:Get of ours is answered on notify, and every
     note completed during run() goes out there as a note object (the take
     ends in silence, so all of them complete before deactivate) */
  assert_int_equal(result.notify_events, plan.gets + TAKE_NOTES);
  /* docs/log-format.md: rows are written as the notes complete, by the
     worker or the plugin's thread, so all are there before deactivate */
  assert_int_equal(result.rows_before_deactivate, TAKE_NOTES);
  /* docs/log-format.md: deactivate flushes and closes the log; the file
     is named after the label, has the documented header and one row a
     note of the take (the truth is take_notes[]) */
  char *log = read_log(label);
  assert_non_null(log);
  if (!header_is_documented(log)) {
    fprintf(stderr, "header of %s.notes.csv:\n%.*s\n", label,
            (int)strcspn(log, "\n"), log);
  }
  assert_true(header_is_documented(log));
  assert_int_equal(count_rows(log), TAKE_NOTES);
  free(suite.logs[c->kind][c->slot]);
  suite.logs[c->kind][c->slot] = log;
}

/* core/include/plumb.h: results do not depend on how the audio is split, and the
   plugin feeds the analysis up to each event's frame (docs/ports.md), so
   with the same events at the same take frames every block size must
   give the same log, byte for byte; and who writes it (the host's
   worker, at once or on its thread, or the plugin's own thread) must not
   change a byte either. Reads the logs the tests above left. */
static void test_plugin_logs_equal_for_every_block_size(void **state) {
  (void)state;
  const char *reference = suite.logs[HOST_NO_WORKER][4];
  for (int kind = 0; kind < HOST_WORKER_KINDS; ++kind) {
    for (size_t i = 0; i < 5; ++i) {
      const char *log = suite.logs[kind][i];
      if (!log) {
        fprintf(stderr, "no log from the %zu-frame test, host %s (it failed)\n",
                block_sizes[i], host_kind_names[kind]);
      }
      assert_non_null(log);
      if (strcmp(log, reference) != 0) {
        fprintf(stderr, "log at %zu-frame blocks, host %s:\n%s\nreference:\n%s\n",
                block_sizes[i], host_kind_names[kind], log, reference);
      }
      assert_string_equal(log, reference);
    }
  }
}

/* ================================================== tests: the core */

/* Every [RT] call of core/include/plumb.h, on the take, in blocks of one size:
   reset, process, live readings, counts, popping notes, a timeline mark,
   a change of settings mid-take, finish. */
static void test_core_calls_are_real_time_safe(void **state) {
  size_t block_frames = *(const size_t *)*state;
  plumb_settings settings;
  plumb_settings_default(&settings, SAMPLE_RATE_HZ);
  plumb_settings stricter = settings;
  stricter.tolerance_cents = 15.0;
  plumb *core = plumb_new(&settings, NULL);
  assert_non_null(core);
  size_t mark_frame = seconds_to_frames(1.25);
  size_t configure_frame = seconds_to_frames(2.0);
  plumb_live live;
  plumb_counts counts;
  plumb_note note;
  size_t popped = 0;
  counting_reset();
  inside_run = true;
  plumb_reset(core);
  for (size_t begin = 0; begin < suite.take_frames; begin += block_frames) {
    size_t frames = suite.take_frames - begin < block_frames
                        ? suite.take_frames - begin
                        : block_frames;
    if (begin <= mark_frame && mark_frame < begin + frames) {
      plumb_mark_timeline(core, 700.0, 1.0);
    }
    if (begin <= configure_frame && configure_frame < begin + frames) {
      plumb_configure(core, &stricter);
    }
    plumb_process(core, suite.take + begin, frames);
    plumb_get_live(core, &live);
    plumb_get_counts(core, &counts);
    while (plumb_pop_note(core, &note)) {
      ++popped;
    }
  }
  plumb_finish(core);
  while (plumb_pop_note(core, &note)) {
    ++popped;
  }
  plumb_get_counts(core, &counts);
  inside_run = false;
  plumb_free(core);
  char where[64];
  snprintf(where, sizeof where, "the core at %zu-frame blocks", block_frames);
  assert_no_forbidden_calls(where);
  /* The calls did their work: every note of the take came out of the
     queue (the truth is take_notes[]), none was dropped, and the NaN and
     Inf samples were counted (core/include/plumb.h, plumb_process). */
  assert_int_equal(popped, counts.notes);
  assert_int_equal(counts.notes, TAKE_NOTES);
  assert_int_equal(counts.dropped, 0);
  assert_int_equal(counts.bad_samples, BAD_SAMPLES);
}

/* ================================================== tests: denormals */

static double mean_seconds(const double *run_seconds, size_t first,
                           size_t last) {
  double sum = 0.0;
  for (size_t i = first; i < last; ++i) {
    sum += run_seconds[i];
  }
  return last > first ? sum / (double)(last - first) : NAN;
}

/* Prints the mean time per block on the loud note's sustain and on the
   denormal tail (whole blocks well inside each). */
static void print_denormal_ratio(const char *what, const double *run_seconds,
                                 size_t runs) {
  const size_t block = DENORMAL_BLOCK_FRAMES;
  double note_s = mean_seconds(
      run_seconds, seconds_to_frames(DENORMAL_NOTE_START_S + 0.1) / block,
      seconds_to_frames(DENORMAL_NOTE_END_S - 0.1) / block);
  double tail_s = mean_seconds(
      run_seconds, seconds_to_frames(DENORMAL_TAIL_START_S + 0.1) / block,
      runs - 1);
  printf("%s per %zu-frame block: %.1f us on the loud note, %.1f us on "
         "denormal silence, ratio %.2f (measured, not asserted)\n",
         what, block, 1e6 * note_s, 1e6 * tail_s, tail_s / note_s);
}

/* plumb_process() alone in this thread's float mode, which has no
   FTZ/DAZ: what the plugin's guard (plugin/lv2/denormals.h) saves. */
static bool time_core_blocks(const float *samples, size_t n,
                             double *run_seconds) {
  const size_t block = DENORMAL_BLOCK_FRAMES;
  plumb_settings settings;
  plumb_settings_default(&settings, SAMPLE_RATE_HZ);
  plumb *core = plumb_new(&settings, NULL);
  plumb_note note;
  for (size_t run = 0, begin = 0; core && begin < n; ++run, begin += block) {
    size_t frames = n - begin < block ? n - begin : block;
    double start_s = monotonic_s();
    plumb_process(core, samples + begin, frames);
    run_seconds[run] = monotonic_s() - start_s;
    while (plumb_pop_note(core, &note)) {
    }
  }
  plumb_free(core);
  return core != NULL;
}

/* Bit-exact output through denormal silence, no forbidden call, and the
   cost of run() there against the loud note, printed: the LV2 bound on
   run() must not depend on the input signal, but a time is not asserted
   in a test (`make bench` gives figures). */
static void test_denormal_silence_passes_and_is_timed(void **state) {
  (void)state;
  const size_t block = DENORMAL_BLOCK_FRAMES;
  size_t runs = (suite.denormal_frames + block - 1) / block;
  take_plan plan;
  memset(&plan, 0, sizeof plan);
  plan.folder = suite.folder;
  plan.label = "realtime-denormal-tail";
  plan.tolerance_change_frame = NO_FRAME;
  plan_first_run(&plan, block);
  take_result result;
  memset(&result, 0, sizeof result);
  result.run_seconds = calloc(runs, sizeof(double));
  double *core_seconds = calloc(runs, sizeof(double));
  assert_non_null(result.run_seconds);
  assert_non_null(core_seconds);
  bool ran = drive_take(suite.denormal_take, suite.denormal_frames, block,
                        &plan, &result);
  bool timed = time_core_blocks(suite.denormal_take, suite.denormal_frames,
                                core_seconds);
  if (ran && timed) {
    print_denormal_ratio("plugin run()", result.run_seconds, runs);
    print_denormal_ratio("core alone, no FTZ/DAZ", core_seconds, runs);
  }
  free(result.run_seconds);
  free(core_seconds);
  assert_true(ran);
  assert_true(timed);
  assert_take_clean(&result, runs, "run() over denormal silence");
}

/* ================================================== setup */

/* build/tests/test_realtime -> build/plumb.lv2/ */
static int load_plugin(void) {
  if (host_plugin_load(&suite.plugin) != 0) {
    return -1;
  }
  /* ttl/plumb.ttl declares lv2:extensionData work:interface */
  const LV2_Worker_Interface *worker = suite.plugin.worker_interface;
  if (!worker || !worker->work || !worker->work_response) {
    fprintf(stderr, "%splumb.so has no work:interface\n", suite.plugin.bundle);
    return -1;
  }
  return 0;
}

static int setup_suite(void **state) {
  (void)state;
  LV2_URID_Map map = {NULL, map_uri};
  map_host_uris(&suite.uris, &map);
  if (host_folder_make(suite.folder, sizeof suite.folder, "plumb-realtime") != 0) {
    return -1;
  }
  suite.take = render_take(&suite.take_frames);
  suite.denormal_take = render_denormal_take(&suite.denormal_frames);
  if (!suite.take || !suite.denormal_take) {
    fprintf(stderr, "cannot render the test takes\n");
    return -1;
  }
  return load_plugin();
}

static int teardown_suite(void **state) {
  (void)state;
  for (int kind = 0; kind < HOST_WORKER_KINDS; ++kind) {
    for (size_t i = 0; i < 5; ++i) {
      free(suite.logs[kind][i]);
    }
  }
  free(suite.take);
  free(suite.denormal_take);
  if (suite.folder[0]) {
    host_folder_remove(suite.folder);
  }
  host_plugin_unload(&suite.plugin);
  return 0;
}

/* One test for each block size, named after it. */
#define PER_BLOCK(test, what, i)                                              \
  { what " at " #i "-frame blocks", test, NULL, NULL, &block_sizes[BLOCK_##i] }
enum { BLOCK_1, BLOCK_7, BLOCK_64, BLOCK_1000, BLOCK_4096 };

/* The plugin in one host at every block size. */
#define ONE_HOST_CASE(kind, what, i, size)                                    \
  {"plugin run() at " #size "-frame blocks, host with " what,                 \
   test_plugin_run_is_real_time_safe, NULL, NULL,                             \
   &host_cases[(kind) * 5 + (i)]}
#define PER_HOST(kind, what)                                                  \
  ONE_HOST_CASE(kind, what, 0, 1), ONE_HOST_CASE(kind, what, 1, 7),           \
      ONE_HOST_CASE(kind, what, 2, 64), ONE_HOST_CASE(kind, what, 3, 1000),   \
      ONE_HOST_CASE(kind, what, 4, 4096)

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_interposer_counts_direct_calls),
      cmocka_unit_test(test_interposer_sees_the_plugins_calls),
      cmocka_unit_test(test_no_own_thread_with_a_host_worker),
      PER_HOST(HOST_NO_WORKER, "no worker"),
      PER_HOST(HOST_WORKER_THREAD, "a worker thread"),
      PER_HOST(HOST_SYNCHRONOUS_WORKER, "a synchronous worker"),
      cmocka_unit_test(test_plugin_logs_equal_for_every_block_size),
      PER_BLOCK(test_core_calls_are_real_time_safe, "core [RT] calls", 1),
      PER_BLOCK(test_core_calls_are_real_time_safe, "core [RT] calls", 7),
      PER_BLOCK(test_core_calls_are_real_time_safe, "core [RT] calls", 64),
      PER_BLOCK(test_core_calls_are_real_time_safe, "core [RT] calls", 1000),
      PER_BLOCK(test_core_calls_are_real_time_safe, "core [RT] calls", 4096),
      cmocka_unit_test(test_denormal_silence_passes_and_is_timed),
  };
  return cmocka_run_group_tests(tests, setup_suite, teardown_suite);
}
