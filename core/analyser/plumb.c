/*
  The analyser's lifecycle and its public calls: creating it (all memory
  and every FFTW plan, under the planner's lock), settings, reset, and the
  input FIFO that runs a fixed hop whatever the host's block sizes, handing
  each hop to process.c, which does the analysis; then the queries.
*/
#include "analyser/analyser.h"

#include "frame/fft.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

void plumb_settings_default(plumb_settings *settings, double sample_rate_hz) {
  plumb_tuning_spec spec;
  plumb_tuning_spec_default(&spec);
  memset(settings, 0, sizeof *settings);
  settings->sample_rate_hz = sample_rate_hz;
  plumb_tuning_build(&spec, &settings->tuning);
  settings->tolerance_cents = 10.0;
  settings->lowest_midi = 28;
  settings->highest_midi = 96;
  settings->min_note_ms = 80.0;
}

static int next_power_of_two(int n) {
  int p = 1;
  while (p < n) p *= 2;
  return p;
}

static double midi_hz(double midi) { return 440.0 * exp2((midi - 69.0) / 12.0); }

/* Lags searched for the settings' range, with a semitone of margin. */
static void set_search_range(plumb *self) {
  double sr = 0.5 * self->settings.sample_rate_hz; /* YIN runs decimated */
  self->lag_min = (int)floor(sr / midi_hz(self->settings.highest_midi + 1.0));
  self->lag_max = (int)ceil(sr / midi_hz(self->settings.lowest_midi - 1.0));
  if (self->lag_max > self->yin.lag_max_samples)
    self->lag_max = self->yin.lag_max_samples;
}

_Static_assert(PLUMB_SETTINGS_LOWEST_MIDI == LOWEST_SUPPORTED_MIDI &&
                   PLUMB_SETTINGS_HIGHEST_MIDI == HIGHEST_SUPPORTED_MIDI,
               "plumb.h's MIDI range is the one the analysis is sized for");

/* Within [low, high]; false for NaN. */
static bool within(double value, double low, double high) {
  return value >= low && value <= high;
}

/* The A anchor subtracts one custom offset from another, so a resolved
   offset can be twice the custom limit. */
static bool tuning_within_range(const plumb_tuning *tuning) {
  if (!within(tuning->reference_hz, PLUMB_SETTINGS_MIN_REFERENCE_HZ,
              PLUMB_SETTINGS_MAX_REFERENCE_HZ))
    return false;
  for (int pitch_class = 0; pitch_class < 12; ++pitch_class)
    if (!within(tuning->offset_cents[pitch_class], -2.0 * PLUMB_CUSTOM_OFFSET_LIMIT_CENTS,
                2.0 * PLUMB_CUSTOM_OFFSET_LIMIT_CENTS))
      return false;
  return true;
}

plumb_status plumb_settings_check(const plumb_settings *s) {
  bool valid = s && tuning_within_range(&s->tuning) && s->tolerance_cents > 0.0 &&
               within(s->tolerance_cents, 0.0, PLUMB_SETTINGS_MAX_TOLERANCE_CENTS) &&
               within(s->min_note_ms, PLUMB_SETTINGS_MIN_NOTE_MS, PLUMB_SETTINGS_MAX_NOTE_MS) &&
               s->lowest_midi >= PLUMB_SETTINGS_LOWEST_MIDI &&
               s->highest_midi <= PLUMB_SETTINGS_HIGHEST_MIDI &&
               s->lowest_midi <= s->highest_midi;
  return valid ? PLUMB_OK : PLUMB_ERR_ARGUMENT;
}

static void apply_settings(plumb *self, const plumb_settings *settings) {
  double sample_rate_hz = self->settings.sample_rate_hz;
  self->settings = *settings;
  self->settings.sample_rate_hz = sample_rate_hz;
  set_search_range(self);
  self->measure.tuning = self->settings.tuning;
  self->measure.tolerance_cents = self->settings.tolerance_cents;
  plumb_note_tracker_set_min_note(&self->tracker, self->settings.min_note_ms);
}

