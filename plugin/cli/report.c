#include "report.h"

#include "exit_status.h"
#include "options.h"
#include "progress.h"
#include "summary.h"

#include <dirent.h>
#include <errno.h>
#include <limits.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#define LOG_SUFFIX ".notes.csv"

typedef struct {
  char **names; /* file names of the logs, sorted */
  size_t count;
} log_names;

static bool is_log_name(const char *name) {
  size_t length = strlen(name);
  size_t suffix = strlen(LOG_SUFFIX);
  return length > suffix && strcmp(name + length - suffix, LOG_SUFFIX) == 0;
}

static bool is_regular_file(const char *folder, const char *name) {
  char path[PATH_MAX];
  struct stat info;
  int length = snprintf(path, sizeof path, "%s/%s", folder, name);
  return length > 0 && (size_t)length < sizeof path && stat(path, &info) == 0 &&
         S_ISREG(info.st_mode);
}

static bool add_name(log_names *logs, const char *name, size_t *capacity) {
  if (logs->count == *capacity) {
    *capacity = *capacity ? 2 * *capacity : 64;
    char **grown = realloc(logs->names, *capacity * sizeof *grown);
    if (!grown) {
      return false;
    }
    logs->names = grown;
  }
  logs->names[logs->count] = strdup(name);
  return logs->names[logs->count++] != NULL;
}

static int compare_names(const void *a, const void *b) {
  return strcmp(*(char *const *)a, *(char *const *)b);
}

static void free_names(log_names *logs) {
  for (size_t i = 0; i < logs->count; ++i) {
    free(logs->names[i]);
  }
  free(logs->names);
}

/* False after reporting a folder that cannot be listed. */
static bool list_logs(const char *folder, log_names *logs) {
  DIR *directory = opendir(folder);
  if (!directory) {
    console_error("report: cannot open the folder '%s': %s", folder,
                  strerror(errno));
    return false;
  }
  size_t capacity = 0;
  bool ok = true;
  for (struct dirent *entry = readdir(directory); ok && entry;
       entry = readdir(directory)) {
    if (is_log_name(entry->d_name) && is_regular_file(folder, entry->d_name)) {
      ok = add_name(logs, entry->d_name, &capacity);
    }
  }
  closedir(directory);
  if (!ok) {
    console_error("report: out of memory listing '%s'", folder);
    return false;
  }
  if (logs->count > 1) {
    qsort(logs->names, logs->count, sizeof *logs->names, compare_names);
  }
  return true;
}

/* The summary of the listed logs; each take is labelled by its log's stem. */
static int summarise(const char *folder, const log_names *logs) {
  summary_take *takes = calloc(logs->count, sizeof *takes);
  char(*paths)[PATH_MAX] = calloc(logs->count, sizeof *paths);
  char(*labels)[PATH_MAX] = calloc(logs->count, sizeof *labels);
  if (!takes || !paths || !labels) {
    console_error("report: out of memory");
    free(takes);
    free(paths);
    free(labels);
    return EXIT_STATUS_IO;
  }
  for (size_t i = 0; i < logs->count; ++i) {
    snprintf(paths[i], PATH_MAX, "%s/%s", folder, logs->names[i]);
    snprintf(labels[i], PATH_MAX, "%.*s",
             (int)(strlen(logs->names[i]) - strlen(LOG_SUFFIX)),
             logs->names[i]);
    takes[i].label = labels[i];
    takes[i].log_path = paths[i];
  }
  char shown[PATH_MAX];
  summary_totals totals = summary_print(
      stdout, takes, logs->count, realpath(folder, shown) ? shown : folder);
  free(takes);
  free(paths);
  free(labels);
  return totals.unreadable_logs ? EXIT_STATUS_IO : EXIT_STATUS_DONE;
}

int report_main(int argc, char **argv) {
  if (argc == 2 &&
      (strcmp(argv[1], "--help") == 0 || strcmp(argv[1], "-h") == 0)) {
    options_print_usage(stdout);
    return EXIT_STATUS_DONE;
  }
  if (argc == 2 && argv[1][0] == '-') {
    console_error("report: unknown option '%s' (plumb --help)", argv[1]);
    return EXIT_STATUS_USAGE;
  }
  if (argc != 2) {
    console_error("report needs exactly one DIR (plumb --help)");
    return EXIT_STATUS_USAGE;
  }
  const char *folder = argv[1];
  log_names logs = {NULL, 0};
  if (!list_logs(folder, &logs)) {
    free_names(&logs);
    return EXIT_STATUS_IO;
  }
  int status = EXIT_STATUS_IO;
  if (logs.count == 0) {
    console_error("report: no logs (*" LOG_SUFFIX ") in '%s'", folder);
  } else {
    status = summarise(folder, &logs);
  }
  free_names(&logs);
  return status;
}
