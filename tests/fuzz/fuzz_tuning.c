/*
  libFuzzer harness for the text the user types or writes: the tuning-file
  parser of the core (plumb_tuning_parse_offsets and its limit finder),
  the temperament and pitch-class names, the command's tuning file reader
  (plugin/cli/tuning_file.c) and its option parsers (plugin/cli/
  parse_value.c), and the number formatting of the session log
  (plumb_text_fixed, plumb_text_scientific, plumb_log_stem).

  The whole input, cut at its first NUL, is given to every text parser;
  its first bytes are also read as a double for the formatters. Each
  parser is checked against an oracle written from its header's contract,
  not from its code: the grammar it states, with the C library's strtod
  and snprintf (this program never calls setlocale, so it runs in the "C"
  locale) for the values.
*/
#include "plumb.h"
#include "log_stem.h"
#include "number_text.h"

#include "../../plugin/cli/parse_value.h"
#include "../../plugin/cli/tuning_file.h"

#include "fuzz_input.h"

#include <errno.h>
#include <float.h>
#include <limits.h>
#include <math.h>
#include <stdbool.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#define TUNING_FILE_LIMIT 65536 /* tuning_file.c: MAX_TUNING_FILE_BYTES */

static bool is_digit(char c) { return c >= '0' && c <= '9'; }

static bool is_blank(char c) {
  return c == ' ' || c == '\t' || c == '\n' || c == '\r' || c == '\v' ||
         c == '\f';
}

/* Within `ulps` units in the last place of b (or both tiny: the parser
   and strtod may round a denormal result differently). */
static bool close_to(double a, double b, double ulps) {
  if (a == b) return true;
  if (fabs(a) < 1e-300 && fabs(b) < 1e-300) return true;
  double ulp = nextafter(fabs(b), INFINITY) - fabs(b);
  return fabs(a - b) <= ulps * ulp;
}

/* ------------------------------------------------ tuning offsets */

/* plumb.h: "[+|-]digits[.digits][(e|E)[+|-]digits]", at least one digit
   in the mantissa ("5." and ".5" are numbers, as tuning.c reads them). */
static bool is_offset_number(const char *token, size_t length) {
  size_t i = 0;
  if (i < length && (token[i] == '+' || token[i] == '-')) ++i;
  size_t digits = 0;
  while (i < length && is_digit(token[i])) ++i, ++digits;
  if (i < length && token[i] == '.') {
    ++i;
    while (i < length && is_digit(token[i])) ++i, ++digits;
  }
  if (digits == 0) return false;
  if (i < length && (token[i] == 'e' || token[i] == 'E')) {
    ++i;
    if (i < length && (token[i] == '+' || token[i] == '-')) ++i;
    size_t exponent_digits = 0;
    while (i < length && is_digit(token[i])) ++i, ++exponent_digits;
    if (exponent_digits == 0) return false;
  }
  return i == length;
}

typedef struct {
  plumb_status status;
  double values[12];
  int count;
  bool uncertain; /* a value within a few ulp of a limit: either status */
} offsets_model;

/* The text as the header describes it: numbers separated by white space
   or one comma, '#' comments to the end of the line, a byte order mark
   first, twelve numbers, each finite, each within the limit. */
