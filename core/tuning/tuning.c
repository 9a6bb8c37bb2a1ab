/*
  Tuning: temperaments built from their definitions, the tonic rotation and
  the A anchor, target frequencies and the nearest-target search.

  Every temperament here is constructed at run time from pure ratios (the
  fifth 3/2, the syntonic comma 81/80, the Pythagorean comma 3^12/2^19),
  never typed in as a table of results. The constructions follow Barbour,
  "Tuning and Temperament" (1951, from memory); docs/tuning.md explains
  each one. All functions are pure and real-time safe: no allocation, no
  I/O, bounded work.
*/
#include "plumb.h"

#include <math.h>

#define SEMITONE_CENTS 100.0
#define OCTAVE_CENTS 1200.0
#define EQUAL_FIFTH_CENTS 700.0
#define PITCH_CLASS_A 9
#define MIDI_A4 69
/* Far beyond any audible note; keeps the MIDI number inside an int. */
#define MIDI_SEARCH_LIMIT 1000000.0

/* Pitch classes named in the chains below. */
enum { PC_C = 0, PC_EB = 3, PC_F = 5, PC_FSHARP = 6, PC_B = 11 };

/* A chain of eleven fifths through all twelve pitch classes. */
typedef struct {
  int first_pitch_class;   /* the lowest note of the chain */
  double fifth_cents[11];  /* each fifth, going up the chain */
} fifth_chain;

/* 1200*log2(numerator/denominator): the cent (Ellis 1885). */
static double ratio_cents(double numerator, double denominator) {
  return OCTAVE_CENTS * log2(numerator / denominator);
}

static double pure_fifth_cents(void) { return ratio_cents(3.0, 2.0); }
static double syntonic_comma_cents(void) { return ratio_cents(81.0, 80.0); }

static double pythagorean_comma_cents(void) {
  return ratio_cents(531441.0, 524288.0); /* 3^12 / 2^19 */
}

/* The schisma: the Pythagorean comma less the syntonic comma. */
static double schisma_cents(void) {
  return pythagorean_comma_cents() - syntonic_comma_cents();
}

static fifth_chain chain_of_equal_fifths(int first_pitch_class,
                                         double fifth_cents) {
  fifth_chain chain;
  chain.first_pitch_class = first_pitch_class;
  for (int i = 0; i < 11; i++) {
    chain.fifth_cents[i] = fifth_cents;
  }
  return chain;
}

static fifth_chain chain_of_pure_fifths(int first_pitch_class) {
  return chain_of_equal_fifths(first_pitch_class, pure_fifth_cents());
}

/* Narrow `count` consecutive fifths of the chain, starting with the fifth
   whose lower note is `from_pitch_class`, by `narrowing_cents` each. */
static void narrow_fifths(fifth_chain *chain, int from_pitch_class, int count,
                          double narrowing_cents) {
  int step = 0; /* 7 and 12 are coprime: every class is on the chain */
  while (step < 11 &&
         (chain->first_pitch_class + 7 * step) % 12 != from_pitch_class) {
    step++;
  }
  for (int i = step; i < step + count && i < 11; i++) {
    chain->fifth_cents[i] -= narrowing_cents;
  }
}

/* Walk up the chain: the k-th note lies 700*k cents above the first in
   equal temperament, so its offset is the sum of (fifth - 700) so far.
   Octave reduction does not change an offset from equal temperament. */
static void chain_to_offsets(const fifth_chain *chain,
                             double offsets_cents[12]) {
  int pitch_class = chain->first_pitch_class;
  double offset_cents = 0.0;
  offsets_cents[pitch_class] = 0.0;
  for (int i = 0; i < 11; i++) {
    offset_cents += chain->fifth_cents[i] - EQUAL_FIFTH_CENTS;
    pitch_class = (pitch_class + 7) % 12;
    offsets_cents[pitch_class] = offset_cents;
  }
}

