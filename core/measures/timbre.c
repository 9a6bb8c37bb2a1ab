/*
  A note's timbre from its partials over the steady part: each partial's
  deviation from k f0, the odd/even balance, the tristimulus (Pollard &
  Jansson 1982), the amplitude-weighted centroid and the harmonic-to-noise
  ratio. For an event with no definite pitch, the deviation of each strong
  mode from the nearest harmonic of its lowest mode. Definitions:
  docs/methods.md, section 8.
*/
#include "measures/timbre.h"

#include "util/stats.h"

#include <math.h>

/* The median of exponentially distributed noise power is ln 2 times its
   mean: plumb_spectrum_noise_floor's median gives the mean power of a noise bin. */
#define NOISE_MEDIAN_TO_MEAN (1.0 / M_LN2)
#define HNR_CEILING 1e-10 /* noise at least this share of the harmonic energy: 100 dB */

typedef struct {
  double power[PLUMB_MAX_PARTIALS];     /* sum over frames of a_k^2 where found */
  double floor[PLUMB_MAX_PARTIALS];     /* sum of the noise in its lobe where not */
  double ratio[PLUMB_MAX_PARTIALS];     /* power-weighted sum of f_k / (k f_t) */
  int found[PLUMB_MAX_PARTIALS];
  int frames;
  double lobe_power, noise_power; /* harmonic and noise energy, for the HNR */
} partial_sums;

/* The harmonic and noise energy of one frame. The noise is taken as
   white, with the density it has between the found partials' lobes in the
   band searched; over the whole spectrum that is the frame's noise, and the
   rest of its energy is harmonic: the lobes' own share of noise is taken
   out, and partials beyond the search (above the 40th, or where it
   stopped) count as harmonic, as in an autocorrelation form. */
static void add_hnr(const frame_record *f, int fft_size, partial_sums *s) {
  int all_bins = fft_size / 2 - 1;
  int outside_bins = f->band_bins - f->lobe_bins;
  if (f->lobe_bins <= 0 || outside_bins <= 0 || !(f->total_power > 0.0f)) return;
  double density = fmax(0.0, (double)f->band_power - f->lobe_power) / outside_bins;
  double noise = fmin((double)f->total_power, density * all_bins);
  s->lobe_power += (double)f->total_power - noise;
  s->noise_power += noise;
}

static void sum_partials(const measure_context *context, const frame_record *frames,
                         const steady_part *part, const partial_model *model,
                         partial_sums *s) {
  *s = (partial_sums){{0}, {0}, {0}, {0}, 0, 0.0, 0.0};
  double b = model->stiff ? model->b : 0.0;
  double limit_hz = PLUMB_PARTIAL_LIMIT_RATE_SHARE * context->sample_rate_hz;
  for (int i = part->first; i <= part->last; ++i) {
    const frame_record *f = &frames[i];
    if (!plumb_steady_frame(f, part)) continue;
    s->frames++;
    double f0_hz = plumb_partial_model_f0_hz(model, f);
    int found = 0;
    for (int k = 0; k < PLUMB_MAX_PARTIALS; ++k) found += f->harmonics.amplitude[k] > 0.0f;
    double lobe_bins = found > 0 ? (double)f->lobe_bins / found : 1.0;
    double missing = NOISE_MEDIAN_TO_MEAN * f->noise_power * lobe_bins;
    for (int k = 0; k < PLUMB_MAX_PARTIALS; ++k) {
      double n = k + 1, a = f->harmonics.amplitude[k];
      if (a > 0.0) {
        s->power[k] += a * a;
        s->ratio[k] += a * a * f->harmonics.frequency_hz[k] / (n * f0_hz);
        s->found[k]++;
      } else if (n * f0_hz * sqrt(1.0 + b * n * n) < limit_hz) {
        s->floor[k] += missing;
      }
    }
    add_hnr(f, context->fft_size, s);
  }
}

static double db_ratio(double a, double b) {
  return a > 0.0 && b > 0.0 ? 10.0 * log10(a / b) : NAN;
}

void plumb_note_timbre(const measure_context *context, const frame_record *frames,
                 const steady_part *part, const partial_model *model, plumb_note *note) {
  partial_sums s;
  sum_partials(context, frames, part, model, &s);
  if (s.frames == 0) return;
  double odd = 0.0, even = 0.0, amplitude_sum = 0.0, weighted_hz = 0.0;
  double low_three = 0.0, first = 0.0, upper = 0.0;
  for (int k = 0; k < PLUMB_MAX_PARTIALS; ++k) {
    int n = k + 1;
    /* A partial not found counts with the noise in its lobe: an odd-only
       tone's even balance is bounded by the noise, not infinite. */
    double energy = s.power[k] + s.floor[k];
    if (n >= 3 && n % 2 == 1) odd += energy;
    if (n % 2 == 0) even += energy;
    if (s.found[k] == 0) continue;
    double amplitude = sqrt(s.power[k] / s.frames);
    double ratio = s.ratio[k] / s.power[k];
    amplitude_sum += amplitude;
    weighted_hz += amplitude * n * note->f0_hz * ratio;
    if (n == 1) first = amplitude;
    else if (n <= 4) low_three += amplitude;
    else upper += amplitude;
    /* Partials present in at least half the steady frames (as `partials`). */
    if (2 * s.found[k] >= s.frames) note->partial_cents[k] = (float)(1200.0 * log2(ratio));
  }
  note->odd_even_db = db_ratio(odd, even);
  /* No measurable noise reads the ceiling, not infinity. */
  note->hnr_db = db_ratio(s.lobe_power, fmax(s.noise_power, HNR_CEILING * s.lobe_power));
  if (amplitude_sum > 0.0) {
    note->centroid_hz = weighted_hz / amplitude_sum;
    note->tristimulus[0] = first / amplitude_sum;
    note->tristimulus[1] = low_three / amplitude_sum;
    note->tristimulus[2] = upper / amplitude_sum;
  }
}

