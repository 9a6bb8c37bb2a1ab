/*
  The session log's text: one note record to one CSV row, and the header
  row. Pure text formatting: no file I/O, no allocation, no locale (the
  numbers are number_text.h's). Bounded, no system calls, though the
  plugin only calls it from its log writer thread.
*/
#ifndef PLUMB_FORMATS_NOTE_CSV_H
#define PLUMB_FORMATS_NOTE_CSV_H

#include "plumb.h"

#include <stddef.h>

#ifdef __cplusplus
extern "C" {
#endif

/* The header row: the column names in order, separated by ',', with no
   trailing newline. A static string; never NULL. */
const char *plumb_csv_header(void);

/* Format one note as a CSV row (no trailing newline) into buffer.
   Works like snprintf: writes at most size bytes including the
   terminating NUL, and returns the length the whole row needs, so a
   return value >= size means the row was cut short. Values that do not
   apply (NaN or infinite; -1 for the integer fields midi and partials)
   are left as empty fields, never written as 0. Returns -1 and writes
   nothing when note is NULL. PLUMB_CSV_ROW_MAX bytes always suffice,
   whatever the values (28 numbers of at most 316 characters each, 40
   partial entries of at most 50, plus the integers, names and commas). */
int plumb_note_to_csv(const plumb_note *note, char *buffer, size_t size);

#define PLUMB_CSV_ROW_MAX 16384

#ifdef __cplusplus
}
#endif

#endif /* PLUMB_FORMATS_NOTE_CSV_H */
