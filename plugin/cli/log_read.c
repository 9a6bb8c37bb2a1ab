/*
  CSV as RFC 4180 has it: commas between fields; a field in double quotes
  may hold commas, doubled quotes and line breaks; CRLF or LF ends a row.
  The text is split in place: unquoting only ever shortens a field, so the
  write position never passes the read position.
*/
#include "log_read.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Reads the whole file, NUL-terminated. */
static char *read_file(const char *path, char *reason, size_t reason_size) {
  FILE *file = fopen(path, "rb");
  if (!file) {
    snprintf(reason, reason_size, "%s", strerror(errno));
    return NULL;
  }
  size_t size = 0;
  size_t capacity = 65536;
  char *text = malloc(capacity);
  while (text) {
    size += fread(text + size, 1, capacity - size - 1, file);
    if (size < capacity - 1 || ferror(file)) {
      break;
    }
    capacity *= 2;
    char *grown = realloc(text, capacity);
    if (!grown) {
      free(text);
    }
    text = grown;
  }
  bool failed = !text || ferror(file);
  int read_errno = errno;
  fclose(file);
  if (failed) {
    snprintf(reason, reason_size, "%s",
             text ? strerror(read_errno) : "out of memory");
    free(text);
    return NULL;
  }
  text[size] = '\0';
  return text;
}

/* Splits one field at *cursor in place. Returns the field and leaves
   *cursor after its separator; *row_ended says whether a line break (or
   the end of the text) came after it. */
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
    } else if (*read == '\0' || (!quoted && (*read == ',' || *read == '\n'))) {
      break;
    } else if (quoted || !(*read == '\r' && read[1] == '\n')) {
      *write++ = *read;
    }
  }
  *row_ended = *read != ',';
  *cursor = *read ? read + 1 : read;
  *write = '\0';
  return field;
}

/* Splits the row at *cursor into row->fields. False when out of memory. */
static bool split_row(char **cursor, note_log_row *row) {
  size_t capacity = 32;
  row->count = 0;
  row->fields = malloc(capacity * sizeof *row->fields);
  bool row_ended = false;
  while (row->fields && !row_ended) {
    if (row->count == capacity) {
      capacity *= 2;
      const char **grown = realloc(row->fields, capacity * sizeof *grown);
      if (!grown) {
        free(row->fields);
      }
      row->fields = grown;
      if (!grown) {
        break;
      }
    }
    row->fields[row->count++] = split_field(cursor, &row_ended);
  }
  return row->fields != NULL;
}

static bool is_blank(const note_log_row *row) {
  return row->count == 1 && row->fields[0][0] == '\0';
}

/* Splits every row after the header. */
static bool split_rows(char *cursor, note_log *log) {
  size_t capacity = 0;
  while (*cursor) {
    if (log->row_count == capacity) {
      capacity = capacity ? 2 * capacity : 256;
      note_log_row *grown = realloc(log->rows, capacity * sizeof *grown);
      if (!grown) {
        return false;
      }
      log->rows = grown;
    }
    note_log_row *row = &log->rows[log->row_count];
    if (!split_row(&cursor, row)) {
      return false;
    }
    if (is_blank(row)) {
      free(row->fields);
    } else {
      log->row_count += 1;
    }
  }
  return true;
}

bool note_log_read(const char *path, note_log *log, char *reason,
                   size_t reason_size) {
  memset(log, 0, sizeof *log);
  log->text = read_file(path, reason, reason_size);
  if (!log->text) {
    return false;
  }
  char *cursor = log->text;
  if (*cursor == '\0') {
    snprintf(reason, reason_size, "is empty: no header row");
    note_log_free(log);
    return false;
  }
  if (!split_row(&cursor, &log->header) || !split_rows(cursor, log)) {
    snprintf(reason, reason_size, "out of memory");
    note_log_free(log);
    return false;
  }
  return true;
}

void note_log_free(note_log *log) {
  for (size_t i = 0; i < log->row_count; ++i) {
    free(log->rows[i].fields);
  }
  free(log->rows);
  free(log->header.fields);
  free(log->text);
  memset(log, 0, sizeof *log);
}

int note_log_column(const note_log *log, const char *name) {
  for (size_t i = 0; i < log->header.count; ++i) {
    if (strcmp(log->header.fields[i], name) == 0) {
      return (int)i;
    }
  }
  return -1;
}

const char *note_log_field(const note_log *log, size_t row, int column) {
  if (column < 0 || row >= log->row_count ||
      (size_t)column >= log->rows[row].count) {
    return "";
  }
  return log->rows[row].fields[column];
}

/* strtod reads '.' as the decimal point because the command never sets a
   locale: it runs in the "C" locale, as the plugin writes its logs. */
double note_log_number(const note_log *log, size_t row, int column) {
  const char *field = note_log_field(log, row, column);
  char *end = NULL;
  double value = strtod(field, &end);
  if (field[0] == '\0' || *end != '\0') {
    return NAN;
  }
  return value;
}
