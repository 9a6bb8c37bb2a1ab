/*
  bench_core: time the analysis core alone, with no plugin host.

  bench_core speed FILE [RUNS] [SECONDS]
      Run plumb_process over the take in blocks of 1024 frames, then
      plumb_finish, popping notes as they come; RUNS times (default 3),
      each with a new instance. Prints every run's wall time and the best
      as a real-time factor (audio seconds / wall seconds). SECONDS limits
      the audio read (for the instruction count under callgrind).
  bench_core latency FILE [RUNS]
      Time every plumb_process() call for 64-frame blocks with
      CLOCK_MONOTONIC; prints the median, 99th, 99.9th percentile and the
      maximum in microseconds against the 1333 us a block lasts at 48 kHz,
      for every run, for the run with the lowest maximum ("best"), and for
      the "floor": each call's fastest time over the runs (the work per
      call is the same in every run, so this removes most preemption by
      other processes; its worst call is the core's own worst case).

  The file is read into memory (first channel) before any timing starts.
  Lines starting "values:" are for tools/bench.sh.
*/
#include "bench_stats.h"
#include <math.h>
#include <sndfile.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "analyser/analyser.h" /* frames_analysed: the exact count of hops */

#define SPEED_BLOCK_FRAMES 1024
#define LATENCY_BLOCK_FRAMES 64
#define MAX_RUNS 10

typedef struct {
  float *samples;
  size_t n;
  double sample_rate_hz;
} audio;

