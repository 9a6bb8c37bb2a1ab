/*
  getopt_long over the options of `plumb scan`. Every value is checked
  here, so that a typing mistake stops the command with one line on stderr
  before a single take has been analysed. The ranges are the ones the
  plugin's control ports declare.
*/
#include "options.h"

#include "exit_status.h"
#include "parse_value.h"
#include "plumb.h"
#include "progress.h"
#include "tuning_file.h"

#include <getopt.h>
#include <string.h>

enum {
  OPTION_TEMPERAMENT = 256,
  OPTION_TONIC,
  OPTION_PRESET,
  OPTION_BLOCK,
  OPTION_STRICT,
  OPTION_LOWEST,
  OPTION_HIGHEST,
  OPTION_MIN_NOTE,
  OPTION_ENSEMBLE,
  OPTION_INTERVALS,
  OPTION_TEMPO,
  OPTION_METER,
  OPTION_START
};

static const struct option long_options[] = {
    {"out", required_argument, NULL, 'o'},
    {"reference", required_argument, NULL, 'r'},
    {"tolerance", required_argument, NULL, 't'},
    {"temperament", required_argument, NULL, OPTION_TEMPERAMENT},
    {"tonic", required_argument, NULL, OPTION_TONIC},
    {"preset", required_argument, NULL, OPTION_PRESET},
    {"jobs", required_argument, NULL, 'j'},
    {"block", required_argument, NULL, OPTION_BLOCK},
    {"strict", no_argument, NULL, OPTION_STRICT},
    {"lowest", required_argument, NULL, OPTION_LOWEST},
    {"highest", required_argument, NULL, OPTION_HIGHEST},
    {"min-note", required_argument, NULL, OPTION_MIN_NOTE},
    {"ensemble", no_argument, NULL, OPTION_ENSEMBLE},
    {"intervals", required_argument, NULL, OPTION_INTERVALS},
    {"tempo", required_argument, NULL, OPTION_TEMPO},
    {"meter", required_argument, NULL, OPTION_METER},
    {"start-s", required_argument, NULL, OPTION_START},
    {"help", no_argument, NULL, 'h'},
    {NULL, 0, NULL, 0}};

/* A leading ':' makes getopt report a missing value as ':' rather than
   '?', and keeps getopt itself quiet: the messages are ours. */
static const char short_options[] = ":o:r:t:j:h";

void options_print_usage(FILE *stream) {
  static const char *const lines[] = {
      "usage: plumb scan [options] FILE...  analyse takes: one log per track",
      "                                     in --out, a summary on stdout",
      "       plumb report DIR              the summary of the logs in DIR",
      "       plumb ensemble [options] DIR | LOG.notes.csv...",
      "                                     every track of one take against",
      "                                     the others: ensemble.* files",
      "       plumb --help | --version",
      "",
      "scan options:",
      "  -o, --out DIR          log folder (default ./plumb-logs)",
      "  -r, --reference HZ     A4 in Hz, 380..480 (default 440)",
      "  -t, --tolerance CENTS  flag beyond +-CENTS, 1..50 (default 10)",
      "      --temperament NAME equal | just | pythagorean | meantone |",
      "                         werckmeister3 | kirnberger3 | vallotti |",
      "                         PATH to a file of 12 offsets",
      "      --tonic NOTE       pitch class the temperament is built on",
      "                         (default C)",
      "      --lowest NOTE      lowest note searched, 21..108 (default E1)",
      "      --highest NOTE     highest note searched, 21..108 (default C7)",
      "      --min-note MS      shortest note in ms, 20..1000 (default 80)",
      "      --preset NAME      apply one of the bundle's presets",
      "  -j, --jobs N           tracks in parallel, 1..256",
      "                         (default: number of cores)",
      "      --block N          host block size, 1..8192 (default 1024)",
      "      --strict           exit 1 when any note is flagged",
      "      --ensemble         then compare this run's tracks (plumb ensemble)",
      "      --intervals NAME   with --ensemble: equal (default) or just",
      "      --start-s S        the takes start at S s on the timeline",
      "      --tempo BPM        beats a minute, 10..400: logs get bar and beat",
      "      --meter N/D        with --tempo: N beats of 1/D a bar (default 4/4)",
      "",
      "ensemble options:",
      "  -o, --out DIR          where the ensemble files go (default: the logs')",
      "      --intervals NAME   equal (default) | just: the pairs' target",
      "  -t, --tolerance CENTS  a pair beyond +-CENTS is wide or narrow (default 10)",
      "      --min-overlap MS   shortest time two notes sound together (default 80)",
      "      --take STEM        of several takes, the one holding log STEM",
      "",
      "NOTE is a name like E1 or C#4, or a MIDI number. A file with several",
      "channels is analysed one channel at a time, as the tracks <stem>-ch1,",
      "<stem>-ch2 ...",
      "",
      "exit status: 0 done, 1 flagged (with --strict), 2 usage error,",
      "             3 input/output error (wins over 1)",
  };
  for (size_t i = 0; i < sizeof lines / sizeof lines[0]; ++i) {
    fprintf(stream, "%s\n", lines[i]);
  }
}

