/*
  Shortening UTF-8 text (RFC 3629) without splitting a character: every
  label and name the project cuts to a length goes through here.
*/
#ifndef PLUMB_FORMATS_UTF8_CUT_H
#define PLUMB_FORMATS_UTF8_CUT_H

#include <stddef.h>

/* How many of text's first `length` bytes to keep so that at most `limit`
   remain and the last kept character is whole. No allocation; [RT]. */
size_t utf8_cut(const char *text, size_t length, size_t limit);

#endif /* PLUMB_FORMATS_UTF8_CUT_H */
