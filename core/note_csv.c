/*
  plumb: one note record to one CSV row, with a locale-free number
  formatter (see plumb_csv.h for why).
*/
#include "plumb_csv.h"

#include <limits.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>

/* ------------------------------------------------------------ text sink */

/* Appends to a caller's buffer like snprintf: what does not fit is
   dropped but still counted, so the final length says what was needed. */
typedef struct {
  char *buffer;
  size_t size;
  size_t length;
} text_sink;

static text_sink sink_start(char *buffer, size_t size) {
  text_sink sink = {buffer, buffer ? size : 0, 0};
  return sink;
}

static void put_char(text_sink *sink, char c) {
  if (sink->length + 1 < sink->size) {
    sink->buffer[sink->length] = c;
  }
  ++sink->length;
}

static void put_text(text_sink *sink, const char *text) {
  for (; *text; ++text) {
    put_char(sink, *text);
  }
}

static int sink_finish(text_sink *sink) {
  if (sink->size > 0) {
    size_t end = sink->length < sink->size ? sink->length : sink->size - 1;
    sink->buffer[end] = '\0';
  }
  return sink->length > (size_t)INT_MAX ? INT_MAX : (int)sink->length;
}

/* `width` is the least number of digits (zero padded). */
static void put_unsigned(text_sink *sink, uint64_t value, int width) {
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
    put_char(sink, digits[--count]);
  }
}

static void put_int(text_sink *sink, long long value) {
  if (value < 0) {
    put_char(sink, '-');
    put_unsigned(sink, (uint64_t)(-(value + 1)) + 1u, 1);
  } else {
    put_unsigned(sink, (uint64_t)value, 1);
  }
}

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
    put_char(sink, '0');
  }
}