/* "--tolerance" for the option getopt returned as `code`. */
static const char *option_name(int code) {
  static char name[32];
  for (const struct option *o = long_options; o->name; ++o) {
    if (o->val == code) {
      snprintf(name, sizeof name, "--%s", o->name);
      return name;
    }
  }
  snprintf(name, sizeof name, "-%c", code);
  return name;
}

static bool read_decimal_in(int code, const char *text, double min, double max,
                            double *value) {
  if (!parse_decimal(text, value)) {
    console_error("%s: '%s' is not a number", option_name(code), text);
    return false;
  }
  if (*value < min || *value > max) {
    console_error("%s: '%s' is outside %g..%g", option_name(code), text, min,
                  max);
    return false;
  }
  return true;
}

static bool read_whole_in(int code, const char *text, long min, long max,
                          int *value) {
  long whole = 0;
  if (!parse_whole(text, &whole)) {
    console_error("%s: '%s' is not a whole number", option_name(code), text);
    return false;
  }
  if (whole < min || whole > max) {
    console_error("%s: '%s' is outside %ld..%ld", option_name(code), text, min,
                  max);
    return false;
  }
  *value = (int)whole;
  return true;
}

/* The port range for lowest and highest: A0 to C8, the piano's compass. */
static bool read_note_in(int code, const char *text, int *midi) {
  long note = 0;
  if (!parse_note(text, &note)) {
    console_error("%s: '%s' is not a note name (like E1) or a MIDI number",
                  option_name(code), text);
    return false;
  }
  if (note < 21 || note > 108) {
    console_error("%s: '%s' is outside 21..108 (A0..C8)", option_name(code),
                  text);
    return false;
  }
  *midi = (int)note;
  return true;
}

/* "equal, just, ..." for messages, from the core's own names. */
static void list_temperaments(char *list, size_t size) {
  list[0] = '\0';
  for (int t = 0; t < PLUMB_TEMPERAMENT_CUSTOM; ++t) {
    size_t used = strlen(list);
    snprintf(list + used, size - used, "%s%s", t ? ", " : "",
             plumb_temperament_name((plumb_temperament)t));
  }
}

/* The name in ASCII lower case ("Just" -> "just"), by plain comparisons
   because tolower() depends on the locale; "" when it does not fit. */
static void lower_case(const char *text, char *lower, size_t size) {
  size_t i = 0;
  for (; text[i] && i + 1 < size; ++i) {
    char c = text[i];
    if (c >= 'A' && c <= 'Z') c = (char)(c - 'A' + 'a');
    lower[i] = c;
  }
  lower[text[i] ? 0 : i] = '\0';
}

