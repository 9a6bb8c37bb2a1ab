/*
  plumb LV2: STEM.run.json, the take's settings and totals (see
  run_json.h and docs/log-format.md).
*/
#include "run_json.h"

#include "number_text.h"

#include <errno.h>
#include <fcntl.h>
#include <inttypes.h>
#include <stdatomic.h>
#include <stdbool.h>
#include <stdio.h>
#include <string.h>
#include <unistd.h>

#define RUN_FORMAT "plumb-run-1"

void run_json_time(time_t now, char text[32]) {
  struct tm utc;
  if (!gmtime_r(&now, &utc) ||
      strftime(text, 32, "%Y-%m-%dT%H:%M:%SZ", &utc) == 0) {
    text[0] = '\0';
  }
}

/* ------------------------------------------------------------ strings */

/* Length of the valid UTF-8 sequence at text (RFC 3629: no overlong
   forms, no surrogates, nothing above U+10FFFF), or 0 if it is not one. */
static size_t utf8_sequence_length(const unsigned char *text) {
  unsigned char lead = text[0];
  size_t length = lead < 0xC2   ? 0
                  : lead < 0xE0 ? 2
                  : lead < 0xF0 ? 3
                  : lead < 0xF5 ? 4
                                : 0;
  if (length == 0) {
    return 0;
  }
  unsigned char second_low = lead == 0xE0 ? 0xA0 : lead == 0xF0 ? 0x90 : 0x80;
  unsigned char second_high = lead == 0xED ? 0x9F : lead == 0xF4 ? 0x8F : 0xBF;
  if (text[1] < second_low || text[1] > second_high) {
    return 0;
  }
  for (size_t i = 2; i < length; ++i) {
    if ((text[i] & 0xC0u) != 0x80u) {
      return 0;
    }
  }
  return length;
}

/* A JSON string (RFC 8259): the quote and the backslash escaped, every
   control character (U+0000..U+001F, and DEL) as \u00XX. Each byte that
   does not begin a valid UTF-8 sequence (RFC 3629) is written escaped as
   \u00XX, its own number: the file stays valid UTF-8 and valid JSON
   whatever a label or path holds, never ends inside a character, and
   loses nothing, since a reader gets the exact bytes back (a character
   U+0080..U+00FF that was valid UTF-8 is always written as itself, never
   escaped, so the escape is unambiguous). */
static void put_string(FILE *stream, const char *text) {
  fputc('"', stream);
  for (const unsigned char *c = (const unsigned char *)text; *c;) {
    if (*c == '"' || *c == '\\') {
      fputc('\\', stream);
      fputc(*c++, stream);
    } else if (*c < 0x20 || *c == 0x7F) {
      fprintf(stream, "\\u%04x", (unsigned)*c++);
    } else if (*c < 0x80) {
      fputc(*c++, stream);
    } else {
      size_t length = utf8_sequence_length(c);
      if (length == 0) {
        fprintf(stream, "\\u%04x", (unsigned)*c++); /* the byte, escaped */
      } else {
        fwrite(c, 1, length, stream);
        c += length;
      }
    }
  }
  fputc('"', stream);
}

/* ------------------------------------------------------------ numbers */

/* Locale-free decimals (plumb_text_fixed), as JSON requires '.'. */
static void put_number(FILE *stream, double value, int decimals) {
  char text[64];
  if (plumb_text_fixed(value, decimals, text, sizeof text) <= 0) {
    fputs("null", stream); /* JSON has no NaN */
    return;
  }
  fputs(text, stream);
}

static void put_key(FILE *stream, const char *key) {
  fputs("  ", stream);
  put_string(stream, key);
  fputs(": ", stream);
}

static const char *const pitch_class_names[12] = {
    "C", "C#", "D", "D#", "E", "F", "F#", "G", "G#", "A", "A#", "B"};

static void put_settings(FILE *stream, const take_settings *settings) {
  const plumb_tuning_spec *tuning = &settings->tuning;
  const char *temperament = plumb_temperament_name(tuning->temperament);
  int tonic = tuning->tonic_pitch_class;
  fputs("{\n    \"reference_hz\": ", stream);
  put_number(stream, tuning->reference_hz, 3);
  fputs(",\n    \"tolerance_cents\": ", stream);
  put_number(stream, settings->tolerance_cents, 2);
  fputs(",\n    \"temperament\": ", stream);
  put_string(stream, temperament ? temperament : "");
  fputs(",\n    \"tonic\": ", stream);
  put_string(stream, tonic >= 0 && tonic < 12 ? pitch_class_names[tonic] : "");
  fprintf(stream, ",\n    \"lowest_midi\": %d,\n    \"highest_midi\": %d",
          settings->lowest_midi, settings->highest_midi);
  fputs(",\n    \"min_note_ms\": ", stream);
  put_number(stream, settings->min_note_ms, 1);
  fputs(",\n    \"custom_offsets_cents\": [", stream);
  for (int degree = 0; degree < 12; ++degree) {
    fputs(degree ? ", " : "", stream);
    put_number(stream, tuning->custom_offsets_cents[degree], 2);
  }
  fputs("]\n  }", stream);
}

static void put_totals(FILE *stream, const run_record *record) {
  if (!record->complete) {
    fputs("null", stream); /* not known until the take ends */
    return;
  }
  const run_totals *totals = &record->totals;
  fprintf(stream,
          "{\n    \"notes\": %" PRIu32 ",\n    \"flagged\": %" PRIu32
          ",\n    \"dropped\": %" PRIu32 ",\n    \"bad_samples\": %" PRIu64
          ",\n    \"rows\": %" PRIu64 "\n  }",
          totals->notes, totals->flagged, totals->dropped, totals->bad_samples,
          totals->rows);
}

