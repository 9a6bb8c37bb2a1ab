/*
  Per-note intonation measures from a note's frames: the steady part, the
  centre pitch (over whole vibrato cycles when there is vibrato), spread,
  drift, vibrato rate and extent, the fundamental from a stiff-string fit
  of the partials, the nearest target and the verdict.
*/
#include "internal.h"

#include <math.h>
#include <string.h>

/* Common practice, no source; tuned on the project's test takes. */
#define EDGE_TRIM_FRAMES 2         /* window overlap with what comes before/after */
#define STEADY_BAND_CENTS 25.0     /* attack scoops and release glides lie outside */
#define STEADY_LEVEL_RANGE_DB 20.0 /* common practice, no source */
#define ATTACK_END_DB 3.0          /* common practice, no source */
#define ATTACK_SKIP_MAX_S 0.15
#define MIN_VOICED_FRACTION 0.4    /* below this an event has no definite pitch */
#define MIN_NOTE_HARMONIC_RATIO 0.5
#define VIBRATO_MIN_HZ 3.0
#define VIBRATO_MAX_HZ 12.0
#define VIBRATO_MIN_CORRELATION 0.5
#define VIBRATO_MIN_EXTENT_CENTS 2.0
#define UNSTEADY_SPREAD_FACTOR 1.5 /* of the tolerance, without vibrato */

static double frame_cents(const frame_record *frame, double reference_hz) {
  return 1200.0 * log2(frame->f0_hz / reference_hz);
}

static double model_cents(const partial_model *model, const frame_record *frame,
                          double reference_hz) {
  return 1200.0 * log2(partial_model_f0_hz(model, frame) / reference_hz);
}

static void leave_unpitched(plumb_note *note) {
  note->midi = -1;
  note->target_hz = note->f0_hz = note->cents = NAN;
  note->spread_cents = note->drift_cents_per_s = NAN;
  note->vibrato_hz = note->vibrato_cents = NAN;
  note->inharmonicity_b = NAN;
  note->partials = -1;
  note->verdict = PLUMB_VERDICT_UNPITCHED;
}

static void clear_note(plumb_note *note) {
  memset(note, 0, sizeof *note);
  note->midi = -1;
  note->partials = -1;
  note->target_hz = note->f0_hz = note->cents = NAN;
  note->spread_cents = note->drift_cents_per_s = NAN;
  note->vibrato_hz = note->vibrato_cents = note->confidence = NAN;
  note->inharmonicity_b = note->hnr_db = note->odd_even_db = NAN;
  note->centroid_hz = note->attack_ms = note->decay_ms = NAN;
  note->sustain_db = note->release_ms = note->peak_dbfs = NAN;
  note->decay_db_per_s = NAN;
  for (int k = 0; k < 3; ++k) note->tristimulus[k] = NAN;
  note->timeline_s = note->bar = note->beat = NAN;
  for (int k = 0; k < PLUMB_MAX_PARTIALS; ++k) note->partial_cents[k] = NAN;
}

/* The steady part: trim the window overlap at both ends, then attack and
   release frames whose pitch lies outside a band around the note's median. */