static offsets_model model_offsets(const char *text) {
  offsets_model m;
  memset(&m, 0, sizeof m);
  m.status = PLUMB_ERR_PARSE;
  const char *p = text;
  if ((unsigned char)p[0] == 0xEF && (unsigned char)p[1] == 0xBB &&
      (unsigned char)p[2] == 0xBF)
    p += 3;
  bool comma_pending = false;
  while (*p) {
    if (is_blank(*p)) {
      ++p;
    } else if (*p == '#') {
      while (*p && *p != '\n') ++p;
    } else if (*p == ',') {
      if (m.count == 0 || comma_pending) return m;
      comma_pending = true;
      ++p;
    } else {
      const char *start = p;
      while (*p && *p != ',' && *p != '#' && !is_blank(*p)) ++p;
      if (m.count == 12 || !is_offset_number(start, (size_t)(p - start)))
        return m;
      char token[64];
      size_t length = (size_t)(p - start);
      double value;
      if (length < sizeof token) {
        memcpy(token, start, length);
        token[length] = '\0';
        value = strtod(token, NULL);
      } else {
        char *copy = strndup(start, length);
        value = strtod(copy, NULL);
        free(copy);
      }
      if (fabs(value) > DBL_MAX / 2) m.uncertain = true;
      if (!isfinite(value)) return m;
      m.values[m.count++] = value;
      comma_pending = false;
    }
  }
  if (m.count != 12 || comma_pending) return m;
  m.status = PLUMB_OK;
  for (int i = 0; i < 12; ++i) {
    double limit = PLUMB_CUSTOM_OFFSET_LIMIT_CENTS;
    if (close_to(fabs(m.values[i]), limit, 8.0)) m.uncertain = true;
    if (!(fabs(m.values[i]) <= limit)) m.status = PLUMB_ERR_ARGUMENT;
  }
  return m;
}

static void check_offsets(const char *text) {
  double offsets[12];
  for (int i = 0; i < 12; ++i) offsets[i] = -12345.0;
  plumb_status status = plumb_tuning_parse_offsets(text, offsets);
  offsets_model m = model_offsets(text);
  FUZZ_CHECK(status == PLUMB_OK || status == PLUMB_ERR_PARSE ||
                 status == PLUMB_ERR_ARGUMENT,
             "status %d", (int)status);
  if (status != PLUMB_OK)
    for (int i = 0; i < 12; ++i)
      FUZZ_CHECK(offsets[i] == -12345.0, "a refused text wrote offset %d", i);
  if (!m.uncertain || m.status == PLUMB_ERR_PARSE)
    FUZZ_CHECK(status == m.status,
               "plumb_tuning_parse_offsets says %d, the header's grammar %d "
               "(%d numbers read)",
               (int)status, (int)m.status, m.count);
  if (status == PLUMB_OK && m.status == PLUMB_OK) {
    for (int i = 0; i < 12; ++i) {
      FUZZ_CHECK(fabs(offsets[i]) <= PLUMB_CUSTOM_OFFSET_LIMIT_CENTS,
                 "offset %d is %g", i, offsets[i]);
      /* tuning.c: correctly rounded for short numbers, else "within a few
         ulp" of the decimal value. Known: not so when 10^exponent is
         subnormal though the value is not ("110107025055E-311" is read
         230 ulp off; tests/fuzz/regressions/tuning/subnormal-power). */
      bool tiny = fabs(m.values[i]) < 1e-280 &&
                  fabs(offsets[i] - m.values[i]) < 1e-280;
      FUZZ_CHECK(close_to(offsets[i], m.values[i], 4.0) ||
                     (tiny && fuzz_waived("subnormal-power")),
                 "offset %d read as %.17g, strtod says %.17g", i, offsets[i],
                 m.values[i]);
    }
  }
  double beyond = -777.0;
  int degree = plumb_tuning_parse_find_beyond_limit(text, &beyond);
  if (status == PLUMB_ERR_ARGUMENT) {
    FUZZ_CHECK(degree >= 0 && degree < 12 &&
                   !(fabs(beyond) <= PLUMB_CUSTOM_OFFSET_LIMIT_CENTS),
               "refused for the limit, but the finder says %d (%g)", degree,
               beyond);
    if (m.status == PLUMB_ERR_ARGUMENT && !m.uncertain)
      FUZZ_CHECK(!(fabs(m.values[degree]) <= PLUMB_CUSTOM_OFFSET_LIMIT_CENTS),
                 "the finder names offset %d, which strtod reads as %g",
                 degree, m.values[degree]);
  } else {
    FUZZ_CHECK(degree == -1 && beyond == -777.0,
               "status %d but the finder says %d (%g)", (int)status, degree,
               beyond);
  }
  if (status == PLUMB_OK) {
    FUZZ_CHECK(plumb_tuning_offsets_beyond_limit(offsets) == -1,
               "parsed offsets beyond the limit");
    /* What a tuning file gives, plumb_tuning_build takes. */
    plumb_tuning_spec spec;
    plumb_tuning_spec_default(&spec);
    spec.temperament = PLUMB_TEMPERAMENT_CUSTOM;
    memcpy(spec.custom_offsets_cents, offsets, sizeof offsets);
    plumb_tuning tuning;
    FUZZ_CHECK(plumb_tuning_build(&spec, &tuning) == PLUMB_OK,
               "plumb_tuning_build refused parsed offsets");
  }
}

