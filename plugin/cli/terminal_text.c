#include "terminal_text.h"

#include <stdbool.h>
#include <stdio.h>
#include <string.h>

/* The length of the well-formed UTF-8 sequence at `s` (RFC 3629: no
   overlong forms, no surrogates, nothing above U+10FFFF), or 0. */
static size_t utf8_length(const unsigned char *s) {
  if (s[0] < 0x80) return 1;
  size_t length = s[0] >= 0xF0 ? 4 : s[0] >= 0xE0 ? 3 : s[0] >= 0xC2 ? 2 : 0;
  if (length == 0 || s[0] > 0xF4) return 0;
  for (size_t i = 1; i < length; ++i) {
    if ((s[i] & 0xC0) != 0x80) return 0;
  }
  if (length == 3 && ((s[0] == 0xE0 && s[1] < 0xA0) || (s[0] == 0xED && s[1] >= 0xA0)))
    return 0;
  if (length == 4 && ((s[0] == 0xF0 && s[1] < 0x90) || (s[0] == 0xF4 && s[1] >= 0x90)))
    return 0;
  return length;
}

static bool is_control(const unsigned char *s, size_t length) {
  return (length == 1 && (s[0] < 0x20 || s[0] == 0x7F)) ||
         (length == 2 && s[0] == 0xC2 && s[1] < 0xA0);
}

/* The visible form of a control character or a stray byte. */
static void escape_of(const unsigned char *s, size_t length, char piece[16]) {
  static const char letters[] = {['\n'] = 'n', ['\r'] = 'r', ['\t'] = 't'};
  if (length == 1 && s[0] < sizeof letters && letters[s[0]]) {
    snprintf(piece, 16, "\\%c", letters[s[0]]);
  } else if (length == 2) {
    snprintf(piece, 16, "\\u%04x", (unsigned)(((s[0] & 0x1F) << 6) | (s[1] & 0x3F)));
  } else {
    snprintf(piece, 16, "\\x%02x", s[0]);
  }
}

char *terminal_text(const char *text, char *out, size_t size) {
  const unsigned char *s = (const unsigned char *)text;
  size_t used = 0;
  while (*s) {
    size_t length = utf8_length(s);
    char piece[16];
    if (length == 0 || is_control(s, length)) {
      escape_of(s, length ? length : 1, piece);
      length = length ? length : 1;
    } else if (s[0] == '\\') {
      snprintf(piece, sizeof piece, "\\\\"); /* so that an escape is unambiguous */
    } else {
      memcpy(piece, s, length);
      piece[length] = '\0';
    }
    size_t piece_length = strlen(piece);
    if (used + piece_length + 1 > size) break;
    memcpy(out + used, piece, piece_length);
    used += piece_length;
    s += length;
  }
  out[used] = '\0';
  return out;
}

size_t terminal_width(const char *escaped) {
  size_t columns = 0;
  for (const unsigned char *s = (const unsigned char *)escaped; *s; ++s) {
    columns += (*s & 0xC0) != 0x80;
  }
  return columns;
}
