/*
  plumb LV2: the take's run file, STEM.run.json, beside STEM.notes.csv.

  [non-RT], log writer thread only. The file is written whole to a
  temporary name in the same folder, synced, then renamed over the old
  one, so a reader (or a crash) never sees half a file.
*/
#ifndef PLUMB_LV2_RUN_JSON_H
#define PLUMB_LV2_RUN_JSON_H

#include "take_settings.h"

#include <stdbool.h>
#include <stdint.h>
#include <stdio.h>
#include <time.h>

typedef struct {
  uint32_t notes;       /* notes completed while this file was open */
  uint32_t flagged;     /* of which flagged (sharp, flat, unsteady) */
  uint32_t dropped;     /* the take's notes lost to a full core queue */
  uint64_t bad_samples; /* the take's NaN or Inf samples, replaced by 0 */
  uint64_t rows;        /* rows written to the CSV */
} run_totals;

typedef struct {
  const char *stem;       /* the files' common name */
  const char *take_label; /* as set on the plugin; "" when not set */
  const char *run_id;     /* the activation's id (run_json_make_id) */
  const char *source_file; /* as the host told it; NULL or "": not told */
  int32_t source_channel;  /* 1 = the first; 0: not told */
  double sample_rate_hz;
  take_settings settings; /* as at the start of the take */
  bool settings_changed;  /* the user changed them during the take */
  char start_time[32];    /* ISO 8601 UTC */
  char end_time[32];      /* "" until the take has ended */
  bool complete;          /* totals are final */
  bool log_error;         /* a row could not be written */
  run_totals totals;
} run_record;

/* "YYYY-mm-ddTHH:MM:SSZ" for `now` (seconds since the epoch). */
void run_json_time(time_t now, char text[32]);

/* Writes the record as JSON to `stream` (UTF-8, '.' decimals whatever
   the locale). Returns 0, or -1 when the stream reports an error. */
int run_json_print(FILE *stream, const run_record *record);

/* The id of one activation: its UTC time to the microsecond, the process
   id and `serial` (activations counted in the process), e.g.
   "20310402T190511.123456Z-4182-3". [non-RT] */
void run_json_make_id(int64_t activation_us, unsigned serial, char id[64]);

/* Writes path via a new path.tmp-<pid>-<n> (O_EXCL) and rename().
   Returns 0 or an errno. */
int run_json_write(const char *path, const run_record *record);

#endif /* PLUMB_LV2_RUN_JSON_H */
