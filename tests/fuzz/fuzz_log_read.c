/*
  libFuzzer harness for reading session logs back (`plumb report` and the
  end of `plumb scan`): plugin/cli/log_read.c and the summary that
  plugin/cli/summary.c prints from it (with plugin/cli/terminal_text.c).

  Three kinds of input, by the first byte:
  - below 0x80: the input itself is the notes log, as a file;
  - 0x80 and above, even: a table of fields (any bytes but NUL) that the
    harness writes as well-formed RFC 4180 CSV (quoting when needed or
    always, LF or CRLF, blank lines, with or without a last line break),
    which the reader must give back field for field;
  - 0x80 and above, odd: notes (every field from the input) that the
    core's own writer (plumb_note_to_csv under plumb_csv_header) puts in a
    log, which the reader must give back as written.

  On every log: the field and number accessors on every row and column
  (and on columns before and past them), note_log_column for every header
  name and for names that are not there, and summary_print, whose output
  must hold no control character but line breaks, count the flagged and
  unpitched rows the reader gives, and show times as m:ss.sss and cents as
  +d.d (or "-").
*/
#include "plumb.h"
#include "note_csv.h"

#include "log_read.h"
#include "../../plugin/cli/progress.h"
#include "../../plugin/cli/summary.h"

#include "fuzz_input.h"

#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdbool.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#define MAX_TABLE_ROWS 64
#define MAX_TABLE_FIELDS 16
#define MAX_FIELD_BYTES 24
#define MAX_NOTES 12
#define MAX_ROW_FIELDS 128 /* a notes log has about 70 columns */

static char folder_path[4000];
static char log_path[4096];

/* ------------------------------------------------ console_error */

/* progress.c's, which would fill the fuzzer's output: the message is
   formatted and checked (labels and paths reach it through
   terminal_text(), so it holds no control character), then dropped. */
static size_t console_messages;

void console_error(const char *format, ...) {
  char message[8192];
  va_list arguments;
  va_start(arguments, format);
  vsnprintf(message, sizeof message, format, arguments);
  va_end(arguments);
  for (const unsigned char *c = (const unsigned char *)message; *c; ++c)
    FUZZ_CHECK(*c >= 0x20 && *c != 0x7F, "console message holds %#x: %s", *c,
               message);
  console_messages++;
}

/* ------------------------------------------------ the file */

static void write_log(const char *text, size_t length) {
  FILE *file = fopen(log_path, "wb");
  FUZZ_CHECK(file != NULL, "cannot write %s: %s", log_path, strerror(errno));
  FUZZ_CHECK(fwrite(text, 1, length, file) == length, "short write");
  fclose(file);
}

/* ------------------------------------------------ what the reader gives */

#define MAX_FLAGGED_KEPT 256

static bool is_flagged_name(const char *verdict) {
  return strcmp(verdict, "sharp") == 0 || strcmp(verdict, "flat") == 0 ||
         strcmp(verdict, "unsteady") == 0;
}

typedef struct {
  size_t rows;
  size_t flagged;
  size_t unpitched;
  bool opened;
  /* start_s and cents of the first flagged rows, as the reader gives */
  double flagged_start_s[MAX_FLAGGED_KEPT];
  double flagged_cents[MAX_FLAGGED_KEPT];
} read_totals;

static void count_row(read_totals *totals, const note_log *log, int verdict) {
  const char *name = note_log_field(log, verdict);
  if (is_flagged_name(name) && totals->flagged < MAX_FLAGGED_KEPT) {
    totals->flagged_start_s[totals->flagged] =
        note_log_number(log, note_log_column(log, "start_s"));
    totals->flagged_cents[totals->flagged] =
        note_log_number(log, note_log_column(log, "cents"));
  }
  totals->flagged += is_flagged_name(name);
  totals->unpitched += strcmp(name, "unpitched") == 0;
}


