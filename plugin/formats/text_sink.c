#include "text_sink.h"

#include <limits.h>

text_sink text_sink_start(char *buffer, size_t size) {
  text_sink sink = {buffer, buffer ? size : 0, 0};
  return sink;
}

void text_sink_char(text_sink *sink, char c) {
  if (sink->length + 1 < sink->size) {
    sink->buffer[sink->length] = c;
  }
  ++sink->length;
}

void text_sink_text(text_sink *sink, const char *text) {
  for (; *text; ++text) {
    text_sink_char(sink, *text);
  }
}

int text_sink_finish(text_sink *sink) {
  if (sink->size > 0) {
    size_t end = sink->length < sink->size ? sink->length : sink->size - 1;
    sink->buffer[end] = '\0';
  }
  return sink->length > (size_t)INT_MAX ? INT_MAX : (int)sink->length;
}

void text_sink_unsigned(text_sink *sink, uint64_t value, int width) {
  char digits[24];
  int count = 0;
  do {
    digits[count++] = (char)('0' + value % 10u);
    value /= 10u;
  } while (value > 0 && count < (int)sizeof digits);
  while (count < width && count < (int)sizeof digits) {
    digits[count++] = '0';
  }
  while (count > 0) {
    text_sink_char(sink, digits[--count]);
  }
}

void text_sink_int(text_sink *sink, long long value) {
  if (value < 0) {
    text_sink_char(sink, '-');
    text_sink_unsigned(sink, (uint64_t)(-(value + 1)) + 1u, 1);
  } else {
    text_sink_unsigned(sink, (uint64_t)value, 1);
  }
}
