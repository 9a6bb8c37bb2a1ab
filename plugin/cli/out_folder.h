/*
  The --out folder: made (with its parents) before any take runs, and
  checked to be writable, so that no analysis is wasted on logs that could
  not be written.
*/
#ifndef PLUMB_CLI_OUT_FOLDER_H
#define PLUMB_CLI_OUT_FOLDER_H

#include <stdbool.h>
#include <stddef.h>

/* Makes `given` like mkdir -p and writes its absolute path. On failure
   reports one line and returns false. */
bool out_folder_prepare(const char *given, char *absolute, size_t size);

#endif