/* Every accessor on the current row. */
static void check_row(const note_log *log) {
  FUZZ_CHECK(log->row.count >= 1, "a row with no field");
  int header = (int)log->header.count;
  int row = (int)log->row.count;
  int last = (header > row ? header : row) + 2;
  for (int column = -2; column < last; ++column) {
    const char *field = note_log_field(log, column);
    FUZZ_CHECK(field != NULL, "field %d is NULL", column);
    if (column < 0 || column >= row)
      FUZZ_CHECK(field[0] == '\0', "field %d of a %d-field row is '%s'",
                 column, row, field);
    else
      FUZZ_CHECK(field == log->row.fields[column], "field %d not the row's",
                 column);
    double number = note_log_number(log, column);
    char *end = NULL;
    double expected = strtod(field, &end);
    if (field[0] == '\0' || *end != '\0')
      FUZZ_CHECK(isnan(number), "'%s' read as %g", field, number);
    else
      FUZZ_CHECK(number == expected || (isnan(number) && isnan(expected)),
                 "'%s' read as %.17g, strtod %.17g", field, number, expected);
  }
}

static void check_header(const note_log *log) {
  FUZZ_CHECK(log->header.count >= 1, "a header with no field");
  for (size_t i = 0; i < log->header.count; ++i) {
    const char *name = log->header.fields[i];
    int column = note_log_column(log, name);
    FUZZ_CHECK(column >= 0 && (size_t)column <= i &&
                   strcmp(log->header.fields[column], name) == 0,
               "column '%s' (field %zu) found at %d", name, i, column);
    for (int k = 0; k < column; ++k)
      FUZZ_CHECK(strcmp(log->header.fields[k], name) != 0,
                 "column '%s' not the first of its name", name);
  }
  static const char *const names[] = {"verdict", "start_s", "note", "cents",
                                      "no such column", ""};
  for (size_t n = 0; n < sizeof names / sizeof names[0]; ++n) {
    int column = note_log_column(log, names[n]);
    bool there = false;
    for (size_t i = 0; i < log->header.count; ++i)
      there = there || strcmp(log->header.fields[i], names[n]) == 0;
    FUZZ_CHECK(there == (column >= 0), "column '%s': %d", names[n], column);
  }
}

/* Reads the log with the accessors, checking them, and counts what the
   summary should show. `expect` (may be NULL) gives the table the file
   was written from: header first, then the rows, as NUL-separated
   fields. */
typedef struct {
  size_t count;
  const char *fields[MAX_ROW_FIELDS];
} table_row;

static const read_totals *read_back(const table_row *expect, size_t expect_rows,
                             bool expect_partial) {
  static read_totals totals;
  memset(&totals, 0, sizeof totals);
  note_log log;
  char reason[256] = "";
  if (!note_log_open(log_path, &log, reason, sizeof reason)) {
    FUZZ_CHECK(reason[0] != '\0' && memchr(reason, '\0', sizeof reason),
               "refused without a reason");
    FUZZ_CHECK(log.file == NULL && log.header.fields == NULL &&
                   log.row.fields == NULL,
               "a refused log is not closed");
    FUZZ_CHECK(expect == NULL || expect_rows == 0,
               "refused a well-formed log: %s", reason);
    note_log_close(&log); /* harmless, says log_read.h */
    return &totals;
  }
  totals.opened = true;
  check_header(&log);
  if (expect) {
    FUZZ_CHECK(log.header.count == expect[0].count, "header of %zu fields, "
               "written %zu", log.header.count, expect[0].count);
    for (size_t i = 0; i < expect[0].count; ++i)
      FUZZ_CHECK(strcmp(log.header.fields[i], expect[0].fields[i]) == 0,
                 "header field %zu: '%s', written '%s'", i,
                 log.header.fields[i], expect[0].fields[i]);
  }
  int verdict = note_log_column(&log, "verdict");
  while (note_log_next(&log)) {
    check_row(&log);
    size_t r = totals.rows++;
    FUZZ_CHECK(log.rows_read == totals.rows, "rows_read %zu after %zu rows",
               log.rows_read, totals.rows);
    if (expect) {
      FUZZ_CHECK(r + 1 < expect_rows, "row %zu was not written", r);
      const table_row *want = &expect[r + 1];
      FUZZ_CHECK(log.row.count == want->count, "row %zu: %zu fields, written "
                 "%zu", r, log.row.count, want->count);
      for (size_t i = 0; i < want->count; ++i)
        FUZZ_CHECK(strcmp(log.row.fields[i], want->fields[i]) == 0,
                   "row %zu field %zu: '%s', written '%s'", r, i,
                   log.row.fields[i], want->fields[i]);
    }
    count_row(&totals, &log, verdict);
  }
  FUZZ_CHECK(!log.failed || log.reason[0], "failed without a reason");
  if (expect) {
    FUZZ_CHECK(!log.failed, "reading a well-formed log failed: %s", log.reason);
    FUZZ_CHECK(totals.rows + 1 == expect_rows, "read %zu rows, written %zu",
               totals.rows, expect_rows - 1);
    FUZZ_CHECK(log.partial_row == expect_partial, "partial_row %d, expected %d",
               log.partial_row, expect_partial);
  }
  FUZZ_CHECK(!note_log_next(&log), "a row after the end");
  note_log_close(&log);
  FUZZ_CHECK(log.file == NULL && log.header.fields == NULL &&
                 log.row.fields == NULL && log.row_text == NULL,
             "closed log still holds memory");
  return &totals;
}

