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
  - the analysis core's [RT] calls directly (core/plumb.h);
  - a loud note followed by denormal-range silence: bit-exact output, and
    the run() time per block printed (the specification bounds run() by
    A + B * sample_count "not depending on input signals"; timing is
    measured here, never asserted).
*/
#define _GNU_SOURCE /* RTLD_NEXT, RTLD_DEFAULT, O_TMPFILE, usleep */

#include "urid_table.h"
#include "signal.h"

#include "ports.h"
#include "plumb.h"

#include <lv2/atom/atom.h>
#include <lv2/atom/forge.h>
#include <lv2/atom/util.h>
#include <lv2/buf-size/buf-size.h>
#include <lv2/core/lv2.h>
#include <lv2/log/log.h>
#include <lv2/options/options.h>
#include <lv2/parameters/parameters.h>
#include <lv2/patch/patch.h>
#include <lv2/time/time.h>
#include <lv2/urid/urid.h>
#include <lv2/worker/worker.h>

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
#define MAX_BLOCK_FRAMES 4096
#define ATOM_BUFFER_BYTES 16384 /* control in and notify out */

/* The parameters, as docs/ports.md names them. */
#define LOG_FOLDER_URI "urn:plumb:logFolder"
#define TAKE_LABEL_URI "urn:plumb:takeLabel"
#define CUSTOM_OFFSETS_URI "urn:plumb:customOffsets"
#define PLUGIN_URI "urn:plumb:intonation"

/* The URIDs come from the shared table (tests/urid_table.c), every call
   counted: the plugin maps only in instantiate(). */
static LV2_URID map_uri(LV2_URID_Map_Handle handle, const char *uri) {
  note_call(CALL_urid_map);
  return urid_table_map(handle, uri);
}

static const char *unmap_uri(LV2_URID_Unmap_Handle handle, LV2_URID urid) {
  note_call(CALL_urid_unmap);
  return urid_table_unmap(handle, urid);
}

/* log:log to stderr. From run() it would count as vfprintf. */
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

typedef struct {
  LV2_URID atom_Chunk, atom_Float, atom_Int, atom_Long, atom_Path, atom_String,
      atom_URID, param_sampleRate, bufsz_minBlockLength, bufsz_maxBlockLength,
      bufsz_nominalBlockLength, patch_Set, patch_Get, patch_property,
      patch_value, time_Position, time_frame, time_speed, log_folder,
      take_label, custom_offsets;
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
  uris->param_sampleRate = get(NULL, LV2_PARAMETERS__sampleRate);
  uris->bufsz_minBlockLength = get(NULL, LV2_BUF_SIZE__minBlockLength);
  uris->bufsz_maxBlockLength = get(NULL, LV2_BUF_SIZE__maxBlockLength);
  uris->bufsz_nominalBlockLength = get(NULL, LV2_BUF_SIZE__nominalBlockLength);
  uris->patch_Set = get(NULL, LV2_PATCH__Set);
  uris->patch_Get = get(NULL, LV2_PATCH__Get);
  uris->patch_property = get(NULL, LV2_PATCH__property);
  uris->patch_value = get(NULL, LV2_PATCH__value);
  uris->time_Position = get(NULL, LV2_TIME__Position);
  uris->time_frame = get(NULL, LV2_TIME__frame);
  uris->time_speed = get(NULL, LV2_TIME__speed);
  uris->log_folder = get(NULL, LOG_FOLDER_URI);
  uris->take_label = get(NULL, TAKE_LABEL_URI);
  uris->custom_offsets = get(NULL, CUSTOM_OFFSETS_URI);
}

/* Everything one instance is given: features and the options behind
   them (sample rate and block lengths, as a workstation gives). */
typedef struct {
  LV2_URID_Map map;
  LV2_URID_Unmap unmap;
  LV2_Log_Log log;
  float sample_rate_hz;
  int32_t min_block_frames, max_block_frames, nominal_block_frames;
  LV2_Options_Option options[5];
  LV2_Feature features[6];
  const LV2_Feature *list[7];
} host_features;

static void set_option(LV2_Options_Option *option, LV2_URID key, LV2_URID type,
                       uint32_t size, const void *value) {
  *option =
      (LV2_Options_Option){LV2_OPTIONS_INSTANCE, 0, key, size, type, value};
}

