/*
  The terminal summary of a set of session logs: a table of the flagged
  notes (sharp, flat or unsteady), then one line per take with its counts,
  then where the logs are. `plumb scan` and `plumb report` both print it.
  Each log is read row by row, twice (counts, then the flagged rows), so a
  log of any length needs the memory of one row.
*/
#ifndef PLUMB_CLI_SUMMARY_H
#define PLUMB_CLI_SUMMARY_H

#include <stddef.h>
#include <stdio.h>

typedef struct {
  const char *label;    /* the take's name in the tables */
  const char *log_path; /* its <label>.notes.csv; NULL: a take with no
                           notes, which leaves no log */
} summary_take;

typedef struct {
  size_t flagged_notes; /* over all takes */
  size_t unreadable_logs;
} summary_totals;

/* Reads every take's log and prints the summary to `out`. A log that
   cannot be read is reported on stderr, counted, and left out. */
summary_totals summary_print(FILE *out, const summary_take *takes,
                             size_t take_count, const char *log_folder);

#endif
