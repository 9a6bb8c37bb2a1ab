/*
  Real sampled instruments for tests: write a Standard MIDI File and
  render it with fluidsynth and the General MIDI soundfont (Debian
  packages fluidsynth and fluid-soundfont-gm), then mix it to mono.

  Pitch: every note gets its own pitch bend just before its note-on, on
  a channel of its own (round robin over the 15 melodic channels), so
  overlapping notes keep independent detunes. The bend range is set with
  RPN 0 to SAMPLED_BEND_RANGE_SEMITONES; one 14-bit step is
  SAMPLED_BEND_STEP_CENTS. fluidsynth floors the total pitch of a voice
  to whole cents (measured on Debian 12, fluidsynth 2.3.1), so for an
  exact relative detune ask
  for whole cents + 0.3 on both the reference note and the detuned one:
  their difference is then the whole-cent difference exactly.

  Not real-time code; single-threaded callers (names are unique per
  content, not per thread).
*/
#ifndef PLUMB_TEST_SAMPLED_RENDER_H
#define PLUMB_TEST_SAMPLED_RENDER_H

#include <stdbool.h>
#include <stddef.h>

#define SAMPLED_SOUNDFONT "/usr/share/sounds/sf2/FluidR3_GM.sf2"
#define SAMPLED_BEND_RANGE_SEMITONES 2
/* What one semitone of bend sensitivity sounds as in fluidsynth: the
   SoundFont 2.01 default pitch-wheel modulator has amount 12700 cents
   and normalises the sensitivity over 128, so a semitone is 12700/128 =
   99.21875 cents, not 100 (measured on fluidsynth 2.3.1: a requested
   +100 cents sounded +99 before this was allowed for). */
#define SAMPLED_SEMITONE_BEND_CENTS (12700.0 / 128.0)
/* 2 * 99.21875 / 8192 = 0.0242 cents per step of the 14-bit bend. */
#define SAMPLED_BEND_STEP_CENTS \
  (SAMPLED_SEMITONE_BEND_CENTS * SAMPLED_BEND_RANGE_SEMITONES / 8192.0)
/* The MIDI file ends this long after the last note-off, so releases
   ring; fluidsynth may render a little longer still. */
#define SAMPLED_TAIL_S 1.0

typedef struct {
  int midi;           /* 0..127 */
  int velocity;       /* 1..127 */
  double start_s;     /* from the start of the file, >= 0 */
  double duration_s;  /* > 0; times are rounded to whole milliseconds */
  double bend_cents;  /* heard detune, within +-198 cents */
} sampled_note;

/* True when fluidsynth is on PATH and the soundfont exists; otherwise
   prints which one is missing (tests skip then). */
bool sampled_available(void);

/* The 14-bit bend value (0..16383, centre 8192) that fluidsynth plays
   nearest to bend_cents, and the cents it plays for a value (before it
   floors the voice's total pitch to whole cents). */
int sampled_bend_value(double bend_cents);
double sampled_bend_value_cents(int value);

/* Write a format-0 Standard MIDI File: gm_program is zero-based (GM
   violin, program 41, is 40). Returns 0, or -1 with a message. */
int sampled_write_midi(const char *path, int gm_program,
                       const sampled_note *notes, int n);

/* Render the notes into a mono float WAV in `dir` (which must exist) at
   sample_rate Hz and write its path into out_wav_path (capacity cap).
   Files are named after a hash of their content, so a repeated call
   writes the same file again. Returns 0, or -1 with a message on stderr
   (the fluidsynth log stays beside the output as <stem>.log). */
int sampled_render(const char *dir, int gm_program, const sampled_note *notes,
                   int n, double sample_rate, char *out_wav_path, size_t cap);

/* Read a mono (or first-channel) WAV into a malloc'd buffer. Returns
   NULL with a message on failure. */
float *sampled_read_mono(const char *path, size_t *n_frames,
                         int *sample_rate_hz);

#endif /* PLUMB_TEST_SAMPLED_RENDER_H */
