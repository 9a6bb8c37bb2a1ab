/*
  bench_silence BUNDLE_DIR [RUNS]: the cost of one 64-frame block at
  48 kHz on a loud note, on its long decay, on the tail where the samples
  are subnormal floats, and on pure silence.

  Arithmetic on denormal (subnormal) floats is slower on x86 (by how much
  depends on the processor), so a decay that sinks into them can cost
  more than the note itself; flushing them to zero (FTZ, DAZ in MXCSR)
  avoids that. This measures whether it happens, three ways through the
  same signal:
    plugin     run() of BUNDLE_DIR/plumb.so (dlopen, as a host does), which
               sets FTZ and DAZ itself for each run() (plugin/lv2/denormals.h);
    core       plumb_process() alone with FTZ and DAZ off (the default
               floating-point mode): what the core does on its own;
    core+ftz   plumb_process() with FTZ and DAZ on for the whole run.
  Every block is timed with CLOCK_MONOTONIC around the call; each block's
  figure is its fastest time over RUNS runs (default 3; the same work in
  every run, so this removes most preemption by other processes). Per part
  it prints the median, mean, 99th percentile and worst block, and each
  figure over the loud part's. For the two core ways it also prints, per
  part, the MXCSR flags the part raised: "denormal" (an operand was
  subnormal) and "underflow" (a result was), which show where denormals
  really appear.

  The signal, made in memory (it is never written or played):
    loud     2 s of a harmonic tone, A3 (220 Hz), 8 partials of amplitude
             1/k, scaled so that the peak is at most 0.5 (-6 dBFS);
    decay    the tone decaying at 90 dB/s until its envelope reaches
             FLT_MIN, the smallest normal float (about -759 dBFS);
    tail     the decay going on: the samples are subnormal, down to the
             last one that does not round to 0 (about 1.6 s);
    silence  10 s of exact zeros.
  Lines starting "values:" are for tools/bench.sh.
*/
#include "bench_stats.h"
#include <dlfcn.h>
#include <float.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#if defined(__SSE__)
#include <pmmintrin.h>
#include <xmmintrin.h>
#endif

#include <lv2/atom/atom.h>
#include <lv2/core/lv2.h>
#include <lv2/urid/urid.h>

#include "ports.h"
#include "plumb.h"
#include "urid_table.h"

#define SAMPLE_RATE_HZ 48000.0
#define BLOCK_FRAMES 64
#define LOUD_S 2.0
#define SILENCE_S 10.0
#define TONE_HZ 220.0
#define PARTIALS 8
#define PEAK 0.5
#define DECAY_DB_PER_S 90.0
#define MAX_RUNS 30
#define ATOM_BUFFER_BYTES 16384
#define TWO_PI 6.283185307179586

enum { PART_LOUD, PART_DECAY, PART_TAIL, PART_SILENCE, PARTS };
static const char *const part_names[PARTS] = {"loud", "decay", "tail", "silence"};
enum { WAY_PLUGIN, WAY_CORE, WAY_CORE_FTZ, WAYS };
static const char *const way_names[WAYS] = {"plugin", "core", "core+ftz"};
static const char *const way_keys[WAYS] = {"plugin", "core", "core_ftz"}; /* values: */

typedef struct {
  float *samples;
  size_t blocks;
  size_t first_block[PARTS + 1]; /* part p is blocks [first[p], first[p+1]) */
  size_t subnormal_samples;
} take;