/* The chains below are written for tonic C (degree 0 = C). */
static fifth_chain chain_for(plumb_temperament temperament) {
  double pythagorean = pythagorean_comma_cents();
  fifth_chain chain;
  switch (temperament) {
  case PLUMB_TEMPERAMENT_PYTHAGOREAN: /* Eb..G#, every fifth pure */
    chain = chain_of_pure_fifths(PC_EB);
    break;
  case PLUMB_TEMPERAMENT_MEANTONE: /* Eb..G#, each 1/4 syntonic comma narrow */
    chain = chain_of_pure_fifths(PC_EB);
    narrow_fifths(&chain, PC_EB, 11, syntonic_comma_cents() / 4.0);
    break;
  case PLUMB_TEMPERAMENT_WERCKMEISTER3:
    /* C-G-D-A and B-F# narrowed by 1/4 Pythagorean comma, others pure */
    chain = chain_of_pure_fifths(PC_C);
    narrow_fifths(&chain, PC_C, 3, pythagorean / 4.0);
    narrow_fifths(&chain, PC_B, 1, pythagorean / 4.0);
    break;
  case PLUMB_TEMPERAMENT_KIRNBERGER3:
    /* C-G-D-A-E narrowed by 1/4 syntonic comma, F#-C# by a schisma */
    chain = chain_of_pure_fifths(PC_C);
    narrow_fifths(&chain, PC_C, 4, syntonic_comma_cents() / 4.0);
    narrow_fifths(&chain, PC_FSHARP, 1, schisma_cents());
    break;
  case PLUMB_TEMPERAMENT_VALLOTTI:
    /* F-C-G-D-A-E-B narrowed by 1/6 Pythagorean comma, others pure */
    chain = chain_of_pure_fifths(PC_F);
    narrow_fifths(&chain, PC_F, 6, pythagorean / 6.0);
    break;
  default: /* not a chain temperament: 700-cent fifths, equal */
    chain = chain_of_equal_fifths(PC_C, EQUAL_FIFTH_CENTS);
    break;
  }
  return chain;
}

/* Five-limit just intonation on the tonic. 45/32 (augmented fourth) and
   9/5 (minor seventh) are the common-practice choices (no single source). */
static void just_degree_offsets(double offsets_cents[12]) {
  static const double numerator[12] = {1,  16, 9, 6, 5, 4,
                                       45, 3,  8, 5, 9, 15};
  static const double denominator[12] = {1,  15, 8, 5, 4, 3,
                                         32, 2,  5, 3, 5, 8};
  for (int degree = 0; degree < 12; degree++) {
    offsets_cents[degree] = ratio_cents(numerator[degree],
                                        denominator[degree]) -
                            SEMITONE_CENTS * degree;
  }
}

/* Offsets of the twelve degrees above the tonic, for a valid spec. */
static void degree_offsets(const plumb_tuning_spec *spec,
                           double offsets_cents[12]) {
  fifth_chain chain;
  switch (spec->temperament) {
  case PLUMB_TEMPERAMENT_EQUAL:
    for (int degree = 0; degree < 12; degree++) {
      offsets_cents[degree] = 0.0;
    }
    break;
  case PLUMB_TEMPERAMENT_JUST:
    just_degree_offsets(offsets_cents);
    break;
  case PLUMB_TEMPERAMENT_CUSTOM:
    for (int degree = 0; degree < 12; degree++) {
      offsets_cents[degree] = spec->custom_offsets_cents[degree];
    }
    break;
  default:
    chain = chain_for(spec->temperament);
    chain_to_offsets(&chain, offsets_cents);
    break;
  }
}

static bool spec_is_valid(const plumb_tuning_spec *spec) {
  /* The settings' range (plumb.h): beyond it the targets of the outer
     notes leave the normal doubles, and no instrument tunes there. */
  if (!(spec->reference_hz >= PLUMB_SETTINGS_MIN_REFERENCE_HZ &&
        spec->reference_hz <= PLUMB_SETTINGS_MAX_REFERENCE_HZ)) {
    return false;
  }
  if (spec->tonic_pitch_class < 0 || spec->tonic_pitch_class > 11) {
    return false;
  }
  if ((int)spec->temperament < 0 ||
      spec->temperament >= PLUMB_TEMPERAMENT_COUNT) {
    return false;
  }
  return spec->temperament != PLUMB_TEMPERAMENT_CUSTOM ||
         plumb_tuning_offsets_beyond_limit(spec->custom_offsets_cents) < 0;
}