static bool find_steady_part(const measure_context *context,
                             const frame_record *frames, int count,
                             double start_s, double end_s, double *scratch,
                             steady_part *part) {
  /* Frames whose window reaches over the note's start or end by more than
     a quarter of its length see the neighbouring sound too. */
  double margin_s = 0.25 * context->frame_s;
  /* ... and the onset's own transient: the first tenth of the note, at
     most ATTACK_SKIP_MAX_S (common practice, no source). */
  double attack_skip_s = fmin(ATTACK_SKIP_MAX_S, 0.1 * (end_s - start_s));
  int first = 0, last = count - 1;
  while (first < last && (double)frames[first].centre_sample / context->sample_rate_hz <
                             start_s + fmax(margin_s, attack_skip_s))
    ++first;
  while (last > first &&
         (double)frames[last].centre_sample / context->sample_rate_hz > end_s - margin_s)
    --last;
  if (last - first < 2) {
    first = count > 3 * EDGE_TRIM_FRAMES ? EDGE_TRIM_FRAMES : 0;
    last = count - 1 - first;
  }
  /* A dying note's tail (a piano string's slower second decay, a release
     that rings on) is not its pitch: the steady part ends where the level
     has fallen STEADY_LEVEL_RANGE_DB below the note's peak. */
  double peak_dbfs = frames[first].level_dbfs;
  for (int i = first; i <= last; ++i)
    if (frames[i].level_dbfs > peak_dbfs) peak_dbfs = frames[i].level_dbfs;
  int loudest = first;
  while (frames[loudest].level_dbfs < peak_dbfs) ++loudest;
  /* The attack is not the pitch either: the steady part starts where the
     level has risen to within ATTACK_END_DB of the peak (at once for a
     struck or plucked note; after the bow, breath or voice has settled). */
  int attack_end = first;
  while (attack_end < loudest && frames[attack_end].level_dbfs < peak_dbfs - ATTACK_END_DB)
    ++attack_end;
  int end = last;
  for (int i = loudest; i <= last; ++i)
    if (frames[i].level_dbfs < peak_dbfs - STEADY_LEVEL_RANGE_DB) {
      end = i - 1;
      break;
    }
  if (end - first >= 2) last = end;
  if (last - attack_end >= 2) first = attack_end;
  int n = 0;
  for (int i = first; i <= last; ++i)
    if (frames[i].voiced) scratch[n++] = frames[i].f0_hz;
  if (n < 3) return false;
  double reference_hz = stats_median(scratch, n);
  int m = 0;
  for (int i = first; i <= last; ++i)
    if (frames[i].voiced) scratch[m++] = fabs(frame_cents(&frames[i], reference_hz));
  /* Sinusoidal vibrato of extent e has a median |deviation| of e/sqrt(2). */
  double band = STEADY_BAND_CENTS + 1.6 * stats_median(scratch, m);
  while (first < last && !(frames[first].voiced &&
                           fabs(frame_cents(&frames[first], reference_hz)) <= band))
    ++first;
  while (last > first && !(frames[last].voiced &&
                           fabs(frame_cents(&frames[last], reference_hz)) <= band))
    --last;
  part->first = first;
  part->last = last;
  part->reference_hz = reference_hz;
  part->band_cents = band;
  return last - first >= 2;
}

/* Cents of every frame of the steady part on a uniform grid; frames
   without the note's pitch are bridged linearly. Returns the count. */
static int uniform_cents(const frame_record *frames, const steady_part *part,
                         const partial_model *model,
                         double *cents) {
  int n = part->last - part->first + 1;
  int previous = -1;
  for (int i = 0; i < n; ++i) {
    const frame_record *f = &frames[part->first + i];
    if (!steady_frame(f, part)) continue;
    cents[i] = model_cents(model, f, part->reference_hz);
    for (int j = previous + 1; j < i; ++j)
      cents[j] = previous < 0 ? cents[i]
                              : cents[previous] + (cents[i] - cents[previous]) *
                                                      (j - previous) / (i - previous);
    previous = i;
  }
  for (int j = previous + 1; j < n; ++j) cents[j] = cents[previous];
  return n;
}

typedef struct {
  bool present;
  double rate_hz;
  double extent_cents;
  double centre_cents; /* mean over whole cycles */
  bool has_cycle_drift;
  double cycle_drift_cents_per_s;
} vibrato_reading;

static double normalised_correlation(const double *x, int n, int lag) {
  double xy = 0.0, xx = 0.0, yy = 0.0;
  for (int i = 0; i + lag < n; ++i) {
    xy += x[i] * x[i + lag];
    xx += x[i] * x[i];
    yy += x[i + lag] * x[i + lag];
  }
  return xx > 0.0 && yy > 0.0 ? xy / sqrt(xx * yy) : 0.0;
}

/* Periodicity of the detrended pitch: its normalised autocorrelation must
   swing negative (half a cycle) and then rise to a peak of at least
   VIBRATO_MIN_CORRELATION at a lag of 3 to 12 Hz. A wandering pitch has a
   smooth, falling autocorrelation with no such peak. */
