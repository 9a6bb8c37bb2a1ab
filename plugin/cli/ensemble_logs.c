/*
  Reading logs for the ensemble step, and telling takes apart.

  A note's place on the session's timeline is its `timeline_s` (the
  host's transport at its onset; for an offline scan the time since the
  start of the file, or --start-s later), and it lasts end_s - start_s.

  Takes. Each log's run.json names the process that wrote it, and when
  `plumb scan` wrote it, the source file (a workstation does not tell
  one). Logs of one `plumb scan` run share its process: one process is
  one take. In a workstation every track's plugin runs in the one
  process for the whole session, and all tracks of one pass run at the
  same time, so there a take is a set of logs of one process whose
  wall-clock spans (run.json's start_time .. end_time) overlap, chained.
  A log without a readable run.json is a take of its own.
*/
#include "ensemble_logs.h"

#include "log_read.h"
#include "progress.h"

#include <dirent.h>
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#define LOG_SUFFIX         ".notes.csv"
#define RUN_SUFFIX         ".run.json"
#define RUN_JSON_MAX_BYTES 65536

static const char *const required_columns[] = {"index", "start_s", "end_s", "f0_hz", "verdict"};
enum {
  COL_INDEX,
  COL_START,
  COL_END,
  COL_F0,
  COL_VERDICT,
  COL_TIMELINE,
  COL_B,
  COL_VIBRATO,
  COL_BAR,
  COL_BEAT,
  COL_NOTE,
  COLUMNS
};
static const char *const all_columns[COLUMNS] = {
    "index",           "start_s",    "end_s", "f0_hz", "verdict", "timeline_s",
    "inharmonicity_b", "vibrato_hz", "bar",   "beat",  "note"};

/* The value of "key": in a run.json text: a string copied into out, or a
   number; false when absent. The plugin writes the top-level keys one a
   line, `  "key": value`, so a plain search for the quoted key and its
   colon finds them. */
static bool json_text(const char *json, const char *key, char *out, size_t size) {
  char needle[64];
  snprintf(needle, sizeof needle, "\"%s\":", key);
  const char *at = strstr(json, needle);
  if (!at) return false;
  at += strlen(needle);
  while (*at == ' ') ++at;
  if (*at != '"') {
    size_t n = strcspn(at, ",\n}");
    snprintf(out, size, "%.*s", (int)n, at);
    return true;
  }
  ++at;
  size_t n = 0;
  while (at[n] && at[n] != '"' && n + 1 < size) {
    if (at[n] == '\\' && at[n + 1]) break; /* an escaped value: kept as far as it is plain */
    out[n] = at[n];
    ++n;
  }
  out[n] = '\0';
  return true;
}

static void read_run(ensemble_log *log) {
  char path[PATH_MAX + 16];
  size_t base = strlen(log->path) - strlen(LOG_SUFFIX);
  snprintf(path, sizeof path, "%.*s%s", (int)base, log->path, RUN_SUFFIX);
  FILE *file = fopen(path, "rb");
  if (!file) return;
  char *text = malloc(RUN_JSON_MAX_BYTES + 1);
  size_t n = text ? fread(text, 1, RUN_JSON_MAX_BYTES, file) : 0;
  fclose(file);
  if (!text) return;
  text[n] = '\0';
  char number[32];
  log->has_run = json_text(text, "process_id", number, sizeof number) &&
                 json_text(text, "start_time", log->start_time, sizeof log->start_time);
  log->process_id = log->has_run ? strtol(number, NULL, 10) : -1;
  if (!json_text(text, "run_id", log->run_id, sizeof log->run_id)) log->run_id[0] = '\0';
  if (!json_text(text, "end_time", log->end_time, sizeof log->end_time) ||
      strcmp(log->end_time, "null") == 0)
    snprintf(log->end_time, sizeof log->end_time, "9999"); /* still running, or died */
  char source[8];
  log->from_command = json_text(text, "source_file", source, sizeof source);
  free(text);
}

static bool grow_notes(ensemble_log *log, size_t *capacity) {
  if (log->count < *capacity) return true;
  size_t wanted = *capacity ? 2 * *capacity : 256;
  plumb_ensemble_note *notes = realloc(log->notes, wanted * sizeof *notes);
  if (notes) log->notes = notes;
  char(*names)[8] = realloc(log->names, wanted * sizeof *names);
  if (names) log->names = names;
  if (!notes || !names) return false;
  *capacity = wanted;
  return true;
}

/* One row as a note on the timeline. */
static void read_note(const note_log *csv, const int *col, ensemble_log *log) {
  plumb_ensemble_note *note = &log->notes[log->count];
  double start_s = note_log_number(csv, col[COL_START]);
  double end_s = note_log_number(csv, col[COL_END]);
  double timeline_s = note_log_number(csv, col[COL_TIMELINE]);
  double at_s = isfinite(timeline_s) ? timeline_s : start_s;
  bool unpitched = strcmp(note_log_field(csv, col[COL_VERDICT]), "unpitched") == 0;
  double index = note_log_number(csv, col[COL_INDEX]);
  *note = (plumb_ensemble_note){
      .index = isfinite(index) && index >= 0 && index < 4e9 ? (uint32_t)index : 0,
      .start_s = at_s,
      .end_s = at_s + (end_s - start_s),
      .f0_hz = unpitched ? NAN : note_log_number(csv, col[COL_F0]),
      .inharmonicity_b = note_log_number(csv, col[COL_B]),
      .vibrato = isfinite(note_log_number(csv, col[COL_VIBRATO])),
      .bar = note_log_number(csv, col[COL_BAR]),
      .beat = note_log_number(csv, col[COL_BEAT])};
  snprintf(log->names[log->count], 8, "%s", note_log_field(csv, col[COL_NOTE]));
  log->count += 1;
}

