/*
  A text sink: appends to a caller's buffer like snprintf, so that what
  does not fit is dropped but still counted, and the final length says
  what was needed. Shared by the formats that write text (numbers, CSV
  rows, JSON). No allocation, no locale.
*/
#ifndef PLUMB_FORMATS_TEXT_SINK_H
#define PLUMB_FORMATS_TEXT_SINK_H

#include <stddef.h>
#include <stdint.h>

typedef struct {
  char *buffer;
  size_t size;
  size_t length;
} text_sink;

text_sink text_sink_start(char *buffer, size_t size);
void text_sink_char(text_sink *sink, char c);
void text_sink_text(text_sink *sink, const char *text);
/* `width` is the least number of digits (zero padded). */
void text_sink_unsigned(text_sink *sink, uint64_t value, int width);
void text_sink_int(text_sink *sink, long long value);
/* NUL-terminates; returns the length needed, like snprintf. */
int text_sink_finish(text_sink *sink);

#endif /* PLUMB_FORMATS_TEXT_SINK_H */
