/* The analyser's state, shared by plumb.c (setup and queries) and
   process.c (the per-hop analysis). Internal. */
#ifndef PLUMB_ANALYSER_H
#define PLUMB_ANALYSER_H

#include "internal.h"
#include "frame/halfband.h"
#include "frame/pitch_prob.h"
#include "frame/spectrum.h"
#include "frame/viterbi.h"
#include "frame/yin.h"
#include "measures/measure_context.h"
#include "notes/note_queue.h"
#include "notes/note_tracker.h"
#include "notes/timeline.h"

#include <fftw3.h>

#define MIN_SAMPLE_RATE_HZ 8000.0
#define MAX_SAMPLE_RATE_HZ 384000.0
/* YIN integration window: a little longer than the period of E1. */
#define YIN_WINDOW_S 0.030
/* Frames are analysed every fft_size / HOP_DIVISOR samples. */
#define HOP_DIVISOR 8
/* Buffers allow pitches down to A0, whatever the range set. */
#define LOWEST_SUPPORTED_MIDI 21
#define HIGHEST_SUPPORTED_MIDI 108
/* Frames quieter than this are not searched for a pitch. */
#define SEARCH_GATE_DBFS (-90.0)
/* A decided frame is voiced only if this share of its energy lies in
   harmonic peaks. Common practice, no source. */
#define MIN_HARMONIC_RATIO 0.4
/* A frame the decoder left unvoiced needs this much, from at least this
   many partials. Common practice, no source. */
#define SPECTRAL_VOICING_RATIO 0.85
#define SPECTRAL_VOICING_PARTIALS 6
/* Samples beyond this magnitude (60 dB over full scale) are clipped. */
#define SAMPLE_LIMIT 1000.0f

struct plumb {
  plumb_settings settings;
  int fft_size, hop, lag_min, lag_max;
  /* input FIFO: the newest fft_size samples, `pending` of them new, oldest
     first, at `window`. They live in a mirrored ring of 2 fft_size floats
     (each sample is written at i and i + fft_size), so that the window is
     always contiguous and a hop moves a pointer, not the samples. */
  float *window_store;
  int window_base;
  float *window;
  int pending;
  uint64_t samples_in;
  /* per-frame analysis, kept for the decoding lag */
  yin_analyser yin;          /* at half the sample rate */
  halfband_filter halfband;
  float *half_window;        /* the newest fft_size / 2 decimated samples */
  spectrum_analyser spectrum;
  double threshold_weights[PLUMB_THRESHOLDS];
  fftwf_complex *spectra[PLUMB_SPECTRUM_RING];
  float band_db[PLUMB_SPECTRUM_RING][PLUMB_BANDS_MAX];
  double level_dbfs[PLUMB_SPECTRUM_RING];
  double windowed_energy[PLUMB_SPECTRUM_RING]; /* sum of (w x)^2 of the frame */
  double onset_db[PLUMB_SPECTRUM_RING];
  float peak[PLUMB_SPECTRUM_RING];
  float energy[PLUMB_SPECTRUM_RING][PLUMB_ENVELOPE_STEPS];
  uint64_t centre_sample[PLUMB_SPECTRUM_RING];
  uint64_t frames_analysed;
  viterbi_decoder decoder;
  /* notes */
  note_tracker tracker;
  measure_context measure;
  double *scratch;
  float *levels_db;          /* a note's envelope (PLUMB_ENVELOPE_STEPS a frame) */
  note_queue queue;          /* for the consumer thread (the log writer) */
  note_queue here_queue;     /* for the audio thread itself (notify output) */
  timeline_marks timeline;
  uint32_t next_index;
  /* readings */
  plumb_live live;
  plumb_counts counts;
};

/* process.c */
void plumb_analyser_process_hop(plumb *self);
/* Complete what the tracker holds (end of take). */
void plumb_analyser_flush(plumb *self);

#endif /* PLUMB_ANALYSER_H */
