/*
  What the core's modules really share: the constants that size the
  analysis, and the record of one decided frame (the note tracker's and
  the note measures' input). Each module's own types and calls are in its
  own header beside its source. Not installed; hosts use plumb.h only.
  Every module follows one rule: memory is obtained in an _init function
  (called from plumb_new) and never on the processing path.
*/
#ifndef PLUMB_INTERNAL_H
#define PLUMB_INTERNAL_H

#include "plumb.h"

#include <stdbool.h>
#include <stdint.h>

/* At most this many pitch candidates (YIN troughs) per frame. */
#define PLUMB_CANDIDATES_MAX 8
/* Partials measured in every frame: the note's partial analysis averages
   them over its steady part. */
#define PLUMB_FRAME_HARMONICS PLUMB_MAX_PARTIALS
/* The lowest partials, which a note's pitch is measured from (partial_fit.c). */
#define PLUMB_PITCH_PARTIALS 16
/* Each frame carries the signal's mean square over this many equal steps
   of its window's oldest hop: the note's envelope, at 0.67-0.73 ms. */
#define PLUMB_ENVELOPE_STEPS 16
/* Partials are searched up to this share of the sample rate, below the
   anti-aliasing filters' transition band. Common practice, no source. */
#define PLUMB_PARTIAL_LIMIT_RATE_SHARE 0.45
/* Frames between a frame's analysis and its Viterbi decision. */
#define PLUMB_DECODE_LAG 8
/* Spectra kept for decisions: the lag, the frame before it, and slack. */
#define PLUMB_SPECTRUM_RING (PLUMB_DECODE_LAG + 3)
/* Frames one note keeps; a longer note is closed there and the sound goes
   on as a new note. */
#define PLUMB_NOTE_FRAMES_MAX 1024
/* Completed notes waiting for the consumer. Power of two. */
#define PLUMB_QUEUE_CAPACITY 256
/* Bands of the onset detection function. */
#define PLUMB_BANDS_MAX 40
/* Frames of a slow attack looked back over, at most (about 0.34 s at 48 kHz). */
#define PLUMB_PREROLL_FRAMES 32
/* Voiced frames whose trimmed mean is a note's running pitch. */
#define PLUMB_REFERENCE_FRAMES 48
/* Timeline marks remembered. Power of two. */
#define PLUMB_TIMELINE_MARKS 64
/* Spectral peaks a frame keeps. */
#define PLUMB_FRAME_PEAKS 8

typedef struct {
  float frequency_hz; /* phase-vocoder instantaneous frequency */
  float power;
} spectral_peak;

typedef struct {
  float frequency_hz[PLUMB_FRAME_HARMONICS]; /* 0 where not found */
  float amplitude[PLUMB_FRAME_HARMONICS];    /* linear, 0 where not found */
} harmonic_set;

/* What the analysis knows of one decided frame; the note tracker's input. */
typedef struct {
  uint64_t centre_sample; /* frame centre, in samples since reset */
  bool voiced;
  double f0_hz;           /* NaN when unvoiced */
  double voiced_probability;
  double harmonic_ratio;
  bool legato_start;      /* first frame of a note split off by a pitch change */
  double level_before_dbfs; /* first frame of a note: the level of the frame before */
  double level_dbfs;      /* windowed frame level */
  double onset_db;        /* onset detection function */
  float peak;             /* peak |sample| over the hop around the centre */
  harmonic_set harmonics;
  float noise_power;      /* the spectrum's noise floor, per bin */
  float lobe_power;       /* harmonic_fit's, for the harmonic-to-noise ratio */
  int lobe_bins;
  float band_power;
  int band_bins;
  float total_power;      /* of every bin from 1 to fft_size / 2 - 1 */
  float energy[PLUMB_ENVELOPE_STEPS]; /* mean square of each step of the hop */
  int peak_count;
  spectral_peak peaks[PLUMB_FRAME_PEAKS]; /* the strongest spectral peaks */
} frame_record;

#endif /* PLUMB_INTERNAL_H */
