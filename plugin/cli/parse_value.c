/*
  strtod() follows the C library's locale, and accepts forms ("0x1p3",
  "inf", " 12") that are surprising on a command line; these parsers accept
  only plain decimal text. A decimal is read as an integer mantissa and a
  count of fraction digits: with at most 15 significant digits both the
  mantissa and the power of ten are exact doubles, so one division gives
  the correctly rounded value.
*/
#include "parse_value.h"

#include "plumb.h"

#include <string.h>

#define MAX_SIGNIFICANT_DIGITS 15
#define MAX_WHOLE_DIGITS 9

static bool is_digit(char c) { return c >= '0' && c <= '9'; }

/* Skips an optional sign; returns -1 for '-', else 1. */
static int read_sign(const char **text) {
  if (**text == '-') {
    ++*text;
    return -1;
  }
  if (**text == '+') {
    ++*text;
  }
  return 1;
}

bool parse_decimal(const char *text, double *value) {
  int sign = read_sign(&text);
  const char *point = strchr(text, '.');
  size_t length = strlen(text);
  size_t integer_length = point ? (size_t)(point - text) : length;
  /* Trailing zeros of the fraction add nothing but digits to count; one
     is kept, so that ".0" still has its digit. */
  size_t end = length;
  while (point && end > integer_length + 2 && text[end - 1] == '0') {
    --end;
  }
  double mantissa = 0.0;
  int significant = 0;
  int fraction_digits = 0;
  int digits = 0;
  for (size_t i = 0; i < end; ++i) {
    if (i == integer_length) {
      continue; /* the point */
    }
    if (!is_digit(text[i])) {
      return false;
    }
    ++digits;
    if (i > integer_length) {
      ++fraction_digits;
    }
    if (significant > 0 || text[i] != '0') {
      ++significant;
    }
    mantissa = mantissa * 10.0 + (text[i] - '0');
  }
  if (digits == 0 || significant > MAX_SIGNIFICANT_DIGITS ||
      fraction_digits > MAX_SIGNIFICANT_DIGITS) {
    return false;
  }
  double scale = 1.0;
  for (int i = 0; i < fraction_digits; ++i) {
    scale *= 10.0;
  }
  *value = sign * (mantissa / scale);
  return true;
}

bool parse_whole(const char *text, long *value) {
  int sign = read_sign(&text);
  size_t length = strlen(text);
  if (length == 0 || length > MAX_WHOLE_DIGITS) {
    return false;
  }
  long magnitude = 0;
  for (size_t i = 0; i < length; ++i) {
    if (!is_digit(text[i])) {
      return false;
    }
    magnitude = magnitude * 10 + (text[i] - '0');
  }
  *value = sign * magnitude;
  return true;
}

/* Where the octave number starts: the first digit, or a '-' before one,
   after at least one character of pitch-class name. NULL if none. */
static const char *find_octave(const char *text) {
  for (const char *c = text + 1; *c; ++c) {
    if (is_digit(*c) || (*c == '-' && is_digit(c[1]))) {
      return c;
    }
  }
  return NULL;
}

bool parse_note(const char *text, long *midi) {
  if (parse_whole(text, midi)) {
    return true;
  }
  const char *octave_text = text[0] ? find_octave(text) : NULL;
  char name[8];
  size_t name_length = octave_text ? (size_t)(octave_text - text) : 0;
  if (name_length == 0 || name_length >= sizeof name) {
    return false;
  }
  memcpy(name, text, name_length);
  name[name_length] = '\0';
  int pitch_class = plumb_pitch_class_from_name(name);
  long octave = 0;
  if (pitch_class < 0 || !parse_whole(octave_text, &octave) ||
      octave_text[0] == '+') {
    return false;
  }
  /* Scientific pitch notation: C4 is MIDI 60, so C-1 is 0. The core names
     no pitch class across an octave boundary (no Cb, no B#), so the
     octave number never needs correcting. */
  *midi = (octave + 1) * 12 + pitch_class;
  return true;
}