/* ------------------------------------------------------------ the file */

static void put_text_field(FILE *stream, const char *key, const char *text) {
  put_key(stream, key);
  put_string(stream, text);
  fputs(",\n", stream);
}

static void put_bool_field(FILE *stream, const char *key, bool value) {
  put_key(stream, key);
  fputs(value ? "true,\n" : "false,\n", stream);
}

void run_json_make_id(int64_t activation_us, unsigned serial, char id[64]) {
  time_t seconds = (time_t)(activation_us / 1000000);
  long micro = (long)(activation_us % 1000000);
  struct tm utc;
  char when[32] = "00000000T000000";
  if (gmtime_r(&seconds, &utc)) {
    strftime(when, sizeof when, "%Y%m%dT%H%M%S", &utc);
  }
  snprintf(id, 64, "%s.%06ldZ-%ld-%u", when, micro < 0 ? 0L : micro,
           (long)getpid(), serial);
}

/* The source keys only when the host told them (docs/log-format.md). */
static void put_source(FILE *stream, const run_record *record) {
  if (record->source_file && record->source_file[0]) {
    put_key(stream, "source_file");
    put_string(stream, record->source_file);
    fputs(",\n", stream);
  }
  if (record->source_channel > 0) {
    fprintf(stream, "  \"source_channel\": %d,\n", (int)record->source_channel);
  }
}

int run_json_print(FILE *stream, const run_record *record) {
  char notes_file[256];
  snprintf(notes_file, sizeof notes_file, "%s.notes.csv", record->stem);
  fputs("{\n", stream);
  put_text_field(stream, "format", RUN_FORMAT);
  put_text_field(stream, "plugin", "urn:plumb:intonation");
  put_text_field(stream, "plugin_version", PLUMB_VERSION);
  put_text_field(stream, "take", record->stem);
  put_text_field(stream, "take_label", record->take_label);
  put_text_field(stream, "notes_file", notes_file);
  put_text_field(stream, "run_id", record->run_id ? record->run_id : "");
  put_source(stream, record);
  /* the writing process, so that a host can tell its own log from another
     instance's of the same label (which get -2, -3 ... stems) */
  fprintf(stream, "  \"process_id\": %ld,\n", (long)getpid());
  put_key(stream, "sample_rate_hz");
  put_number(stream, record->sample_rate_hz, 0);
  fputs(",\n", stream);
  put_text_field(stream, "start_time", record->start_time);
  put_key(stream, "end_time");
  if (record->end_time[0]) {
    put_string(stream, record->end_time);
  } else {
    fputs("null", stream);
  }
  fputs(",\n", stream);
  put_bool_field(stream, "complete", record->complete);
  put_key(stream, "settings");
  put_settings(stream, &record->settings);
  fputs(",\n", stream);
  put_bool_field(stream, "settings_changed", record->settings_changed);
  put_bool_field(stream, "log_error", record->log_error);
  put_key(stream, "totals");
  put_totals(stream, record);
  fputs("\n}\n", stream);
  return ferror(stream) ? -1 : 0;
}

/* Print, flush and sync the temporary file; 0 or an errno. */
static int write_whole(FILE *stream, const run_record *record) {
  if (run_json_print(stream, record) != 0 || fflush(stream) != 0) {
    return errno ? errno : EIO;
  }
  return fsync(fileno(stream)) == 0 ? 0 : errno;
}

/* A name of its own in the same folder (so that rename() is atomic),
   created new with O_EXCL: never an existing file or a link planted at
   the name (POSIX open()). Returns the stream, or NULL with errno. */
static FILE *create_temporary(const char *path, char *temporary, size_t size) {
  static atomic_uint serial;
  for (int attempt = 0; attempt < 16; ++attempt) {
    unsigned n = atomic_fetch_add(&serial, 1u) + 1u;
    int length = snprintf(temporary, size, "%s.tmp-%ld-%u", path,
                          (long)getpid(), n);
    if (length < 0 || (size_t)length >= size) {
      errno = ENAMETOOLONG;
      return NULL;
    }
    int descriptor =
        open(temporary, O_WRONLY | O_CREAT | O_EXCL | O_NOFOLLOW | O_CLOEXEC,
             0666);
    if (descriptor < 0 && errno == EEXIST) {
      continue; /* left by a crash of an earlier process of this id */
    }
    if (descriptor < 0) {
      return NULL;
    }
    FILE *stream = fdopen(descriptor, "w");
    if (!stream) {
      int error = errno;
      close(descriptor);
      unlink(temporary);
      errno = error;
    }
    return stream;
  }
  errno = EEXIST;
  return NULL;
}

int run_json_write(const char *path, const run_record *record) {
  char temporary[4200];
  errno = 0;
  FILE *stream = create_temporary(path, temporary, sizeof temporary);
  if (!stream) {
    return errno ? errno : EIO;
  }
  int error = write_whole(stream, record);
  if (fclose(stream) != 0 && !error) {
    error = errno ? errno : EIO;
  }
  /* rename() replaces whatever is at path itself, a link included,
     and never writes through it. */
  if (!error && rename(temporary, path) != 0) {
    error = errno;
  }
  if (error) {
    unlink(temporary);
  }
  return error;
}
