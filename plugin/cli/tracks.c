#include "tracks.h"

#include "audio_file.h"
#include "progress.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* The file name without its folder and its last extension; a name with
   no other dot than a leading one keeps it ("take.01.wav" -> "take.01",
   ".wav" -> ".wav"). */
static void file_stem(const char *path, char *stem, size_t size) {
  const char *slash = strrchr(path, '/');
  const char *name = slash ? slash + 1 : path;
  const char *dot = strrchr(name, '.');
  size_t length = dot && dot != name ? (size_t)(dot - name) : strlen(name);
  snprintf(stem, size, "%.*s", (int)length, name);
}

static bool label_taken(const track_plan *plan, const char *label) {
  for (size_t i = 0; i < plan->count; ++i) {
    if (strcmp(plan->tracks[i].label, label) == 0) {
      return true;
    }
  }
  return false;
}

/* `wanted`, or wanted-2, wanted-3 ... whichever no earlier track has. */
static void unique_label(const track_plan *plan, const char *wanted,
                         char *label, size_t size) {
  snprintf(label, size, "%s", wanted);
  for (int n = 2; label_taken(plan, label); ++n) {
    snprintf(label, size, "%s-%d", wanted, n);
  }
}

static void add_tracks(track_plan *plan, const char *path,
                       const SF_INFO *info) {
  /* Room left in a label for "-ch<N>" and then "-<N>". */
  char stem[200];
  file_stem(path, stem, sizeof stem);
  for (int channel = 0; channel < info->channels; ++channel) {
    host_track *track = &plan->tracks[plan->count];
    char wanted[224];
    if (info->channels == 1) {
      snprintf(wanted, sizeof wanted, "%s", stem);
    } else {
      snprintf(wanted, sizeof wanted, "%s-ch%d", stem, channel + 1);
    }
    track->path = path;
    track->channel = channel;
    /* A stream of unknown length reports SF_COUNT_MAX: no share to show. */
    track->frames = info->frames < SF_COUNT_MAX ? (uint64_t)info->frames : 0;
    unique_label(plan, wanted, track->label, sizeof track->label);
    plan->count += 1;
    plan->total_frames += track->frames;
  }
}

static bool reserve(track_plan *plan, size_t more, size_t *capacity) {
  if (plan->count + more <= *capacity) {
    return true;
  }
  size_t wanted = 2 * (plan->count + more);
  host_track *grown = realloc(plan->tracks, wanted * sizeof *grown);
  if (!grown) {
    return false;
  }
  plan->tracks = grown;
  *capacity = wanted;
  return true;
}

bool tracks_plan(char *const *files, int file_count, track_plan *plan) {
  memset(plan, 0, sizeof *plan);
  size_t capacity = 0;
  for (int i = 0; i < file_count; ++i) {
    SF_INFO info;
    char reason[256];
    SNDFILE *file = audio_file_open(files[i], &info, reason, sizeof reason);
    if (!file) {
      console_error("%s: %s", files[i], reason);
      plan->failed_files += 1;
      continue;
    }
    sf_close(file);
    if (!reserve(plan, (size_t)info.channels, &capacity)) {
      console_error("out of memory planning the tracks");
      return false;
    }
    add_tracks(plan, files[i], &info);
  }
  return true;
}

void tracks_free(track_plan *plan) {
  free(plan->tracks);
  memset(plan, 0, sizeof *plan);
}
