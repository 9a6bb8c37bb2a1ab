#include "number_text.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>

/* ------------------------------------------------------ fixed decimals */

enum { MAX_DECIMALS = 9 };

static const double powers_of_ten[23] = {
    1e0,  1e1,  1e2,  1e3,  1e4,  1e5,  1e6,  1e7,  1e8,  1e9,  1e10, 1e11,
    1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22};

static int clamp_decimals(int decimals) {
  return decimals < 0 ? 0 : decimals > MAX_DECIMALS ? MAX_DECIMALS : decimals;
}

/* fma() rounds fraction*scale - offset once, and a correctly rounded
   result keeps the sign of the exact one, so these comparisons with the
   exact decimal value are exact: no rounding error can flip a digit. */
static int compare_scaled(double fraction, double scale, double offset) {
  double residual = fma(fraction, scale, -offset);
  return (residual > 0) - (residual < 0);
}

/* round(fraction * 10^decimals) for 0 <= fraction < 1, ties to even
   (the last digit's parity; for 0 decimals the integer part's). */
static uint64_t round_fraction(double fraction, int decimals,
                               uint64_t integer_part) {
  double scale = powers_of_ten[decimals];
  uint64_t digits = (uint64_t)floor(fraction * scale);
  while (digits > 0 && compare_scaled(fraction, scale, (double)digits) < 0) {
    --digits;
  }
  while (compare_scaled(fraction, scale, (double)digits + 1.0) >= 0) {
    ++digits;
  }
  int versus_half = compare_scaled(fraction, scale, (double)digits + 0.5);
  uint64_t last_digit = decimals > 0 ? digits : integer_part;
  if (versus_half > 0 || (versus_half == 0 && (last_digit & 1u))) {
    ++digits;
  }
  return digits;
}

static void put_zeros(text_sink *sink, int count) {
  for (int i = 0; i < count; ++i) {
    text_sink_char(sink, '0');
  }
}

void number_text_put_fixed(text_sink *sink, double value, int decimals) {
  if (!isfinite(value)) {
    return;
  }
  if (signbit(value)) {
    text_sink_char(sink, '-');
  }
  double magnitude = fabs(value);
  if (magnitude >= 0x1p53) {
    /* Whole numbers only at this size. %.0f prints no decimal point and
       never groups digits, so the locale cannot change it. */
    char integer_text[400];
    snprintf(integer_text, sizeof integer_text, "%.0f", magnitude);
    text_sink_text(sink, integer_text);
    if (decimals > 0) {
      text_sink_char(sink, '.');
      put_zeros(sink, decimals);
    }
    return;
  }
  double integer_value = floor(magnitude);
  uint64_t integer_part = (uint64_t)integer_value;
  uint64_t digits =
      round_fraction(magnitude - integer_value, decimals, integer_part);
  if (digits >= (uint64_t)powers_of_ten[decimals]) {
    ++integer_part; /* carried: 0.9996 -> 1.000 */
    digits = 0;
  }
  text_sink_unsigned(sink, integer_part, 1);
  if (decimals > 0) {
    text_sink_char(sink, '.');
    text_sink_unsigned(sink, digits, decimals);
  }
}

int plumb_text_fixed(double value, int decimals, char *buffer, size_t size) {
  text_sink sink = text_sink_start(buffer, size);
  number_text_put_fixed(&sink, value, clamp_decimals(decimals));
  return text_sink_finish(&sink);
}

/* ---------------------------------------------------------- scientific */

/* magnitude / 10^exponent, with one rounding for |exponent| <= 22. */
static double scale_by_power_of_ten(double magnitude, int exponent) {
  while (exponent > 22) {
    magnitude /= 1e22;
    exponent -= 22;
  }
  while (exponent < -22) {
    magnitude *= 1e22;
    exponent += 22;
  }
  return exponent >= 0 ? magnitude / powers_of_ten[exponent]
                       : magnitude * powers_of_ten[-exponent];
}

/* The sign of magnitude - candidate * 10^exponent. Exact (by fma, as in
   compare_scaled) while 10^|exponent| is exact in binary, that is for
   |exponent| <= 22; beyond, one rounding may blur a true tie. */
static int compare_with_power(double magnitude, int exponent,
                              double candidate) {
  if (exponent <= 0 && exponent >= -22) {
    return compare_scaled(magnitude, powers_of_ten[-exponent], candidate);
  }
  if (exponent > 0 && exponent <= 22) {
    return -compare_scaled(candidate, powers_of_ten[exponent], magnitude);
  }
  double residual = scale_by_power_of_ten(magnitude, exponent) - candidate;
  return (residual > 0) - (residual < 0);
}

/* round(magnitude / 10^exponent), ties to even. */
static uint64_t round_scaled(double magnitude, int exponent) {
  uint64_t digits = (uint64_t)floor(scale_by_power_of_ten(magnitude, exponent));
  while (digits > 0 &&
         compare_with_power(magnitude, exponent, (double)digits) < 0) {
    --digits;
  }
  while (compare_with_power(magnitude, exponent, (double)digits + 1.0) >= 0) {
    ++digits;
  }
  int versus_half =
      compare_with_power(magnitude, exponent, (double)digits + 0.5);
  if (versus_half > 0 || (versus_half == 0 && (digits & 1u))) {
    ++digits;
  }
  return digits;
}

/* The decimals+1 significant digits of magnitude > 0 and its decimal
   exponent, rounded as printf's %e does (9.9996 -> 1.000e+01). log10
   gives the exponent to within one; the digit count settles it. */
static uint64_t significant_digits(double magnitude, int decimals,
                                   int *exponent) {
  uint64_t lowest = (uint64_t)powers_of_ten[decimals];
  *exponent = (int)floor(log10(magnitude));
  uint64_t digits = round_scaled(magnitude, *exponent - decimals);
  for (int attempt = 0; attempt < 4; ++attempt) {
    if (digits >= lowest * 10u) {
      ++*exponent;
    } else if (digits < lowest) {
      --*exponent;
    } else {
      break;
    }
    digits = round_scaled(magnitude, *exponent - decimals);
  }
  return digits;
}

void number_text_put_scientific(text_sink *sink, double value, int decimals) {
  if (!isfinite(value)) {
    return;
  }
  if (signbit(value)) {
    text_sink_char(sink, '-');
  }
  double magnitude = fabs(value);
  int exponent = 0;
  uint64_t digits =
      magnitude > 0 ? significant_digits(magnitude, decimals, &exponent) : 0;
  uint64_t lowest = (uint64_t)powers_of_ten[decimals];
  text_sink_unsigned(sink, digits / lowest, 1);
  if (decimals > 0) {
    text_sink_char(sink, '.');
    text_sink_unsigned(sink, digits % lowest, decimals);
  }
  text_sink_char(sink, 'e');
  text_sink_char(sink, exponent < 0 ? '-' : '+');
  text_sink_unsigned(sink, (uint64_t)(exponent < 0 ? -exponent : exponent), 2);
}

int plumb_text_scientific(double value, int decimals, char *buffer,
                         size_t size) {
  text_sink sink = text_sink_start(buffer, size);
  number_text_put_scientific(&sink, value, clamp_decimals(decimals));
  return text_sink_finish(&sink);
}