/* ------------------------------------------------ the summary */

static bool is_time(const char *s) {
  if (strcmp(s, "-") == 0) return true;
  const char *colon = strchr(s, ':');
  if (!colon || colon == s) return false;
  for (const char *c = s; c < colon; ++c)
    if (*c < '0' || *c > '9') return false;
  return strlen(colon) == 7 && colon[1] >= '0' && colon[1] <= '5' &&
         colon[2] >= '0' && colon[2] <= '9' && colon[3] == '.' &&
         colon[4] >= '0' && colon[4] <= '9' && colon[5] >= '0' &&
         colon[5] <= '9' && colon[6] >= '0' && colon[6] <= '9';
}

static bool is_cents(const char *s) {
  if (strcmp(s, "-") == 0) return true;
  if (s[0] != '+' && s[0] != '-') return false;
  size_t length = strlen(s);
  if (length < 4 || s[length - 2] != '.') return false;
  for (size_t i = 1; i < length; ++i)
    if (i != length - 2 && (s[i] < '0' || s[i] > '9')) return false;
  return strcmp(s, "-0.0") != 0; /* summary.c: never "-0.0" */
}

/* A flagged row of the table: "take  <time>  <note>  <cents>  <verdict>",
   for a row whose start_s and cents the reader gave. The formats hold for
   any reading a take can have; a log with absurd numbers (a start beyond
   a billion seconds, cents beyond a million) need only not break the
   table. */
static void check_flagged_line(char *line, double start_s, double cents) {
  char *tokens[64];
  size_t count = 0;
  for (char *t = strtok(line, " "); t && count < 64; t = strtok(NULL, " "))
    tokens[count++] = t;
  FUZZ_CHECK(count >= 5, "flagged row of %zu words", count);
  FUZZ_CHECK(is_flagged_name(tokens[count - 1]), "flagged row's verdict '%s'",
             tokens[count - 1]);
  const char *time = tokens[1];
  const char *shown = tokens[count - 2];
  if (isnan(start_s) || (start_s >= 0.0 && start_s <= 1e9)) {
    FUZZ_CHECK(is_time(time), "flagged row's time '%s' for %.17g s", time,
               start_s);
    if (strcmp(time, "-") != 0) {
      double minutes = strtod(time, NULL);
      double seconds = strtod(strchr(time, ':') + 1, NULL);
      FUZZ_CHECK(fabs(60.0 * minutes + seconds - start_s) <= 0.0005 + 1e-9 * start_s,
                 "time '%s' for %.17g s", time, start_s);
    }
  }
  if (isnan(cents) || fabs(cents) <= 1e6) {
    FUZZ_CHECK(is_cents(shown), "flagged row's cents '%s' for %.17g", shown,
               cents);
    if (strcmp(shown, "-") != 0)
      FUZZ_CHECK(fabs(strtod(shown, NULL) - cents) <= 0.05 + 1e-9,
                 "cents '%s' for %.17g", shown, cents);
  }
}

