/*
  The exit statuses of the plumb command, in one place so that every part
  agrees. When several apply, the highest wins: an input/output error (3)
  outranks flagged notes (1), which outrank success (0). A usage error (2)
  stops the command before any take runs, so it never meets the others.
*/
#ifndef PLUMB_CLI_EXIT_STATUS_H
#define PLUMB_CLI_EXIT_STATUS_H

enum {
  EXIT_STATUS_DONE = 0,
  EXIT_STATUS_FLAGGED = 1, /* only with --strict */
  EXIT_STATUS_USAGE = 2,
  EXIT_STATUS_IO = 3
};

/* The status to report when both `a` and `b` happened. */
static inline int exit_status_worst(int a, int b) { return a > b ? a : b; }

#endif