/* ------------------------------------------------ the tuning file */

static char file_path[4096];

static void check_tuning_file(const uint8_t *data, size_t size) {
  /* "#!" then a byte: the file is padded with spaces to the limit plus
     (byte - 128), to reach tuning_file.c's size check. */
  size_t padded = size;
  if (size >= 3 && data[0] == '#' && data[1] == '!')
    padded = TUNING_FILE_LIMIT + (size_t)data[2] - 128;
  if (padded < size) padded = size;
  FILE *file = fopen(file_path, "wb");
  FUZZ_CHECK(file != NULL, "cannot write %s: %s", file_path, strerror(errno));
  fwrite(data, 1, size, file);
  for (size_t i = size; i < padded; ++i) fputc(i % 64 == 63 ? '\n' : ' ', file);
  fclose(file);

  double offsets[12];
  bool open_failed = true;
  char reason[256] = "";
  bool ok = tuning_file_read(file_path, offsets, &open_failed, reason,
                             sizeof reason);
  FUZZ_CHECK(!open_failed, "a file that is there failed to open");
  FUZZ_CHECK(ok || (reason[0] && strlen(reason) < sizeof reason),
             "failed without a reason");
  bool has_nul = memchr(data, '\0', size) != NULL;
  if (padded > TUNING_FILE_LIMIT || has_nul) {
    FUZZ_CHECK(!ok, "took a file of %zu bytes%s", padded,
               has_nul ? " with a NUL" : "");
    return;
  }
  /* The same text through the core. */
  char *text = malloc(padded + 1);
  FUZZ_CHECK(text != NULL, "out of memory");
  memcpy(text, data, size);
  for (size_t i = size; i < padded; ++i) text[i] = i % 64 == 63 ? '\n' : ' ';
  text[padded] = '\0';
  double expected[12];
  plumb_status status = plumb_tuning_parse_offsets(text, expected);
  free(text);
  FUZZ_CHECK(ok == (status == PLUMB_OK), "file read %d, text parse %d", ok,
             (int)status);
  if (ok)
    FUZZ_CHECK(memcmp(offsets, expected, sizeof offsets) == 0,
               "the file's offsets differ from the text's");
}

/* ------------------------------------------------ names */

static int model_pitch_class(const char *name) {
  static const char letters[] = "CDEFGAB";
  static const int classes[] = {0, 2, 4, 5, 7, 9, 11};
  int natural = -1;
  for (int i = 0; i < 7; ++i)
    if (name[0] == letters[i] || name[0] == letters[i] + 32) natural = classes[i];
  if (natural < 0) return -1;
  if (name[1] == '\0') return natural;
  if (name[2] != '\0') return -1;
  /* The seventeen usual spellings: no E#, B#, Cb, Fb. */
  if (name[1] == '#' && natural != 4 && natural != 11) return natural + 1;
  if (name[1] == 'b' && natural != 0 && natural != 5) return natural - 1;
  return -1;
}