static void check_summary(const read_totals *totals) {
  char *text = NULL;
  size_t length = 0;
  FILE *out = open_memstream(&text, &length);
  FUZZ_CHECK(out != NULL, "open_memstream: %s", strerror(errno));
  summary_take takes[3] = {{"take", log_path},
                           {"no-notes", NULL},
                           {"missing", "/nonexistent/plumb-fuzz.notes.csv"}};
  size_t messages = console_messages;
  summary_totals result = summary_print(out, takes, 3, folder_path);
  fclose(out);
  FUZZ_CHECK(console_messages > messages, "the missing log was not reported");
  /* The output is for a terminal: no control character but line breaks. */
  for (size_t i = 0; i < length; ++i) {
    unsigned char c = (unsigned char)text[i];
    FUZZ_CHECK(c == '\n' || (c >= 0x20 && c != 0x7F),
               "summary holds %#x at %zu", c, i);
    FUZZ_CHECK(!(c == 0xC2 && i + 1 < length &&
                 (unsigned char)text[i + 1] < 0xA0 &&
                 (unsigned char)text[i + 1] >= 0x80),
               "summary holds a C1 control at %zu", i);
  }
  bool loaded = totals->opened && result.unreadable_logs == 1;
  if (totals->opened && result.unreadable_logs == 1) {
    FUZZ_CHECK(result.flagged_notes == totals->flagged,
               "summary counts %zu flagged, the reader gives %zu",
               result.flagged_notes, totals->flagged);
  }
  /* The table of flagged rows, then the counts. */
  size_t flagged_lines = 0;
  bool in_flagged = false;
  bool counted = false;
  for (char *line = text, *next; line && *line; line = next) {
    char *end = strchr(line, '\n');
    next = end ? end + 1 : NULL;
    if (end) *end = '\0';
    if (strcmp(line, "Flagged notes") == 0) {
      in_flagged = true;
      next = next ? strchr(next, '\n') : NULL; /* the column heads */
      next = next ? next + 1 : NULL;
      continue;
    }
    if (in_flagged && line[0] == '\0') in_flagged = false;
    if (in_flagged) {
      size_t k = flagged_lines++;
      if (k < MAX_FLAGGED_KEPT && loaded)
        check_flagged_line(line, totals->flagged_start_s[k],
                           totals->flagged_cents[k]);
    }
    if (loaded && strncmp(line, "take ", 5) == 0 && !in_flagged) {
      size_t notes = 0, flagged = 0, unpitched = 0;
      if (sscanf(line, "take %zu %zu %zu", &notes, &flagged, &unpitched) == 3) {
        FUZZ_CHECK(notes == totals->rows && flagged == totals->flagged &&
                       unpitched == totals->unpitched,
                   "counts line '%s' for %zu rows, %zu flagged, %zu unpitched",
                   line, totals->rows, totals->flagged, totals->unpitched);
        counted = true;
      }
    }
  }
  if (loaded) {
    FUZZ_CHECK(counted, "no counts line for the take");
    FUZZ_CHECK(flagged_lines == totals->flagged, "%zu flagged rows shown, %zu "
               "flagged", flagged_lines, totals->flagged);
  }
  free(text);
}

/* ------------------------------------------------ well-formed tables */

static char table_bytes[MAX_TABLE_ROWS + 1][MAX_TABLE_FIELDS][MAX_FIELD_BYTES + 1];
static table_row table[MAX_TABLE_ROWS + 1];

static const char *const known_names[] = {
    "index", "start_s", "end_s", "note", "cents", "verdict", "sharp",
    "flat", "unsteady", "unpitched", "in-tune", "1e999", "-0.0", "nan",
    "0x1p3", " 12", "12 ", "1:+0.5 2:-3.25"};

static void table_field(fuzz_input *in, char *out) {
  uint8_t how = fuzz_u8(in);
  if (how < 96) {
    snprintf(out, MAX_FIELD_BYTES + 1, "%s",
             known_names[how % (sizeof known_names / sizeof known_names[0])]);
    return;
  }
  size_t length = 0;
  const uint8_t *bytes = fuzz_bytes(in, how % (MAX_FIELD_BYTES + 1), &length);
  for (size_t i = 0; i < length; ++i) out[i] = bytes[i] ? (char)bytes[i] : '"';
  out[length] = '\0';
}

