/*
  plumb: the session log's text, one note record to one CSV row.

  Pure text formatting: no file I/O, no allocation, no locale. Every call
  here is [RT] in the sense of plumb.h (bounded, no system calls), though
  the plugin only calls them from its log writer thread.

  Why no locale: the plugin runs inside hosts that may have called
  setlocale() with a language whose decimal separator is a comma, and
  printf's %f follows that. A CSV with "440,000" in it breaks every reader,
  so numbers are written by a small formatter of our own that always puts
  out a '.' and never groups thousands. Its rounding is the same as C's
  printf: to nearest, exact ties to even.
*/
#ifndef PLUMB_CSV_H
#define PLUMB_CSV_H

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

/* The file stem a take label gives its log (docs/log-format.md): every
   character but A-Z a-z 0-9 . _ - becomes '_' (one '_' for a whole UTF-8
   sequence), a leading '.' becomes '_', and at most PLUMB_LOG_STEM_MAX
   characters are kept. The plugin names its files with it and the command
   finds them with it. stem needs PLUMB_LOG_STEM_MAX + 1 bytes. Returns the
   length. */
#define PLUMB_LOG_STEM_MAX 100
size_t plumb_log_stem(const char *label, char *stem);

#define PLUMB_CSV_ROW_MAX 16384

/* value with `decimals` digits after a '.', like printf("%.*f") in the C
   locale. decimals is clamped to 0..9. A NaN or infinite value writes the
   empty string. Returns the length needed, like snprintf. */
int plumb_csv_fixed(double value, int decimals, char *buffer, size_t size);

/* value as d.ddd...e+XX with `decimals` digits after the '.', like
   printf("%.*e") in the C locale (at least two exponent digits).
   decimals is clamped to 0..9; NaN or infinite writes "". Rounding is
   exact (as printf's) while 10^(exponent - decimals) is exact in binary,
   that is for values from about 1e-19 to 1e25 at 3 decimals; outside that
   range one rounding step may change the last digit of a value that lies
   within one unit in the last place of a rounding midpoint. */
int plumb_csv_scientific(double value, int decimals, char *buffer, size_t size);

#ifdef __cplusplus
}
#endif

#endif /* PLUMB_CSV_H */
