/* Order statistics the benchmark tools share (header-only: each tool is
   one program, linked alone). */
#ifndef PLUMB_BENCH_STATS_H
#define PLUMB_BENCH_STATS_H

#include <stddef.h>

/* For qsort of floats, ascending. */
static inline int bench_compare_float(const void *a, const void *b) {
  float x = *(const float *)a, y = *(const float *)b;
  return (x > y) - (x < y);
}

/* The p-th percentile, linear between order statistics; sorted[]
   ascending, n > 0. */
static inline double bench_percentile(const float *sorted, size_t n, double p) {
  double position = p / 100.0 * (double)(n - 1);
  size_t below = (size_t)position;
  if (below + 1 >= n) return sorted[n - 1];
  double fraction = position - (double)below;
  return sorted[below] + fraction * (sorted[below + 1] - sorted[below]);
}

#endif /* PLUMB_BENCH_STATS_H */
