/*
  One hop of analysis. The newest frame is transformed, searched for pitch
  candidates and pushed into the decoder; the frame PLUMB_DECODE_LAG hops
  older is then decided, refined from its harmonics and handed to the note
  tracker. Nothing here allocates, locks or calls the system.
*/
#include "analyser/analyser.h"

#include "frame/bins.h"
#include "frame/harmonics.h"
#include "frame/peaks.h"
#include "measures/note_measures.h"

#include <math.h>
#include <string.h>

/* Strong peaks are looked for over the range of fundamentals and their
   lower partials. */
#define PEAK_SEARCH_LOW_HZ 25.0
#define PEAK_SEARCH_HIGH_HZ 8000.0

static int ring_slot(uint64_t frame) { return (int)(frame % PLUMB_SPECTRUM_RING); }

/* Mean rise of the band levels over two hops: a band-wise spectral flux,
   half-wave rectified (in the manner of Bello et al. 2005). Two guards keep
   note ends from reading as onsets: bands far below the loudest band (where
   the splatter of a sudden stop lands) are left out, and the function is
   zero unless the frame level itself rises. */
#define ONSET_BAND_RANGE_DB 50.0
#define ONSET_LEVEL_RISE_DB 0.5

static double onset_function(const plumb *self, int slot, int slot_before) {
  int bands = self->spectrum.band_count;
  if (bands == 0) return 0.0;
  if (self->level_dbfs[slot] < self->level_dbfs[slot_before] + ONSET_LEVEL_RISE_DB)
    return 0.0;
  float loudest = self->band_db[slot][0];
  for (int b = 1; b < bands; ++b)
    if (self->band_db[slot][b] > loudest) loudest = self->band_db[slot][b];
  double rise = 0.0;
  int counted = 0;
  for (int b = 0; b < bands; ++b) {
    if (self->band_db[slot][b] < loudest - ONSET_BAND_RANGE_DB) continue;
    double d = self->band_db[slot][b] - self->band_db[slot_before][b];
    if (d > 0.0) rise += d;
    counted++;
  }
  return counted > 0 ? rise / counted : 0.0;
}

/* The mean square of each of PLUMB_ENVELOPE_STEPS equal steps of the
   window's oldest hop: the envelope, finer than the frames. The oldest,
   so that a note's frames (which begin about at its onset) also hold the
   envelope from half a window before: its whole attack. */
static void oldest_energy(const plumb *self, float *energy) {
  int from = 0, step = self->hop / PLUMB_ENVELOPE_STEPS;
  for (int s = 0; s < PLUMB_ENVELOPE_STEPS; ++s) {
    double sum = 0.0;
    for (int i = from + s * step; i < from + (s + 1) * step; ++i)
      sum += (double)self->window[i] * self->window[i];
    energy[s] = (float)(sum / step);
  }
}

static float centre_peak(const plumb *self) {
  int from = self->fft_size / 2 - self->hop / 2;
  float peak = 0.0f;
  for (int i = from; i < from + self->hop; ++i) {
    float a = fabsf(self->window[i]);
    if (a > peak) peak = a;
  }
  return peak;
}

/* Shift the decimated window by half a hop and append the new hop,
   decimated (the full-rate window holds the filter's history). */
static void decimate_hop(plumb *self) {
  int half = self->fft_size / 2, half_hop = self->hop / 2;
  memmove(self->half_window, self->half_window + half_hop,
          sizeof(float) * (size_t)(half - half_hop));
  plumb_halfband_decimate(&self->halfband, self->window + self->fft_size - self->hop, self->hop,
                    self->half_window + half - half_hop);
}