static void set_stem(ensemble_log *log, const char *path) {
  const char *name = strrchr(path, '/');
  name = name ? name + 1 : path;
  size_t length = strlen(name);
  size_t suffix = strlen(LOG_SUFFIX);
  bool has_suffix = length > suffix && strcmp(name + length - suffix, LOG_SUFFIX) == 0;
  snprintf(log->stem, sizeof log->stem, "%.*s", (int)(has_suffix ? length - suffix : length), name);
}

bool ensemble_log_read(const char *path, ensemble_log *log) {
  memset(log, 0, sizeof *log);
  log->process_id = -1;
  snprintf(log->path, sizeof log->path, "%s", path);
  set_stem(log, path);
  note_log csv;
  char reason[256];
  if (!note_log_open(path, &csv, reason, sizeof reason)) {
    console_error("ensemble: cannot read '%s': %s", path, reason);
    return false;
  }
  int col[COLUMNS];
  for (int c = 0; c < COLUMNS; ++c) col[c] = note_log_column(&csv, all_columns[c]);
  for (size_t c = 0; c < sizeof required_columns / sizeof *required_columns; ++c) {
    if (col[c] < 0) {
      console_error("ensemble: '%s' has no column '%s': not a plumb notes log", path,
                    required_columns[c]);
      note_log_close(&csv);
      return false;
    }
  }
  size_t capacity = 0;
  bool ok = true;
  while (ok && note_log_next(&csv)) {
    ok = grow_notes(log, &capacity);
    if (ok) read_note(&csv, col, log);
  }
  if (!ok) console_error("ensemble: out of memory reading '%s'", path);
  if (csv.failed) console_error("ensemble: reading '%s' stopped: %s", path, csv.reason);
  if (csv.partial_row)
    console_error("ensemble: '%s': its last row is cut off (a host stopped while writing it); "
                  "left out",
                  path);
  ok = ok && !csv.failed;
  note_log_close(&csv);
  read_run(log);
  return ok;
}

static int find_root(int *parent, int i) {
  while (parent[i] != i) i = parent[i] = parent[parent[i]];
  return i;
}

/* Whether two logs belong to one take (see the top of the file). */
static bool same_take(const ensemble_log *a, const ensemble_log *b) {
  if (!a->has_run || !b->has_run || a->process_id != b->process_id) return false;
  if (a->from_command && b->from_command) return true;
  if (a->from_command != b->from_command) return false;
  return strcmp(a->start_time, b->end_time) <= 0 && strcmp(b->start_time, a->end_time) <= 0;
}

void ensemble_logs_group(ensemble_logs *logs) {
  int n = (int)logs->count;
  int *parent = malloc((n ? (size_t)n : 1) * sizeof *parent);
  logs->takes = 0;
  if (!parent) { /* out of memory: one take each, which is refused clearly */
    for (int i = 0; i < n; ++i) logs->logs[i].take = logs->takes++;
    return;
  }
  for (int i = 0; i < n; ++i) parent[i] = i;
  for (int i = 0; i < n; ++i)
    for (int j = i + 1; j < n; ++j) /* logs are few: tracks, not notes */
      if (same_take(&logs->logs[i], &logs->logs[j]))
        parent[find_root(parent, i)] = find_root(parent, j);
  for (int i = 0; i < n; ++i) logs->logs[i].take = -1;
  for (int i = 0; i < n; ++i) {
    int root = find_root(parent, i);
    if (logs->logs[root].take < 0) logs->logs[root].take = logs->takes++;
    logs->logs[i].take = logs->logs[root].take;
  }
  free(parent);
}

static int compare_names(const void *a, const void *b) {
  return strcmp(*(char *const *)a, *(char *const *)b);
}

static bool is_log(const char *folder, const char *name) {
  size_t length = strlen(name);
  size_t suffix = strlen(LOG_SUFFIX);
  if (length <= suffix || strcmp(name + length - suffix, LOG_SUFFIX) != 0) return false;
  char path[PATH_MAX];
  struct stat info;
  int written = snprintf(path, sizeof path, "%s/%s", folder, name);
  return written > 0 && (size_t)written < sizeof path && stat(path, &info) == 0 &&
         S_ISREG(info.st_mode);
}

bool ensemble_logs_list(const char *folder, char ***paths, size_t *count) {
  *paths = NULL;
  *count = 0;
  DIR *directory = opendir(folder);
  if (!directory) {
    console_error("ensemble: cannot open the folder '%s': %s", folder, strerror(errno));
    return false;
  }
  size_t capacity = 0;
  bool ok = true;
  for (struct dirent *entry = readdir(directory); ok && entry; entry = readdir(directory)) {
    if (!is_log(folder, entry->d_name)) continue;
    if (*count == capacity) {
      capacity = capacity ? 2 * capacity : 32;
      char **grown = realloc(*paths, capacity * sizeof *grown);
      ok = grown != NULL;
      if (ok) *paths = grown;
    }
    size_t size = strlen(folder) + strlen(entry->d_name) + 2;
    char *path = ok ? malloc(size) : NULL;
    ok = path != NULL;
    if (ok) {
      snprintf(path, size, "%s/%s", folder, entry->d_name);
      (*paths)[(*count)++] = path;
    }
  }
  closedir(directory);
  if (!ok) console_error("ensemble: out of memory listing '%s'", folder);
  if (ok && *count > 1) qsort(*paths, *count, sizeof **paths, compare_names);
  return ok;
}

void ensemble_logs_free(ensemble_logs *logs) {
  for (size_t i = 0; i < logs->count; ++i) {
    free(logs->logs[i].notes);
    free(logs->logs[i].names);
  }
  free(logs->logs);
  logs->logs = NULL;
  logs->count = 0;
}