int plumb_tuning_offsets_beyond_limit(const double offsets_cents[12]) {
  for (int degree = 0; offsets_cents && degree < 12; degree++) {
    if (!(fabs(offsets_cents[degree]) <= PLUMB_CUSTOM_OFFSET_LIMIT_CENTS)) {
      return degree; /* NaN fails the comparison too */
    }
  }
  return offsets_cents ? -1 : 0;
}

static int pitch_class_of(int midi) { return ((midi % 12) + 12) % 12; }

void plumb_tuning_spec_default(plumb_tuning_spec *spec) {
  if (!spec) {
    return;
  }
  spec->reference_hz = 440.0; /* ISO 16:1975 */
  spec->temperament = PLUMB_TEMPERAMENT_EQUAL;
  spec->tonic_pitch_class = PC_C;
  for (int degree = 0; degree < 12; degree++) {
    spec->custom_offsets_cents[degree] = 0.0;
  }
}

/* Rotate the degrees onto the tonic, then subtract A's offset so that A4
   sounds at reference_hz whatever the temperament and tonic. */
plumb_status plumb_tuning_build(const plumb_tuning_spec *spec,
                                plumb_tuning *tuning) {
  if (!spec || !tuning || !spec_is_valid(spec)) {
    return PLUMB_ERR_ARGUMENT;
  }
  double degrees_cents[12];
  degree_offsets(spec, degrees_cents);
  int tonic = spec->tonic_pitch_class;
  double anchor_cents = degrees_cents[pitch_class_of(PITCH_CLASS_A - tonic)];
  double offsets_cents[12];
  for (int pitch_class = 0; pitch_class < 12; pitch_class++) {
    offsets_cents[pitch_class] =
        degrees_cents[pitch_class_of(pitch_class - tonic)] - anchor_cents;
    if (!isfinite(offsets_cents[pitch_class])) {
      return PLUMB_ERR_ARGUMENT; /* huge custom offsets overflowed */
    }
  }
  tuning->reference_hz = spec->reference_hz;
  for (int pitch_class = 0; pitch_class < 12; pitch_class++) {
    tuning->offset_cents[pitch_class] = offsets_cents[pitch_class];
  }
  return PLUMB_OK;
}

static bool tuning_is_usable(const plumb_tuning *tuning) {
  return tuning && isfinite(tuning->reference_hz) &&
         tuning->reference_hz > 0.0;
}

/* The MIDI Tuning Standard's equal temperament, moved by the offset. */
double plumb_tuning_target_hz(const plumb_tuning *tuning, int midi) {
  if (!tuning_is_usable(tuning)) {
    return NAN;
  }
  double semitones = (double)(midi - MIDI_A4) +
                     tuning->offset_cents[pitch_class_of(midi)] /
                         SEMITONE_CENTS;
  return tuning->reference_hz * exp2(semitones / 12.0);
}

static int no_target(double *target_hz, double *cents) {
  if (target_hz) {
    *target_hz = NAN;
  }
  if (cents) {
    *cents = NAN;
  }
  return -1;
}

/* For each pitch class, the note of that class nearest to f_hz is found in
   closed form, so offsets of any size (even beyond an octave) are handled;
   the best of the twelve wins, ties going to the lower note. */