static bool needs_quotes(const char *field) {
  return strpbrk(field, ",\"\r\n") != NULL;
}

static void append(char **text, size_t *length, size_t *capacity,
                   const char *piece, size_t piece_length) {
  if (*length + piece_length + 1 > *capacity) {
    *capacity = 2 * (*length + piece_length + 1);
    *text = realloc(*text, *capacity);
    FUZZ_CHECK(*text != NULL, "out of memory");
  }
  memcpy(*text + *length, piece, piece_length);
  *length += piece_length;
  (*text)[*length] = '\0';
}

static void write_field(char **text, size_t *length, size_t *capacity,
                        const char *field, bool always_quote) {
  if (!always_quote && !needs_quotes(field)) {
    append(text, length, capacity, field, strlen(field));
    return;
  }
  append(text, length, capacity, "\"", 1);
  for (const char *c = field; *c; ++c) {
    append(text, length, capacity, c, 1);
    if (*c == '"') append(text, length, capacity, "\"", 1); /* doubled */
  }
  append(text, length, capacity, "\"", 1);
}

static void fuzz_table(fuzz_input *in) {
  uint8_t style = fuzz_u8(in);
  bool always_quote = style & 1, crlf = style & 2, blank_lines = style & 4;
  bool cut_last = style & 8; /* no line break after the last row */
  size_t rows = 0;
  while (rows <= MAX_TABLE_ROWS && (rows == 0 || !fuzz_input_done(in))) {
    table_row *row = &table[rows];
    row->count = 1 + fuzz_u8(in) % MAX_TABLE_FIELDS;
    for (size_t i = 0; i < row->count; ++i) {
      table_field(in, table_bytes[rows][i]);
      row->fields[i] = table_bytes[rows][i];
    }
    rows++;
  }
  char *text = NULL;
  size_t length = 0, capacity = 0;
  size_t kept = 0; /* rows the reader returns: blank ones are skipped */
  for (size_t r = 0; r < rows; ++r) {
    table_row *row = &table[r];
    bool blank = row->count == 1 && row->fields[0][0] == '\0' && !always_quote;
    if (blank && r == 0) {
      row->fields[0] = "index"; /* a header is never blank */
      blank = false;
    }
    if (r > 0 && blank_lines && (style >> 4) == r % 16)
      append(&text, &length, &capacity, crlf ? "\r\n" : "\n", crlf ? 2 : 1);
    for (size_t i = 0; i < row->count; ++i) {
      if (i) append(&text, &length, &capacity, ",", 1);
      write_field(&text, &length, &capacity, row->fields[i], always_quote);
    }
    bool last = r + 1 == rows;
    if (!(last && cut_last))
      append(&text, &length, &capacity, crlf ? "\r\n" : "\n", crlf ? 2 : 1);
    if (!blank) table[kept++] = *row;
  }
  /* A cut-off last row is left out (log_read.h), unless it was blank. */
  const table_row *last = &table[rows - 1];
  bool last_blank = last->count == 1 && last->fields[0][0] == '\0' &&
                    !always_quote && rows > 1;
  bool partial = cut_last && !last_blank && rows > 1;
  if (partial) kept--;
  write_log(text, length);
  free(text);
  if (cut_last && rows == 1) {
    read_back(NULL, 0, false); /* the header itself cut off: refused */
    return;
  }
  check_summary(read_back(table, kept, partial));
}

/* ------------------------------------------------ the core's own log */