/* A known name in any case, else the path of a file of twelve offsets. */
static bool read_temperament(const char *text, scan_options *options) {
  plumb_temperament named;
  char lower[32];
  lower_case(text, lower, sizeof lower);
  if (plumb_temperament_from_name(lower, &named) == PLUMB_OK &&
      named != PLUMB_TEMPERAMENT_CUSTOM) {
    options->temperament = (int)named;
    options->has_temperament = true;
    return true;
  }
  bool open_failed = false;
  char reason[256];
  if (!tuning_file_read(text, options->custom_offsets_cents, &open_failed,
                        reason, sizeof reason)) {
    if (open_failed) {
      char names[256];
      list_temperaments(names, sizeof names);
      console_error(
          "--temperament: '%s' is neither a temperament (%s) nor a readable "
          "file: %s",
          text, names, reason);
    } else {
      console_error("--temperament: '%s' %s", text, reason);
    }
    return false;
  }
  options->temperament = PLUMB_TEMPERAMENT_CUSTOM;
  options->has_temperament = true;
  return true;
}

static bool read_tonic(const char *text, scan_options *options) {
  int pitch_class = plumb_pitch_class_from_name(text);
  if (pitch_class < 0) {
    console_error("--tonic: '%s' is not a pitch class (C, C#, Db ... B)", text);
    return false;
  }
  options->tonic_pitch_class = pitch_class;
  options->has_tonic = true;
  return true;
}

static bool read_intervals(const char *text, scan_options *options) {
  if (strcmp(text, "equal") != 0 && strcmp(text, "just") != 0) {
    console_error("--intervals: '%s' is neither 'equal' nor 'just'", text);
    return false;
  }
  options->just_intervals = strcmp(text, "just") == 0;
  return true;
}

/* N/D: N beats a bar, 1..64, of a note value D among 1, 2, 4 ... 64. */
static bool read_meter(const char *text, scan_options *options) {
  char beats[16], unit[16];
  const char *slash = strchr(text, '/');
  long n = 0, d = 0;
  bool ok = slash && slash - text < (long)sizeof beats && strlen(slash + 1) < sizeof unit;
  if (ok) {
    snprintf(beats, sizeof beats, "%.*s", (int)(slash - text), text);
    snprintf(unit, sizeof unit, "%s", slash + 1);
    ok = parse_whole(beats, &n) && parse_whole(unit, &d) && n >= 1 && n <= 64 && d >= 1 &&
         d <= 64 && (d & (d - 1)) == 0;
  }
  if (!ok) {
    console_error("--meter: '%s' is not N/D (N 1..64 beats of 1/D, D 1, 2, 4 ... 64)", text);
    return false;
  }
  options->meter_beats = (int)n;
  options->meter_unit = (int)d;
  return true;
}

/* One option with its value; false after reporting a bad value. */
static bool apply_option(int code, const char *value, scan_options *options) {
  switch (code) {
  case 'o':
    if (value[0] == '\0') {
      console_error("--out: the folder name is empty");
      return false;
    }
    options->out_dir = value;
    return true;
  case 'r':
    options->has_reference = true;
    return read_decimal_in(code, value, 380.0, 480.0, &options->reference_hz);
  case 't':
    options->has_tolerance = true;
    return read_decimal_in(code, value, 1.0, 50.0, &options->tolerance_cents);
  case OPTION_MIN_NOTE:
    options->has_min_note = true;
    return read_decimal_in(code, value, 20.0, 1000.0, &options->min_note_ms);
  case OPTION_TEMPERAMENT:
    return read_temperament(value, options);
  case OPTION_TONIC:
    return read_tonic(value, options);
  case OPTION_LOWEST:
    options->has_lowest = true;
    return read_note_in(code, value, &options->lowest_midi);
  case OPTION_HIGHEST:
    options->has_highest = true;
    return read_note_in(code, value, &options->highest_midi);
  case OPTION_PRESET:
    options->preset_name = value;
    return true;
  case 'j':
    return read_whole_in(code, value, 1, OPTIONS_MAX_JOBS, &options->jobs);
  case OPTION_BLOCK:
    return read_whole_in(code, value, 1, OPTIONS_MAX_BLOCK_FRAMES,
                         &options->block_frames);
  case OPTION_STRICT:
    options->strict = true;
    return true;
  case OPTION_ENSEMBLE:
    options->ensemble = true;
    return true;
  case OPTION_INTERVALS:
    return read_intervals(value, options);
  case OPTION_TEMPO:
    options->has_timeline = true;
    return read_decimal_in(code, value, 10.0, 400.0, &options->tempo_bpm);
  case OPTION_METER:
    return read_meter(value, options);
  case OPTION_START:
    options->has_timeline = true;
    return read_decimal_in(code, value, 0.0, 86400.0, &options->start_s);
  default:
    return false;
  }
}

