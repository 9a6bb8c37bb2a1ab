/*
  bench_memory [INSTANCES]: memory per analyser instance, two ways.

  - Heap: bytes the C allocator holds for the program (glibc mallinfo2:
    in-use arena bytes plus mmapped blocks; fftwf_malloc and FFTW's plans
    allocate through it too), read before and after plumb_new. This is
    everything an instance owns, whether touched yet or not.
  - Resident: VmRSS from /proc/self/status before the instances are made
    and after 10 s of a random take went through each of them; the pages
    an instance has really touched. The core allocates only in plumb_new,
    so this is also its peak; VmHWM is printed beside it.

  The first instance is reported on its own, since it also pays for
  FFTW's process-wide planner state; the figure per instance is the mean
  over the INSTANCES (default 8) made after it. The sizes of the largest
  parts, from the core's internal headers, follow.
*/
#include <malloc.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "analyser/analyser.h"
#include "harness.h"

#define SAMPLE_RATE_HZ 48000.0
#define MAX_INSTANCES 64
#define MIB (1024.0 * 1024.0)

static double heap_bytes(void) {
  struct mallinfo2 info = mallinfo2();
  return (double)info.uordblks + (double)info.hblkhd;
}

/* A "VmRSS:"-style line of /proc/self/status in bytes; -1 if absent. */
static double status_bytes(const char *key) {
  FILE *file = fopen("/proc/self/status", "r");
  if (!file) return -1.0;
  char line[256];
  double kib = -1.0;
  size_t length = strlen(key);
  while (fgets(line, sizeof line, file))
    if (strncmp(line, key, length) == 0) kib = atof(line + length);
  fclose(file);
  return kib * 1024.0;
}

static plumb *new_analyser(void) {
  plumb_settings settings;
  plumb_settings_default(&settings, SAMPLE_RATE_HZ);
  return plumb_new(&settings, NULL);
}

static void feed(plumb *analyser, const harness_take *take) {
  plumb_note note;
  for (size_t i = 0; i < take->n; i += 1024) {
    size_t length = take->n - i < 1024 ? take->n - i : 1024;
    plumb_process(analyser, take->samples + i, length);
    while (plumb_pop_note(analyser, &note)) {
    }
  }
}

static void print_parts(const plumb *analyser) {
  size_t bins = (size_t)plumb_frame_frames(analyser) / 2 + 1;
  printf("memory: parts: struct plumb %zu B; note frames %d x %zu B = %zu B; "
         "note queue %d x %zu B = %zu B; spectrum ring %d x %zu B = %zu B; "
         "measure scratch %zu B\n",
         sizeof(struct plumb), PLUMB_NOTE_FRAMES_MAX, sizeof(frame_record),
         PLUMB_NOTE_FRAMES_MAX * sizeof(frame_record), PLUMB_QUEUE_CAPACITY,
         sizeof(plumb_note), PLUMB_QUEUE_CAPACITY * sizeof(plumb_note),
         PLUMB_SPECTRUM_RING, bins * sizeof(fftwf_complex),
         PLUMB_SPECTRUM_RING * bins * sizeof(fftwf_complex),
         4 * PLUMB_NOTE_FRAMES_MAX * sizeof(double));
}

int main(int argc, char **argv) {
  int count = argc > 1 ? atoi(argv[1]) : 8;
  if (count < 1 || count > MAX_INSTANCES) count = 8;
  harness_take_spec spec = {SAMPLE_RATE_HZ, 40.0, 10.0, true, true, 4242};
  static harness_take take;
  if (harness_random_take(&spec, &take) != 0) return 1;
  plumb *instances[MAX_INSTANCES + 1];

  double heap_0 = heap_bytes(), rss_0 = status_bytes("VmRSS:");
  instances[0] = new_analyser();
  if (!instances[0]) return 1;
  double heap_1 = heap_bytes();
  feed(instances[0], &take);
  double rss_1 = status_bytes("VmRSS:");
  for (int i = 1; i <= count; ++i)
    if (!(instances[i] = new_analyser())) return 1;
  double heap_2 = heap_bytes();
  for (int i = 1; i <= count; ++i) feed(instances[i], &take);
  double rss_2 = status_bytes("VmRSS:"), hwm_2 = status_bytes("VmHWM:");

  double heap_each = (heap_2 - heap_1) / count, rss_each = (rss_2 - rss_1) / count;
  printf("memory: first instance: heap %.3f MiB, resident after 10 s of audio %.3f MiB\n",
         (heap_1 - heap_0) / MIB, (rss_1 - rss_0) / MIB);
  printf("memory: each of %d more: heap %.3f MiB, resident after 10 s of audio %.3f MiB\n",
         count, heap_each / MIB, rss_each / MIB);
  printf("memory: process VmRSS %.1f MiB, VmHWM %.1f MiB with %d instances\n",
         rss_2 / MIB, hwm_2 / MIB, count + 1);
  print_parts(instances[0]);
  printf("values: heap_each_bytes=%.0f rss_each_bytes=%.0f heap_first_bytes=%.0f\n",
         heap_each, rss_each, heap_1 - heap_0);
  for (int i = 0; i <= count; ++i) plumb_free(instances[i]);
  harness_take_free(&take);
  return 0;
}