static plumb_status allocate(plumb *self) {
  double sr = self->settings.sample_rate_hz;
  int yin_window = (int)lround(YIN_WINDOW_S * sr);
  int lag_limit = (int)ceil(sr / midi_hz(LOWEST_SUPPORTED_MIDI - 1.0)) + 2;
  self->fft_size = next_power_of_two(yin_window + lag_limit + 2);
  self->hop = self->fft_size / HOP_DIVISOR;
  plumb_status status =
      plumb_yin_init(&self->yin, self->fft_size / 2, yin_window / 2, lag_limit / 2 + 1);
  plumb_halfband_init(&self->halfband);
  if (status == PLUMB_OK) status = plumb_spectrum_init(&self->spectrum, self->fft_size, sr);
  if (status == PLUMB_OK) status = plumb_note_tracker_init(&self->tracker);
  if (status == PLUMB_OK) status = plumb_note_queue_init(&self->queue);
  if (status == PLUMB_OK) status = plumb_note_queue_init(&self->here_queue);
  if (status != PLUMB_OK) return status;
  self->window_store = fftwf_alloc_real(2 * (size_t)self->fft_size);
  self->window = self->window_store;
  self->half_window = fftwf_alloc_real((size_t)self->fft_size / 2);
  if (!self->half_window) return PLUMB_ERR_MEMORY;
  self->scratch = malloc(sizeof(double) * 5 * PLUMB_NOTE_FRAMES_MAX);
  self->levels_db = malloc(sizeof(float) * PLUMB_ENVELOPE_STEPS * PLUMB_NOTE_FRAMES_MAX);
  if (!self->window_store || !self->scratch || !self->levels_db) return PLUMB_ERR_MEMORY;
  for (int i = 0; i < PLUMB_SPECTRUM_RING; ++i) {
    self->spectra[i] = fftwf_alloc_complex((size_t)self->fft_size / 2 + 1);
    if (!self->spectra[i]) return PLUMB_ERR_MEMORY;
  }
  return PLUMB_OK;
}

plumb *plumb_new(const plumb_settings *settings, plumb_status *status) {
  plumb_status result = PLUMB_OK;
  plumb *self = NULL;
  if (plumb_settings_check(settings) != PLUMB_OK) result = PLUMB_ERR_ARGUMENT;
  else if (!(settings->sample_rate_hz >= MIN_SAMPLE_RATE_HZ &&
             settings->sample_rate_hz <= MAX_SAMPLE_RATE_HZ))
    result = PLUMB_ERR_SAMPLE_RATE;
  else if (!(self = calloc(1, sizeof *self))) result = PLUMB_ERR_MEMORY;
  if (self) {
    self->settings.sample_rate_hz = settings->sample_rate_hz;
    result = allocate(self);
    if (result == PLUMB_OK) {
      plumb_pitch_prob_thresholds(self->threshold_weights);
      self->measure.sample_rate_hz = settings->sample_rate_hz;
      self->measure.fft_size = self->fft_size;
      self->measure.hop = self->hop;
      self->measure.hop_s = self->hop / settings->sample_rate_hz;
      self->measure.frame_s = self->fft_size / settings->sample_rate_hz;
      plumb_note_tracker_reset(&self->tracker, self->measure.hop_s, settings->min_note_ms);
      apply_settings(self, settings);
      plumb_reset(self);
    } else {
      plumb_free(self);
      self = NULL;
    }
  }
  if (status) *status = result;
  return self;
}

void plumb_free(plumb *self) {
  if (!self) return;
  plumb_yin_destroy(&self->yin);
  plumb_spectrum_destroy(&self->spectrum);
  plumb_note_tracker_destroy(&self->tracker);
  plumb_note_queue_destroy(&self->queue);
  plumb_note_queue_destroy(&self->here_queue);
  for (int i = 0; i < PLUMB_SPECTRUM_RING; ++i) fftwf_free(self->spectra[i]);
  fftwf_free(self->window_store);
  fftwf_free(self->half_window);
  free(self->scratch);
  free(self->levels_db);
  free(self);
}

void plumb_reset(plumb *self) {
  if (!self) return;
  memset(self->window_store, 0, 2 * sizeof(float) * (size_t)self->fft_size);
  self->window_base = 0;
  self->window = self->window_store;
  memset(self->half_window, 0, sizeof(float) * (size_t)self->fft_size / 2);
  self->pending = 0;
  self->samples_in = 0;
  self->frames_analysed = 0;
  plumb_viterbi_reset(&self->decoder);
  plumb_note_tracker_reset(&self->tracker, self->measure.hop_s, self->settings.min_note_ms);
  plumb_timeline_reset(&self->timeline);
  self->next_index = 0;
  self->measure.previous_unpitched = false;
  memset(&self->live, 0, sizeof self->live);
  self->live.midi = -1;
  self->live.f0_hz = self->live.cents = NAN;
  memset(&self->counts, 0, sizeof self->counts);
  /* Completed notes stay queued for the consumer thread, which may be
     reading them; the audio thread's own queue is emptied. */
  plumb_note_queue_clear(&self->here_queue);
}

