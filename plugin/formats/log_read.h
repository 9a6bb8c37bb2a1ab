/*
  Reading a session log (<label>.notes.csv) back, one row at a time: a
  header row of column names, then one row per note. Fields are found by
  column name, never by position, so that columns added later change
  nothing here. Only the current row is held in memory, so a log of any
  length is read in the space of its longest row.
*/
#ifndef PLUMB_CLI_LOG_READ_H
#define PLUMB_CLI_LOG_READ_H

#include <stdbool.h>
#include <stddef.h>
#include <stdio.h>

typedef struct {
  const char **fields;
  size_t count;
  size_t capacity;
} note_log_row;

typedef struct {
  FILE *file;
  char *header_text;   /* the header row, split in place */
  note_log_row header; /* column names */
  char *row_text;      /* the current row, split in place */
  size_t row_capacity;
  note_log_row row;   /* the current row's fields */
  size_t rows_read;   /* rows returned so far */
  bool partial_row;   /* the file ended inside a row, which was skipped */
  bool failed;        /* reading stopped on an error; see reason */
  char reason[128];
} note_log;

/* Opens `path` and reads its header. On failure writes a reason and
   returns false; *log is then closed (note_log_close on it is harmless). */
bool note_log_open(const char *path, note_log *log, char *reason,
                   size_t reason_size);

/* Reads the next row into log->row. False at the end of the file or on an
   error (log->failed, log->reason). A last row that the file cuts off
   before its line break (a host stopped while writing it) is not
   returned: log->partial_row says so. Blank lines are skipped. */
bool note_log_next(note_log *log);

void note_log_close(note_log *log);

/* Index of the column called `name`, or -1. */
int note_log_column(const note_log *log, const char *name);

/* The current row's field in `column`; "" when the column is -1 or the
   row is shorter than the header. */
const char *note_log_field(const note_log *log, int column);

/* The field as a number; NaN when empty or not a number. */
double note_log_number(const note_log *log, int column);

#endif