/*
  An unpitched event's modes: over its strong frames (within
  MODE_FRAME_RANGE_DB of the loudest, from the loudest or the first whose
  window lies after the onset, whichever is later), the frequencies of the peaks within 30 dB of each frame's
  strongest. The lowest mode is the median of the frames' lowest peaks;
  each peak goes to the slot of the harmonic of it nearest to it (the
  strongest peak of a frame per slot), and a slot reads the power-weighted
  mean deviation, in cents, of its peaks.
*/
#define MODE_FRAME_RANGE_DB 20.0
#define MODE_PEAK_RANGE 1e-3 /* 30 dB */
#define MODE_FRAMES_MAX 64

static bool strong_frame(const frame_record *f, double loudest_dbfs) {
  return f->level_dbfs >= loudest_dbfs - MODE_FRAME_RANGE_DB && f->peak_count > 0;
}

/* The first frame to read modes from: the loudest, or the first whose
   window lies wholly after the onset if that is later (a window that holds
   the onset reads its modes' frequencies off: the phase advance between
   two frames then compares different parts of the strike). */
static int first_mode_frame(const measure_context *context, const frame_record *frames,
                            int count, double onset_s) {
  int loudest = 0;
  for (int i = 1; i < count; ++i)
    if (frames[i].level_dbfs > frames[loudest].level_dbfs) loudest = i;
  int clear = loudest;
  double clear_s = onset_s + 0.5 * context->frame_s;
  while (clear < count - 1 &&
         (double)frames[clear].centre_sample / context->sample_rate_hz < clear_s)
    ++clear;
  return strong_frame(&frames[clear], frames[loudest].level_dbfs) ? clear : loudest;
}

static double lowest_mode_hz(const frame_record *frames, int count, int from,
                             double loudest_dbfs) {
  double lowest[MODE_FRAMES_MAX];
  int m = 0;
  for (int i = from; i < count && m < MODE_FRAMES_MAX; ++i) {
    const frame_record *f = &frames[i];
    if (!strong_frame(f, loudest_dbfs)) continue;
    double low = INFINITY;
    for (int p = 0; p < f->peak_count; ++p)
      if (f->peaks[p].power >= MODE_PEAK_RANGE * f->peaks[0].power)
        low = fmin(low, f->peaks[p].frequency_hz);
    lowest[m++] = low;
  }
  return m > 0 ? plumb_stats_median(lowest, m) : NAN;
}

void plumb_note_mode_cents(const measure_context *context, const frame_record *frames, int count,
                     plumb_note *note) {
  int from = first_mode_frame(context, frames, count, note->start_s);
  double loudest_dbfs = -INFINITY;
  for (int i = 0; i < count; ++i) loudest_dbfs = fmax(loudest_dbfs, frames[i].level_dbfs);
  double low_hz = lowest_mode_hz(frames, count, from, loudest_dbfs);
  if (!(low_hz > 0.0) || !isfinite(low_hz)) return;
  double weight[PLUMB_MAX_PARTIALS] = {0}, cents[PLUMB_MAX_PARTIALS] = {0};
  for (int i = from; i < count; ++i) {
    const frame_record *f = &frames[i];
    if (!strong_frame(f, loudest_dbfs)) continue;
    double best_power[PLUMB_MAX_PARTIALS] = {0}, best_cents[PLUMB_MAX_PARTIALS] = {0};
    for (int p = 0; p < f->peak_count; ++p) {
      const spectral_peak *peak = &f->peaks[p];
      if (peak->power < MODE_PEAK_RANGE * f->peaks[0].power) continue;
      long n = lround(peak->frequency_hz / low_hz);
      if (n < 1 || n > PLUMB_MAX_PARTIALS || peak->power <= best_power[n - 1]) continue;
      best_power[n - 1] = peak->power;
      best_cents[n - 1] = 1200.0 * log2(peak->frequency_hz / ((double)n * low_hz));
    }
    for (int k = 0; k < PLUMB_MAX_PARTIALS; ++k) {
      weight[k] += best_power[k];
      cents[k] += best_power[k] * best_cents[k];
    }
  }
  for (int k = 0; k < PLUMB_MAX_PARTIALS; ++k)
    if (weight[k] > 0.0) note->partial_cents[k] = (float)(cents[k] / weight[k]);
}
