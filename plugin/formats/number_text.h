/*
  Numbers as text without the locale. The plugin runs inside hosts that may
  have called setlocale() with a language whose decimal separator is a
  comma, and printf's %f follows that; a CSV with "440,000" in it breaks
  every reader. So numbers are written by a formatter of our own that
  always puts out a '.' and never groups thousands. Its rounding is C's
  printf's: to nearest, exact ties to even. Every call is bounded and
  makes no system call.
*/
#ifndef PLUMB_FORMATS_NUMBER_TEXT_H
#define PLUMB_FORMATS_NUMBER_TEXT_H

#include "text_sink.h"

#include <stddef.h>

/* value with `decimals` digits after a '.', like printf("%.*f") in the C
   locale. decimals is clamped to 0..9. A NaN or infinite value writes the
   empty string. Returns the length needed, like snprintf. */
int plumb_text_fixed(double value, int decimals, char *buffer, size_t size);

/* value as d.ddd...e+XX with `decimals` digits after the '.', like
   printf("%.*e") in the C locale (at least two exponent digits).
   decimals is clamped to 0..9; NaN or infinite writes "". Rounding is
   exact (as printf's) while 10^(exponent - decimals) is exact in binary,
   that is for values from about 1e-19 to 1e25 at 3 decimals; outside that
   range one rounding step may change the last digit of a value that lies
   within one unit in the last place of a rounding midpoint. */
int plumb_text_scientific(double value, int decimals, char *buffer, size_t size);

/* The same, appended to a sink (decimals already within 0..9). */
void number_text_put_fixed(text_sink *sink, double value, int decimals);
void number_text_put_scientific(text_sink *sink, double value, int decimals);

#endif /* PLUMB_FORMATS_NUMBER_TEXT_H */