static void build_features(host_features *f, const host_uris *uris,
                           uint32_t block_frames) {
  memset(f, 0, sizeof *f);
  f->map = (LV2_URID_Map){NULL, map_uri};
  f->unmap = (LV2_URID_Unmap){NULL, unmap_uri};
  f->log = (LV2_Log_Log){NULL, log_printf, log_vprintf};
  f->sample_rate_hz = (float)SAMPLE_RATE_HZ;
  f->min_block_frames = 1;
  f->max_block_frames = MAX_BLOCK_FRAMES;
  f->nominal_block_frames = (int32_t)block_frames;
  set_option(&f->options[0], uris->param_sampleRate, uris->atom_Float,
             sizeof(float), &f->sample_rate_hz);
  set_option(&f->options[1], uris->bufsz_minBlockLength, uris->atom_Int,
             sizeof(int32_t), &f->min_block_frames);
  set_option(&f->options[2], uris->bufsz_maxBlockLength, uris->atom_Int,
             sizeof(int32_t), &f->max_block_frames);
  set_option(&f->options[3], uris->bufsz_nominalBlockLength, uris->atom_Int,
             sizeof(int32_t), &f->nominal_block_frames);
  /* options[4] stays zero: the terminator */
  f->features[0] = (LV2_Feature){LV2_URID__map, &f->map};
  f->features[1] = (LV2_Feature){LV2_URID__unmap, &f->unmap};
  f->features[2] = (LV2_Feature){LV2_LOG__log, &f->log};
  f->features[3] = (LV2_Feature){LV2_OPTIONS__options, f->options};
  f->features[4] = (LV2_Feature){LV2_BUF_SIZE__boundedBlockLength, NULL};
  for (int i = 0; i < 5; ++i) {
    f->list[i] = &f->features[i];
  }
  f->list[5] = NULL;
}

/* work:schedule, for a host that has a worker. */
static void add_schedule_feature(host_features *f,
                                 LV2_Worker_Schedule *schedule) {
  f->features[5] = (LV2_Feature){LV2_WORKER__schedule, schedule};
  f->list[5] = &f->features[5];
  f->list[6] = NULL;
}

/* ================================================== the host's worker */

/* The hosts the plugin is driven in (see the top comment). */
typedef enum {
  HOST_NO_WORKER,
  HOST_WORKER_THREAD,
  HOST_SYNCHRONOUS_WORKER,
  HOST_KINDS
} host_kind;

static const char *const host_kind_names[HOST_KINDS] = {
    "no-worker", "worker-thread", "synchronous-worker"};

#define WORK_SLOTS 64
#define WORK_MESSAGE_MAX_BYTES 64

typedef struct {
  uint32_t size;
  uint8_t data[WORK_MESSAGE_MAX_BYTES];
} work_message;

/* One producer and one consumer, lock-free: the producer may be run(),
   which must not see the host take a lock either. */
typedef struct {
  work_message slots[WORK_SLOTS];
  atomic_size_t written;
  atomic_size_t taken;
} message_ring;

static bool ring_push(message_ring *ring, uint32_t size, const void *data) {
  size_t written = atomic_load_explicit(&ring->written, memory_order_relaxed);
  size_t taken = atomic_load_explicit(&ring->taken, memory_order_acquire);
  if (written - taken == WORK_SLOTS || size > WORK_MESSAGE_MAX_BYTES) {
    return false;
  }
  work_message *slot = &ring->slots[written % WORK_SLOTS];
  slot->size = size;
  memcpy(slot->data, data, size);
  atomic_store_explicit(&ring->written, written + 1, memory_order_release);
  return true;
}

static bool ring_pop(message_ring *ring, work_message *message) {
  size_t taken = atomic_load_explicit(&ring->taken, memory_order_relaxed);
  size_t written = atomic_load_explicit(&ring->written, memory_order_acquire);
  if (taken == written) {
    return false;
  }
  *message = ring->slots[taken % WORK_SLOTS];
  atomic_store_explicit(&ring->taken, taken + 1, memory_order_release);
  return true;
}

typedef struct {
  host_kind kind;
  const LV2_Worker_Interface *interface;
  LV2_Handle instance; /* set once instantiated */
  LV2_Worker_Schedule schedule;
  message_ring requests;  /* run() to the worker thread */
  message_ring responses; /* work() to the end of the next run() */
  pthread_t thread;
  bool thread_started;
  atomic_bool stop;
  pthread_t run_thread;             /* the test's thread, which calls run() */
  atomic_ulong schedules;           /* schedule_work() calls taken */
  atomic_ulong work_calls;          /* work() calls made */
  atomic_ulong work_on_run_thread;  /* of those, made on run()'s thread */
  atomic_ulong work_refused;        /* work() did not take the message */
} host_worker;

