/*
  Names: temperaments, pitch classes, notes, verdicts and status messages.
  The strings are the ones the command line and the TTL enumerations use,
  so they are part of the interface and must not change casually.
*/
#include "plumb.h"

#include <string.h>

/* ------------------------------------------------------------- statuses */

const char *plumb_strerror(plumb_status status) {
  switch (status) {
  case PLUMB_OK:
    return "The call succeeded.";
  case PLUMB_ERR_ARGUMENT:
    return "An argument was NULL or out of range.";
  case PLUMB_ERR_MEMORY:
    return "Memory could not be allocated.";
  case PLUMB_ERR_FFT:
    return "FFTW could not plan a transform.";
  case PLUMB_ERR_SAMPLE_RATE:
    return "The sample rate is outside 8 kHz to 384 kHz.";
  case PLUMB_ERR_PARSE:
    return "The text does not hold exactly the numbers expected.";
  case PLUMB_ERR_UNKNOWN_NAME:
    return "The temperament or note name is not known.";
  }
  return "The status code is not one plumb knows.";
}

/* --------------------------------------------------------- temperaments */

static const char *const temperament_names[PLUMB_TEMPERAMENT_COUNT] = {
    [PLUMB_TEMPERAMENT_EQUAL] = "equal",
    [PLUMB_TEMPERAMENT_JUST] = "just",
    [PLUMB_TEMPERAMENT_PYTHAGOREAN] = "pythagorean",
    [PLUMB_TEMPERAMENT_MEANTONE] = "meantone",
    [PLUMB_TEMPERAMENT_WERCKMEISTER3] = "werckmeister3",
    [PLUMB_TEMPERAMENT_KIRNBERGER3] = "kirnberger3",
    [PLUMB_TEMPERAMENT_VALLOTTI] = "vallotti",
    [PLUMB_TEMPERAMENT_CUSTOM] = "custom",
};

/* NULL for a value outside the enumeration. */
const char *plumb_temperament_name(plumb_temperament temperament) {
  if ((int)temperament < 0 || temperament >= PLUMB_TEMPERAMENT_COUNT) {
    return NULL;
  }
  return temperament_names[temperament];
}

/* Names match exactly (lower case), as written in the TTL files. */
plumb_status plumb_temperament_from_name(const char *name,
                                         plumb_temperament *temperament) {
  if (!name || !temperament) {
    return PLUMB_ERR_ARGUMENT;
  }
  for (int i = 0; i < PLUMB_TEMPERAMENT_COUNT; i++) {
    if (strcmp(name, temperament_names[i]) == 0) {
      *temperament = (plumb_temperament)i;
      return PLUMB_OK;
    }
  }
  return PLUMB_ERR_UNKNOWN_NAME;
}

/* --------------------------------------------------------------- notes */

static const char *const sharp_names[12] = {"C",  "C#", "D",  "D#",
                                            "E",  "F",  "F#", "G",
                                            "G#", "A",  "A#", "B"};

/* Pitch class of a natural letter, either case; -1 for anything else.
   Plain comparisons, because toupper() depends on the locale. */
static int natural_pitch_class(char letter) {
  static const char upper[] = "CDEFGAB";
  static const int pitch_class[] = {0, 2, 4, 5, 7, 9, 11};
  for (int i = 0; i < 7; i++) {
    if (letter == upper[i] || letter == upper[i] + ('a' - 'A')) {
      return pitch_class[i];
    }
  }
  return -1;
}

/* Only the seventeen usual spellings: no E#, Fb, B#, Cb, no doubles.
   The flat sign is a lower-case 'b' after the letter. */
int plumb_pitch_class_from_name(const char *name) {
  if (!name) {
    return -1;
  }
  int natural = natural_pitch_class(name[0]);
  if (natural < 0) {
    return -1;
  }
  if (name[1] == '\0') {
    return natural;
  }
  if (name[2] != '\0') {
    return -1;
  }
  bool has_sharp = natural != 4 && natural != 11;  /* not E, B */
  bool has_flat = natural != 0 && natural != 5;    /* not C, F */
  if (name[1] == '#' && has_sharp) {
    return natural + 1;
  }
  if (name[1] == 'b' && has_flat) {
    return natural - 1;
  }
  return -1;
}

/* Scientific pitch notation: octaves start at C, and MIDI 60 is C4. */
void plumb_note_name(int midi, char name[8]) {
  if (!name) {
    return;
  }
  name[0] = '\0';
  if (midi < 0 || midi > 127) {
    return;
  }
  const char *pitch = sharp_names[midi % 12];
  int octave = midi / 12 - 1; /* -1 .. 9 */
  size_t length = strlen(pitch);
  memcpy(name, pitch, length);
  if (octave < 0) {
    name[length++] = '-';
    name[length++] = '1';
  } else {
    name[length++] = (char)('0' + octave);
  }
  name[length] = '\0';
}

/* ------------------------------------------------------------ verdicts */

static const char *const verdict_names[PLUMB_VERDICT_COUNT] = {
    [PLUMB_VERDICT_IN_TUNE] = "in-tune",
    [PLUMB_VERDICT_SHARP] = "sharp",
    [PLUMB_VERDICT_FLAT] = "flat",
    [PLUMB_VERDICT_UNSTEADY] = "unsteady",
    [PLUMB_VERDICT_UNPITCHED] = "unpitched",
};

/* NULL for a value outside the enumeration. */
const char *plumb_verdict_name(plumb_verdict verdict) {
  if ((int)verdict < 0 || verdict >= PLUMB_VERDICT_COUNT) {
    return NULL;
  }
  return verdict_names[verdict];
}

/* Unpitched notes (drums and the like) are never flagged. */
bool plumb_verdict_is_flagged(plumb_verdict verdict) {
  return verdict == PLUMB_VERDICT_SHARP || verdict == PLUMB_VERDICT_FLAT ||
         verdict == PLUMB_VERDICT_UNSTEADY;
}