static bool vibrato_is_periodic(const double *residual, int n, double hop_s) {
  int lag_min = (int)floor(1.0 / (VIBRATO_MAX_HZ * hop_s));
  int lag_max = (int)ceil(1.0 / (VIBRATO_MIN_HZ * hop_s));
  if (lag_min < 2) lag_min = 2;
  bool swung_negative = false, rising = false;
  double previous = 1.0;
  for (int lag = 1; lag <= lag_max + 1 && 2 * lag <= n; ++lag) {
    double r = normalised_correlation(residual, n, lag);
    if (r < 0.0) swung_negative = true;
    if (swung_negative && r > previous) rising = true;
    if (rising && r < previous) {
      /* the first peak after the dip, at lag - 1 */
      return lag - 1 >= lag_min && previous >= VIBRATO_MIN_CORRELATION &&
             n >= 3 * (lag - 1) / 2;
    }
    previous = r;
  }
  return false;
}

/* Parabolic interpolation of an extreme sample of a sampled sinusoid. */
static double interpolated_extreme(const double *x, int n, int i) {
  if (i <= 0 || i >= n - 1) return x[i];
  double a = x[i - 1], b = x[i], c = x[i + 1];
  double d = a - 2.0 * b + c;
  if (d == 0.0) return b;
  double shift = 0.5 * (a - c) / d;
  if (fabs(shift) > 1.0) return b;
  return b - 0.25 * (a - c) * shift;
}

/* The frame pitch is the spectrogram's local mean frequency, which is the
   instantaneous frequency weighted by the squared window (Cohen 1995), and
   the phase advance averages it over a hop. A vibrato of rate f therefore
   reads smaller by |W2(f)| / W2(0), W2 the transform of the squared Hann
   window, times the hop's sinc. Hann^2 = 3/8 - cos/2 + cos(2.)/8, so W2 is
   a sum of five shifted sincs. */
static double sinc(double x) { return fabs(x) < 1e-12 ? 1.0 : sin(M_PI * x) / (M_PI * x); }

static double window_attenuation(double rate_hz, double frame_s, double hop_s) {
  double v = rate_hz * frame_s; /* in bins of the frame */
  double w2 = 0.375 * sinc(v) + 0.25 * (sinc(v - 1.0) + sinc(v + 1.0)) +
              0.0625 * (sinc(v - 2.0) + sinc(v + 2.0));
  return fabs(w2 / 0.375 * sinc(rate_hz * hop_s));
}

/* Mean of a sampled curve between fractional indices a < b (trapezoids,
   ends interpolated). */
static double mean_between(const double *x, double a, double b) {
  int ia = (int)floor(a), ib = (int)floor(b);
  double xa = x[ia] + (x[ia + 1] - x[ia]) * (a - ia);
  double xb = x[ib] + (x[ib + 1] - x[ib]) * (b - ib);
  if (ia == ib) return 0.5 * (xa + xb);
  double area = 0.5 * (xa + x[ia + 1]) * (ia + 1 - a);
  for (int i = ia + 1; i < ib; ++i) area += 0.5 * (x[i] + x[i + 1]);
  area += 0.5 * (x[ib] + xb) * (b - ib);
  return area / (b - a);
}

#define MAX_CYCLES 256

static void measure_cycles(const double *cents, const double *residual, int n,
                           double hop_s, double frame_s, vibrato_reading *v) {
  double crossing[MAX_CYCLES + 1];
  int crossings = 0;
  for (int i = 0; i + 1 < n && crossings <= MAX_CYCLES; ++i)
    if (residual[i] < 0.0 && residual[i + 1] >= 0.0)
      crossing[crossings++] =
          i + residual[i] / (residual[i] - residual[i + 1]); /* in frames */
  if (crossings < 2) return;
  int cycles = crossings - 1;
  double a = crossing[0], b = crossing[cycles];
  v->rate_hz = cycles / ((b - a) * hop_s);
  /* Centre: the mean of the pitch over whole cycles. */
  v->centre_cents = mean_between(cents, a, b);
  /* Drift: a line through the cycle means, which the vibrato cannot tilt. */
  double cycle_time[MAX_CYCLES], cycle_mean[MAX_CYCLES];
  double swing = 0.0;
  for (int c = 0; c < cycles; ++c) {
    cycle_time[c] = 0.5 * (crossing[c] + crossing[c + 1]) * hop_s;
    cycle_mean[c] = mean_between(cents, crossing[c], crossing[c + 1]);
    /* Extent: half the swing of each cycle, averaged. */
    int from = (int)ceil(crossing[c]), to = (int)floor(crossing[c + 1]);
    int hi = from, lo = from;
    for (int i = from; i <= to && i < n; ++i) {
      if (residual[i] > residual[hi]) hi = i;
      if (residual[i] < residual[lo]) lo = i;
    }
    swing += 0.5 * (interpolated_extreme(residual, n, hi) -
                    interpolated_extreme(residual, n, lo));
  }
  double intercept;
  v->has_cycle_drift = stats_line_fit(cycle_time, cycle_mean, cycles, &intercept,
                                      &v->cycle_drift_cents_per_s);
  v->extent_cents = swing / cycles / window_attenuation(v->rate_hz, frame_s, hop_s);
  v->present = v->extent_cents >= VIBRATO_MIN_EXTENT_CENTS;
}