static void put_fixed(text_sink *sink, double value, int decimals) {
  if (!isfinite(value)) {
    return;
  }
  if (signbit(value)) {
    put_char(sink, '-');
  }
  double magnitude = fabs(value);
  if (magnitude >= 0x1p53) {
    /* Whole numbers only at this size. %.0f prints no decimal point and
       never groups digits, so the locale cannot change it. */
    char integer_text[400];
    snprintf(integer_text, sizeof integer_text, "%.0f", magnitude);
    put_text(sink, integer_text);
    if (decimals > 0) {
      put_char(sink, '.');
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
  put_unsigned(sink, integer_part, 1);
  if (decimals > 0) {
    put_char(sink, '.');
    put_unsigned(sink, digits, decimals);
  }
}

int plumb_csv_fixed(double value, int decimals, char *buffer, size_t size) {
  text_sink sink = sink_start(buffer, size);
  put_fixed(&sink, value, clamp_decimals(decimals));
  return sink_finish(&sink);
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

static void put_scientific(text_sink *sink, double value, int decimals) {
  if (!isfinite(value)) {
    return;
  }
  if (signbit(value)) {
    put_char(sink, '-');
  }
  double magnitude = fabs(value);
  int exponent = 0;
  uint64_t digits =
      magnitude > 0 ? significant_digits(magnitude, decimals, &exponent) : 0;
  uint64_t lowest = (uint64_t)powers_of_ten[decimals];
  put_unsigned(sink, digits / lowest, 1);
  if (decimals > 0) {
    put_char(sink, '.');
    put_unsigned(sink, digits % lowest, decimals);
  }
  put_char(sink, 'e');
  put_char(sink, exponent < 0 ? '-' : '+');
  put_unsigned(sink, (uint64_t)(exponent < 0 ? -exponent : exponent), 2);
}

int plumb_csv_scientific(double value, int decimals, char *buffer,
                         size_t size) {
  text_sink sink = sink_start(buffer, size);
  put_scientific(&sink, value, clamp_decimals(decimals));
  return sink_finish(&sink);
}

/* ------------------------------------------------------------- the row */

static const char csv_header[] =
    "index,start_s,end_s,timeline_s,note,midi,target_hz,f0_hz,cents,"
    "spread_cents,drift_cents_per_s,vibrato_hz,vibrato_cents,confidence,"
    "inharmonicity_b,partials,hnr_db,odd_even_db,centroid_hz,attack_ms,"
    "decay_ms,sustain_db,release_ms,peak_dbfs,verdict,"
    "bar,beat,tristimulus_1,tristimulus_2,tristimulus_3,decay_db_per_s,partial_cents";

const char *plumb_csv_header(void) { return csv_header; }

/* Decimals per unit, as the log format fixes them (docs/log-format.md). */
enum {
  SECONDS_DECIMALS = 4,
  HZ_DECIMALS = 3,
  CENTS_DECIMALS = 2,
  CENTS_PER_S_DECIMALS = 2,
  VIBRATO_HZ_DECIMALS = 2,
  CONFIDENCE_DECIMALS = 3,
  B_DECIMALS = 3,
  DB_DECIMALS = 2,
  MS_DECIMALS = 1,
  BEAT_DECIMALS = 3,
  SHARE_DECIMALS = 4,
  DB_PER_S_DECIMALS = 2
};

/* Each field is preceded by the comma that ends the one before. */
static void field_fixed(text_sink *sink, double value, int decimals) {
  put_char(sink, ',');
  put_fixed(sink, value, decimals);
}

static void field_count(text_sink *sink, int value) {
  put_char(sink, ',');
  if (value >= 0) {
    put_int(sink, value);
  }
}

static void field_note_name(text_sink *sink, int midi) {
  put_char(sink, ',');
  if (midi >= 0 && midi <= 127) {
    char name[8];
    plumb_note_name(midi, name);
    put_text(sink, name);
  }
}

static void field_verdict(text_sink *sink, plumb_verdict verdict) {
  put_char(sink, ',');
  const char *name = plumb_verdict_name(verdict); /* NULL if not a verdict */
  if (name) {
    put_text(sink, name);
  }
}

static void put_pitch_fields(text_sink *sink, const plumb_note *note) {
  field_note_name(sink, note->midi);
  field_count(sink, note->midi);
  field_fixed(sink, note->target_hz, HZ_DECIMALS);
  field_fixed(sink, note->f0_hz, HZ_DECIMALS);
  field_fixed(sink, note->cents, CENTS_DECIMALS);
  field_fixed(sink, note->spread_cents, CENTS_DECIMALS);
  field_fixed(sink, note->drift_cents_per_s, CENTS_PER_S_DECIMALS);
  field_fixed(sink, note->vibrato_hz, VIBRATO_HZ_DECIMALS);
  field_fixed(sink, note->vibrato_cents, CENTS_DECIMALS);
  field_fixed(sink, note->confidence, CONFIDENCE_DECIMALS);
}

static void put_sound_fields(text_sink *sink, const plumb_note *note) {
  put_char(sink, ',');
  put_scientific(sink, note->inharmonicity_b, B_DECIMALS);
  field_count(sink, note->partials);
  field_fixed(sink, note->hnr_db, DB_DECIMALS);
  field_fixed(sink, note->odd_even_db, DB_DECIMALS);
  field_fixed(sink, note->centroid_hz, HZ_DECIMALS);
  field_fixed(sink, note->attack_ms, MS_DECIMALS);
  field_fixed(sink, note->decay_ms, MS_DECIMALS);
  field_fixed(sink, note->sustain_db, DB_DECIMALS);
  field_fixed(sink, note->release_ms, MS_DECIMALS);
  field_fixed(sink, note->peak_dbfs, DB_DECIMALS);
  field_verdict(sink, note->verdict);
}

/* The partials' deviations as "k:cents" entries separated by spaces, for
   the partials found (docs/log-format.md). */
static void field_partial_cents(text_sink *sink, const plumb_note *note) {
  put_char(sink, ',');
  bool first = true;
  for (int k = 0; k < PLUMB_MAX_PARTIALS; ++k) {
    double cents = note->partial_cents[k];
    if (!isfinite(cents)) {
      continue;
    }
    if (!first) {
      put_char(sink, ' ');
    }
    first = false;
    put_unsigned(sink, (uint64_t)(k + 1), 1);
    put_char(sink, ':');
    if (!signbit(cents)) {
      put_char(sink, '+');
    }
    put_fixed(sink, cents, CENTS_DECIMALS);
  }
}

/* The columns after the required ones. */
static void put_extra_fields(text_sink *sink, const plumb_note *note) {
  field_fixed(sink, note->bar, 0);
  field_fixed(sink, note->beat, BEAT_DECIMALS);
  for (int t = 0; t < 3; ++t) {
    field_fixed(sink, note->tristimulus[t], SHARE_DECIMALS);
  }
  field_fixed(sink, note->decay_db_per_s, DB_PER_S_DECIMALS);
  field_partial_cents(sink, note);
}

int plumb_note_to_csv(const plumb_note *note, char *buffer, size_t size) {
  if (!note) {
    return -1;
  }
  text_sink sink = sink_start(buffer, size);
  put_unsigned(&sink, note->index, 1);
  field_fixed(&sink, note->start_s, SECONDS_DECIMALS);
  field_fixed(&sink, note->end_s, SECONDS_DECIMALS);
  field_fixed(&sink, note->timeline_s, SECONDS_DECIMALS);
  put_pitch_fields(&sink, note);
  put_sound_fields(&sink, note);
  put_extra_fields(&sink, note);
  return sink_finish(&sink);
}

static bool stem_keeps(unsigned char c) {
  return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || (c >= '0' && c <= '9') ||
         c == '.' || c == '_' || c == '-';
}

size_t plumb_log_stem(const char *label, char *stem) {
  size_t length = 0;
  for (const unsigned char *c = (const unsigned char *)label; *c && length < PLUMB_LOG_STEM_MAX;
       ++c) {
    if ((*c & 0xC0u) == 0x80u) continue; /* a UTF-8 continuation byte: its lead gave the '_' */
    stem[length++] = stem_keeps(*c) ? (char)*c : '_';
  }
  stem[length] = '\0';
  if (stem[0] == '.') stem[0] = '_';
  return length;
}
