#include "ensemble_main.h"

#include "ensemble_logs.h"
#include "ensemble_summary.h"
#include "ensemble_write.h"
#include "exit_status.h"
#include "options.h"
#include "parse_value.h"
#include "progress.h"

#include <assert.h>
#include <getopt.h>
#include <limits.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

void ensemble_options_default(ensemble_options *options) {
  memset(options, 0, sizeof *options);
  plumb_ensemble_settings_default(&options->settings);
}

/* The take to compare: the one holding options->take, or the only one. */
static int choose_take(const ensemble_logs *logs, const ensemble_options *options, bool chosen) {
  if (options->take) {
    for (size_t i = 0; i < logs->count; ++i)
      if (strcmp(logs->logs[i].stem, options->take) == 0) return logs->logs[i].take;
    console_error("ensemble: --take %s: no log of that name was read", options->take);
    return -1;
  }
  if (logs->takes <= 1) return 0;
  if (chosen) {
    console_error("ensemble: warning: the logs named come from %d takes (runs); compared as "
                  "one, as asked",
                  logs->takes);
    return -2; /* every log */
  }
  console_error("ensemble: the logs come from %d different takes; choose one with --take STEM, "
                "or name the logs to compare:",
                logs->takes);
  for (int take = 0; take < logs->takes; ++take) {
    char line[1024] = "";
    const char *when = "";
    for (size_t i = 0; i < logs->count; ++i) {
      if (logs->logs[i].take != take) continue;
      size_t used = strlen(line);
      snprintf(line + used, sizeof line - used, "%s%s", used ? ", " : "", logs->logs[i].stem);
      when = logs->logs[i].has_run ? logs->logs[i].start_time : "no run.json";
    }
    console_error("  take %d (%s): %s", take + 1, when, line);
  }
  return -1;
}

static const char *output_folder(const ensemble_options *options, const char *first_path,
                                 char *folder, size_t size) {
  if (options->out_dir) return options->out_dir;
  const char *slash = strrchr(first_path, '/');
  if (!slash) return ".";
  snprintf(folder, size, "%.*s", (int)(slash - first_path), first_path);
  return folder[0] ? folder : "/";
}

static int compare(const ensemble_logs *logs, int take, const ensemble_options *options) {
  size_t n = 0;
  plumb_ensemble_track *tracks = calloc(logs->count ? logs->count : 1, sizeof *tracks);
  /* An array of pointers: sizeof *chosen is meant. */
  /* NOLINTNEXTLINE(bugprone-sizeof-expression) */
  const ensemble_log **chosen = calloc(logs->count ? logs->count : 1, sizeof *chosen);
  if (!tracks || !chosen) {
    free(tracks);
    free(chosen);
    console_error("ensemble: out of memory");
    return EXIT_STATUS_IO;
  }
  for (size_t i = 0; i < logs->count; ++i) {
    const ensemble_log *log = &logs->logs[i];
    if (take != -2 && log->take != take) continue;
    tracks[n] = (plumb_ensemble_track){log->stem, log->notes, log->count};
    chosen[n++] = log;
  }
  assert(n > 0); /* choose_take() gives a take that some log read has */
  plumb_ensemble_result *result = NULL;
  plumb_status status = plumb_ensemble_run(tracks, n, &options->settings, &result);
  int exit_status = EXIT_STATUS_DONE;
  if (status != PLUMB_OK) {
    console_error("ensemble: %s", plumb_strerror(status));
    exit_status = EXIT_STATUS_IO;
  } else {
    char folder[PATH_MAX];
    const char *out = output_folder(options, chosen[0]->path, folder, sizeof folder);
    ensemble_outcome outcome = {chosen, n, &options->settings, result};
    if (n == 1) console_error("ensemble: only one track (%s): no pairs", chosen[0]->stem);
    if (!ensemble_write_files(out, &outcome))
      exit_status = EXIT_STATUS_IO;
    else
      ensemble_summary_print(stdout, &outcome, out);
  }
  plumb_ensemble_free(result);
  free(tracks);
  free(chosen);
  return exit_status;
}