/* Robust mean: the mean of the values within 3 scaled MADs of the median. */
#define TAPER_FRACTION 0.25
static double robust_mean(const double *values, int n, double *scratch) {
  memcpy(scratch, values, sizeof(double) * (size_t)n);
  double median = stats_median(scratch, n);
  for (int i = 0; i < n; ++i) scratch[i] = fabs(values[i] - median);
  double limit = fmax(3.0 * 1.4826 * stats_median(scratch, n), 1.0);
  /* Weighted by a Tukey taper (a quarter of the length at each end): a
     pitch that moves within the note then reads the same whether the
     frame grid puts one frame more or less at the ends. */
  double sum = 0.0, weights = 0.0;
  for (int i = 0; i < n; ++i) {
    if (fabs(values[i] - median) > limit) continue;
    double position = n > 1 ? (double)i / (n - 1) : 0.5;
    double edge = position < 0.5 ? position : 1.0 - position;
    double w = edge >= TAPER_FRACTION ? 1.0
                                      : 0.5 - 0.5 * cos(M_PI * edge / TAPER_FRACTION);
    sum += w * values[i];
    weights += w;
  }
  return weights > 0.0 ? sum / weights : median;
}

static plumb_verdict judge(const measure_context *context, const plumb_note *note,
                           bool vibrato) {
  if (note->cents > context->tolerance_cents) return PLUMB_VERDICT_SHARP;
  if (note->cents < -context->tolerance_cents) return PLUMB_VERDICT_FLAT;
  if (!vibrato && note->spread_cents > UNSTEADY_SPREAD_FACTOR * context->tolerance_cents)
    return PLUMB_VERDICT_UNSTEADY;
  return PLUMB_VERDICT_IN_TUNE;
}

static double spread_of(const frame_record *frames, const steady_part *part,
                        const partial_model *model,
                        double centre_cents, double *sum_probability,
                        double *sum_ratio, int *voiced) {
  double sum = 0.0;
  *sum_probability = *sum_ratio = 0.0;
  *voiced = 0;
  for (int i = part->first; i <= part->last; ++i) {
    if (!steady_frame(&frames[i], part)) continue;
    double d = model_cents(model, &frames[i], part->reference_hz) - centre_cents;
    sum += d * d;
    *sum_probability += frames[i].voiced_probability;
    *sum_ratio += frames[i].harmonic_ratio;
    ++*voiced;
  }
  return *voiced > 1 ? sqrt(sum / (*voiced - 1)) : NAN;
}

static void measure_drift_and_vibrato(const measure_context *context,
                                      const double *cents, int n,
                                      double *scratch, vibrato_reading *vibrato,
                                      double *drift) {
  double *times = scratch, *residual = scratch + n;
  for (int i = 0; i < n; ++i) times[i] = i * context->hop_s;
  double intercept = 0.0, slope = 0.0;
  stats_line_fit(times, cents, n, &intercept, &slope);
  for (int i = 0; i < n; ++i) residual[i] = cents[i] - intercept - slope * times[i];
  memset(vibrato, 0, sizeof *vibrato);
  if (vibrato_is_periodic(residual, n, context->hop_s))
    measure_cycles(cents, residual, n, context->hop_s, context->frame_s, vibrato);
  if (vibrato->present && vibrato->has_cycle_drift)
    slope = vibrato->cycle_drift_cents_per_s;
  *drift = slope;
}

/*
  Onset and offset times from the frame levels. The level of a Hann-windowed
  frame is half (-3 dB) its full value when a sudden start or stop sits at
  the frame centre, and reaches any other fraction at a lead that the
  window's shape fixes (window_step_lead_s in spectrum.c), so level crossings,
  interpolated between frames, place a note's ends free of the window's
  length.
*/
#define EDGE_SEARCH_FRAMES 12
#define EDGE_MIN_RISE_DB 6.0
#define EDGE_RELEASED_DB 20.0

