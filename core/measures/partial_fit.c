/*
  The stiff-string model of a note's partials, f_n = n f0 sqrt(1 + B n^2)
  (Fletcher 1964), fitted over the steady part, and a frame's fundamental
  under it.

  Each frame's pitch f_t is a fit of f_n = n f_t, so ratio_n = f_n / (n f_t)
  is free of vibrato; its square is linear in n^2: ratio_n^2 = c^2 + c^2 B
  n^2, and weighted least squares on n^2 gives B = slope / intercept (in
  the manner of the partial-frequency deviation estimators, Rauhala,
  Lehtonen & Valimaki 2007). The note's pitch is measured under the model
  where B stands SIGNIFICANT_ERRORS standard errors clear of zero, under
  the harmonic model (B = 0) otherwise.
*/
#include "measures/partial_fit.h"

#include "util/stats.h"

#include <math.h>

/* A bowed, blown or sung tone is periodic, so exactly harmonic (mode
   locking), yet an ensemble sample whose partials are beating clusters
   leans on an apparent B at 5-6 standard errors; real stiff strings stand
   30 and more clear (docs/methods.md 5.2). */
#define SIGNIFICANT_ERRORS 10.0

/* Frames overlap: with a Hann window, frames half a window apart are
   nearly independent, so m frames carry about m hop / (frame / 2)
   independent readings. */
static double independent_frames(const measure_context *context, int frames) {
  return fmax(1.0, frames * context->hop_s / (0.5 * context->frame_s));
}

/* Per partial, over the steady frames: power-weighted sums of the ratio
   f_n / (n f_t) and of its square. */
typedef struct {
  double power[PLUMB_FRAME_HARMONICS];
  double ratio[PLUMB_FRAME_HARMONICS];
  double ratio_squared[PLUMB_FRAME_HARMONICS];
  int found[PLUMB_FRAME_HARMONICS];
  int frames;
} ratio_sums;

static void sum_ratios(const frame_record *frames, const steady_part *part, ratio_sums *s) {
  *s = (ratio_sums){{0}, {0}, {0}, {0}, 0};
  for (int i = part->first; i <= part->last; ++i) {
    const frame_record *f = &frames[i];
    if (!plumb_steady_frame(f, part)) continue;
    s->frames++;
    for (int k = 0; k < PLUMB_FRAME_HARMONICS; ++k) {
      double a = f->harmonics.amplitude[k];
      if (!(a > 0.0)) continue;
      double r = f->harmonics.frequency_hz[k] / ((k + 1) * f->f0_hz);
      s->found[k]++;
      s->power[k] += a * a;
      s->ratio[k] += a * a * r;
      s->ratio_squared[k] += a * a * r * r;
    }
  }
}

/* A partial's ratio varies over the frames by about noise_scale / (a^2
   n^2) (a frequency reading's variance falls with its power, and n f_t
   scales it); the median over the partials seen often enough. */
static double noise_scale_of(const ratio_sums *s) {
  double values[PLUMB_FRAME_HARMONICS];
  int m = 0;
  for (int k = 0; k < PLUMB_FRAME_HARMONICS; ++k) {
    if (s->found[k] < 3) continue;
    double n = k + 1, mean = s->ratio[k] / s->power[k];
    double variance = fmax(0.0, s->ratio_squared[k] / s->power[k] - mean * mean);
    values[m++] = variance * (s->power[k] / s->found[k]) * n * n;
  }
  return m > 0 ? plumb_stats_median(values, m) : 0.0;
}