plumb_status plumb_configure(plumb *self, const plumb_settings *settings) {
  if (!self || plumb_settings_check(settings) != PLUMB_OK) return PLUMB_ERR_ARGUMENT;
  apply_settings(self, settings);
  return PLUMB_OK;
}

/* ---------------------------------------------------------------- process */

void plumb_process(plumb *self, const float *samples, size_t n_frames) {
  if (!self || (!samples && n_frames > 0)) return;
  const int keep = self->fft_size - self->hop;
  size_t i = 0;
  while (i < n_frames) {
    size_t room = (size_t)(self->hop - self->pending);
    size_t take = n_frames - i < room ? n_frames - i : room;
    const int n = self->fft_size;
    int at = self->window_base + keep + self->pending; /* in [0, 2 n) */
    for (size_t j = 0; j < take; ++j, ++at) {
      float x = samples[i + j];
      if (!isfinite(x)) {
        x = 0.0f; /* NaN and Inf never reach the analysis state */
        self->counts.bad_samples++;
      } else if (x > SAMPLE_LIMIT) x = SAMPLE_LIMIT;
      else if (x < -SAMPLE_LIMIT) x = -SAMPLE_LIMIT;
      self->window_store[at] = x;
      self->window_store[at < n ? at + n : at - n] = x; /* the mirror */
    }
    self->pending += (int)take;
    self->samples_in += take;
    i += take;
    if (self->pending == self->hop) {
      plumb_analyser_process_hop(self);
      self->window_base = (self->window_base + self->hop) % self->fft_size;
      self->window = self->window_store + self->window_base;
      self->pending = 0;
    }
  }
}

void plumb_finish(plumb *self) {
  if (!self) return;
  static const float silence[256];
  /* Enough silence to push the last sound through the frame, the decoder's
     lag and the tracker's look-ahead. */
  long remaining = self->fft_size + (PLUMB_DECODE_LAG + 3L) * self->hop;
  while (remaining > 0) {
    size_t n = remaining < 256 ? (size_t)remaining : 256;
    plumb_process(self, silence, n);
    remaining -= (long)n;
  }
  plumb_analyser_flush(self);
}

void plumb_mark_timeline(plumb *self, double position_s, double speed) {
  plumb_transport transport = {position_s, speed, false, 0.0, 0.0, 0.0, 0.0};
  plumb_mark_transport(self, &transport);
}

void plumb_mark_transport(plumb *self, const plumb_transport *transport) {
  if (self && transport) plumb_timeline_mark(&self->timeline, self->samples_in, transport);
}

/* ---------------------------------------------------------------- query */

/* The caller's struct may be an older, shorter one (plumb.h, "Growing"):
   only the bytes it has room for are written. */
static void copy_out(void *to, size_t to_size, const void *from, size_t from_size) {
  memcpy(to, from, to_size < from_size ? to_size : from_size);
}

static bool pop_from(note_queue *queue, plumb_note *note, size_t note_size) {
  plumb_note popped;
  if (!plumb_note_queue_pop(queue, &popped)) return false;
  copy_out(note, note_size, &popped, sizeof popped);
  return true;
}

bool plumb_pop_note_sized(plumb *self, plumb_note *note, size_t note_size) {
  return self && note && pop_from(&self->queue, note, note_size);
}

bool plumb_pop_note_here_sized(plumb *self, plumb_note *note, size_t note_size) {
  return self && note && pop_from(&self->here_queue, note, note_size);
}

void plumb_get_live_sized(const plumb *self, plumb_live *live, size_t live_size) {
  if (self && live) copy_out(live, live_size, &self->live, sizeof self->live);
}

void plumb_get_counts_sized(const plumb *self, plumb_counts *counts, size_t counts_size) {
  if (self && counts) copy_out(counts, counts_size, &self->counts, sizeof self->counts);
}

uint32_t plumb_analysis_delay_frames(const plumb *self) {
  if (!self) return 0;
  return (uint32_t)(self->fft_size / 2 + PLUMB_DECODE_LAG * self->hop);
}

uint32_t plumb_hop_frames(const plumb *self) { return self ? (uint32_t)self->hop : 0; }

uint32_t plumb_frame_frames(const plumb *self) {
  return self ? (uint32_t)self->fft_size : 0;
}