static double frame_time_s(const measure_context *context, const frame_record *f) {
  return (double)f->centre_sample / context->sample_rate_hz;
}

static double crossing_time_s(const measure_context *context, const frame_record *a,
                              const frame_record *b, double level) {
  double span = b->level_dbfs - a->level_dbfs;
  double fraction = span != 0.0 ? (level - a->level_dbfs) / span : 0.0;
  if (fraction < 0.0) fraction = 0.0;
  if (fraction > 1.0) fraction = 1.0;
  return frame_time_s(context, a) + fraction * context->hop_s;
}

/* The onset: where the level rising to the attack's peak crosses
   PLUMB_ONSET_THRESHOLD_DB below it (or, over a noise floor, 6 dB above
   the quietest frame before the peak), moved later by the lead a sudden
   start has at that level. A low threshold puts a slow, bowed or breathed
   attack's onset near where it begins to sound. */
#define ONSET_ABOVE_FLOOR_DB 6.0
#define ATTACK_SEARCH_S 0.6
#define ATTACK_DIP_DB 1.0

static double refine_start_s(const measure_context *context,
                             const frame_record *frames, int count) {
  /* The attack's peak: the level followed upwards (through dips of less
     than ATTACK_DIP_DB) for at most ATTACK_SEARCH_S. */
  int look = (int)ceil(ATTACK_SEARCH_S / context->hop_s);
  if (look > count) look = count;
  int top = 0;
  for (int i = 1; i < look; ++i) {
    if (frames[i].level_dbfs < frames[top].level_dbfs - ATTACK_DIP_DB) break;
    if (frames[i].level_dbfs > frames[top].level_dbfs) top = i;
  }
  /* The floor under the note: the quietest of its rising frames and of the
     frame before it (silence before a note from nothing). */
  double quietest = fmin(frames[0].level_dbfs, frames[0].level_before_dbfs);
  for (int i = 1; i < top; ++i) quietest = fmin(quietest, frames[i].level_dbfs);
  if (frames[top].level_dbfs - quietest < EDGE_MIN_RISE_DB)
    return frame_time_s(context, &frames[0]);
  double threshold = fmax(frames[top].level_dbfs + PLUMB_ONSET_THRESHOLD_DB,
                          quietest + ONSET_ABOVE_FLOOR_DB);
  int i = top;
  while (i > 0 && frames[i - 1].level_dbfs >= threshold) --i;
  if (i == 0) {
    /* The note's first frame is already above the threshold: place a
       sudden start where the window's shape puts one at that frame's level
       (the frame before was below the floor). */
    double below_top_db = frames[0].level_dbfs - frames[top].level_dbfs;
    double lead0_s = below_top_db < 0.0 ? window_step_lead_s(below_top_db, context->frame_s) : 0.0;
    return frame_time_s(context, &frames[0]) + lead0_s;
  }
  double lead_s = window_step_lead_s(threshold - frames[top].level_dbfs, context->frame_s);
  double refined_s = crossing_time_s(context, &frames[i - 1], &frames[i], threshold) + lead_s;
  /* Over a sound that is still ringing (the floor set the threshold), the
     crossing says more of the floor than of the note: trust the frame the
     note was found at, to within a hop. */
  bool over_floor = threshold > frames[top].level_dbfs + PLUMB_ONSET_THRESHOLD_DB;
  double found_s = frame_time_s(context, &frames[0]);
  return over_floor ? fmin(refined_s, found_s + context->hop_s) : refined_s;
}

static double refine_end_s(const measure_context *context,
                           const frame_record *frames, int count) {
  double fallback = frame_time_s(context, &frames[count - 1]) + 0.5 * context->hop_s;
  double peak = frames[0].level_dbfs;
  for (int i = 1; i < count; ++i)
    if (frames[i].level_dbfs > peak) peak = frames[i].level_dbfs;
  /* Only a note that has died away has an offset of its own; one cut by
     the next note ends where that one starts. */
  if (frames[count - 1].level_dbfs > peak - EDGE_RELEASED_DB) return fallback;
  int from = count > EDGE_SEARCH_FRAMES ? count - EDGE_SEARCH_FRAMES : 0;
  int top = from;
  for (int i = from + 1; i < count; ++i)
    if (frames[i].level_dbfs > frames[top].level_dbfs) top = i;
  double threshold = frames[top].level_dbfs - 3.0;
  for (int i = top + 1; i < count; ++i)
    if (frames[i].level_dbfs < threshold)
      return crossing_time_s(context, &frames[i - 1], &frames[i], threshold);
  return fallback;
}

