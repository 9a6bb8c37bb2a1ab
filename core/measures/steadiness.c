/*
  How steady a note's pitch is: the frame pitch on a uniform grid, its
  drift (a line fit, or a line through whole vibrato cycles' means), its
  vibrato (periodicity from the autocorrelation of the detrended pitch,
  rate and extent from its cycles, the window's attenuation undone), the
  centre and the spread about it.
*/
#include "measures/steadiness.h"

#include "util/stats.h"

#include <math.h>
#include <string.h>

#define VIBRATO_MIN_HZ 3.0
#define VIBRATO_MAX_HZ 12.0
#define VIBRATO_MIN_CORRELATION 0.5
#define VIBRATO_MIN_EXTENT_CENTS 2.0

static double model_cents(const partial_model *model, const frame_record *frame,
                          double reference_hz) {
  return 1200.0 * log2(plumb_partial_model_f0_hz(model, frame) / reference_hz);
}

/* Cents of every frame of the steady part on a uniform grid; frames
   without the note's pitch are bridged linearly. Returns the count. */
int plumb_steadiness_uniform_cents(const frame_record *frames, const steady_part *part,
                              const partial_model *model, double *cents) {
  int n = part->last - part->first + 1;
  int previous = -1;
  for (int i = 0; i < n; ++i) {
    const frame_record *f = &frames[part->first + i];
    if (!plumb_steady_frame(f, part)) continue;
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
  v->has_cycle_drift = plumb_stats_line_fit(cycle_time, cycle_mean, cycles, &intercept,
                                      &v->cycle_drift_cents_per_s);
  v->extent_cents = swing / cycles / window_attenuation(v->rate_hz, frame_s, hop_s);
  v->present = v->extent_cents >= VIBRATO_MIN_EXTENT_CENTS;
}

/* Robust mean: the mean of the values within 3 scaled MADs of the median. */
#define TAPER_FRACTION 0.25
double plumb_steadiness_robust_mean(const double *values, int n, double *scratch) {
  memcpy(scratch, values, sizeof(double) * (size_t)n);
  double median = plumb_stats_median(scratch, n);
  for (int i = 0; i < n; ++i) scratch[i] = fabs(values[i] - median);
  double limit = fmax(3.0 * 1.4826 * plumb_stats_median(scratch, n), 1.0);
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

double plumb_steadiness_spread(const frame_record *frames, const steady_part *part,
                        const partial_model *model,
                        double centre_cents, double *sum_probability,
                        double *sum_ratio, int *voiced) {
  double sum = 0.0;
  *sum_probability = *sum_ratio = 0.0;
  *voiced = 0;
  for (int i = part->first; i <= part->last; ++i) {
    if (!plumb_steady_frame(&frames[i], part)) continue;
    double d = model_cents(model, &frames[i], part->reference_hz) - centre_cents;
    sum += d * d;
    *sum_probability += frames[i].voiced_probability;
    *sum_ratio += frames[i].harmonic_ratio;
    ++*voiced;
  }
  return *voiced > 1 ? sqrt(sum / (*voiced - 1)) : NAN;
}

void plumb_steadiness_drift_and_vibrato(const measure_context *context,
                                      const double *cents, int n,
                                      double *scratch, vibrato_reading *vibrato,
                                      double *drift) {
  double *times = scratch, *residual = scratch + n;
  for (int i = 0; i < n; ++i) times[i] = i * context->hop_s;
  double intercept = 0.0, slope = 0.0;
  plumb_stats_line_fit(times, cents, n, &intercept, &slope);
  for (int i = 0; i < n; ++i) residual[i] = cents[i] - intercept - slope * times[i];
  memset(vibrato, 0, sizeof *vibrato);
  if (vibrato_is_periodic(residual, n, context->hop_s))
    measure_cycles(cents, residual, n, context->hop_s, context->frame_s, vibrato);
  if (vibrato->present && vibrato->has_cycle_drift)
    slope = vibrato->cycle_drift_cents_per_s;
  *drift = slope;
}
