#include "summary.h"

#include "log_read.h"
#include "plumb.h"
#include "progress.h"

#include <math.h>
#include <stdbool.h>
#include <stdlib.h>
#include <string.h>

typedef struct {
  note_log log;
  bool loaded;
  int start_column;
  int note_column;
  int cents_column;
  int verdict_column;
  size_t notes;
  size_t flagged;
  size_t unpitched;
} take_log;

/* The verdict named in a log, or PLUMB_VERDICT_COUNT for an unknown name. */
static plumb_verdict verdict_from_name(const char *name) {
  for (int v = 0; v < PLUMB_VERDICT_COUNT; ++v) {
    if (strcmp(plumb_verdict_name((plumb_verdict)v), name) == 0) {
      return (plumb_verdict)v;
    }
  }
  return PLUMB_VERDICT_COUNT;
}

static bool is_flagged(const take_log *take, size_t row) {
  plumb_verdict verdict =
      verdict_from_name(note_log_field(&take->log, row, take->verdict_column));
  return verdict != PLUMB_VERDICT_COUNT && plumb_verdict_is_flagged(verdict);
}

static void count_verdicts(take_log *take) {
  take->notes = take->log.row_count;
  for (size_t row = 0; row < take->log.row_count; ++row) {
    const char *name = note_log_field(&take->log, row, take->verdict_column);
    take->flagged += is_flagged(take, row);
    take->unpitched += verdict_from_name(name) == PLUMB_VERDICT_UNPITCHED;
  }
}

static bool load_take(const summary_take *given, take_log *take) {
  char reason[256];
  memset(take, 0, sizeof *take);
  if (!note_log_read(given->log_path, &take->log, reason, sizeof reason)) {
    console_error("%s: cannot read its log %s: %s", given->label,
                  given->log_path, reason);
    return false;
  }
  take->verdict_column = note_log_column(&take->log, "verdict");
  if (take->verdict_column < 0) {
    console_error("%s: %s is not a notes log: it has no 'verdict' column",
                  given->label, given->log_path);
    note_log_free(&take->log);
    return false;
  }
  take->start_column = note_log_column(&take->log, "start_s");
  take->note_column = note_log_column(&take->log, "note");
  take->cents_column = note_log_column(&take->log, "cents");
  take->loaded = true;
  count_verdicts(take);
  return true;
}

/* "m:ss.sss", rounded to the millisecond first so that 59.9996 s reads
   1:00.000, not 0:60.000. */
static void format_time(double seconds, char *text, size_t size) {
  if (!isfinite(seconds) || seconds < 0.0) {
    snprintf(text, size, "-");
    return;
  }
  long long ms = llround(seconds * 1000.0);
  snprintf(text, size, "%lld:%02lld.%03lld", ms / 60000, ms % 60000 / 1000,
           ms % 1000);
}

/* "+12.3", "-4.0"; a reading that rounds to zero is "+0.0", never "-0.0". */
static void format_cents(double cents, char *text, size_t size) {
  if (!isfinite(cents)) {
    snprintf(text, size, "-");
    return;
  }
  double tenths = round(cents * 10.0) / 10.0;
  snprintf(text, size, "%+.1f", tenths == 0.0 ? 0.0 : tenths);
}

static void print_flagged_rows(FILE *out, const summary_take *given,
                               const take_log *take, int label_width) {
  for (size_t row = 0; row < take->log.row_count; ++row) {
    if (!is_flagged(take, row)) {
      continue;
    }
    char time[32];
    char cents[32];
    const char *note = note_log_field(&take->log, row, take->note_column);
    format_time(note_log_number(&take->log, row, take->start_column), time,
                sizeof time);
    format_cents(note_log_number(&take->log, row, take->cents_column), cents,
                 sizeof cents);
    fprintf(out, "%-*s  %10s  %-5s  %7s  %s\n", label_width, given->label, time,
            note[0] ? note : "-", cents,
            note_log_field(&take->log, row, take->verdict_column));
  }
}

static void print_flagged(FILE *out, const summary_take *given,
                          const take_log *takes, size_t count, int label_width,
                          size_t flagged_total) {
  if (flagged_total == 0) {
    fprintf(out, "No flagged notes.\n");
    return;
  }
  fprintf(out, "Flagged notes\n%-*s  %10s  %-5s  %7s  %s\n", label_width,
          "take", "time", "note", "cents", "verdict");
  for (size_t i = 0; i < count; ++i) {
    if (takes[i].loaded) {
      print_flagged_rows(out, &given[i], &takes[i], label_width);
    }
  }
}

static void print_counts(FILE *out, const summary_take *given,
                         const take_log *takes, size_t count, int label_width) {
  fprintf(out, "\n%-*s  %7s  %7s  %9s\n", label_width, "take", "notes",
          "flagged", "unpitched");
  for (size_t i = 0; i < count; ++i) {
    if (takes[i].loaded) {
      fprintf(out, "%-*s  %7zu  %7zu  %9zu\n", label_width, given[i].label,
              takes[i].notes, takes[i].flagged, takes[i].unpitched);
    }
  }
}

summary_totals summary_print(FILE *out, const summary_take *takes,
                             size_t take_count, const char *log_folder) {
  summary_totals totals = {0, 0};
  take_log *logs = calloc(take_count ? take_count : 1, sizeof *logs);
  if (!logs) {
    console_error("out of memory reading the logs");
    totals.unreadable_logs = take_count;
    return totals;
  }
  int label_width = 4; /* "take" */
  for (size_t i = 0; i < take_count; ++i) {
    if (!load_take(&takes[i], &logs[i])) {
      totals.unreadable_logs += 1;
      continue;
    }
    totals.flagged_notes += logs[i].flagged;
    int length = (int)strlen(takes[i].label);
    label_width = length > label_width ? length : label_width;
  }
  if (totals.unreadable_logs < take_count) {
    print_flagged(out, takes, logs, take_count, label_width,
                  totals.flagged_notes);
    print_counts(out, takes, logs, take_count, label_width);
  }
  fprintf(out, "%sLogs: %s\n", totals.unreadable_logs < take_count ? "\n" : "",
          log_folder);
  for (size_t i = 0; i < take_count; ++i) {
    note_log_free(&logs[i].log);
  }
  free(logs);
  return totals;
}
