/*
  The order matters: everything that can be a usage error (options, the
  tuning file, the preset) is settled before the log folder is made, and
  all of that before the first take runs.
*/
#include "scan.h"

#include "log_locate.h"

#include "bundle.h"
#include "ensemble_main.h"
#include "exit_status.h"
#include "host.h"
#include "jobs.h"
#include "options.h"
#include "out_folder.h"
#include "plumb.h"
#include "ports.h"
#include "preset.h"
#include "progress.h"
#include "summary.h"
#include "tracks.h"
#include "host_uris.h"

#include <limits.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

/* Everything one scan holds, for the job function. */
typedef struct {
  bundle loaded;
  urid_table *urids;
  host_uris uris;
  port_layout layout;
  float *control_values;
  char log_folder[PATH_MAX];
  pthread_mutex_t lilv_mutex;
  host_context host;
  track_plan plan;
  bool *track_ok;
  host_outcome *outcomes;
  struct timespec started; /* logs written before this are an earlier run's */
  control_timeline timeline;
} scan_run;

/* False after reporting a port the plugin should have and has not. */
static bool set_port(scan_run *scan, const char *symbol, double value) {
  int index = port_layout_find(&scan->layout, symbol);
  if (index < 0 || scan->layout.ports[index].kind != PORT_CONTROL_IN) {
    console_error("the plugin in %s has no control input '%s'",
                  scan->loaded.path, symbol);
    return false;
  }
  scan->control_values[index] = (float)value;
  return true;
}

/* Options given on the command line win over the preset's values. */
static bool set_option_ports(scan_run *scan, const scan_options *options) {
  const struct {
    bool given;
    const char *symbol;
    double value;
  } settings[] = {
      {options->has_reference, "reference", options->reference_hz},
      {options->has_tolerance, "tolerance", options->tolerance_cents},
      {options->has_temperament, "temperament", options->temperament},
      {options->has_tonic, "tonic", options->tonic_pitch_class},
      {options->has_lowest, "lowest", options->lowest_midi},
      {options->has_highest, "highest", options->highest_midi},
      {options->has_min_note, "min_note", options->min_note_ms},
      /* The scan's whole output is the logs, whatever a preset says. */
      {true, "logging", 1.0},
  };
  for (size_t i = 0; i < sizeof settings / sizeof settings[0]; ++i) {
    if (settings[i].given &&
        !set_port(scan, settings[i].symbol, settings[i].value)) {
      return false;
    }
  }
  return true;
}

/* A preset can leave the range empty where the options alone could not. */
static bool range_is_ordered(const scan_run *scan) {
  int lowest = port_layout_find(&scan->layout, "lowest");
  int highest = port_layout_find(&scan->layout, "highest");
  if (lowest < 0 || highest < 0 ||
      scan->control_values[lowest] <= scan->control_values[highest]) {
    return true;
  }
  char lowest_name[8];
  char highest_name[8];
  plumb_note_name((int)scan->control_values[lowest], lowest_name);
  plumb_note_name((int)scan->control_values[highest], highest_name);
  console_error("the lowest note (%s) is above the highest (%s)", lowest_name,
                highest_name);
  return false;
}

/* Loads the plugin and fixes every port value. Returns an exit status:
   DONE to go on, USAGE for a bad preset, IO for a missing bundle. */
