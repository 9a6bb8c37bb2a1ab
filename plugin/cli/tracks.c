#include "tracks.h"

#include "audio_file.h"
#include "log_stem.h"
#include "progress.h"
#include "utf8_cut.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* The file name without its folder and its last extension; a name with
   no other dot than a leading one keeps it ("take.01.wav" -> "take.01",
   ".wav" -> ".wav"). Standard input is "stdin". */
static void file_stem(const char *path, char *stem, size_t size) {
  if (strcmp(path, "-") == 0) {
    snprintf(stem, size, "stdin");
    return;
  }
  const char *slash = strrchr(path, '/');
  const char *name = slash ? slash + 1 : path;
  const char *dot = strrchr(name, '.');
  size_t length = dot && dot != name ? (size_t)(dot - name) : strlen(name);
  length = utf8_cut(name, length, size - 1);
  snprintf(stem, size, "%.*s", (int)length, name);
}

/* Two labels clash when they name the same log file. */
static bool label_taken(const track_plan *plan, const char *label) {
  char stem[PLUMB_LOG_STEM_MAX + 1];
  char other[PLUMB_LOG_STEM_MAX + 1];
  plumb_log_stem(label, stem);
  for (size_t i = 0; i < plan->count; ++i) {
    plumb_log_stem(plan->tracks[i].label, other);
    if (strcmp(stem, other) == 0) {
      return true;
    }
  }
  return false;
}

/* `wanted`, or wanted-2, wanted-3 ... whichever names a log file that no
   earlier track's does. The suffix goes where the log stem keeps it: a
   stem is cut to PLUMB_LOG_STEM_MAX bytes, so a long label is shortened
   first (at a whole UTF-8 character). */
static void unique_label(const track_plan *plan, const char *wanted,
                         char *label, size_t size) {
  snprintf(label, size, "%s", wanted);
  for (int n = 2; label_taken(plan, label); ++n) {
    char suffix[16];
    snprintf(suffix, sizeof suffix, "-%d", n);
    size_t keep = utf8_cut(wanted, strlen(wanted), PLUMB_LOG_STEM_MAX - strlen(suffix));
    snprintf(label, size, "%.*s%s", (int)keep, wanted, suffix);
  }
}

static void add_tracks(track_plan *plan, const char *name, const char *path,
                       const SF_INFO *info) {
  /* Room left in a label for "-ch<N>" and then "-<N>". */
  char stem[200];
  file_stem(name, stem, sizeof stem);
  for (int channel = 0; channel < info->channels; ++channel) {
    host_track *track = &plan->tracks[plan->count];
    char wanted[224];
    if (info->channels == 1) {
      snprintf(wanted, sizeof wanted, "%s", stem);
    } else {
      snprintf(wanted, sizeof wanted, "%s-ch%d", stem, channel + 1);
    }
    track->name = name;
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

/* The path to open for `name`: itself, or the copy of a stream. False
   after reporting a stream that could not be copied. */
static bool source_path(track_plan *plan, const char *name, const char **path) {
  *path = name;
  if (!input_is_stream(name)) {
    return true;
  }
  input_stream *stream = &plan->streams[plan->stream_count];
  char reason[256];
  if (!input_stream_copy(name, stream, reason, sizeof reason)) {
    console_error("%s: %s", strcmp(name, "-") == 0 ? "standard input" : name, reason);
    return false;
  }
  plan->stream_count += 1;
  *path = stream->path;
  return true;
}

/* Opens one take for a first look; false after reporting why not. */
static SNDFILE *look_at(track_plan *plan, const char *name, SF_INFO *info,
                        const char **path) {
  if (!source_path(plan, name, path)) {
    return NULL;
  }
  char reason[256];
  SNDFILE *file = audio_file_open(*path, info, reason, sizeof reason);
  if (!file) {
    console_error("%s: %s", name, reason);
    return NULL;
  }
  /* A stream's header is written before its length is known: only a
     file's header is held to its length. */
  bool streamed = *path != name;
  if (!streamed && audio_file_header_disagrees(file)) {
    console_error("%s: its header and its length disagree (cut off while it "
                  "was written?); analysing the %lld frames that are there",
                  name, (long long)info->frames);
  }
  return file;
}

bool tracks_plan(char *const *files, int file_count, track_plan *plan) {
  memset(plan, 0, sizeof *plan);
  plan->streams = calloc(file_count > 0 ? (size_t)file_count : 1, sizeof *plan->streams);
  if (!plan->streams) {
    console_error("out of memory planning the tracks");
    return false;
  }
  size_t capacity = 0;
  for (int i = 0; i < file_count; ++i) {
    SF_INFO info;
    const char *path = NULL;
    SNDFILE *file = look_at(plan, files[i], &info, &path);
    if (!file) {
      plan->failed_files += 1;
      continue;
    }
    sf_close(file);
    if (!reserve(plan, (size_t)info.channels, &capacity)) {
      console_error("out of memory planning the tracks");
      return false;
    }
    add_tracks(plan, files[i], path, &info);
  }
  return true;
}

void tracks_free(track_plan *plan) {
  for (size_t i = 0; i < plan->stream_count; ++i) {
    input_stream_close(&plan->streams[i]);
  }
  free(plan->streams);
  free(plan->tracks);
  memset(plan, 0, sizeof *plan);
}