partial_model plumb_partial_model_fit(const measure_context *context, const frame_record *frames,
                                const steady_part *part) {
  ratio_sums s;
  sum_ratios(frames, part, &s);
  partial_model model = {NAN, NAN, false, 0.0, 1.0, 0, NULL, NULL, 0};
  for (int k = 0; k < PLUMB_FRAME_HARMONICS; ++k)
    model.partials += s.frames > 0 && 2 * s.found[k] >= s.frames;
  double sw = 0.0, sx = 0.0, sy = 0.0, sxx = 0.0, sxy = 0.0;
  int used = 0;
  for (int k = 0; k < PLUMB_FRAME_HARMONICS; ++k) {
    if (!(s.power[k] > 0.0)) continue;
    double n = k + 1, y = s.ratio[k] / s.power[k];
    double w = s.power[k] * n * n, x = n * n;
    y *= y;
    sw += w;
    sx += w * x;
    sy += w * y;
    sxx += w * x * x;
    sxy += w * x * y;
    ++used;
  }
  double determinant = sw * sxx - sx * sx;
  if (used < 3 || !(determinant > 0.0)) return model;
  double slope = (sw * sxy - sx * sy) / determinant;
  double intercept = (sy - slope * sx) / sw;
  /* The slope's standard error, two ways; the larger counts. From the
     residual about the line (how well the partials follow n^2), and from
     each partial's scatter over the frames, propagated through the fit
     (slope = sum c_n y_n). */
  double residual = 0.0, scatter = 0.0;
  for (int k = 0; k < PLUMB_FRAME_HARMONICS; ++k) {
    if (!(s.power[k] > 0.0)) continue;
    double n = k + 1, mean = s.ratio[k] / s.power[k];
    double w = s.power[k] * n * n, x = n * n;
    double e = mean * mean - intercept - slope * x;
    residual += w * e * e;
    double variance = fmax(0.0, s.ratio_squared[k] / s.power[k] - mean * mean);
    double y_variance = 4.0 * mean * mean * variance / independent_frames(context, s.found[k]);
    double c = w * (sw * x - sx) / determinant;
    scatter += c * c * y_variance;
  }
  double slope_error = fmax(sqrt(residual / (used - 2) * sw / determinant), sqrt(scatter));
  if (!(intercept > 0.0)) return model;
  model.b = slope > 0.0 ? slope / intercept : 0.0;
  model.b_error = slope_error / intercept;
  model.stiff = slope > SIGNIFICANT_ERRORS * slope_error;
  model.noise_scale = noise_scale_of(&s);
  model.independent_frames = independent_frames(context, s.frames);
  return model;
}

/*
  A frame's fundamental under the note's model: each of the lowest
  PLUMB_PITCH_PARTIALS partials found gives f_n / (n sqrt(1 + B n^2)), and they
  are averaged with inverse-variance weights. A partial's variance is
  noise_scale / (a^2 n^2), so under the harmonic model the weight is a^2
  n^2, as in the frame fit. Under a fitted B the note's error also holds
  B's own error, which the frames do not average away and which moves
  partial n by (n^2 / 2) b_error: the weight falls to 1 / (noise_scale /
  (a^2 n^2 frames) + (n^2 b_error / 2)^2), and an uncertain B leans the
  pitch on the low partials, where it matters least. Unlike a harmonic
  fit corrected afterwards, the reading does not move when a frame lacks
  one partial or another.

  The partials above PLUMB_PITCH_PARTIALS (found for the harmonicity measures)
  stay out of the pitch: under a^2 n^2 weights they would lead it, and in
  an ensemble, whose partials are clusters spreading with n, they beat
  hardest (FluidR3's voice twins moved apart by 0.45 cent with 40 partials
  in the pitch, 0.27 with 16).
*/
static double model_f0_hz(const partial_model *model, const frame_record *frame) {
  double b = model->stiff ? model->b : 0.0;
  bool uncertain = model->stiff && model->noise_scale > 0.0 && model->b_error > 0.0;
  double weighted = 0.0, total = 0.0;
  for (int k = 0; k < PLUMB_PITCH_PARTIALS; ++k) {
    double a = frame->harmonics.amplitude[k];
    if (!(a > 0.0)) continue;
    double n = k + 1, w = a * a * n * n;
    if (uncertain) {
      double b_term = 0.5 * n * n * model->b_error;
      w = 1.0 / (model->noise_scale / (w * model->independent_frames) + b_term * b_term);
    }
    weighted += w * frame->harmonics.frequency_hz[k] / (n * sqrt(1.0 + b * n * n));
    total += w;
  }
  return total > 0.0 ? weighted / total : frame->f0_hz;
}

double plumb_partial_model_f0_hz(const partial_model *model, const frame_record *frame) {
  if (model->cached_f0_hz && frame >= model->cached_frames &&
      frame < model->cached_frames + model->cached_count)
    return model->cached_f0_hz[frame - model->cached_frames];
  return model_f0_hz(model, frame);
}

void plumb_partial_model_cache(partial_model *model, const frame_record *frames, int count,
                         double *f0_hz) {
  model->cached_f0_hz = NULL;
  for (int i = 0; i < count; ++i) f0_hz[i] = model_f0_hz(model, &frames[i]);
  model->cached_frames = frames;
  model->cached_f0_hz = f0_hz;
  model->cached_count = count;
}
