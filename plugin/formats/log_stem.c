#include "log_stem.h"

#include <stdbool.h>

static bool stem_keeps(unsigned char c) {
  return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || (c >= '0' && c <= '9') ||
         c == '.' || c == '_' || c == '-';
}

size_t plumb_log_stem(const char *label, char *stem) {
  size_t length = 0;
  for (const unsigned char *c = (const unsigned char *)label; *c && length < PLUMB_LOG_STEM_MAX;
       ++c) {
    if ((*c & 0xC0u) == 0x80u) continue; /* a UTF-8 continuation byte: its lead gave the '_' */
    stem[length++] = (char)(stem_keeps(*c) ? *c : '_');
  }
  stem[length] = '\0';
  if (stem[0] == '.') stem[0] = '_';
  return length;
}