static void fuzz_notes(fuzz_input *in) {
  static char text[MAX_NOTES * PLUMB_CSV_ROW_MAX + 4096];
  static char fields[MAX_NOTES + 1][PLUMB_CSV_ROW_MAX];
  static table_row rows[MAX_NOTES + 1];
  size_t length = (size_t)snprintf(text, sizeof text, "%s\n", plumb_csv_header());
  snprintf(fields[0], sizeof fields[0], "%s", plumb_csv_header());
  size_t count = 1;
  while (count <= MAX_NOTES && (count == 1 || !fuzz_input_done(in))) {
    plumb_note note;
    uint8_t *bytes = (uint8_t *)&note;
    for (size_t i = 0; i < sizeof note; ++i) bytes[i] = fuzz_u8(in);
    /* Integers as the core gives them; doubles any bit pattern. */
    note.verdict = (plumb_verdict)(note.verdict % PLUMB_VERDICT_COUNT);
    if (note.midi < -1 || note.midi > 127) note.midi = note.midi % 129 - 1;
    if (note.partials < -1 || note.partials > PLUMB_MAX_PARTIALS)
      note.partials = -1;
    char *row = fields[count];
    int written = plumb_note_to_csv(&note, row, PLUMB_CSV_ROW_MAX);
    FUZZ_CHECK(written > 0 && written < PLUMB_CSV_ROW_MAX, "row of %d bytes",
               written);
    memcpy(text + length, row, (size_t)written);
    length += (size_t)written;
    text[length++] = '\n';
    count++;
  }
  /* The writer never quotes: its fields are the row split at commas. */
  for (size_t r = 0; r < count; ++r) {
    rows[r].count = 0;
    char *field = fields[r];
    for (char *c = field;; ++c) {
      if (*c == ',' || *c == '\0') {
        bool end = *c == '\0';
        *c = '\0';
        FUZZ_CHECK(rows[r].count < MAX_ROW_FIELDS, "more than %d columns",
                   MAX_ROW_FIELDS);
        rows[r].fields[rows[r].count++] = field;
        field = c + 1;
        if (end) break;
      }
    }
  }
  write_log(text, length);
  static read_totals totals;
  memset(&totals, 0, sizeof totals);
  note_log log;
  char reason[256];
  FUZZ_CHECK(note_log_open(log_path, &log, reason, sizeof reason),
             "the core's log is refused: %s", reason);
  FUZZ_CHECK(log.header.count == rows[0].count, "header of %zu columns, "
             "written %zu", log.header.count, rows[0].count);
  check_header(&log);
  int verdict = note_log_column(&log, "verdict");
  int start = note_log_column(&log, "start_s");
  FUZZ_CHECK(verdict >= 0 && start >= 0, "no verdict or start_s column");
  size_t r = 1;
  while (note_log_next(&log)) {
    check_row(&log);
    FUZZ_CHECK(r < count && log.row.count == rows[r].count,
               "row %zu of %zu fields, written %zu", r, log.row.count,
               r < count ? rows[r].count : 0);
    for (size_t i = 0; i < rows[r].count; ++i)
      FUZZ_CHECK(strcmp(log.row.fields[i], rows[r].fields[i]) == 0,
                 "row %zu field %zu: '%s', written '%s'", r, i,
                 log.row.fields[i], rows[r].fields[i]);
    FUZZ_CHECK(note_log_field(&log, verdict)[0] != '\0',
               "row %zu has an empty verdict", r);
    count_row(&totals, &log, verdict);
    totals.rows++;
    r++;
  }
  FUZZ_CHECK(r == count && !log.failed && !log.partial_row,
             "read %zu of %zu rows", r - 1, count - 1);
  note_log_close(&log);
  totals.opened = true;
  check_summary(&totals);
}

/* ------------------------------------------------ the entry points */

static void remove_files(void) {
  unlink(log_path);
  rmdir(folder_path);
}

int LLVMFuzzerInitialize(int *argc, char ***argv) {
  (void)argc;
  (void)argv;
  const char *tmp = getenv("TMPDIR") ? getenv("TMPDIR") : "/tmp";
  snprintf(folder_path, sizeof folder_path, "%s/plumb-fuzz-log.XXXXXX", tmp);
  FUZZ_CHECK(mkdtemp(folder_path) != NULL, "mkdtemp: %s", strerror(errno));
  snprintf(log_path, sizeof log_path, "%s/take.notes.csv", folder_path);
  atexit(remove_files);
  fuzz_cleanup = remove_files;
  return 0;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size) {
  if (size == 0 || data[0] < 0x80) {
    write_log((const char *)data, size);
    check_summary(read_back(NULL, 0, false));
    return 0;
  }
  fuzz_input in = fuzz_input_of(data + 1, size - 1);
  if (data[0] & 1) fuzz_notes(&in);
  else fuzz_table(&in);
  return 0;
}
