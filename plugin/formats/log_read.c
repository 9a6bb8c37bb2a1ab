/*
  CSV as RFC 4180 has it: commas between fields; a field in double quotes
  may hold commas, doubled quotes and line breaks; CRLF or LF ends a row.
  A row is read whole (its line breaks inside quotes included), then split
  in place: unquoting only ever shortens a field, so the write position
  never passes the read position.
*/
#include "log_read.h"

#include <errno.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

/* A row longer than this is not a notes log (a row is about 1 KB). */
#define ROW_MAX_BYTES (16u << 20)

typedef enum { ROW_READ, ROW_END, ROW_PARTIAL, ROW_FAILED } row_status;

static bool grow(char **text, size_t *capacity, size_t needed) {
  if (needed <= *capacity) {
    return true;
  }
  size_t wanted = *capacity ? 2 * *capacity : 4096;
  while (wanted < needed) {
    wanted *= 2;
  }
  char *grown = realloc(*text, wanted);
  if (!grown) {
    return false;
  }
  *text = grown;
  *capacity = wanted;
  return true;
}

static row_status fail(note_log *log, const char *reason) {
  log->failed = true;
  snprintf(log->reason, sizeof log->reason, "%s", reason);
  return ROW_FAILED;
}

/* Reads one row's text, up to its line break outside quotes, into
   *text (NUL-terminated, without the line break). */
static row_status read_row_text(note_log *log, char **text, size_t *capacity) {
  size_t length = 0;
  bool quoted = false;
  for (;;) {
    int c = getc(log->file);
    if (c == EOF) {
      if (ferror(log->file)) {
        return fail(log, strerror(errno));
      }
      return length == 0 ? ROW_END : ROW_PARTIAL;
    }
    if (c == '\n' && !quoted) {
      break;
    }
    quoted = c == '"' ? !quoted : quoted;
    if (length + 2 > ROW_MAX_BYTES) {
      return fail(log, "a row is longer than 16 MB: not a notes log");
    }
    if (!grow(text, capacity, length + 2)) {
      return fail(log, "out of memory");
    }
    (*text)[length++] = (char)c;
  }
  if (length > 0 && (*text)[length - 1] == '\r') {
    --length;
  }
  if (!grow(text, capacity, length + 1)) {
    return fail(log, "out of memory");
  }
  (*text)[length] = '\0';
  return ROW_READ;
}

/* Splits one field at *cursor in place. Returns the field and leaves
   *cursor after its separator; *row_ended says whether the row's end came
   after it. */
static char *split_field(char **cursor, bool *row_ended) {
  char *read = *cursor;
  char *write = read;
  char *field = write;
  bool quoted = *read == '"';
  read += quoted;
  for (;; ++read) {
    if (quoted && read[0] == '"' && read[1] == '"') {
      *write++ = '"'; /* a doubled quote is one quote */
      ++read;
    } else if (quoted && *read == '"') {
      quoted = false;
    } else if (*read == '\0' || (!quoted && *read == ',')) {
      break;
    } else {
      *write++ = *read;
    }
  }
  *row_ended = *read != ',';
  *cursor = *read ? read + 1 : read;
  *write = '\0';
  return field;
}

/* Splits the row text into row->fields. False when out of memory. */
static bool split_row(char *text, note_log_row *row) {
  row->count = 0;
  bool row_ended = false;
  while (!row_ended) {
    if (row->count == row->capacity) {
      size_t wanted = row->capacity ? 2 * row->capacity : 32;
      const char **grown = realloc(row->fields, wanted * sizeof *grown);
      if (!grown) {
        return false;
      }
      row->fields = grown;
      row->capacity = wanted;
    }
    row->fields[row->count++] = split_field(&text, &row_ended);
  }
  return true;
}

bool note_log_open(const char *path, note_log *log, char *reason,
                   size_t reason_size) {
  memset(log, 0, sizeof *log);
  log->file = fopen(path, "rb");
  if (!log->file) {
    snprintf(reason, reason_size, "%s", strerror(errno));
    return false;
  }
  size_t capacity = 0;
  row_status status = read_row_text(log, &log->header_text, &capacity);
  if (status == ROW_FAILED) {
    snprintf(reason, reason_size, "%s", log->reason);
  } else if (status != ROW_READ) {
    snprintf(reason, reason_size, "is empty or cut off: no whole header row");
  } else if (!split_row(log->header_text, &log->header)) {
    snprintf(reason, reason_size, "out of memory");
  } else {
    return true;
  }
  note_log_close(log);
  return false;
}

bool note_log_next(note_log *log) {
  if (!log->file || log->failed) {
    return false;
  }
  for (;;) {
    row_status status =
        read_row_text(log, &log->row_text, &log->row_capacity);
    if (status == ROW_PARTIAL) {
      log->partial_row = true;
    }
    if (status != ROW_READ) {
      return false;
    }
    if (log->row_text[0] == '\0') {
      continue; /* a blank line */
    }
    if (!split_row(log->row_text, &log->row)) {
      fail(log, "out of memory");
      return false;
    }
    log->rows_read += 1;
    return true;
  }
}

void note_log_close(note_log *log) {
  if (log->file) {
    fclose(log->file);
  }
  free(log->header_text);
  free(log->header.fields);
  free(log->row_text);
  free(log->row.fields);
  bool partial = log->partial_row;
  bool failed = log->failed;
  char reason[sizeof log->reason];
  memcpy(reason, log->reason, sizeof reason);
  memset(log, 0, sizeof *log);
  /* What happened stays readable after closing. */
  log->partial_row = partial;
  log->failed = failed;
  memcpy(log->reason, reason, sizeof reason);
}

int note_log_column(const note_log *log, const char *name) {
  for (size_t i = 0; i < log->header.count; ++i) {
    if (strcmp(log->header.fields[i], name) == 0) {
      return i <= INT32_MAX ? (int)i : -1;
    }
  }
  return -1;
}

const char *note_log_field(const note_log *log, int column) {
  if (column < 0 || (size_t)column >= log->row.count) {
    return "";
  }
  return log->row.fields[column];
}

/* strtod reads '.' as the decimal point because the command never sets a
   locale: it runs in the "C" locale, as the plugin writes its logs. */
double note_log_number(const note_log *log, int column) {
  const char *field = note_log_field(log, column);
  char *end = NULL;
  double value = strtod(field, &end);
  if (field[0] == '\0' || *end != '\0') {
    return NAN;
  }
  return value;
}