static LV2_Worker_Status respond(LV2_Worker_Respond_Handle handle,
                                 uint32_t size, const void *data) {
  host_worker *worker = handle;
  return ring_push(&worker->responses, size, data) ? LV2_WORKER_SUCCESS
                                                   : LV2_WORKER_ERR_NO_SPACE;
}

static void call_work(host_worker *worker, uint32_t size, const void *data) {
  LV2_Worker_Status status =
      worker->interface->work(worker->instance, respond, worker, size, data);
  atomic_fetch_add(&worker->work_calls, 1ul);
  if (pthread_equal(pthread_self(), worker->run_thread)) {
    atomic_fetch_add(&worker->work_on_run_thread, 1ul);
  }
  if (status != LV2_WORKER_SUCCESS) {
    atomic_fetch_add(&worker->work_refused, 1ul);
  }
}

/* The live host: queue the message for the worker thread. */
static LV2_Worker_Status schedule_on_thread(LV2_Worker_Schedule_Handle handle,
                                            uint32_t size, const void *data) {
  host_worker *worker = handle;
  if (!ring_push(&worker->requests, size, data)) {
    return LV2_WORKER_ERR_NO_SPACE;
  }
  atomic_fetch_add(&worker->schedules, 1ul); /* lock-free: no call counted */
  return LV2_WORKER_SUCCESS;
}

/* The freewheeling host: work() at once, inside run(). What work() does
   is the host's non-real-time business, so it is not counted. */
static LV2_Worker_Status schedule_at_once(LV2_Worker_Schedule_Handle handle,
                                          uint32_t size, const void *data) {
  bool counting = inside_run;
  inside_run = false;
  atomic_fetch_add(&((host_worker *)handle)->schedules, 1ul);
  call_work(handle, size, data);
  inside_run = counting;
  return LV2_WORKER_SUCCESS;
}

/* Polls, as a host's worker may; a message scheduled before `stop` is
   still handed to work() (worker.h: the host "MUST guarantee that it
   will be eventually passed to work()"). */
static void *worker_main(void *argument) {
  host_worker *worker = argument;
  const struct timespec pause = {0, 200000L};
  work_message message;
  for (;;) {
    bool stopping = atomic_load(&worker->stop);
    bool any = false;
    while (ring_pop(&worker->requests, &message)) {
      call_work(worker, message.size, message.data);
      any = true;
    }
    if (stopping && !any) {
      return NULL;
    }
    nanosleep(&pause, NULL);
  }
}

static void worker_init(host_worker *worker, host_kind kind,
                        const LV2_Worker_Interface *interface) {
  memset(worker, 0, sizeof *worker);
  worker->kind = kind;
  worker->interface = interface;
  worker->run_thread = pthread_self();
  worker->schedule.handle = worker;
  worker->schedule.schedule_work =
      kind == HOST_SYNCHRONOUS_WORKER ? schedule_at_once : schedule_on_thread;
  atomic_init(&worker->stop, false);
}

static bool worker_start(host_worker *worker, LV2_Handle instance) {
  worker->instance = instance;
  if (worker->kind != HOST_WORKER_THREAD) {
    return true;
  }
  worker->thread_started =
      pthread_create(&worker->thread, NULL, worker_main, worker) == 0;
  return worker->thread_started;
}

/* Hands every message still queued to work(), then joins. */
static void worker_stop(host_worker *worker) {
  if (worker->thread_started) {
    atomic_store(&worker->stop, true);
    pthread_join(worker->thread, NULL);
    worker->thread_started = false;
  }
}

/* Until every message scheduled so far has been through work(), for at
   most 2 s (common practice, no source). */
static void worker_wait_idle(host_worker *worker) {
  const struct timespec pause = {0, 1000000L};
  for (int tries = 0; tries < 2000 && atomic_load(&worker->work_calls) <
                                          atomic_load(&worker->schedules);
       ++tries) {
    nanosleep(&pause, NULL);
  }
}