static int prepare_plugin(scan_run *scan, const scan_options *options) {
  if (!bundle_open(&scan->loaded)) {
    return EXIT_STATUS_IO;
  }
  scan->urids = urid_table_new();
  if (!scan->urids || !host_uris_map(&scan->uris, scan->urids)) {
    console_error("out of memory mapping URIs");
    return EXIT_STATUS_IO;
  }
  if (!port_layout_read(scan->loaded.world, scan->loaded.plugin,
                        &scan->layout)) {
    return EXIT_STATUS_IO;
  }
  scan->control_values =
      calloc(scan->layout.count, sizeof *scan->control_values);
  if (!scan->control_values) {
    console_error("out of memory");
    return EXIT_STATUS_IO;
  }
  for (uint32_t i = 0; i < scan->layout.count; ++i) {
    scan->control_values[i] = scan->layout.ports[i].default_value;
  }
  if (options->preset_name &&
      !preset_apply(&scan->loaded, &scan->layout,
                    urid_table_map_feature(scan->urids), options->preset_name,
                    scan->control_values)) {
    return EXIT_STATUS_USAGE;
  }
  if (!set_option_ports(scan, options)) {
    return EXIT_STATUS_IO;
  }
  return range_is_ordered(scan) ? EXIT_STATUS_DONE : EXIT_STATUS_USAGE;
}

static bool run_track(size_t index, void *context) {
  scan_run *scan = context;
  scan->track_ok[index] = host_run_track(
      &scan->host, &scan->plan.tracks[index], &scan->outcomes[index]);
  return scan->track_ok[index];
}

static void run_tracks(scan_run *scan, const scan_options *options) {
  scan->timeline = (control_timeline){options->start_s, options->tempo_bpm,
                                      options->meter_beats, options->meter_unit, 0.0};
  bool custom = options->has_temperament &&
                options->temperament == PLUMB_TEMPERAMENT_CUSTOM;
  scan->host = (host_context){.plugin = scan->loaded.plugin,
                              .layout = &scan->layout,
                              .control_values = scan->control_values,
                              .urids = scan->urids,
                              .uris = &scan->uris,
                              .log_folder = scan->log_folder,
                              .custom_offsets_cents =
                                  custom ? options->custom_offsets_cents : NULL,
                              .block_frames = (uint32_t)options->block_frames,
                              .timeline = options->has_timeline ? &scan->timeline : NULL,
                              .lilv_mutex = &scan->lilv_mutex};
  unsigned threads =
      options->jobs > 0 ? (unsigned)options->jobs : jobs_default_threads();
  progress_start(scan->plan.count, scan->plan.total_frames);
  jobs_run(scan->plan.count, threads, run_track, scan);
  progress_finish();
}

/* The log of track i that this run wrote: its path, or NULL for a take
   with no notes (the plugin leaves no files then). False after reporting
   a take whose notes were counted but whose log is missing. */
static bool this_runs_log(const scan_run *scan, size_t i, char *path, size_t size,
                          const char **found) {
  const char *label = scan->plan.tracks[i].label;
  *found = NULL;
  if (log_locate(scan->log_folder, label, scan->started, path, size)) {
    *found = path;
    return true;
  }
  long notes = scan->outcomes[i].notes;
  if (notes > 0) {
    console_error("%s: the plugin counted %ld notes, but no log of this run is in %s",
                  label, notes, scan->log_folder);
    return false;
  }
  return true;
}

/* --ensemble: the ensemble step over the logs this run wrote. */
static int run_ensemble(const scan_run *scan, const scan_options *options,
                        const summary_take *takes, size_t count) {
  char **paths = calloc(count ? count : 1, sizeof *paths);
  if (!paths) {
    console_error("out of memory");
    return EXIT_STATUS_IO;
  }
  size_t logs = 0;
  for (size_t i = 0; i < count; ++i) {
    if (takes[i].log_path) {
      /* ensemble_run_paths() takes argv's type; it only reads the paths. */
      paths[logs++] = (char *)(uintptr_t)takes[i].log_path; /* NOLINT(performance-no-int-to-ptr) */
    }
  }
  int status = EXIT_STATUS_DONE;
  putchar('\n');
  fflush(stdout);
  if (logs == 0) {
    console_error("ensemble: no track of this run left a log: nothing to compare");
  } else {
    ensemble_options ensemble;
    ensemble_options_default(&ensemble);
    ensemble.out_dir = scan->log_folder;
    ensemble.settings.target =
        options->just_intervals ? PLUMB_INTERVALS_JUST : PLUMB_INTERVALS_EQUAL;
    status = ensemble_run_paths(paths, logs, &ensemble, true);
  }
  free(paths);
  return status;
}