int ensemble_run_paths(char *const *paths, size_t count, const ensemble_options *options,
                       bool chosen) {
  ensemble_logs logs = {calloc(count ? count : 1, sizeof(ensemble_log)), 0, 0};
  if (!logs.logs) {
    console_error("ensemble: out of memory");
    return EXIT_STATUS_IO;
  }
  int status = EXIT_STATUS_DONE;
  for (size_t i = 0; i < count; ++i) {
    if (ensemble_log_read(paths[i], &logs.logs[logs.count]))
      logs.count += 1;
    else
      status = EXIT_STATUS_IO; /* said; the others are still compared */
  }
  if (logs.count == 0) {
    console_error("ensemble: no log could be read");
    ensemble_logs_free(&logs);
    return EXIT_STATUS_IO;
  }
  ensemble_logs_group(&logs);
  int take = choose_take(&logs, options, chosen);
  if (take == -1)
    status = EXIT_STATUS_USAGE;
  else
    status = exit_status_worst(status, compare(&logs, take, options));
  ensemble_logs_free(&logs);
  return status;
}

enum { OPTION_INTERVALS = 256, OPTION_MIN_OVERLAP, OPTION_TAKE };

static const struct option ensemble_long_options[] = {
    {"out", required_argument, NULL, 'o'},
    {"intervals", required_argument, NULL, OPTION_INTERVALS},
    {"tolerance", required_argument, NULL, 't'},
    {"min-overlap", required_argument, NULL, OPTION_MIN_OVERLAP},
    {"take", required_argument, NULL, OPTION_TAKE},
    {"help", no_argument, NULL, 'h'},
    {NULL, 0, NULL, 0}};

bool ensemble_option_intervals(const char *text, plumb_ensemble_settings *settings) {
  if (strcmp(text, "equal") == 0)
    settings->target = PLUMB_INTERVALS_EQUAL;
  else if (strcmp(text, "just") == 0)
    settings->target = PLUMB_INTERVALS_JUST;
  else {
    console_error("--intervals: '%s' is neither 'equal' nor 'just'", text);
    return false;
  }
  return true;
}

static bool apply(int code, const char *value, ensemble_options *options) {
  double number = 0.0;
  switch (code) {
  case 'o':
    options->out_dir = value;
    return value[0] != '\0' || (console_error("--out: the folder name is empty"), false);
  case OPTION_INTERVALS:
    return ensemble_option_intervals(value, &options->settings);
  case 't':
    if (!parse_decimal(value, &number) || number < 0.1 || number > 100.0) {
      console_error("--tolerance: '%s' is not a number of cents in 0.1..100", value);
      return false;
    }
    options->settings.tolerance_cents = number;
    return true;
  case OPTION_MIN_OVERLAP:
    if (!parse_decimal(value, &number) || number < 1.0 || number > 10000.0) {
      console_error("--min-overlap: '%s' is not a number of ms in 1..10000", value);
      return false;
    }
    options->settings.min_overlap_s = number / 1000.0;
    return true;
  case OPTION_TAKE:
    options->take = value;
    return true;
  default:
    console_error("unknown or incomplete option (plumb --help lists them)");
    return false;
  }
}

static bool is_folder(const char *path) {
  struct stat info;
  return stat(path, &info) == 0 && S_ISDIR(info.st_mode);
}

int ensemble_main(int argc, char **argv) {
  ensemble_options options;
  ensemble_options_default(&options);
  optind = 1;
  opterr = 0;
  int code;
  while ((code = getopt_long(argc, argv, ":o:t:h", ensemble_long_options, NULL)) != -1) {
    if (code == 'h') {
      options_print_usage(stdout);
      return EXIT_STATUS_DONE;
    }
    if (!apply(code, optarg, &options)) return EXIT_STATUS_USAGE;
  }
  if (optind >= argc) {
    console_error("ensemble needs a log folder or .notes.csv files (plumb --help)");
    return EXIT_STATUS_USAGE;
  }
  if (argc - optind == 1 && is_folder(argv[optind])) {
    char **paths = NULL;
    size_t count = 0;
    if (!ensemble_logs_list(argv[optind], &paths, &count)) return EXIT_STATUS_IO;
    int status = EXIT_STATUS_IO;
    if (count == 0)
      console_error("ensemble: no logs (*.notes.csv) in '%s'", argv[optind]);
    else {
      if (!options.out_dir) options.out_dir = argv[optind];
      status = ensemble_run_paths(paths, count, &options, false);
    }
    for (size_t i = 0; i < count; ++i) free(paths[i]);
    free(paths);
    return status;
  }
  return ensemble_run_paths(argv + optind, (size_t)(argc - optind), &options, true);
}