int plumb_tuning_nearest(const plumb_tuning *tuning, double f_hz,
                         double *target_hz, double *cents) {
  if (!tuning_is_usable(tuning) || !isfinite(f_hz) || !(f_hz > 0.0)) {
    return no_target(target_hz, cents);
  }
  double played_midi = MIDI_A4 + 12.0 * log2(f_hz / tuning->reference_hz);
  int best_midi = -1;
  double best_distance = INFINITY;
  for (int pitch_class = 0; pitch_class < 12; pitch_class++) {
    double shifted = played_midi -
                     tuning->offset_cents[pitch_class] / SEMITONE_CENTS;
    double midi = pitch_class + 12.0 * round((shifted - pitch_class) / 12.0);
    double distance = fabs(shifted - midi);
    if (!(fabs(midi) < MIDI_SEARCH_LIMIT)) {
      continue;
    }
    if (distance < best_distance ||
        (distance == best_distance && (int)midi < best_midi)) {
      best_distance = distance;
      best_midi = (int)midi;
    }
  }
  if (best_distance == INFINITY) {
    return no_target(target_hz, cents);
  }
  double best_hz = plumb_tuning_target_hz(tuning, best_midi);
  if (target_hz) {
    *target_hz = best_hz;
  }
  if (cents) {
    *cents = plumb_cents(f_hz, best_hz);
  }
  return best_midi;
}

double plumb_cents(double f_hz, double reference_hz) {
  if (!isfinite(f_hz) || !isfinite(reference_hz) || !(f_hz > 0.0) ||
      !(reference_hz > 0.0)) {
    return NAN;
  }
  return ratio_cents(f_hz, reference_hz);
}

/* ------------------------------------------------------- tuning files */

/* The parser reads digits itself: strtod() takes its decimal point from
   LC_NUMERIC, so a host running in a comma locale would misread "1.5".
   isspace() and isdigit() are locale-dependent too, hence these. */
static bool is_blank(char c) {
  return c == ' ' || c == '\t' || c == '\n' || c == '\r' || c == '\v' ||
         c == '\f';
}

static bool is_digit(char c) { return c >= '0' && c <= '9'; }

/* A number may end only at a separator, a comment or the end. */
static bool ends_number(char c) {
  return c == '\0' || c == ',' || c == '#' || is_blank(c);
}

/* Up to 19 significant decimal digits fit in a uint64_t. */
#define MAX_SIGNIFICANT_DIGITS 19
/* Beyond this an exponent means overflow or zero anyway. */
#define MAX_EXPONENT_DIGITS_VALUE 100000

typedef struct {
  uint64_t mantissa;     /* significant digits, as an integer */
  int decimal_exponent;  /* value = mantissa * 10^decimal_exponent */
  int digits;            /* digits seen in the mantissa, 0 = no number */
} decimal;

static void read_mantissa_digits(const char **cursor, decimal *number,
                                 int *significant, bool after_point) {
  const char *p = *cursor;
  for (; is_digit(*p); p++) {
    number->digits++;
    if (*significant == 0 && *p == '0') {
      if (after_point) {
        number->decimal_exponent--; /* leading zero after the point */
      }
      continue;
    }
    if (*significant < MAX_SIGNIFICANT_DIGITS) {
      number->mantissa = number->mantissa * 10u + (uint64_t)(*p - '0');
      (*significant)++;
      if (after_point) {
        number->decimal_exponent--;
      }
    } else if (!after_point) {
      number->decimal_exponent++; /* a dropped digit before the point */
    }
  }
  *cursor = p;
}

static bool read_exponent(const char **cursor, int *exponent) {
  const char *p = *cursor;
  int sign = 1;
  if (*p == '+' || *p == '-') {
    sign = (*p == '-') ? -1 : 1;
    p++;
  }
  if (!is_digit(*p)) {
    return false;
  }
  int value = 0;
  for (; is_digit(*p); p++) {
    if (value < MAX_EXPONENT_DIGITS_VALUE) {
      value = value * 10 + (*p - '0');
    }
  }
  *exponent = sign * value;
  *cursor = p;
  return true;
}

/* mantissa * 10^exponent. With a mantissa below 2^53 and |exponent| <= 22
   both factors are exact doubles, so one rounding gives the correctly
   rounded value (Clinger 1990); otherwise pow() is within a few ulp. */
