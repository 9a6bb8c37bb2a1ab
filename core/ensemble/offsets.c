/*
  Track offsets by weighted least squares over the pairs: minimise
  sum w (o_high - o_low - d)^2, d each pair's deviation from its target
  and w its overlap in seconds. The normal equations are the graph
  Laplacian of the tracks, L o = b (singular: adding a constant to every
  offset changes nothing); adding 1 1^T over each connected group of
  tracks fixes the zero at the group's mean and makes the matrix
  positive definite, and since 1^T L = 0 and 1^T b = 0 the solution is
  the least-squares one. Outlying pairs (a wrong note, a slide) are
  weighed down by Huber's M-estimator (Huber 1964), refitted a few times
  (iteratively reweighted least squares).
*/
#include "ensemble/offsets.h"

#include "ensemble/pairs.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define HUBER_K_CENTS 3.0 /* residuals beyond this count less (common practice, no source) */
#define REWEIGHTS     6

static size_t find_root(size_t *parent, size_t i) {
  while (parent[i] != i) i = parent[i] = parent[parent[i]];
  return i;
}

/* Gaussian elimination with partial pivoting of the n x n system a x = b
   (a and b overwritten); false when singular. */
static bool solve(double *a, double *b, size_t n) {
  for (size_t col = 0; col < n; ++col) {
    size_t pivot = col;
    for (size_t r = col + 1; r < n; ++r)
      if (fabs(a[r * n + col]) > fabs(a[pivot * n + col])) pivot = r;
    if (fabs(a[pivot * n + col]) < 1e-300) return false;
    if (pivot != col) {
      for (size_t c = 0; c < n; ++c) {
        double t = a[col * n + c];
        a[col * n + c] = a[pivot * n + c];
        a[pivot * n + c] = t;
      }
      double t = b[col];
      b[col] = b[pivot];
      b[pivot] = t;
    }
    for (size_t r = col + 1; r < n; ++r) {
      double f = a[r * n + col] / a[col * n + col];
      if (f == 0.0) continue;
      for (size_t c = col; c < n; ++c) a[r * n + c] -= f * a[col * n + c];
      b[r] -= f * b[col];
    }
  }
  for (size_t r = n; r-- > 0;) {
    double s = b[r];
    for (size_t c = r + 1; c < n; ++c) s -= a[r * n + c] * b[c];
    b[r] = s / a[r * n + r];
  }
  return true;
}

/* One weighted fit; weights[i] multiplies pair i's overlap. */
static bool fit(const plumb_ensemble_pair *pairs, const double *dev, const double *weights,
                size_t pair_count, const size_t *root, size_t n, double *a, double *offsets) {
  memset(a, 0, n * n * sizeof *a);
  memset(offsets, 0, n * sizeof *offsets);
  for (size_t i = 0; i < pair_count; ++i) {
    if (!isfinite(dev[i])) continue;
    size_t lo = pairs[i].track_low, hi = pairs[i].track_high;
    double w = weights[i] * (pairs[i].end_s - pairs[i].start_s);
    a[lo * n + lo] += w;
    a[hi * n + hi] += w;
    a[lo * n + hi] -= w;
    a[hi * n + lo] -= w;
    offsets[hi] += w * dev[i];
    offsets[lo] -= w * dev[i];
  }
  for (size_t r = 0; r < n; ++r)
    for (size_t c = 0; c < n; ++c) a[r * n + c] += root[r] == root[c] ? 1.0 : 0.0;
  return solve(a, offsets, n);
}

plumb_status plumb_ensemble_offsets(const plumb_ensemble_pair *pairs, size_t pair_count,
                                    size_t track_count, plumb_interval_target target,
                                    double *offsets_cents) {
  size_t n = track_count;
  size_t *root = malloc((n ? n : 1) * sizeof *root);
  bool *linked = calloc(n ? n : 1, sizeof *linked);
  double *a = malloc((n ? n * n : 1) * sizeof *a);
  double *dev = malloc((pair_count ? pair_count : 1) * sizeof *dev);
  double *weights = malloc((pair_count ? pair_count : 1) * sizeof *weights);
  plumb_status status = root && linked && a && dev && weights ? PLUMB_OK : PLUMB_ERR_MEMORY;
  for (size_t t = 0; status == PLUMB_OK && t < n; ++t) root[t] = t;
  for (size_t i = 0; status == PLUMB_OK && i < pair_count; ++i) {
    dev[i] = plumb_ensemble_pair_target_dev(&pairs[i], target);
    weights[i] = 1.0;
    if (!isfinite(dev[i])) continue;
    linked[pairs[i].track_low] = linked[pairs[i].track_high] = true;
    size_t x = find_root(root, pairs[i].track_low), y = find_root(root, pairs[i].track_high);
    root[x] = y;
  }
  for (size_t t = 0; status == PLUMB_OK && t < n; ++t) root[t] = find_root(root, t);
  for (int round = 0; status == PLUMB_OK && round <= REWEIGHTS; ++round) {
    if (!fit(pairs, dev, weights, pair_count, root, n, a, offsets_cents)) break;
    for (size_t i = 0; i < pair_count; ++i) {
      if (!isfinite(dev[i])) continue;
      double r = dev[i] - (offsets_cents[pairs[i].track_high] - offsets_cents[pairs[i].track_low]);
      weights[i] = fabs(r) <= HUBER_K_CENTS ? 1.0 : HUBER_K_CENTS / fabs(r);
    }
  }
  for (size_t t = 0; status == PLUMB_OK && t < n; ++t)
    if (!linked[t]) offsets_cents[t] = NAN;
  free(root);
  free(linked);
  free(a);
  free(dev);
  free(weights);
  return status;
}
