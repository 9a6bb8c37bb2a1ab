#include "summary.h"

#include "log_read.h"
#include "plumb.h"
#include "progress.h"
#include "terminal_text.h"

#include <math.h>
#include <stdbool.h>
#include <stdlib.h>
#include <string.h>

/* What the first reading of a log found. */
typedef struct {
  bool loaded;
  size_t notes;
  size_t flagged;
  size_t unpitched;
} take_counts;

/* A log's columns that the summary reads. */
typedef struct {
  int start;
  int note;
  int cents;
  int verdict;
} take_columns;

/* The verdict named in a log, or PLUMB_VERDICT_COUNT for an unknown name. */
static plumb_verdict verdict_from_name(const char *name) {
  for (int v = 0; v < PLUMB_VERDICT_COUNT; ++v) {
    if (strcmp(plumb_verdict_name((plumb_verdict)v), name) == 0) {
      return (plumb_verdict)v;
    }
  }
  return PLUMB_VERDICT_COUNT;
}

static bool row_is_flagged(const note_log *log, const take_columns *columns) {
  plumb_verdict verdict =
      verdict_from_name(note_log_field(log, columns->verdict));
  return verdict != PLUMB_VERDICT_COUNT && plumb_verdict_is_flagged(verdict);
}

/* Opens a take's log and finds its columns; false after saying why. */
static bool open_take(const summary_take *given, note_log *log,
                      take_columns *columns) {
  char reason[256];
  char label[1024];
  char path[4096];
  terminal_text(given->label, label, sizeof label);
  terminal_text(given->log_path, path, sizeof path);
  if (!note_log_open(given->log_path, log, reason, sizeof reason)) {
    console_error("%s: cannot read its log %s: %s", label, path, reason);
    return false;
  }
  columns->verdict = note_log_column(log, "verdict");
  if (columns->verdict < 0) {
    console_error("%s: %s is not a notes log: it has no 'verdict' column",
                  label, path);
    note_log_close(log);
    return false;
  }
  columns->start = note_log_column(log, "start_s");
  columns->note = note_log_column(log, "note");
  columns->cents = note_log_column(log, "cents");
  return true;
}

/* After the last row: what stopped the reading, if anything. */
static bool finish_take(const summary_take *given, note_log *log,
                        bool report) {
  bool failed = log->failed;
  char reason[sizeof log->reason];
  memcpy(reason, log->reason, sizeof reason);
  bool partial = log->partial_row;
  note_log_close(log);
  char label[1024];
  terminal_text(given->label, label, sizeof label);
  if (failed && report) {
    console_error("%s: reading its log stopped: %s", label, reason);
  } else if (partial && report) {
    console_error("%s: its log's last row is cut off (the writer stopped "
                  "inside it); that row is left out",
                  label);
  }
  return !failed;
}

static bool count_take(const summary_take *given, take_counts *counts) {
  memset(counts, 0, sizeof *counts);
  if (!given->log_path) {
    counts->loaded = true; /* no notes: no log */
    return true;
  }
  note_log log;
  take_columns columns;
  if (!open_take(given, &log, &columns)) {
    return false;
  }
  while (note_log_next(&log)) {
    plumb_verdict verdict =
        verdict_from_name(note_log_field(&log, columns.verdict));
    counts->notes += 1;
    counts->flagged += row_is_flagged(&log, &columns);
    counts->unpitched += verdict == PLUMB_VERDICT_UNPITCHED;
  }
  counts->loaded = finish_take(given, &log, true);
  return counts->loaded;
}

/* "m:ss.sss", rounded to the millisecond first so that 59.9996 s reads
   1:00.000, not 0:60.000. */