/* How many long options start with what was given after "--" (up to any
   '='): getopt_long accepts an unambiguous abbreviation, and reports an
   ambiguous one just as it reports an unknown one. */
static int abbreviation_matches(const char *given) {
  const char *name = given + 2;
  size_t length = strcspn(name, "=");
  int matches = 0;
  for (const struct option *o = long_options; o->name; ++o) {
    matches += length > 0 && strncmp(o->name, name, length) == 0;
  }
  return matches;
}

/* getopt returned '?' or ':' for the argument just before argv[optind]. */
static void report_bad_option(int code, char **argv) {
  const char *given = argv[optind - 1];
  bool is_long = strncmp(given, "--", 2) == 0;
  if (code == ':') {
    console_error("%s needs a value", optopt ? option_name(optopt) : given);
  } else if (optopt && is_long) {
    console_error("%s takes no value (given '%s')", option_name(optopt), given);
  } else if (optopt) {
    console_error("unknown option '-%c' (plumb --help lists them)", optopt);
  } else if (is_long && abbreviation_matches(given) > 1) {
    console_error("option '%s' is ambiguous (plumb --help lists them)", given);
  } else {
    console_error("unknown option '%s' (plumb --help lists them)", given);
  }
}

static void set_defaults(scan_options *options) {
  memset(options, 0, sizeof *options);
  options->out_dir = OPTIONS_DEFAULT_OUT_DIR;
  options->block_frames = OPTIONS_DEFAULT_BLOCK_FRAMES;
  options->meter_beats = 4;
  options->meter_unit = 4;
}

/* The range is checked once all options are in, in either order. */
static bool range_is_ordered(const scan_options *options) {
  if (options->has_lowest && options->has_highest &&
      options->lowest_midi > options->highest_midi) {
    char lowest[8];
    char highest[8];
    plumb_note_name(options->lowest_midi, lowest);
    plumb_note_name(options->highest_midi, highest);
    console_error("--lowest %s is above --highest %s", lowest, highest);
    return false;
  }
  return true;
}

bool options_parse_scan(int argc, char **argv, scan_options *options,
                        int *exit_status) {
  set_defaults(options);
  *exit_status = EXIT_STATUS_USAGE;
  optind = 1;
  opterr = 0;
  int code;
  while ((code = getopt_long(argc, argv, short_options, long_options, NULL)) !=
         -1) {
    if (code == 'h') {
      options_print_usage(stdout);
      *exit_status = EXIT_STATUS_DONE;
      return false;
    }
    if (code == '?' || code == ':') {
      report_bad_option(code, argv);
      return false;
    }
    if (!apply_option(code, optarg, options)) {
      return false;
    }
  }
  if (optind >= argc) {
    console_error("scan needs at least one FILE (plumb --help)");
    return false;
  }
  options->files = argv + optind;
  options->file_count = argc - optind;
  return range_is_ordered(options);
}
