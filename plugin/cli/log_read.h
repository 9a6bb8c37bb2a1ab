/*
  Reading a session log (<label>.notes.csv) back: a header row of column
  names, then one row per note. Fields are found by column name, never by
  position, so that columns added later change nothing here.
*/
#ifndef PLUMB_CLI_LOG_READ_H
#define PLUMB_CLI_LOG_READ_H

#include <stdbool.h>
#include <stddef.h>

typedef struct {
  const char **fields;
  size_t count;
} note_log_row;

typedef struct {
  char *text;          /* the file, split in place into fields */
  note_log_row header; /* column names */
  note_log_row *rows;  /* one per note */
  size_t row_count;
} note_log;

/* Reads `path`. On failure writes a reason and returns false; *log is then
   empty (note_log_free on it is harmless). */
bool note_log_read(const char *path, note_log *log, char *reason,
                   size_t reason_size);

void note_log_free(note_log *log);

/* Index of the column called `name`, or -1. */
int note_log_column(const note_log *log, const char *name);

/* The field of `row` in `column`; "" when the column is -1 or the row is
   shorter than the header. */
const char *note_log_field(const note_log *log, size_t row, int column);

/* The field as a number; NaN when empty or not a number. */
double note_log_number(const note_log *log, size_t row, int column);

#endif