/*
  Definite pitch or not: the share of the strong spectral peaks that the
  note's own partial series n f0 sqrt(1 + B n^2) does not account for,
  weighted by power, over the frames within 10 dB of the note's peak and
  over its attack (a bar's or a membrane's upper modes die first).
*/
#define SERIES_TOLERANCE_CENTS 30.0
#define UNVOICED_TOLERANCE_CENTS 60.0
#define OWN_PITCH_RANGE_CENTS 150.0
#define SUBFUNDAMENTAL_RATIO 0.9
#define STRONG_FRAME_RANGE_DB 10.0
#define ATTACK_FRAMES_AFTER_PEAK 8
/* Synthetic harmonic tones read below 0.02, bars 0.16 and up, membranes
   0.3 and up (the project's tests); the limits sit between. */
#define MAX_STRAY_SHARE 0.1
#define MAX_ATTACK_STRAY_SHARE 0.12

static bool near_series(double f_hz, double f0_hz, double b, double tolerance_cents,
                        double slack_hz) {
  double tolerance_hz = f_hz * (exp2(tolerance_cents / 1200.0) - 1.0) + slack_hz;
  double ratio = f_hz / f0_hz;
  int guess = (int)floor(ratio / sqrt(1.0 + b * ratio * ratio));
  for (int n = guess - 1; n <= guess + 2; ++n) {
    if (n < 1) continue;
    if (fabs(f_hz - n * f0_hz * sqrt(1.0 + b * n * n)) <= tolerance_hz) return true;
  }
  return false;
}

/* On the stiff-string series of the fitted B, or on the harmonic one (a
   small B fitted to a bowed or blown tone must not make its upper
   harmonics stray). */
static bool on_series(double f_hz, double f0_hz, double b, double tolerance_cents,
                      double slack_hz) {
  return near_series(f_hz, f0_hz, b, tolerance_cents, slack_hz) ||
         near_series(f_hz, f0_hz, 0.0, tolerance_cents, slack_hz);
}

/* Amplitude-weighted share of a frame's peaks within 20 dB of its
   strongest (the list is strongest first) that lie off the series. */
#define STRAY_PEAK_RANGE 0.01

static void stray_amplitude(const frame_record *f, double f0_hz, double b,
                            double tolerance_cents, double slack_hz, double *stray,
                            double *total) {
  *stray = *total = 0.0;
  for (int i = 0; i < f->peak_count; ++i) {
    if (f->peaks[i].power < STRAY_PEAK_RANGE * f->peaks[0].power) break;
    /* Below the fundamental lie body and room resonances and the ringing
       of earlier notes; a strike's modes lie above its lowest one. */
    if (f->peaks[i].frequency_hz < SUBFUNDAMENTAL_RATIO * f0_hz) continue;
    double amplitude = sqrt(f->peaks[i].power);
    *total += amplitude;
    if (!on_series(f->peaks[i].frequency_hz, f0_hz, b, tolerance_cents, slack_hz))
      *stray += amplitude;
  }
}