static void check_names(const char *text) {
  int pitch_class = plumb_pitch_class_from_name(text);
  FUZZ_CHECK(pitch_class == model_pitch_class(text),
             "pitch class of '%s' is %d, expected %d", text, pitch_class,
             model_pitch_class(text));
  plumb_temperament temperament = PLUMB_TEMPERAMENT_COUNT;
  plumb_status status = plumb_temperament_from_name(text, &temperament);
  int expected = -1;
  for (int t = 0; t < PLUMB_TEMPERAMENT_COUNT; ++t)
    if (strcmp(plumb_temperament_name((plumb_temperament)t), text) == 0)
      expected = t;
  if (expected < 0) {
    FUZZ_CHECK(status == PLUMB_ERR_UNKNOWN_NAME &&
                   temperament == PLUMB_TEMPERAMENT_COUNT,
               "temperament '%s' taken as %d", text, (int)temperament);
  } else {
    FUZZ_CHECK(status == PLUMB_OK && (int)temperament == expected,
               "temperament '%s' read as %d", text, (int)temperament);
  }
  char stem[PLUMB_LOG_STEM_MAX + 1];
  size_t length = plumb_log_stem(text, stem);
  FUZZ_CHECK(length == strlen(stem) && length <= PLUMB_LOG_STEM_MAX,
             "stem of %zu bytes, returned %zu", strlen(stem), length);
  FUZZ_CHECK(stem[0] != '.', "stem starts with '.'");
  size_t leads = 0;
  for (const unsigned char *c = (const unsigned char *)text; *c; ++c)
    leads += (*c & 0xC0u) != 0x80u;
  FUZZ_CHECK(length == (leads < PLUMB_LOG_STEM_MAX ? leads : PLUMB_LOG_STEM_MAX),
             "stem of %zu characters from %zu", length, leads);
  for (size_t i = 0; i < length; ++i) {
    char c = stem[i];
    FUZZ_CHECK((c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') ||
                   is_digit(c) || c == '.' || c == '_' || c == '-',
               "stem holds %#x", (unsigned char)c);
  }
}

/* ------------------------------------------------ option values */

static void check_parse_value(const char *text) {
  size_t length = strlen(text);
  /* parse_decimal: "[+-]digits[.digits]", 15 significant digits, no more
     than 15 after the point (trailing zeros of the fraction not counted). */
  size_t i = 0;
  if (text[0] == '+' || text[0] == '-') ++i;
  size_t body = i;
  bool grammar = true, point = false;
  size_t digits = 0;
  for (; i < length; ++i) {
    if (is_digit(text[i])) ++digits;
    else if (text[i] == '.' && !point) point = true;
    else grammar = false;
  }
  grammar = grammar && digits > 0;
  size_t end = length;
  if (point)
    while (end > body && text[end - 1] == '0' && strchr(text + body, '.') <
                                                      text + end - 1)
      --end;
  int significant = 0, fraction = 0;
  bool started = false, after_point = false;
  for (size_t k = body; grammar && k < end; ++k) {
    if (text[k] == '.') {
      after_point = true;
      continue;
    }
    fraction += after_point;
    started = started || text[k] != '0';
    significant += started;
  }
  bool expected = grammar && significant <= 15 && fraction <= 15;
  double value = -1.5;
  bool ok = parse_decimal(text, &value);
  /* Known: ".0" (a fraction of zeros only, no integer digits) is refused
     (tests/fuzz/regressions/tuning/parse-decimal-point-zero). */
  if (!ok && expected && fuzz_waived("decimal-point-zero")) {
    bool only_zeros = true;
    for (size_t k = body; k < length; ++k)
      only_zeros = only_zeros && (text[k] == '0' || text[k] == '.');
    if (only_zeros && text[body] == '.') expected = false;
  }
  FUZZ_CHECK(ok == expected, "parse_decimal('%s') = %d, expected %d", text, ok,
             expected);
  if (ok)
    FUZZ_CHECK(value == strtod(text, NULL) &&
                   signbit(value) == signbit(strtod(text, NULL)),
               "parse_decimal('%s') = %.17g, strtod %.17g", text, value,
               strtod(text, NULL));
  else
    FUZZ_CHECK(value == -1.5, "a refused decimal wrote %g", value);

  /* parse_whole: "[+-]digits", at most 9 digits. */
  i = text[0] == '+' || text[0] == '-';
  bool whole = length > i && length - i <= 9;
  for (size_t k = i; k < length; ++k) whole = whole && is_digit(text[k]);
  long number = -7;
  ok = parse_whole(text, &number);
  FUZZ_CHECK(ok == whole, "parse_whole('%s') = %d, expected %d", text, ok, whole);
  if (ok)
    FUZZ_CHECK(number == strtol(text, NULL, 10), "parse_whole('%s') = %ld",
               text, number);

  /* parse_note: a whole number, or a pitch-class name then an octave
     ("-1" .. "9", any number of at most 9 digits). */
  long midi = -7;
  ok = parse_note(text, &midi);
  if (whole) {
    FUZZ_CHECK(ok && midi == number, "parse_note('%s') = %d, %ld", text, ok,
               midi);
    return;
  }
  size_t octave = 0;
  for (size_t k = 1; k < length && !octave; ++k)
    if (is_digit(text[k]) || (text[k] == '-' && is_digit(text[k + 1])))
      octave = k;
  long octave_number = 0;
  char name[8] = "";
  bool note = octave > 0 && octave < sizeof name &&
              parse_whole(text + octave, &octave_number) && text[octave] != '+';
  if (note) {
    memcpy(name, text, octave);
    name[octave] = '\0';
    note = model_pitch_class(name) >= 0;
  }
  FUZZ_CHECK(ok == note, "parse_note('%s') = %d, expected %d", text, ok, note);
  if (ok)
    FUZZ_CHECK(midi == (octave_number + 1) * 12 + model_pitch_class(name),
               "parse_note('%s') = %ld", text, midi);
}

static void check_note_names(int32_t midi) {
  char name[8];
  memset(name, 'x', sizeof name);
  plumb_note_name(midi, name);
  FUZZ_CHECK(memchr(name, '\0', sizeof name) != NULL, "name not terminated");
  if (midi < 0 || midi > 127) {
    FUZZ_CHECK(name[0] == '\0', "MIDI %d named '%s'", midi, name);
    return;
  }
  long back = -1;
  FUZZ_CHECK(parse_note(name, &back) && back == midi,
             "'%s' (from MIDI %d) parses as %ld", name, midi, back);
}

/* ------------------------------------------------ log numbers */

static double format_value(fuzz_input *in) {
  uint8_t how = fuzz_u8(in);
  switch (how % 4) {
  case 0: return fuzz_raw_double(in);
  case 1: /* decimal midpoints: ties of the rounding */
    return ((double)fuzz_u32(in) + 0.5) / pow(10.0, how / 4 % 12);
  case 2: return (double)(int32_t)fuzz_u32(in) * pow(10.0, (int)(how / 4 % 64) - 32);
  default: {
    double x = fuzz_raw_double(in);
    return isfinite(x) ? fmod(x, 1e6) : x;
  }
  }
}

static void check_formatting(fuzz_input *in) {
  double value = format_value(in);
  int decimals = (int)(int8_t)fuzz_u8(in);
  int clamped = decimals < 0 ? 0 : decimals > 9 ? 9 : decimals;
  size_t size = fuzz_u8(in) % 48;
  char expected[512];
  char got[512];
  char small[64];

  int length = plumb_text_fixed(value, decimals, got, sizeof got);
  if (!isfinite(value)) {
    FUZZ_CHECK(length == 0 && got[0] == '\0', "fixed(%g) = '%s'", value, got);
  } else {
    int want = snprintf(expected, sizeof expected, "%.*f", clamped, value);
    FUZZ_CHECK(length == want && strcmp(got, expected) == 0,
               "plumb_text_fixed(%.17g, %d) = '%s' (%d), printf '%s'", value,
               decimals, got, length, expected);
  }
  if (size > 0) {
    memset(small, 'x', sizeof small);
    int again = plumb_text_fixed(value, decimals, small, size);
    FUZZ_CHECK(again == length && strlen(small) == ((size_t)length < size
                                                        ? (size_t)length
                                                        : size - 1) &&
                   strncmp(small, got, strlen(small)) == 0,
               "fixed into %zu bytes: '%s' of '%s'", size, small, got);
  }

  length = plumb_text_scientific(value, decimals, got, sizeof got);
  if (!isfinite(value)) {
    FUZZ_CHECK(length == 0 && got[0] == '\0', "scientific(%g) = '%s'", value,
               got);
    return;
  }
  int want = snprintf(expected, sizeof expected, "%.*e", clamped, value);
  int exponent = value == 0.0 ? 0 : atoi(strchr(expected, 'e') + 1);
  bool exact = exponent - clamped >= -22 && exponent - clamped <= 22;
  if (exact) {
    FUZZ_CHECK(length == want && strcmp(got, expected) == 0,
               "plumb_text_scientific(%.17g, %d) = '%s', printf '%s'", value,
               decimals, got, expected);
  } else {
    /* plumb_csv.h: outside that range the last digit may be one off. */
    long double a = strtold(got, NULL), b = strtold(expected, NULL);
    long double unit = powl(10.0L, exponent - clamped);
    FUZZ_CHECK(length == (int)strlen(got) &&
                   (strcmp(got, expected) == 0 ||
                    fabsl(a - b) <= 1.000001L * unit),
               "plumb_text_scientific(%.17g, %d) = '%s', printf '%s'", value,
               decimals, got, expected);
  }
  if (size > 0) {
    memset(small, 'x', sizeof small);
    int again = plumb_text_scientific(value, decimals, small, size);
    FUZZ_CHECK(again == length && strncmp(small, got, strlen(small)) == 0 &&
                   strlen(small) < size,
               "scientific into %zu bytes: '%s' of '%s'", size, small, got);
  }
}

/* ------------------------------------------------ the entry points */

/* The temporary file goes when the fuzzer exits. */
static void remove_file(void) {
  unlink(file_path);
  char *slash = strrchr(file_path, '/');
  if (slash) {
    *slash = '\0';
    rmdir(file_path);
  }
}

int LLVMFuzzerInitialize(int *argc, char ***argv) {
  (void)argc;
  (void)argv;
  const char *tmp = getenv("TMPDIR") ? getenv("TMPDIR") : "/tmp";
  char folder[4000];
  snprintf(folder, sizeof folder, "%s/plumb-fuzz-tuning.XXXXXX", tmp);
  FUZZ_CHECK(mkdtemp(folder) != NULL, "mkdtemp: %s", strerror(errno));
  snprintf(file_path, sizeof file_path, "%s/offsets.txt", folder);
  atexit(remove_file);
  fuzz_cleanup = remove_file;
  /* A file that is not there is an open failure, with a reason. */
  double offsets[12];
  bool open_failed = false;
  char reason[64] = "";
  FUZZ_CHECK(!tuning_file_read(file_path, offsets, &open_failed, reason,
                               sizeof reason) &&
                 open_failed && reason[0],
             "a missing file was not an open failure");
  return 0;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size) {
  char *text = malloc(size + 1);
  FUZZ_CHECK(text != NULL, "out of memory");
  memcpy(text, data, size);
  text[size] = '\0';
  check_offsets(text);
  check_names(text);
  check_parse_value(text);
  free(text);
  check_tuning_file(data, size);
  fuzz_input in = fuzz_input_of(data, size);
  check_note_names((int32_t)fuzz_u32(&in));
  in = fuzz_input_of(data, size);
  check_formatting(&in);
  return 0;
}
