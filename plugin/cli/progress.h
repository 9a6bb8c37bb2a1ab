/*
  stderr, shared by every thread: the one updating progress line (only when
  stderr is a terminal) and the messages that must not garble it.
*/
#ifndef PLUMB_CLI_PROGRESS_H
#define PLUMB_CLI_PROGRESS_H

#include <stddef.h>
#include <stdint.h>

/* Start counting. The line is drawn only when stderr is a terminal. */
void progress_start(size_t total_tracks, uint64_t total_frames);

/* Frames of audio analysed so far by one track (any thread). */
void progress_add_frames(uint64_t frames);

/* One track finished, successfully or not (any thread). `frames_skipped`
   is what it did not report through progress_add_frames (all of them when
   it failed early), so that the bar still ends at 100 %. */
void progress_track_done(uint64_t frames_skipped);

/* Draw the final state and end the line. */
void progress_finish(void);

/* Print "plumb: " + the formatted message as one line on stderr, clearing
   the progress line first and drawing it again after (any thread). */
#if defined(__GNUC__)
__attribute__((format(printf, 1, 2)))
#endif
void console_error(const char *format, ...);

#endif