static bool fits_no_series(const measure_context *context, const frame_record *frames,
                           int count, double f0_hz, const partial_model *model) {
  double slack_hz = 0.6 * context->sample_rate_hz / context->fft_size;
  double b = model->stiff ? model->b : 0.0;
  int loudest = 0;
  for (int i = 1; i < count; ++i)
    if (frames[i].level_dbfs > frames[loudest].level_dbfs) loudest = i;
  double floor_dbfs = frames[loudest].level_dbfs - STRONG_FRAME_RANGE_DB;
  double strong_stray = 0.0, strong_total = 0.0, attack_stray = 0.0, attack_total = 0.0;
  for (int i = 0; i < count; ++i) {
    double stray, total;
    /* A voiced frame is tested against its own pitch, so vibrato and
       drift do not count as stray; an unvoiced one (an attack, a scoop)
       or one whose pitch slipped far from the note's against the note's,
       with more room. */
    double own_f0_hz = frames[i].voiced ? partial_model_f0_hz(model, &frames[i]) : f0_hz;
    bool own = frames[i].voiced &&
               fabs(1200.0 * log2(own_f0_hz / f0_hz)) <= OWN_PITCH_RANGE_CENTS;
    stray_amplitude(&frames[i], own ? own_f0_hz : f0_hz, b,
                    own ? SERIES_TOLERANCE_CENTS : UNVOICED_TOLERANCE_CENTS, slack_hz,
                    &stray, &total);
    if (!(total > 0.0)) continue;
    double weight = pow(10.0, frames[i].level_dbfs / 10.0) / total;
    if (frames[i].level_dbfs >= floor_dbfs) {
      strong_stray += weight * stray;
      strong_total += weight * total;
    }
    if (i <= loudest + ATTACK_FRAMES_AFTER_PEAK) {
      attack_stray += weight * stray;
      attack_total += weight * total;
    }
  }
  return (strong_total > 0.0 && strong_stray / strong_total > MAX_STRAY_SHARE) ||
         (attack_total > 0.0 && attack_stray / attack_total > MAX_ATTACK_STRAY_SHARE);
}

/* Pitch and harmonicity; false, with the note left unpitched, for an
   event with no definite pitch. */
static bool measure_pitch(const measure_context *context, const frame_record *frames,
                          int count, double *scratch, plumb_note *note) {
  note->start_s = refine_start_s(context, frames, count);
  note->end_s = refine_end_s(context, frames, count);
  float peak = 0.0f;
  int voiced = 0;
  for (int i = 0; i < count; ++i) {
    if (frames[i].peak > peak) peak = frames[i].peak;
    voiced += frames[i].voiced;
  }
  note->peak_dbfs = peak > 0.0f ? 20.0 * log10(peak) : -INFINITY;
  steady_part part;
  if (voiced < 3 || voiced < MIN_VOICED_FRACTION * count ||
      !find_steady_part(context, frames, count, note->start_s, note->end_s,
                        scratch, &part)) {
    leave_unpitched(note);
    return false;
  }
  partial_model model = partial_model_fit(context, frames, &part);
  partial_model_cache(&model, frames, count, scratch + 4 * count);
  note->inharmonicity_b = model.b;
  note->partials = model.partials > 0 ? model.partials : -1;
  double *cents = scratch;
  int n = uniform_cents(frames, &part, &model, cents);
  vibrato_reading vibrato;
  measure_drift_and_vibrato(context, cents, n, scratch + n, &vibrato,
                            &note->drift_cents_per_s);
  double centre_cents = vibrato.present ? vibrato.centre_cents
                                        : robust_mean(cents, n, scratch + n);
  double sum_probability, sum_ratio;
  int steady_voiced;
  note->spread_cents = spread_of(frames, &part, &model, centre_cents, &sum_probability,
                                 &sum_ratio, &steady_voiced);
  if (sum_ratio / steady_voiced < MIN_NOTE_HARMONIC_RATIO) {
    leave_unpitched(note);
    return false;
  }
  if (vibrato.present) {
    note->vibrato_hz = vibrato.rate_hz;
    note->vibrato_cents = vibrato.extent_cents;
  }
  /* The cents are of the model's fundamental, so the centre is f0 itself. */
  note->f0_hz = part.reference_hz * exp2(centre_cents / 1200.0);
  if (frames[0].legato_start ? context->previous_unpitched
                             : fits_no_series(context, frames, count, note->f0_hz, &model)) {
    leave_unpitched(note);
    return false;
  }
  note->midi = plumb_tuning_nearest(&context->tuning, note->f0_hz,
                                    &note->target_hz, &note->cents);
  note->confidence = (sum_probability / steady_voiced) * (sum_ratio / steady_voiced);
  note->verdict = judge(context, note, vibrato.present);
  note_timbre(context, frames, &part, &model, note);
  return true;
}

void note_measure(const measure_context *context, const frame_record *frames,
                  int count, double *scratch, float *levels_db, plumb_note *note) {
  clear_note(note);
  bool pitched = measure_pitch(context, frames, count, scratch, note);
  if (!pitched) note_mode_cents(context, frames, count, note);
  note_envelope(context, frames, count, pitched ? note->f0_hz : 0.0, levels_db, note);
}