static void format_time(double seconds, char *text, size_t size) {
  if (!isfinite(seconds) || seconds < 0.0) {
    snprintf(text, size, "-");
    return;
  }
  if (seconds >= 1e9) { /* past any take, and past what llround can hold */
    snprintf(text, size, "%.3g s", seconds);
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

/* A note name never holds a blank; one in a log's field would shift the
   table's columns, so it is shown as '_'. */
static void blanks_visible(char *text) {
  for (; *text; ++text) {
    if (*text == ' ') *text = '_';
  }
}

static void print_flagged_rows(FILE *out, const summary_take *given,
                               int label_width) {
  note_log log;
  take_columns columns;
  if (!given->log_path || !open_take(given, &log, &columns)) {
    return;
  }
  char label[1024];
  terminal_text(given->label, label, sizeof label);
  int pad = label_width - (int)terminal_width(label);
  while (note_log_next(&log)) {
    if (!row_is_flagged(&log, &columns)) {
      continue;
    }
    char time[32];
    char cents[32];
    char note[64];
    char verdict[64];
    terminal_text(note_log_field(&log, columns.note), note, sizeof note);
    blanks_visible(note);
    terminal_text(note_log_field(&log, columns.verdict), verdict,
                  sizeof verdict);
    format_time(note_log_number(&log, columns.start), time, sizeof time);
    format_cents(note_log_number(&log, columns.cents), cents, sizeof cents);
    fprintf(out, "%s%*s  %10s  %-5s  %7s  %s\n", label, pad > 0 ? pad : 0, "",
            time, note[0] ? note : "-", cents, verdict);
  }
  finish_take(given, &log, false);
}

static void print_flagged(FILE *out, const summary_take *given,
                          const take_counts *counts, size_t count,
                          int label_width, size_t flagged_total) {
  if (flagged_total == 0) {
    fprintf(out, "No flagged notes.\n");
    return;
  }
  fprintf(out, "Flagged notes\n%-*s  %10s  %-5s  %7s  %s\n", label_width,
          "take", "time", "note", "cents", "verdict");
  for (size_t i = 0; i < count; ++i) {
    if (counts[i].loaded && counts[i].flagged) {
      print_flagged_rows(out, &given[i], label_width);
    }
  }
}

static void print_counts(FILE *out, const summary_take *given,
                         const take_counts *counts, size_t count,
                         int label_width) {
  fprintf(out, "\n%-*s  %7s  %7s  %9s\n", label_width, "take", "notes",
          "flagged", "unpitched");
  for (size_t i = 0; i < count; ++i) {
    if (counts[i].loaded) {
      char label[1024];
      terminal_text(given[i].label, label, sizeof label);
      int pad = label_width - (int)terminal_width(label);
      fprintf(out, "%s%*s  %7zu  %7zu  %9zu\n", label, pad > 0 ? pad : 0, "",
              counts[i].notes, counts[i].flagged, counts[i].unpitched);
    }
  }
}

summary_totals summary_print(FILE *out, const summary_take *takes,
                             size_t take_count, const char *log_folder) {
  summary_totals totals = {0, 0};
  take_counts *counts = calloc(take_count ? take_count : 1, sizeof *counts);
  if (!counts) {
    console_error("out of memory reading the logs");
    totals.unreadable_logs = take_count;
    return totals;
  }
  int label_width = 4; /* "take" */
  for (size_t i = 0; i < take_count; ++i) {
    if (!count_take(&takes[i], &counts[i])) {
      totals.unreadable_logs += 1;
      continue;
    }
    totals.flagged_notes += counts[i].flagged;
    char label[1024];
    int width = (int)terminal_width(terminal_text(takes[i].label, label, sizeof label));
    label_width = width > label_width ? width : label_width;
  }
  bool any = totals.unreadable_logs < take_count;
  if (any) {
    print_flagged(out, takes, counts, take_count, label_width,
                  totals.flagged_notes);
    print_counts(out, takes, counts, take_count, label_width);
  }
  char folder[4096];
  fprintf(out, "%sLogs: %s\n", any ? "\n" : "",
          terminal_text(log_folder, folder, sizeof folder));
  free(counts);
  return totals;
}