static double scale_decimal(uint64_t mantissa, int exponent) {
  double value = (double)mantissa;
  if (mantissa == 0) {
    return 0.0;
  }
  if (mantissa <= (UINT64_C(1) << 53) && exponent >= -22 && exponent <= 22) {
    double power = 1.0;
    for (int i = 0; i < (exponent < 0 ? -exponent : exponent); i++) {
      power *= 10.0;
    }
    return exponent < 0 ? value / power : value * power;
  }
  /* Below about 10^-307 the power itself is subnormal and has lost
     precision although the value need not be: scale in two steps, each
     factor a normal double. */
  if (exponent < -300) {
    return value * pow(10.0, (double)(exponent + 300)) * 1e-300;
  }
  return value * pow(10.0, (double)exponent);
}

/* "[+|-]digits[.digits][(e|E)[+|-]digits]", with at least one digit in
   the mantissa. No hexadecimal, no "inf" or "nan". */
static bool read_decimal(const char **cursor, double *value) {
  const char *p = *cursor;
  double sign = 1.0;
  if (*p == '+' || *p == '-') {
    sign = (*p == '-') ? -1.0 : 1.0;
    p++;
  }
  decimal number = {0, 0, 0};
  int significant = 0;
  read_mantissa_digits(&p, &number, &significant, false);
  if (*p == '.') {
    p++;
    read_mantissa_digits(&p, &number, &significant, true);
  }
  if (number.digits == 0) {
    return false;
  }
  int exponent = 0;
  if (*p == 'e' || *p == 'E') {
    p++;
    if (!read_exponent(&p, &exponent)) {
      return false;
    }
  }
  *value = sign * scale_decimal(number.mantissa,
                                number.decimal_exponent + exponent);
  *cursor = p;
  return true;
}

static const char *skip_comment(const char *p) {
  while (*p != '\0' && *p != '\n') {
    p++;
  }
  return p;
}

/* Separators are white space or one comma (with any white space around
   it) between two numbers; a comma before the first number, after the
   last or twice in a row means a value is missing. */
static plumb_status parse_twelve(const char *text, double values[12]) {
  const char *p = text;
  if ((unsigned char)p[0] == 0xEF && (unsigned char)p[1] == 0xBB &&
      (unsigned char)p[2] == 0xBF) {
    p += 3; /* a UTF-8 byte order mark, as some editors write */
  }
  int count = 0;
  bool comma_pending = false;
  while (*p != '\0') {
    if (is_blank(*p)) {
      p++;
    } else if (*p == '#') {
      p = skip_comment(p);
    } else if (*p == ',') {
      if (count == 0 || comma_pending) {
        return PLUMB_ERR_PARSE;
      }
      comma_pending = true;
      p++;
    } else {
      double value = 0.0;
      if (count == 12 || !read_decimal(&p, &value) || !isfinite(value) ||
          !ends_number(*p)) {
        return PLUMB_ERR_PARSE;
      }
      values[count++] = value;
      comma_pending = false;
    }
  }
  return count == 12 && !comma_pending ? PLUMB_OK : PLUMB_ERR_PARSE;
}

plumb_status plumb_tuning_parse_offsets(const char *text,
                                        double offsets_cents[12]) {
  if (!text || !offsets_cents) {
    return PLUMB_ERR_ARGUMENT;
  }
  double values[12];
  plumb_status status = parse_twelve(text, values);
  if (status != PLUMB_OK) {
    return status;
  }
  if (plumb_tuning_offsets_beyond_limit(values) >= 0) {
    return PLUMB_ERR_ARGUMENT; /* every caller refuses what the build would */
  }
  for (int degree = 0; degree < 12; degree++) {
    offsets_cents[degree] = values[degree];
  }
  return PLUMB_OK;
}

int plumb_tuning_parse_find_beyond_limit(const char *text,
                                         double *offset_cents) {
  double values[12];
  if (!text || parse_twelve(text, values) != PLUMB_OK) {
    return -1;
  }
  int degree = plumb_tuning_offsets_beyond_limit(values);
  if (degree >= 0 && offset_cents) {
    *offset_cents = values[degree];
  }
  return degree;
}
