/*
  Text for a terminal from names the command does not control (file names,
  take labels, log fields). A control character would move the cursor,
  colour the screen or break a table's row, so every byte below 0x20, DEL
  and the C1 controls (U+0080 … U+009F) are written as visible escapes
  (\n, \t, \x1b …), and so is every byte that is not part of well-formed
  UTF-8. Everything else passes unchanged.
*/
#ifndef PLUMB_CLI_TERMINAL_TEXT_H
#define PLUMB_CLI_TERMINAL_TEXT_H

#include <stddef.h>

/* Writes the escaped `text` into out (capacity size, at least 1), cut at a
   whole character or escape when it does not fit. Returns out. */
char *terminal_text(const char *text, char *out, size_t size);

/* The number of terminal columns the escaped text takes, counting one per
   character (wide characters are rare in file names). */
size_t terminal_width(const char *escaped);

#endif
