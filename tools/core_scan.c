/* Development aid: run the analysis core directly over a sound file and
   print one line per note. Used by the benchmark (core time without the
   plugin host) and for looking into the engine. */
#include "plumb.h"

#include <sndfile.h>
#include <stdio.h>
#include <stdlib.h>

static void print_note(const plumb_note *n) {
  char name[8];
  plumb_note_name(n->midi, name);
  printf("%3u %8.3f %8.3f %-4s %9.3f %+7.2f spread %6.2f drift %+7.2f "
         "vib %5.2f Hz %6.2f c conf %.2f B %.2e %s\n",
         n->index, n->start_s, n->end_s, name, n->f0_hz, n->cents, n->spread_cents,
         n->drift_cents_per_s, n->vibrato_hz, n->vibrato_cents, n->confidence,
         n->inharmonicity_b, plumb_verdict_name(n->verdict));
}

int main(int argc, char **argv) {
  if (argc < 2) {
    fprintf(stderr, "usage: core_scan FILE [BLOCK] [quiet]\n");
    return 2;
  }
  int block = argc > 2 ? atoi(argv[2]) : 1024;
  int quiet = argc > 3;
  SF_INFO info = {0};
  SNDFILE *file = sf_open(argv[1], SFM_READ, &info);
  if (!file) {
    fprintf(stderr, "core_scan: %s: %s\n", argv[1], sf_strerror(NULL));
    return 3;
  }
  plumb_settings settings;
  plumb_settings_default(&settings, info.samplerate);
  plumb_status status;
  plumb *analyser = plumb_new(&settings, &status);
  if (!analyser) {
    fprintf(stderr, "core_scan: %s\n", plumb_strerror(status));
    return 3;
  }
  float *interleaved = malloc(sizeof(float) * (size_t)block * (size_t)info.channels);
  float *mono = malloc(sizeof(float) * (size_t)block);
  sf_count_t got;
  plumb_note note;
  while ((got = sf_readf_float(file, interleaved, block)) > 0) {
    for (sf_count_t i = 0; i < got; ++i) mono[i] = interleaved[i * info.channels];
    plumb_process(analyser, mono, (size_t)got);
    while (plumb_pop_note(analyser, &note))
      if (!quiet) print_note(&note);
  }
  plumb_finish(analyser);
  while (plumb_pop_note(analyser, &note))
    if (!quiet) print_note(&note);
  plumb_counts counts;
  plumb_get_counts(analyser, &counts);
  fprintf(stderr, "notes %u flagged %u\n", counts.notes, counts.flagged);
  sf_close(file);
  free(interleaved);
  free(mono);
  plumb_free(analyser);
  return 0;
}
