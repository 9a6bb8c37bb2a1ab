/*
  Drift: the slope, in cents per minute, of a line fitted to each pitched
  note's deviation from equal temperament at a fixed A4 = 440 Hz against
  the time of its middle. Only slopes are reported, so the reference
  cancels, and so does a track's constant offset: each track gets its
  own intercept (the within-groups, or fixed-effects, estimator of a
  common slope, as in the analysis of covariance; common practice, no
  source), so a part that sits sharp or
  enters late does not tilt the ensemble's line. Deviations are taken
  modulo the semitone, unwrapped around the track's circular mean, then
  again around the fitted line, so a sag that carries notes past the
  half semitone is followed. Outlying notes are weighed down with
  Huber's M-estimator (Huber 1964), scale from the median absolute
  deviation (Hampel 1974), by iterative reweighting.
*/
#include "ensemble/drift.h"

#include <math.h>
#include <stdlib.h>

#define HUBER_K         1.345 /* 95 % efficiency at the normal (Huber 1964) */
#define MIN_SCALE_CENTS 0.05
#define REWEIGHTS       8
#define PI              3.14159265358979323846

typedef struct {
  double t_min; /* the note's middle, minutes */
  double dev;   /* cents from the nearest semitone, unwrapped */
  size_t group;
  double w;
} drift_point;

static double wrap_near(double cents, double centre) {
  return cents - 100.0 * round((cents - centre) / 100.0);
}

static int compare_doubles(const void *a, const void *b) {
  double x = *(const double *)a, y = *(const double *)b;
  return x < y ? -1 : x > y;
}

/* Median of |r|, with `scratch` of n doubles. */
static double median_abs(const double *r, size_t n, double *scratch) {
  for (size_t i = 0; i < n; ++i) scratch[i] = fabs(r[i]);
  qsort(scratch, n, sizeof *scratch, compare_doubles);
  return n % 2 ? scratch[n / 2] : 0.5 * (scratch[n / 2 - 1] + scratch[n / 2]);
}

/* Weighted within-group slope; per-group weighted means in mean_t and
   mean_d (n_groups each). NaN when the times do not spread. */
static double group_slope(const drift_point *pts, size_t n, size_t n_groups, double *mean_t,
                          double *mean_d, double *sum_w) {
  for (size_t g = 0; g < n_groups; ++g) mean_t[g] = mean_d[g] = sum_w[g] = 0.0;
  for (size_t i = 0; i < n; ++i) {
    mean_t[pts[i].group] += pts[i].w * pts[i].t_min;
    mean_d[pts[i].group] += pts[i].w * pts[i].dev;
    sum_w[pts[i].group] += pts[i].w;
  }
  for (size_t g = 0; g < n_groups; ++g) {
    mean_t[g] = sum_w[g] > 0.0 ? mean_t[g] / sum_w[g] : 0.0;
    mean_d[g] = sum_w[g] > 0.0 ? mean_d[g] / sum_w[g] : 0.0;
  }
  double sxy = 0.0, sxx = 0.0;
  for (size_t i = 0; i < n; ++i) {
    double x = pts[i].t_min - mean_t[pts[i].group];
    sxy += pts[i].w * x * (pts[i].dev - mean_d[pts[i].group]);
    sxx += pts[i].w * x * x;
  }
  return sxx > 1e-12 ? sxy / sxx : NAN;
}

/* The robust slope of pts (deviations already unwrapped near each
   group's level); scratch holds 2n + 3 n_groups doubles. */
static double robust_slope(drift_point *pts, size_t n, size_t n_groups, double *scratch) {
  double *mean_t = scratch, *mean_d = mean_t + n_groups, *sum_w = mean_d + n_groups;
  double *resid = sum_w + n_groups, *sorted = resid + n;
  for (size_t i = 0; i < n; ++i) pts[i].w = 1.0;
  double slope = NAN;
  for (int round = 0; round <= REWEIGHTS; ++round) {
    slope = group_slope(pts, n, n_groups, mean_t, mean_d, sum_w);
    if (!isfinite(slope)) return NAN;
    for (size_t i = 0; i < n; ++i) {
      size_t g = pts[i].group;
      double line = mean_d[g] + slope * (pts[i].t_min - mean_t[g]);
      pts[i].dev = wrap_near(pts[i].dev, line); /* follow the line past +-50 */
      resid[i] = pts[i].dev - line;
    }
    double scale = fmax(1.4826 * median_abs(resid, n, sorted), MIN_SCALE_CENTS);
    for (size_t i = 0; i < n; ++i) {
      double u = fabs(resid[i]) / (HUBER_K * scale);
      pts[i].w = u <= 1.0 ? 1.0 : 1.0 / u;
    }
  }
  return slope;
}

/* The circular mean of the deviations of group g (period 100 cents). */
static double circular_mean(const drift_point *pts, size_t n, size_t g) {
  double s = 0.0, c = 0.0;
  for (size_t i = 0; i < n; ++i) {
    if (pts[i].group != g) continue;
    s += sin(2.0 * PI * pts[i].dev / 100.0);
    c += cos(2.0 * PI * pts[i].dev / 100.0);
  }
  return s == 0.0 && c == 0.0 ? 0.0 : 100.0 * atan2(s, c) / (2.0 * PI);
}

static size_t collect(const plumb_ensemble_track *tracks, size_t count, drift_point *pts) {
  size_t n = 0;
  for (size_t t = 0; t < count; ++t) {
    for (size_t i = 0; i < tracks[t].count; ++i) {
      const plumb_ensemble_note *note = &tracks[t].notes[i];
      double mid_s = 0.5 * (note->start_s + note->end_s);
      if (!(note->f0_hz > 0.0) || !isfinite(note->f0_hz) || !isfinite(mid_s)) continue;
      double cents = 1200.0 * log2(note->f0_hz / 440.0);
      pts[n++] = (drift_point){mid_s / 60.0, wrap_near(cents, 0.0), t, 1.0};
    }
  }
  for (size_t t = 0; t < count; ++t) {
    double centre = circular_mean(pts, n, t);
    for (size_t i = 0; i < n; ++i)
      if (pts[i].group == t) pts[i].dev = wrap_near(pts[i].dev, centre);
  }
  return n;
}

double plumb_ensemble_drift(const plumb_ensemble_track *tracks, size_t count,
                            plumb_ensemble_track_result *results, plumb_status *status) {
  size_t total = 0;
  for (size_t t = 0; t < count; ++t) total += tracks[t].count;
  drift_point *pts = malloc((total ? total : 1) * sizeof *pts);
  drift_point *own = malloc((total ? total : 1) * sizeof *own);
  double *scratch = malloc((2 * total + 3 * count + 3) * sizeof *scratch);
  for (size_t t = 0; t < count; ++t) results[t].drift_cents_per_min = NAN;
  *status = pts && own && scratch ? PLUMB_OK : PLUMB_ERR_MEMORY;
  double drift = NAN;
  if (*status == PLUMB_OK) {
    size_t n = collect(tracks, count, pts);
    for (size_t t = 0; t < count; ++t) {
      size_t m = 0;
      for (size_t i = 0; i < n; ++i)
        if (pts[i].group == t) own[m] = pts[i], own[m++].group = 0;
      results[t].drift_cents_per_min = m >= 2 ? robust_slope(own, m, 1, scratch) : NAN;
    }
    drift = n >= 2 ? robust_slope(pts, n, count, scratch) : NAN;
  }
  free(pts);
  free(own);
  free(scratch);
  return drift;
}