/* The summary of the tracks that ran; returns the final exit status. */
static int summarise(const scan_run *scan, const scan_options *options,
                     int status) {
  summary_take *takes =
      calloc(scan->plan.count ? scan->plan.count : 1, sizeof *takes);
  char(*paths)[PATH_MAX] =
      calloc(scan->plan.count ? scan->plan.count : 1, sizeof *paths);
  if (!takes || !paths) {
    console_error("out of memory");
    free(takes);
    free(paths);
    return EXIT_STATUS_IO;
  }
  size_t count = 0;
  for (size_t i = 0; i < scan->plan.count; ++i) {
    const char *found = NULL;
    if (!scan->outcomes[i].ran) {
      continue; /* its failure has been reported */
    }
    if (!this_runs_log(scan, i, paths[count], PATH_MAX, &found)) {
      status = EXIT_STATUS_IO;
      continue;
    }
    takes[count] = (summary_take){scan->plan.tracks[i].label, found};
    ++count;
  }
  summary_totals totals = summary_print(stdout, takes, count, scan->log_folder);
  if (options->ensemble) {
    status = exit_status_worst(status, run_ensemble(scan, options, takes, count));
  }
  free(takes);
  free(paths);
  if (totals.unreadable_logs) {
    status = exit_status_worst(status, EXIT_STATUS_IO);
  }
  if (options->strict && totals.flagged_notes) {
    status = exit_status_worst(status, EXIT_STATUS_FLAGGED);
  }
  return status;
}

/* Plans, runs and summarises the takes; the plugin is ready. */
static int scan_takes(scan_run *scan, const scan_options *options) {
  if (!out_folder_prepare(options->out_dir, scan->log_folder,
                          sizeof scan->log_folder)) {
    return EXIT_STATUS_IO;
  }
  if (!tracks_plan(options->files, options->file_count, &scan->plan)) {
    return EXIT_STATUS_IO;
  }
  size_t slots = scan->plan.count ? scan->plan.count : 1;
  scan->track_ok = calloc(slots, sizeof *scan->track_ok);
  scan->outcomes = calloc(slots, sizeof *scan->outcomes);
  if (!scan->track_ok || !scan->outcomes) {
    console_error("out of memory");
    return EXIT_STATUS_IO;
  }
  /* A file's time stamp can lag the clock by a tick of the kernel's:
     a second of slack (the run.json must also name this process). */
  clock_gettime(CLOCK_REALTIME, &scan->started);
  scan->started.tv_sec -= 1;
  run_tracks(scan, options);
  int status = scan->plan.failed_files ? EXIT_STATUS_IO : EXIT_STATUS_DONE;
  for (size_t i = 0; i < scan->plan.count; ++i) {
    status = scan->track_ok[i] ? status : EXIT_STATUS_IO;
  }
  return summarise(scan, options, status);
}

static void scan_free(scan_run *scan) {
  free(scan->track_ok);
  free(scan->outcomes);
  tracks_free(&scan->plan);
  free(scan->control_values);
  port_layout_free(&scan->layout);
  bundle_close(&scan->loaded);
  urid_table_free(scan->urids);
  pthread_mutex_destroy(&scan->lilv_mutex);
}

int scan_main(int argc, char **argv) {
  scan_options options;
  int status = EXIT_STATUS_DONE;
  if (!options_parse_scan(argc, argv, &options, &status)) {
    return status;
  }
  scan_run scan;
  memset(&scan, 0, sizeof scan);
  pthread_mutex_init(&scan.lilv_mutex, NULL);
  status = prepare_plugin(&scan, &options);
  if (status == EXIT_STATUS_DONE) {
    status = scan_takes(&scan, &options);
  }
  scan_free(&scan);
  return status;
}