/* After run(), in its context: the responses, then end_run (worker.h). */
static void worker_end_of_run(host_worker *worker) {
  work_message message;
  while (ring_pop(&worker->responses, &message)) {
    worker->interface->work_response(worker->instance, message.size,
                                     message.data);
  }
  if (worker->interface->end_run) {
    worker->interface->end_run(worker->instance);
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

static sig_voice test_voice(void) {
  sig_voice voice;
  memset(&voice, 0, sizeof voice);
  voice.timbre = (sig_timbre){8, SIG_AMPS_SAWTOOTH, NULL, 0.0, true, 11};
  voice.envelope =
      (sig_envelope){SIG_RAMP_LINEAR, 0.02, 0.10, -4.0, SIG_RAMP_EXP, 0.04};
  voice.reference_hz = 440.0;
  voice.amplitude = 0.2;
  return voice;
}

static float *render_take(size_t *n) {
  *n = seconds_to_frames(TAKE_S);
  float *samples = calloc(*n, sizeof *samples);
  sig_voice voice = test_voice();
  if (!samples ||
      sig_render_notes(&voice, take_notes, TAKE_NOTES, SAMPLE_RATE_HZ, samples,
                       *n) != 0) {
    free(samples);
    return NULL;
  }
  for (size_t i = 0; i < BAD_SAMPLES; ++i) {
    samples[seconds_to_frames(bad_sample_times_s[i])] =
        i + 1 < BAD_SAMPLES ? NAN : INFINITY;
  }
  return samples;
}

static float *render_denormal_take(size_t *n) {
  *n = seconds_to_frames(DENORMAL_TAKE_S);
  float *samples = calloc(*n, sizeof *samples);
  sig_voice voice = test_voice();
  const sig_note loud = {DENORMAL_NOTE_START_S, DENORMAL_NOTE_END_S, 64, 0.0,
                         0.0, 0.0, 0.0, LOUD_DB};
  if (!samples ||
      sig_render_notes(&voice, &loud, 1, SAMPLE_RATE_HZ, samples, *n) != 0) {
    free(samples);
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

static bool forge_set_value(LV2_Atom_Forge *forge, const host_uris *uris,
                            const take_plan *plan, event_kind kind) {
  switch (kind) {
  case EVENT_SET_FOLDER:
    return lv2_atom_forge_key(forge, uris->patch_property) &&
           lv2_atom_forge_urid(forge, uris->log_folder) &&
           lv2_atom_forge_key(forge, uris->patch_value) &&
           lv2_atom_forge_path(forge, plan->folder,
                               (uint32_t)strlen(plan->folder));
  case EVENT_SET_LABEL:
    return lv2_atom_forge_key(forge, uris->patch_property) &&
           lv2_atom_forge_urid(forge, uris->take_label) &&
           lv2_atom_forge_key(forge, uris->patch_value) &&
           lv2_atom_forge_string(forge, plan->label,
                                 (uint32_t)strlen(plan->label));
  default:
    return lv2_atom_forge_key(forge, uris->patch_property) &&
           lv2_atom_forge_urid(forge, uris->custom_offsets) &&
           lv2_atom_forge_key(forge, uris->patch_value) &&
           lv2_atom_forge_vector(forge, sizeof(float), uris->atom_Float, 12,
                                 custom_offsets_cents);
  }
}

static bool forge_event(LV2_Atom_Forge *forge, const host_uris *uris,
                        const take_plan *plan, const take_event *event) {
  LV2_Atom_Forge_Frame object;
  bool fits;
  if (event->kind == EVENT_POSITION) {
    fits = lv2_atom_forge_object(forge, &object, 0, uris->time_Position) &&
           lv2_atom_forge_key(forge, uris->time_frame) &&
           lv2_atom_forge_long(forge, event->transport_frame) &&
           lv2_atom_forge_key(forge, uris->time_speed) &&
           lv2_atom_forge_float(forge, event->speed);
  } else if (event->kind == EVENT_GET_LABEL) {
    fits = lv2_atom_forge_object(forge, &object, 0, uris->patch_Get) &&
           lv2_atom_forge_key(forge, uris->patch_property) &&
           lv2_atom_forge_urid(forge, uris->take_label);
  } else {
    fits = lv2_atom_forge_object(forge, &object, 0, uris->patch_Set) &&
           forge_set_value(forge, uris, plan, event->kind);
  }
  if (fits) {
    lv2_atom_forge_pop(forge, &object);
  }
  return fits;
}

/* ================================================== driving the plugin */

typedef union {
  LV2_Atom_Sequence sequence;
  uint64_t aligned; /* "Atoms MUST be 64-bit aligned" (atom.meta.ttl) */
  uint8_t bytes[ATOM_BUFFER_BYTES];
} atom_buffer;

typedef struct {
  const LV2_Descriptor *descriptor;
  LV2_Handle instance;
  float in[MAX_BLOCK_FRAMES];
  float out[MAX_BLOCK_FRAMES];
  float controls[PORT_COUNT];
  atom_buffer control;
  atom_buffer notify;
  LV2_Atom_Forge forge; /* writes the control sequence, outside run() */
  host_worker worker;   /* used when the host kind has one */
} plugin_host;

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
  const LV2_Descriptor *descriptor;
  const LV2_Worker_Interface *worker_interface;
  void *library;
  char bundle[PATH_MAX];
  char folder[PATH_MAX];
  host_uris uris;
  float *take;
  size_t take_frames;
  float *denormal_take;
  size_t denormal_frames;
  char *logs[HOST_KINDS][5]; /* each host's and block size's notes.csv */
} suite;

static size_t block_sizes[5] = {1, 7, 64, 1000, 4096};

/* The defaults of ttl/plumb.ttl, so that run() sees real values. */
static void set_control_defaults(float controls[PORT_COUNT]) {
  controls[PORT_REFERENCE] = 440.0f;
  controls[PORT_TOLERANCE] = 10.0f;
  controls[PORT_TEMPERAMENT] = 0.0f;
  controls[PORT_TONIC] = 0.0f;
  controls[PORT_LOWEST] = 28.0f;
  controls[PORT_HIGHEST] = 96.0f;
  controls[PORT_MIN_NOTE] = 80.0f;
  controls[PORT_LOGGING] = 1.0f;
}

/* connect_port is of the audio threading class too, so it is counted. */
static void connect_every_port(plugin_host *host) {
  LV2_Handle instance = host->instance;
  inside_run = true;
  host->descriptor->connect_port(instance, PORT_IN, host->in);
  host->descriptor->connect_port(instance, PORT_OUT, host->out);
  host->descriptor->connect_port(instance, PORT_CONTROL, &host->control);
  host->descriptor->connect_port(instance, PORT_NOTIFY, &host->notify);
  for (uint32_t port = PORT_NOTIFY + 1; port < PORT_COUNT; ++port) {
    host->descriptor->connect_port(instance, port, &host->controls[port]);
  }
  inside_run = false;
}

static bool write_control(plugin_host *host, const take_plan *plan,
                          size_t begin, size_t frames) {
  LV2_Atom_Forge *forge = &host->forge;
  LV2_Atom_Forge_Frame sequence;
  lv2_atom_forge_set_buffer(forge, host->control.bytes, sizeof host->control);
  bool fits = lv2_atom_forge_sequence_head(forge, &sequence, 0) != 0;
  for (size_t i = 0; i < plan->count && fits; ++i) {
    const take_event *event = &plan->events[i];
    if (event->frame >= begin && event->frame < begin + frames) {
      int64_t offset = (int64_t)(event->frame - begin);
      fits = lv2_atom_forge_frame_time(forge, offset) &&
             forge_event(forge, &suite.uris, plan, event);
    }
  }
  if (fits) {
    lv2_atom_forge_pop(forge, &sequence);
  }
  return fits;
}

/* As lilv and jalv do: an empty Chunk whose size is the space there is. */
static void reset_notify(plugin_host *host) {
  host->notify.sequence.atom.type = suite.uris.atom_Chunk;
  host->notify.sequence.atom.size = ATOM_BUFFER_BYTES - sizeof(LV2_Atom);
}

static size_t count_notify_events(const plugin_host *host, bool *overflow) {
  const LV2_Atom_Sequence *sequence = &host->notify.sequence;
  *overflow = sequence->atom.size > ATOM_BUFFER_BYTES - sizeof(LV2_Atom);
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
static void run_block(plugin_host *host, const take_plan *plan,
                      const float *take, size_t begin, size_t frames,
                      take_result *result) {
  memcpy(host->in, take + begin, frames * sizeof(float));
  memset(host->out, 0x5a, sizeof host->out); /* not a copy of anything */
  if (plan->tolerance_change_frame != NO_FRAME &&
      begin >= plan->tolerance_change_frame) {
    host->controls[PORT_TOLERANCE] = 15.0f;
  }
  result->runs_control_overflow += !write_control(host, plan, begin, frames);
  reset_notify(host);
  unsigned int mxcsr_before = read_mxcsr();
  double start_s = result->run_seconds ? monotonic_s() : 0.0;
  inside_run = true;
  host->descriptor->run(host->instance, (uint32_t)frames);
  if (host->worker.kind != HOST_NO_WORKER) {
    worker_end_of_run(&host->worker); /* audio class too: counted */
  }
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
static size_t rows_written_so_far(plugin_host *host, const char *label,
                                  size_t wanted) {
  worker_wait_idle(&host->worker);
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
static bool drive_take_in(host_kind kind, const float *take, size_t n,
                          size_t block_frames, const take_plan *plan,
                          take_result *result) {
  plugin_host *host = calloc(1, sizeof *host);
  host_features features;
  if (!host) {
    return false;
  }
  build_features(&features, &suite.uris, (uint32_t)block_frames);
  worker_init(&host->worker, kind, suite.worker_interface);
  if (kind != HOST_NO_WORKER) {
    add_schedule_feature(&features, &host->worker.schedule);
  }
  host->descriptor = suite.descriptor;
  host->instance = suite.descriptor->instantiate(
      suite.descriptor, SAMPLE_RATE_HZ, suite.bundle, features.list);
  if (!host->instance || !worker_start(&host->worker, host->instance)) {
    if (host->instance) {
      suite.descriptor->cleanup(host->instance);
    }
    free(host);
    return false;
  }
  lv2_atom_forge_init(&host->forge, &features.map);
  set_control_defaults(host->controls);
  counting_reset();
  connect_every_port(host);
  suite.descriptor->activate(host->instance);
  for (size_t begin = 0; begin < n; begin += block_frames) {
    size_t frames = n - begin < block_frames ? n - begin : block_frames;
    run_block(host, plan, take, begin, frames, result);
  }
  if (plan->label) {
    result->rows_before_deactivate =
        rows_written_so_far(host, plan->label, plan->rows_wanted);
  }
  suite.descriptor->deactivate(host->instance);
  worker_stop(&host->worker);
  copy_worker_counts(&host->worker, result);
  suite.descriptor->cleanup(host->instance);
  free(host);
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
  build_features(&features, &suite.uris, 64);
  counting_reset();
  inside_run = true;
  LV2_Handle instance = suite.descriptor->instantiate(
      suite.descriptor, SAMPLE_RATE_HZ, suite.bundle, features.list);
  if (instance) {
    suite.descriptor->cleanup(instance);
  }
  inside_run = false;
  assert_non_null(instance);
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
  build_features(&features, &suite.uris, 64);
  host_worker worker;
  worker_init(&worker, HOST_WORKER_THREAD, suite.worker_interface);
  add_schedule_feature(&features, &worker.schedule);
  counting_reset();
  inside_run = true;
  LV2_Handle instance = suite.descriptor->instantiate(
      suite.descriptor, SAMPLE_RATE_HZ, suite.bundle, features.list);
  if (instance) {
    suite.descriptor->cleanup(instance);
  }
  inside_run = false;
  assert_non_null(instance);
  assert_true(forbidden_counts[CALL_malloc] + forbidden_counts[CALL_calloc] >=
              1);
  assert_int_equal(forbidden_counts[CALL_pthread_create], 0);
  assert_int_equal(forbidden_counts[CALL_pthread_join], 0);
}

/* ================================================== tests: the plugin */

/* One test for each host and block size. */
typedef struct {
  host_kind kind;
  size_t block_frames;
  size_t slot; /* in block_sizes */
} host_case;

#define HOST_CASES(kind)                                                      \
  {kind, 1, 0}, {kind, 7, 1}, {kind, 64, 2}, {kind, 1000, 3}, {kind, 4096, 4}
static host_case host_cases[HOST_KINDS * 5] = {
    HOST_CASES(HOST_NO_WORKER), HOST_CASES(HOST_WORKER_THREAD),
    HOST_CASES(HOST_SYNCHRONOUS_WORKER)};

/* worker.h: work() is called "from any non-real-time thread" by a live
   host, or "immediately", in run()'s thread, by a freewheeling one;
   docs/ports.md: with work:schedule the log is written from the host's
   worker, without it from the plugin's own thread, so a host without a
   worker never sees work() called. */
static void assert_worker_use(host_kind kind, const take_result *result) {
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

/* core/plumb.h: results do not depend on how the audio is split, and the
   plugin feeds the analysis up to each event's frame (docs/ports.md), so
   with the same events at the same take frames every block size must
   give the same log, byte for byte; and who writes it (the host's
   worker, at once or on its thread, or the plugin's own thread) must not
   change a byte either. Reads the logs the tests above left. */
static void test_plugin_logs_equal_for_every_block_size(void **state) {
  (void)state;
  const char *reference = suite.logs[HOST_NO_WORKER][4];
  for (int kind = 0; kind < HOST_KINDS; ++kind) {
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

/* Every [RT] call of core/plumb.h, on the take, in blocks of one size:
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
     Inf samples were counted (core/plumb.h, plumb_process). */
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
static int find_bundle(char *bundle, size_t size) {
  char executable[PATH_MAX];
  ssize_t length =
      readlink("/proc/self/exe", executable, sizeof executable - 1);
  if (length <= 0) {
    return -1;
  }
  executable[length] = '\0';
  char *slash = strrchr(executable, '/');
  if (!slash) {
    return -1;
  }
  *slash = '\0';
  int written = snprintf(bundle, size, "%s/../plumb.lv2/", executable);
  return written > 0 && (size_t)written < size ? 0 : -1;
}

static const LV2_Descriptor *find_descriptor(void *library) {
  LV2_Descriptor_Function get =
      (LV2_Descriptor_Function)dlsym(library, "lv2_descriptor");
  for (uint32_t index = 0; get && get(index); ++index) {
    if (strcmp(get(index)->URI, PLUGIN_URI) == 0) {
      return get(index);
    }
  }
  return NULL;
}

static int load_plugin(void) {
  char binary[PATH_MAX + 16];
  if (find_bundle(suite.bundle, sizeof suite.bundle) != 0) {
    fprintf(stderr, "cannot find the bundle beside /proc/self/exe\n");
    return -1;
  }
  snprintf(binary, sizeof binary, "%splumb.so", suite.bundle);
  suite.library = dlopen(binary, RTLD_NOW | RTLD_LOCAL);
  if (!suite.library) {
    fprintf(stderr, "cannot load %s: %s (run make all)\n", binary, dlerror());
    return -1;
  }
  suite.descriptor = find_descriptor(suite.library);
  if (!suite.descriptor) {
    fprintf(stderr, "%s has no descriptor for %s\n", binary, PLUGIN_URI);
    return -1;
  }
  /* ttl/plumb.ttl declares lv2:extensionData work:interface */
  suite.worker_interface =
      suite.descriptor->extension_data(LV2_WORKER__interface);
  if (!suite.worker_interface || !suite.worker_interface->work ||
      !suite.worker_interface->work_response) {
    fprintf(stderr, "%s has no work:interface\n", binary);
    return -1;
  }
  return 0;
}

static int setup_suite(void **state) {
  (void)state;
  LV2_URID_Map map = {NULL, map_uri};
  map_host_uris(&suite.uris, &map);
  const char *tmp = getenv("TMPDIR");
  snprintf(suite.folder, sizeof suite.folder, "%s/plumb-realtime.XXXXXX",
           tmp && tmp[0] ? tmp : "/tmp");
  if (!mkdtemp(suite.folder)) {
    perror("mkdtemp");
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

/* The log folder holds only files the plugin wrote. */
static void remove_folder(const char *folder) {
  DIR *directory = opendir(folder);
  if (!directory) {
    return;
  }
  char path[PATH_MAX + 256];
  for (struct dirent *entry; (entry = readdir(directory)) != NULL;) {
    if (strcmp(entry->d_name, ".") != 0 && strcmp(entry->d_name, "..") != 0) {
      snprintf(path, sizeof path, "%s/%s", folder, entry->d_name);
      unlink(path);
    }
  }
  closedir(directory);
  rmdir(folder);
}

static int teardown_suite(void **state) {
  (void)state;
  for (int kind = 0; kind < HOST_KINDS; ++kind) {
    for (size_t i = 0; i < 5; ++i) {
      free(suite.logs[kind][i]);
    }
  }
  free(suite.take);
  free(suite.denormal_take);
  if (suite.folder[0]) {
    remove_folder(suite.folder);
  }
  if (suite.library) {
    dlclose(suite.library);
  }
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
