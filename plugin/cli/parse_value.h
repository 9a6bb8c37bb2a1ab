/*
  Strict, locale-independent parsing of option values. The whole string
  must be the value: no leading or trailing space, no hex, no exponent, no
  "inf" or "nan", and the decimal separator is always '.'.
*/
#ifndef PLUMB_CLI_PARSE_VALUE_H
#define PLUMB_CLI_PARSE_VALUE_H

#include <stdbool.h>

/* "[+-]digits[.digits]" (".5" and "5." too), at most 15 significant
   digits. The result is the correctly rounded double. */
bool parse_decimal(const char *text, double *value);

/* "[+-]digits", at most 9 digits. */
bool parse_whole(const char *text, long *value);

/* A MIDI number ("40") or a note name in scientific pitch notation
   ("E1", "C#4", "Db-1"). The result may be outside 0..127. */
bool parse_note(const char *text, long *midi);

#endif