static void analyse_newest(plumb *self, candidate_set *candidates) {
  uint64_t frame = self->frames_analysed;
  decimate_hop(self);
  int slot = ring_slot(frame);
  plumb_spectrum_transform(&self->spectrum, self->window, self->spectra[slot]);
  self->windowed_energy[slot] = self->spectrum.windowed_energy;
  plumb_spectrum_levels(&self->spectrum, self->spectra[slot], self->band_db[slot],
                  &self->level_dbfs[slot]);
  /* Until the frame two hops back lies wholly inside the take there is no
     "before" to compare with: the take's own start is not an onset. */
  bool has_past = frame >= (uint64_t)(self->fft_size / self->hop) + 2;
  self->onset_db[slot] = has_past ? onset_function(self, slot, ring_slot(frame - 2)) : 0.0;
  self->peak[slot] = centre_peak(self);
  oldest_energy(self, self->energy[slot]);
  uint64_t end = self->samples_in;
  uint64_t half = (uint64_t)self->fft_size / 2;
  self->centre_sample[slot] = end > half ? end - half : 0;
  memset(candidates, 0, sizeof *candidates);
  if (self->level_dbfs[slot] < SEARCH_GATE_DBFS) return;
  yin_trough troughs[64];
  int count = plumb_yin_analyse(&self->yin, self->half_window, self->lag_min, self->lag_max,
                          troughs, 64);
  plumb_pitch_prob_candidates(self->threshold_weights, troughs, count,
                        0.5 * self->settings.sample_rate_hz, candidates);
}

static bool in_range(const plumb *self, double f0_hz) {
  double lowest = 440.0 * exp2((self->settings.lowest_midi - 70.0) / 12.0);
  double highest = 440.0 * exp2((self->settings.highest_midi - 68.0) / 12.0);
  return f0_hz >= lowest && f0_hz <= highest;
}

/* The power of bins 1 … fft_size / 2 - 1 without a loop over them:
   Parseval's theorem for FFTW's unnormalised transform of a real frame,
   sum over all N bins of |X_k|^2 = N sum x^2, with bins 1 … N/2 - 1
   counted twice and DC and Nyquist once. */
static double bins_total_power(const plumb *self, int slot) {
  const fftwf_complex *bins = self->spectra[slot];
  double all = (double)self->fft_size * self->windowed_energy[slot];
  double total = 0.5 * (all - bin_power(bins, 0) - bin_power(bins, self->fft_size / 2));
  return total > 0.0 ? total : 0.0;
}

static void decide_frame(plumb *self, frame_record *record) {
  /* the frame the decoder decides: PLUMB_DECODE_LAG before the newest */
  uint64_t frame = self->frames_analysed - 1 - PLUMB_DECODE_LAG;
  int slot = ring_slot(frame);
  int state = plumb_viterbi_decide(&self->decoder, PLUMB_DECODE_LAG);
  const candidate_set *candidates = plumb_viterbi_frame(&self->decoder, PLUMB_DECODE_LAG);
  memset(record, 0, sizeof *record);
  record->centre_sample = self->centre_sample[slot];
  record->level_dbfs = self->level_dbfs[slot];
  record->onset_db = self->onset_db[slot];
  record->peak = self->peak[slot];
  memcpy(record->energy, self->energy[slot], sizeof record->energy);
  record->voiced_probability = candidates->voiced_probability;
  record->f0_hz = NAN;
  if (frame == 0 || record->level_dbfs < SEARCH_GATE_DBFS) return;
  const fftwf_complex *previous = self->spectra[ring_slot(frame - 1)];
  const double bin_hz = self->settings.sample_rate_hz / self->fft_size;
  int first_bin, last_bin;
  double noise_power =
      band_bins(PEAK_SEARCH_LOW_HZ, PEAK_SEARCH_HIGH_HZ, bin_hz, self->fft_size, &first_bin,
                &last_bin)
          ? plumb_spectrum_noise_floor(self->spectra[slot], first_bin, last_bin)
          : 0.0;
  record->peak_count = plumb_spectrum_strong_peaks(
      self->spectra[slot], previous, self->fft_size, self->hop, self->settings.sample_rate_hz,
      PEAK_SEARCH_LOW_HZ, PEAK_SEARCH_HIGH_HZ, noise_power, record->peaks, PLUMB_FRAME_PEAKS);
  if (candidates->count == 0) return;
  /* A frame the decoder calls unvoiced is still searched from its most
     probable candidate: a stiff string's stretched partials make the
     waveform too little periodic for YIN, yet its spectrum is a clear
     partial series. Such a frame is voiced only on stronger spectral
     evidence. */
  bool decoded_voiced = state > 0;
  harmonic_fit fit;
  bool found = plumb_harmonics_refine(self->spectra[slot], previous, self->fft_size, self->hop,
                                self->settings.sample_rate_hz,
                                candidates->candidate[decoded_voiced ? state - 1 : 0].frequency_hz,
                                noise_power, &record->harmonics, &fit);
  /* Stronger evidence: most of the energy in the series, enough partials,
     and the three lowest among them (a candidate an octave low finds only
     every other partial). */
  const float *partial_hz = record->harmonics.frequency_hz;
  bool lowest_three = partial_hz[0] > 0.0f && partial_hz[1] > 0.0f && partial_hz[2] > 0.0f;
  bool evidence = decoded_voiced ? fit.harmonic_ratio >= MIN_HARMONIC_RATIO
                                 : fit.harmonic_ratio >= SPECTRAL_VOICING_RATIO &&
                                       fit.found >= SPECTRAL_VOICING_PARTIALS && lowest_three;
  record->noise_power = (float)noise_power;
  if (found && evidence && in_range(self, fit.f0_hz)) {
    record->voiced = true;
    record->f0_hz = fit.f0_hz;
    record->harmonic_ratio = fit.harmonic_ratio;
    record->lobe_power = (float)fit.lobe_power;
    record->lobe_bins = fit.lobe_bins;
    record->band_power = (float)fit.band_power;
    record->band_bins = fit.band_bins;
    record->total_power = (float)bins_total_power(self, slot);
  } else {
    memset(&record->harmonics, 0, sizeof record->harmonics);
  }
}