static double now_s(void) {
  struct timespec t;
  clock_gettime(CLOCK_MONOTONIC, &t);
  return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

/* ------------------------------------------------------------ the signal */

static double tone(double t_s) {
  double sum = 0.0, norm = 0.0;
  for (int k = 1; k <= PARTIALS; ++k) {
    sum += sin(TWO_PI * k * TONE_HZ * t_s) / k;
    norm += 1.0 / k; /* the partials' peaks never add to more than this */
  }
  return sum / norm;
}

static size_t block_of(double t_s) {
  return (size_t)ceil(t_s * SAMPLE_RATE_HZ / BLOCK_FRAMES);
}

static int make_take(take *out) {
  double decay_s = 20.0 * log10(PEAK / FLT_MIN) / DECAY_DB_PER_S;
  /* Below FLT_TRUE_MIN / 2 every sample rounds to 0: 2^-23 under FLT_MIN. */
  double tail_s = 20.0 * log10(FLT_MIN / ((double)FLT_TRUE_MIN / 2.0)) / DECAY_DB_PER_S;
  double ends_s[PARTS] = {LOUD_S, LOUD_S + decay_s, LOUD_S + decay_s + tail_s,
                          LOUD_S + decay_s + tail_s + SILENCE_S};
  out->blocks = block_of(ends_s[PART_SILENCE]);
  out->samples = calloc(out->blocks * BLOCK_FRAMES, sizeof(float));
  if (!out->samples) return -1;
  out->first_block[0] = 0;
  for (int p = 0; p < PARTS; ++p) out->first_block[p + 1] = block_of(ends_s[p]);
  out->first_block[PARTS] = out->blocks;
  out->subnormal_samples = 0;
  size_t sound_frames = out->first_block[PART_SILENCE] * BLOCK_FRAMES;
  for (size_t i = 0; i < sound_frames; ++i) {
    double t_s = (double)i / SAMPLE_RATE_HZ;
    double after_s = t_s > LOUD_S ? t_s - LOUD_S : 0.0;
    double envelope = PEAK * pow(10.0, -DECAY_DB_PER_S * after_s / 20.0);
    float sample = (float)(envelope * tone(t_s));
    out->samples[i] = sample;
    if (sample != 0.0f && fabsf(sample) < FLT_MIN) out->subnormal_samples++;
  }
  return 0;
}

/* ------------------------------------------------------------ MXCSR */

#if defined(__SSE__)
#define FTZ_DAZ (_MM_FLUSH_ZERO_ON | _MM_DENORMALS_ZERO_ON)
static void set_flush(int on) {
  unsigned int mode = _mm_getcsr() & ~(unsigned int)FTZ_DAZ;
  _mm_setcsr(on ? mode | FTZ_DAZ : mode);
}
/* The sticky exception flags raised since the last call, then cleared. */
static unsigned int take_flags(void) {
  unsigned int flags = _MM_GET_EXCEPTION_STATE();
  _MM_SET_EXCEPTION_STATE(0);
  return flags;
}
#define FLAG_DENORMAL _MM_EXCEPT_DENORM
#define FLAG_UNDERFLOW _MM_EXCEPT_UNDERFLOW
#else
static void set_flush(int on) { (void)on; }
static unsigned int take_flags(void) { return 0; }
#define FLAG_DENORMAL 0u
#define FLAG_UNDERFLOW 0u
#endif

/* ------------------------------------------------------------ the plugin */

typedef struct {
  const LV2_Descriptor *descriptor;
  const char *bundle_dir;
  LV2_URID_Map map;
  LV2_Feature map_feature;
  const LV2_Feature *features[2];
  LV2_URID atom_Sequence, atom_Chunk;
  float controls[PORT_COUNT];
  float audio_out[BLOCK_FRAMES];
  _Alignas(8) uint8_t control_in[ATOM_BUFFER_BYTES];
  _Alignas(8) uint8_t notify_out[ATOM_BUFFER_BYTES];
} plugin_host;

static int load_plugin(const char *bundle_dir, plugin_host *host) {
  char path[4096];
  snprintf(path, sizeof path, "%s/plumb.so", bundle_dir);
  void *library = dlopen(path, RTLD_NOW | RTLD_LOCAL);
  LV2_Descriptor_Function get =
      library ? (LV2_Descriptor_Function)(uintptr_t)dlsym(library, "lv2_descriptor") : NULL;
  host->descriptor = get ? get(0) : NULL;
  if (!host->descriptor || strcmp(host->descriptor->URI, "urn:plumb:intonation") != 0) {
    fprintf(stderr, "bench_silence: no urn:plumb:intonation in %s (%s)\n", path,
            library ? "lv2_descriptor" : dlerror());
    return -1;
  }
  host->bundle_dir = bundle_dir;
  host->map = (LV2_URID_Map){NULL, urid_table_map};
  host->map_feature = (LV2_Feature){LV2_URID__map, &host->map};
  host->features[0] = &host->map_feature;
  host->features[1] = NULL;
  host->atom_Sequence = urid_table_map(NULL, LV2_ATOM__Sequence);
  host->atom_Chunk = urid_table_map(NULL, LV2_ATOM__Chunk);
  return 0;
}

/* The defaults of docs/ports.md, with logging off: no file is written,
   and the notes are still measured and counted. Outputs start at 0. */
static void set_controls(plugin_host *host) {
  memset(host->controls, 0, sizeof host->controls);
  host->controls[PORT_REFERENCE] = 440.0f;
  host->controls[PORT_TOLERANCE] = 10.0f;
  host->controls[PORT_LOWEST] = 28.0f;
  host->controls[PORT_HIGHEST] = 96.0f;
  host->controls[PORT_MIN_NOTE] = 80.0f;
  host->controls[PORT_LOGGING] = 0.0f;
}

static LV2_Handle start_instance(plugin_host *host, float *audio_in) {
  LV2_Handle instance = host->descriptor->instantiate(
      host->descriptor, SAMPLE_RATE_HZ, host->bundle_dir, host->features);
  if (!instance) return NULL;
  set_controls(host);
  LV2_Atom_Sequence *control = (LV2_Atom_Sequence *)host->control_in;
  control->atom = (LV2_Atom){sizeof(LV2_Atom_Sequence_Body), host->atom_Sequence};
  control->body = (LV2_Atom_Sequence_Body){0, 0};
  host->descriptor->connect_port(instance, PORT_IN, audio_in);
  host->descriptor->connect_port(instance, PORT_OUT, host->audio_out);
  host->descriptor->connect_port(instance, PORT_CONTROL, control);
  host->descriptor->connect_port(instance, PORT_NOTIFY, host->notify_out);
  for (uint32_t port = PORT_NOTIFY + 1; port < PORT_COUNT; ++port)
    host->descriptor->connect_port(instance, port, &host->controls[port]);
  host->descriptor->activate(instance);
  return instance;
}

/* One run through the plugin; call_us[b] gets each block's time. Returns
   the notes the plugin counted, or -1. */
static int run_plugin(plugin_host *host, const take *audio, float *call_us) {
  LV2_Handle instance = start_instance(host, audio->samples);
  if (!instance) return -1;
  LV2_Atom *notify = (LV2_Atom *)host->notify_out;
  for (size_t b = 0; b < audio->blocks; ++b) {
    host->descriptor->connect_port(instance, PORT_IN, audio->samples + b * BLOCK_FRAMES);
    /* As lilv and jalv do: an empty Chunk the size of the space there is. */
    *notify = (LV2_Atom){ATOM_BUFFER_BYTES - sizeof(LV2_Atom), host->atom_Chunk};
    double start_s = now_s();
    host->descriptor->run(instance, BLOCK_FRAMES);
    call_us[b] = (float)(1e6 * (now_s() - start_s));
  }
  int notes = (int)host->controls[PORT_NOTES];
  host->descriptor->deactivate(instance);
  host->descriptor->cleanup(instance);
  return notes;
}

/* ------------------------------------------------------------ the core */

/* One run through the core; flags[p] gathers the MXCSR flags of part p,
   *done_s is where the block that completed the last note starts.
   Returns the notes popped, or -1. */
static int run_core(const take *audio, int flush, float *call_us, unsigned int *flags,
                    double *done_s) {
  plumb_settings settings;
  plumb_settings_default(&settings, SAMPLE_RATE_HZ);
  plumb *core = plumb_new(&settings, NULL);
  if (!core) return -1;
  plumb_note note;
  int notes = 0, part = 0;
  set_flush(flush);
  take_flags();
  for (size_t b = 0; b < audio->blocks; ++b) {
    while (part + 1 < PARTS && b >= audio->first_block[part + 1])
      flags[part++] |= take_flags();
    double start_s = now_s();
    plumb_process(core, audio->samples + b * BLOCK_FRAMES, BLOCK_FRAMES);
    call_us[b] = (float)(1e6 * (now_s() - start_s));
    while (plumb_pop_note(core, &note)) {
      notes++;
      *done_s = (double)(b * BLOCK_FRAMES) / SAMPLE_RATE_HZ;
    }
  }
  flags[part] |= take_flags();
  set_flush(0);
  plumb_free(core);
  return notes;
}

/* ------------------------------------------------------------ statistics */

typedef struct {
  double median_us, mean_us, p99_us, worst_us, worst_at_s;
} part_stats;


static part_stats summarise(const float *floor_us, size_t first, size_t end, float *scratch) {
  size_t n = end - first;
  part_stats stats = {NAN, NAN, NAN, NAN, NAN};
  if (n == 0) return stats;
  double sum_us = 0.0;
  size_t worst = first;
  for (size_t i = 0; i < n; ++i) {
    sum_us += scratch[i] = floor_us[first + i];
    if (floor_us[first + i] > floor_us[worst]) worst = first + i;
  }
  stats.worst_at_s = (double)(worst * BLOCK_FRAMES) / SAMPLE_RATE_HZ;
  qsort(scratch, n, sizeof *scratch, bench_compare_float);
  stats.median_us = bench_percentile(scratch, n, 50.0);
  stats.mean_us = sum_us / (double)n;
  stats.p99_us = bench_percentile(scratch, n, 99.0);
  stats.worst_us = scratch[n - 1];
  return stats;
}

static void print_way(int way, const part_stats stats[PARTS], const unsigned int *flags) {
  for (int p = 0; p < PARTS; ++p) {
    const part_stats *s = &stats[p], *loud = &stats[PART_LOUD];
    printf("silence: %-8s %-7s median %5.2f  mean %5.2f  p99 %6.2f  worst %7.2f us"
           " (at %5.2f s); / loud: median %.2f mean %.2f worst %.2f",
           way_names[way], part_names[p], s->median_us, s->mean_us, s->p99_us, s->worst_us,
           s->worst_at_s, s->median_us / loud->median_us, s->mean_us / loud->mean_us,
           s->worst_us / loud->worst_us);
    if (flags)
      printf("; flags: denormal %s, underflow %s", flags[p] & FLAG_DENORMAL ? "yes" : "no",
             flags[p] & FLAG_UNDERFLOW ? "yes" : "no");
    printf("\n");
  }
  printf("values:");
  for (int p = 0; p < PARTS; ++p) {
    const char *key = way_keys[way], *part = part_names[p];
    printf(" %s_%s_median_us=%.3f %s_%s_mean_us=%.3f %s_%s_worst_us=%.2f", key, part,
           stats[p].median_us, key, part, stats[p].mean_us, key, part, stats[p].worst_us);
  }
  printf("\n");
}

/* ------------------------------------------------------------ main */

static void lower(float *floor_us, const float *call_us, size_t n) {
  for (size_t i = 0; i < n; ++i)
    if (call_us[i] < floor_us[i]) floor_us[i] = call_us[i];
}

int main(int argc, char **argv) {
  if (argc < 2 || argc > 3) {
    fprintf(stderr, "usage: bench_silence BUNDLE_DIR [RUNS]\n");
    return 2;
  }
  int runs = argc > 2 ? atoi(argv[2]) : 3;
  if (runs < 1 || runs > MAX_RUNS) runs = 3;
  static plugin_host host;
  take audio;
  if (load_plugin(argv[1], &host) != 0 || make_take(&audio) != 0) return 1;
  size_t n = audio.blocks;
  float *call_us = malloc(sizeof(float) * n), *scratch = malloc(sizeof(float) * n);
  float *floor_us[WAYS];
  for (int w = 0; w < WAYS; ++w) floor_us[w] = malloc(sizeof(float) * n);
  if (!call_us || !scratch || !floor_us[0] || !floor_us[1] || !floor_us[2]) return 1;
  for (int w = 0; w < WAYS; ++w)
    for (size_t i = 0; i < n; ++i) floor_us[w][i] = INFINITY;

  printf("silence: %d-frame blocks at %.0f Hz (a block lasts %.1f us); each block's"
         " fastest of %d runs\n", BLOCK_FRAMES, SAMPLE_RATE_HZ,
         1e6 * BLOCK_FRAMES / SAMPLE_RATE_HZ, runs);
  for (int p = 0; p < PARTS; ++p)
    printf("silence: part %-7s %6.2f to %6.2f s (%zu blocks)\n", part_names[p],
           (double)(audio.first_block[p] * BLOCK_FRAMES) / SAMPLE_RATE_HZ,
           (double)(audio.first_block[p + 1] * BLOCK_FRAMES) / SAMPLE_RATE_HZ,
           audio.first_block[p + 1] - audio.first_block[p]);
  printf("silence: %zu subnormal input samples in the tail\n", audio.subnormal_samples);

  unsigned int flags[WAYS][PARTS] = {{0}};
  int notes[WAYS] = {0};
  double done_s = NAN;
  for (int r = 0; r < runs; ++r) {
    for (int w = 0; w < WAYS; ++w) {
      notes[w] = w == WAY_PLUGIN ? run_plugin(&host, &audio, call_us)
                                 : run_core(&audio, w == WAY_CORE_FTZ, call_us, flags[w],
                                            &done_s);
      if (notes[w] < 0) {
        fprintf(stderr, "bench_silence: %s could not start\n", way_names[w]);
        return 1;
      }
      lower(floor_us[w], call_us, n);
    }
  }
  printf("silence: the core completes the note in the block at %.2f s\n", done_s);
  part_stats stats[WAYS][PARTS];
  for (int w = 0; w < WAYS; ++w) {
    printf("silence: %s found %d note(s) in the take (one tone was played)\n",
           way_names[w], notes[w]);
    for (int p = 0; p < PARTS; ++p)
      stats[w][p] = summarise(floor_us[w], audio.first_block[p], audio.first_block[p + 1],
                              scratch);
    print_way(w, stats[w], w == WAY_PLUGIN ? NULL : flags[w]);
  }
  /* What flushing saves the core: its cost without FTZ/DAZ over with. */
  printf("silence: core / core+ftz:");
  for (int p = 0; p < PARTS; ++p)
    printf(" %s mean %.2f worst %.2f;", part_names[p],
           stats[WAY_CORE][p].mean_us / stats[WAY_CORE_FTZ][p].mean_us,
           stats[WAY_CORE][p].worst_us / stats[WAY_CORE_FTZ][p].worst_us);
  printf("\n");
  for (int w = 0; w < WAYS; ++w) free(floor_us[w]);
  free(call_us);
  free(scratch);
  free(audio.samples);
  return 0;
}
