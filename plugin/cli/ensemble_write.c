/*
  Writing the ensemble files (their text is plugin/formats/ensemble_files.c).
  Each is written to a temporary name in the same folder and renamed over
  the old one, so a reader never sees half a file.
*/
#include "ensemble_write.h"

#include "ensemble_files.h"
#include "progress.h"

#include <errno.h>
#include <limits.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

typedef void (*file_writer)(FILE *out, const ensemble_files *files);

static bool write_one(const char *folder, const char *name, file_writer writer,
                      const ensemble_files *files) {
  char path[PATH_MAX], temporary[PATH_MAX + 32];
  snprintf(path, sizeof path, "%s/%s", folder, name);
  snprintf(temporary, sizeof temporary, "%s.tmp-%ld", path, (long)getpid());
  FILE *out = fopen(temporary, "wx");
  if (!out) {
    console_error("ensemble: cannot write '%s': %s", temporary, strerror(errno));
    return false;
  }
  writer(out, files);
  bool ok = !ferror(out);
  ok = fclose(out) == 0 && ok;
  if (ok && rename(temporary, path) == 0) return true;
  console_error("ensemble: cannot write '%s': %s", path, strerror(errno));
  unlink(temporary);
  return false;
}

bool ensemble_write_files(const char *folder, const ensemble_outcome *outcome) {
  ensemble_files_track *tracks = calloc(outcome->count ? outcome->count : 1, sizeof *tracks);
  if (!tracks) {
    console_error("ensemble: out of memory");
    return false;
  }
  for (size_t t = 0; t < outcome->count; ++t) {
    const ensemble_log *log = outcome->logs[t];
    tracks[t] = (ensemble_files_track){log->stem, log->path, log->run_id, log->notes,
                                       (const char(*)[8])log->names};
  }
  ensemble_files files = {tracks, outcome->count, outcome->settings, outcome->result};
  bool ok = write_one(folder, "ensemble.pairs.csv", ensemble_files_pairs_csv, &files) &&
            write_one(folder, "ensemble.tracks.csv", ensemble_files_tracks_csv, &files) &&
            write_one(folder, "ensemble.json", ensemble_files_json, &files);
  free(tracks);
  return ok;
}