static double now_s(void) {
  struct timespec t;
  clock_gettime(CLOCK_MONOTONIC, &t);
  return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

/* The first channel of `path`, at most max_s seconds (<= 0: all). */
static int read_audio(const char *path, double max_s, audio *out) {
  SF_INFO info;
  memset(&info, 0, sizeof info);
  SNDFILE *file = sf_open(path, SFM_READ, &info);
  if (!file) {
    fprintf(stderr, "bench_core: %s: %s\n", path, sf_strerror(NULL));
    return -1;
  }
  size_t n = (size_t)info.frames;
  if (max_s > 0.0 && (size_t)(max_s * info.samplerate) < n)
    n = (size_t)(max_s * info.samplerate);
  size_t channels = (size_t)info.channels;
  float *block = malloc(sizeof(float) * channels * 4096);
  out->samples = malloc(sizeof(float) * (n ? n : 1));
  out->n = 0;
  out->sample_rate_hz = info.samplerate;
  while (block && out->samples && out->n < n) {
    size_t want = n - out->n < 4096 ? n - out->n : 4096;
    sf_count_t got = sf_readf_float(file, block, (sf_count_t)want);
    if (got <= 0) break;
    for (sf_count_t i = 0; i < got; ++i) out->samples[out->n++] = block[(size_t)i * channels];
  }
  free(block);
  sf_close(file);
  if (!out->samples || out->n != n) {
    fprintf(stderr, "bench_core: %s: could not read %zu frames\n", path, n);
    free(out->samples);
    return -1;
  }
  return 0;
}

static plumb *new_analyser(double sample_rate_hz) {
  plumb_settings settings;
  plumb_settings_default(&settings, sample_rate_hz);
  plumb_status status;
  plumb *analyser = plumb_new(&settings, &status);
  if (!analyser) fprintf(stderr, "bench_core: plumb_new: %s\n", plumb_strerror(status));
  return analyser;
}

static int drain(plumb *analyser) {
  plumb_note note;
  int count = 0;
  while (plumb_pop_note(analyser, &note)) count++;
  return count;
}

typedef struct {
  double wall_s;
  int notes;
  uint64_t hops;
  uint32_t frame_frames, hop_frames;
} speed_run;

/* One whole analysis, plumb_new to the last note after plumb_finish. */
static int run_speed_once(const audio *take, speed_run *run) {
  double start_s = now_s();
  plumb *analyser = new_analyser(take->sample_rate_hz);
  if (!analyser) return -1;
  run->notes = 0;
  for (size_t i = 0; i < take->n; i += SPEED_BLOCK_FRAMES) {
    size_t length = take->n - i < SPEED_BLOCK_FRAMES ? take->n - i : SPEED_BLOCK_FRAMES;
    plumb_process(analyser, take->samples + i, length);
    run->notes += drain(analyser);
  }
  plumb_finish(analyser);
  run->notes += drain(analyser);
  run->wall_s = now_s() - start_s;
  run->hops = analyser->frames_analysed;
  run->frame_frames = plumb_frame_frames(analyser);
  run->hop_frames = plumb_hop_frames(analyser);
  plumb_free(analyser);
  return 0;
}

static int command_speed(const audio *take, int runs) {
  double audio_s = (double)take->n / take->sample_rate_hz;
  speed_run run, best = {0};
  printf("core: %.1f s of audio at %.0f Hz, block %d, %d runs:", audio_s,
         take->sample_rate_hz, SPEED_BLOCK_FRAMES, runs);
  for (int r = 0; r < runs; ++r) {
    if (run_speed_once(take, &run) != 0) return 1;
    printf(" %.3f s", run.wall_s);
    if (r == 0 || run.wall_s < best.wall_s) best = run;
  }
  printf("\ncore: frame %u, hop %u, %llu hops, %d notes\n", best.frame_frames,
         best.hop_frames, (unsigned long long)best.hops, best.notes);
  printf("core: best %.3f s = %.1fx real time (%.2f us a hop)\n", best.wall_s,
         audio_s / best.wall_s, 1e6 * best.wall_s / (double)best.hops);
  printf("values: core_best_s=%.6f audio_s=%.6f hops=%llu frame_frames=%u "
         "sample_rate_hz=%.0f core_notes=%d\n",
         best.wall_s, audio_s, (unsigned long long)best.hops, best.frame_frames,
         take->sample_rate_hz, best.notes);
  return 0;
}


typedef struct {
  double median_us, p99_us, p999_us, max_us, worst_at_s;
  size_t calls, over_budget;
} latency_run;

/* Statistics of call_us[0..calls); sorts call_us. */
static void summarise_calls(float *call_us, size_t calls, double budget_us,
                            double sample_rate_hz, latency_run *run) {
  size_t worst = 0;
  memset(run, 0, sizeof *run);
  for (size_t i = 0; i < calls; ++i) {
    if (call_us[i] > call_us[worst]) worst = i;
    if (call_us[i] > budget_us) run->over_budget++;
  }
  run->calls = calls;
  run->worst_at_s = (double)(worst * LATENCY_BLOCK_FRAMES) / sample_rate_hz;
  qsort(call_us, calls, sizeof *call_us, bench_compare_float);
  run->median_us = bench_percentile(call_us, calls, 50.0);
  run->p99_us = bench_percentile(call_us, calls, 99.0);
  run->p999_us = bench_percentile(call_us, calls, 99.9);
  run->max_us = call_us[calls - 1];
}

/* Time every call into call_us[] and lower min_us[] (the same call's
   fastest time over the runs) where this run was faster. */
static int run_latency_once(const audio *take, float *call_us, float *min_us,
                            latency_run *run) {
  plumb *analyser = new_analyser(take->sample_rate_hz);
  if (!analyser) return -1;
  double budget_us = 1e6 * LATENCY_BLOCK_FRAMES / take->sample_rate_hz;
  size_t calls = 0;
  for (size_t i = 0; i + LATENCY_BLOCK_FRAMES <= take->n; i += LATENCY_BLOCK_FRAMES) {
    double start_s = now_s();
    plumb_process(analyser, take->samples + i, LATENCY_BLOCK_FRAMES);
    call_us[calls] = (float)(1e6 * (now_s() - start_s));
    if (call_us[calls] < min_us[calls]) min_us[calls] = call_us[calls];
    calls++;
    drain(analyser);
  }
  plumb_free(analyser);
  summarise_calls(call_us, calls, budget_us, take->sample_rate_hz, run);
  return 0;
}

static void print_latency(const char *label, const latency_run *run) {
  printf("latency: %-6s median %6.2f  p99 %7.2f  p99.9 %7.2f  max %8.2f us "
         "(worst at %.2f s), %zu of %zu calls over budget\n",
         label, run->median_us, run->p99_us, run->p999_us, run->max_us,
         run->worst_at_s, run->over_budget, run->calls);
}

static int command_latency(const audio *take, int runs) {
  size_t calls = take->n / LATENCY_BLOCK_FRAMES;
  if (calls == 0) return 1;
  float *call_us = malloc(sizeof(float) * calls);
  float *min_us = malloc(sizeof(float) * calls);
  if (!call_us || !min_us) {
    free(call_us);
    free(min_us);
    return 1;
  }
  for (size_t i = 0; i < calls; ++i) min_us[i] = INFINITY;
  double budget_us = 1e6 * LATENCY_BLOCK_FRAMES / take->sample_rate_hz;
  printf("latency: plumb_process() with %d-frame blocks at %.0f Hz: a block lasts "
         "%.1f us\n", LATENCY_BLOCK_FRAMES, take->sample_rate_hz, budget_us);
  latency_run run, best = {0}, floor;
  char label[16];
  int status = 0;
  for (int r = 0; r < runs && status == 0; ++r) {
    status = run_latency_once(take, call_us, min_us, &run);
    snprintf(label, sizeof label, "run %d", r + 1);
    if (status == 0) print_latency(label, &run);
    if (r == 0 || run.max_us < best.max_us) best = run;
  }
  if (status == 0) {
    summarise_calls(min_us, calls, budget_us, take->sample_rate_hz, &floor);
    print_latency("best", &best);
    print_latency("floor", &floor);
    printf("values: max_us=%.2f p999_us=%.2f floor_max_us=%.2f floor_p999_us=%.2f "
           "budget_us=%.2f\n", best.max_us, best.p999_us, floor.max_us,
           floor.p999_us, budget_us);
  }
  free(call_us);
  free(min_us);
  return status;
}

int main(int argc, char **argv) {
  if (argc < 3 || (strcmp(argv[1], "speed") != 0 && strcmp(argv[1], "latency") != 0)) {
    fprintf(stderr, "usage: bench_core speed FILE [RUNS] [SECONDS]\n"
                    "       bench_core latency FILE [RUNS]\n");
    return 2;
  }
  int runs = argc > 3 ? atoi(argv[3]) : 3;
  if (runs < 1 || runs > MAX_RUNS) runs = 3;
  double max_s = argc > 4 && strcmp(argv[1], "speed") == 0 ? atof(argv[4]) : 0.0;
  audio take;
  if (read_audio(argv[2], max_s, &take) != 0) return 1;
  int status = strcmp(argv[1], "speed") == 0 ? command_speed(&take, runs)
                                             : command_latency(&take, runs);
  free(take.samples);
  return status;
}
