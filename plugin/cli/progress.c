/*
  The progress line: "[#####-----]  3/12 tracks  41%". The percentage
  counts frames, so that one long take moves the bar too; the track count
  says how many takes are complete. Redraws are limited to ten a second.
*/
#include "progress.h"

#include "terminal_text.h"

#include <pthread.h>
#include <stdarg.h>
#include <stdbool.h>
#include <stdio.h>
#include <time.h>
#include <unistd.h>

#define BAR_WIDTH 30
#define REDRAW_INTERVAL_NS 100000000LL

static pthread_mutex_t console_mutex = PTHREAD_MUTEX_INITIALIZER;

static struct {
  bool shown;      /* stderr is a terminal and counting has started */
  bool line_drawn; /* the line is on screen and must be cleared */
  size_t total_tracks;
  size_t done_tracks;
  uint64_t total_frames;
  uint64_t done_frames;
  long long last_draw_ns;
} state;

static long long now_ns(void) {
  struct timespec now;
  clock_gettime(CLOCK_MONOTONIC, &now);
  return (long long)now.tv_sec * 1000000000LL + now.tv_nsec;
}

static int percent_done(void) {
  if (state.total_frames == 0) {
    return state.total_tracks
               ? (int)(100 * state.done_tracks / state.total_tracks)
               : 100;
  }
  uint64_t frames = state.done_frames < state.total_frames ? state.done_frames
                                                           : state.total_frames;
  return (int)(100 * frames / state.total_frames);
}

/* Caller holds the mutex. */
static void draw_line(void) {
  int percent = percent_done();
  int filled = percent * BAR_WIDTH / 100;
  char bar[BAR_WIDTH + 1];
  for (int i = 0; i < BAR_WIDTH; ++i) {
    bar[i] = i < filled ? '#' : '-';
  }
  bar[BAR_WIDTH] = '\0';
  fprintf(stderr, "\r[%s] %zu/%zu tracks %3d%%", bar, state.done_tracks,
          state.total_tracks, percent);
  fflush(stderr);
  state.line_drawn = true;
  state.last_draw_ns = now_ns();
}

/* Caller holds the mutex. "\r" then spaces wide enough for any line. */
static void clear_line(void) {
  if (state.line_drawn) {
    fprintf(stderr, "\r%*s\r", BAR_WIDTH + 40, "");
    state.line_drawn = false;
  }
}

static void redraw_if_due(bool force) {
  if (state.shown &&
      (force || now_ns() - state.last_draw_ns >= REDRAW_INTERVAL_NS)) {
    draw_line();
  }
}

void progress_start(size_t total_tracks, uint64_t total_frames) {
  pthread_mutex_lock(&console_mutex);
  state.shown = isatty(STDERR_FILENO) == 1;
  state.total_tracks = total_tracks;
  state.total_frames = total_frames;
  state.done_tracks = 0;
  state.done_frames = 0;
  redraw_if_due(true);
  pthread_mutex_unlock(&console_mutex);
}

void progress_add_frames(uint64_t frames) {
  pthread_mutex_lock(&console_mutex);
  state.done_frames += frames;
  redraw_if_due(false);
  pthread_mutex_unlock(&console_mutex);
}

void progress_track_done(uint64_t frames_skipped) {
  pthread_mutex_lock(&console_mutex);
  state.done_tracks += 1;
  state.done_frames += frames_skipped;
  redraw_if_due(true);
  pthread_mutex_unlock(&console_mutex);
}

void progress_finish(void) {
  pthread_mutex_lock(&console_mutex);
  if (state.shown) {
    draw_line();
    fputc('\n', stderr);
    state.line_drawn = false;
    state.shown = false;
  }
  pthread_mutex_unlock(&console_mutex);
}

void console_error(const char *format, ...) {
  /* Messages carry file names and the plugin's words: shown escaped, so
     that no name can colour the terminal or break the line. */
  char message[2048];
  char shown[4 * sizeof message];
  va_list args;
  va_start(args, format);
  vsnprintf(message, sizeof message, format, args);
  va_end(args);
  terminal_text(message, shown, sizeof shown);
  pthread_mutex_lock(&console_mutex);
  clear_line();
  fprintf(stderr, "plumb: %s\n", shown);
  redraw_if_due(true);
  pthread_mutex_unlock(&console_mutex);
}
