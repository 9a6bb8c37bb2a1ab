/*
  The folders the project's plugin tests give their host's plugin to
  write in (folder_host.c): a fresh one under $TMPDIR, and its removal
  with everything in it.
*/
#ifndef PLUMB_TEST_FOLDER_HOST_H
#define PLUMB_TEST_FOLDER_HOST_H

#include <stddef.h>

/* $TMPDIR/<prefix>.XXXXXX (/tmp without $TMPDIR), made, into folder.
   Returns 0, or -1 (and says why on stderr). */
int host_folder_make(char *folder, size_t size, const char *prefix);

/* The folder and everything below it, links not followed. Returns 0 or
   -1. */
int host_folder_remove(const char *folder);

#endif