static void update_live(plumb *self, const frame_record *record) {
  plumb_live *live = &self->live;
  live->time_s = (double)record->centre_sample / self->settings.sample_rate_hz;
  live->voiced = record->voiced;
  if (!record->voiced) {
    live->midi = -1;
    live->f0_hz = live->cents = NAN;
    live->confidence = 0.0;
    return;
  }
  live->f0_hz = record->f0_hz;
  live->midi = plumb_tuning_nearest(&self->settings.tuning, record->f0_hz, NULL,
                                    &live->cents);
  live->confidence = record->voiced_probability * record->harmonic_ratio;
}

/* Whether any frame of the segment has a sample of its own: a segment
   made only of the window's tail over digital silence (the frames after
   a sound, at the end of a take) is no note. */
static bool holds_sound(const frame_record *frames, int count) {
  for (int i = 0; i < count; ++i)
    if (frames[i].peak > 0.0f) return true;
  return false;
}

/* The tracker's sink: measure the note and queue it. */
static void complete_note(void *context, const frame_record *frames, int count) {
  plumb *self = context;
  if (!holds_sound(frames, count)) return;
  plumb_note note;
  plumb_note_measure(&self->measure, frames, count, self->scratch, self->levels_db, &note);
  self->measure.previous_unpitched = note.verdict == PLUMB_VERDICT_UNPITCHED;
  note.index = self->next_index++;
  double onset_sample = fmax(0.0, note.start_s * self->settings.sample_rate_hz);
  plumb_timeline_locate(&self->timeline, (uint64_t)llround(onset_sample),
                  self->settings.sample_rate_hz, &note.timeline_s, &note.bar, &note.beat);
  self->counts.notes++;
  if (plumb_verdict_is_flagged(note.verdict)) self->counts.flagged++;
  self->counts.last_note = note;
  self->counts.has_last = true;
  if (!plumb_note_queue_push(&self->queue, &note)) self->counts.dropped++;
  /* The audio thread's own queue: an old note makes room for a new one
     when nobody reads it (a host without a notify consumer). */
  if (!plumb_note_queue_push(&self->here_queue, &note)) {
    plumb_note oldest;
    plumb_note_queue_pop(&self->here_queue, &oldest);
    plumb_note_queue_push(&self->here_queue, &note);
  }
}

void plumb_analyser_process_hop(plumb *self) {
  candidate_set candidates;
  analyse_newest(self, &candidates);
  plumb_viterbi_push(&self->decoder, &candidates);
  self->frames_analysed++;
  if (self->frames_analysed <= PLUMB_DECODE_LAG) return;
  frame_record record;
  decide_frame(self, &record);
  update_live(self, &record);
  plumb_note_tracker_push(&self->tracker, &record, complete_note, self);
}

void plumb_analyser_flush(plumb *self) {
  plumb_note_tracker_flush(&self->tracker, complete_note, self);
}
