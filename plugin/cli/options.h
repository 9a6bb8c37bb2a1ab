/*
  The options of `plumb scan`, parsed and validated before any take runs.
  Values that map to plugin ports carry a has_ flag, because only options
  the user gave may override a preset's values.
*/
#ifndef PLUMB_CLI_OPTIONS_H
#define PLUMB_CLI_OPTIONS_H

#include <stdbool.h>
#include <stdio.h>

#define OPTIONS_DEFAULT_OUT_DIR "plumb-logs"
#define OPTIONS_DEFAULT_BLOCK_FRAMES 1024
#define OPTIONS_MAX_BLOCK_FRAMES 8192
#define OPTIONS_MAX_JOBS 256

typedef struct {
  const char *out_dir;

  bool has_reference;
  double reference_hz;
  bool has_tolerance;
  double tolerance_cents;
  bool has_temperament;
  int temperament;                 /* a plumb_temperament */
  double custom_offsets_cents[12]; /* when temperament is CUSTOM */
  bool has_tonic;
  int tonic_pitch_class;
  bool has_lowest;
  int lowest_midi;
  bool has_highest;
  int highest_midi;
  bool has_min_note;
  double min_note_ms;

  const char *preset_name; /* NULL: no preset */
  int jobs;                /* 0: one per online core */
  int block_frames;
  bool strict;

  /* --ensemble: the ensemble step over this run's logs afterwards. */
  bool ensemble;
  bool just_intervals; /* --intervals just */
  /* The offline timeline: --start-s, --tempo, --meter. */
  bool has_timeline;
  double start_s;
  double tempo_bpm; /* 0: none */
  int meter_beats;  /* beats a bar (default 4) */
  int meter_unit;   /* the beat's note value (default 4) */

  char **files;
  int file_count;
} scan_options;

/* Parses argv of `plumb scan ...` (argv[0] is "scan"). Returns true when
   the scan should run; otherwise the command exits with *exit_status
   (0 after --help, 2 after a usage error, already reported on stderr). */
bool options_parse_scan(int argc, char **argv, scan_options *options,
                        int *exit_status);

void options_print_usage(FILE *stream);

#endif
