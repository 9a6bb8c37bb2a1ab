/* Small statistics used by the note measures. */
#include "util/stats.h"

static void swap(double *a, double *b) {
  double t = *a;
  *a = *b;
  *b = t;
}

/* Quickselect (Hoare); reorders values. */
static double select_kth(double *values, int count, int k) {
  int low = 0, high = count - 1;
  while (low < high) {
    double pivot = values[(low + high) / 2];
    int i = low, j = high;
    while (i <= j) {
      while (values[i] < pivot) ++i;
      while (values[j] > pivot) --j;
      if (i <= j) swap(&values[i++], &values[j--]);
    }
    if (k <= j) high = j;
    else if (k >= i) low = i;
    else break;
  }
  return values[k];
}

double plumb_stats_median(double *values, int count) {
  if (count <= 0) return 0.0 / 0.0;
  double upper = select_kth(values, count, count / 2);
  if (count % 2) return upper;
  double lower = select_kth(values, count, count / 2 - 1);
  return 0.5 * (lower + upper);
}

bool plumb_stats_line_fit(const double *x, const double *y, int count,
                    double *intercept, double *slope) {
  if (count < 2) return false;
  double mean_x = 0.0, mean_y = 0.0;
  for (int i = 0; i < count; ++i) {
    mean_x += x[i];
    mean_y += y[i];
  }
  mean_x /= count;
  mean_y /= count;
  double sxx = 0.0, sxy = 0.0;
  for (int i = 0; i < count; ++i) {
    sxx += (x[i] - mean_x) * (x[i] - mean_x);
    sxy += (x[i] - mean_x) * (y[i] - mean_y);
  }
  if (!(sxx > 0.0)) return false;
  *slope = sxy / sxx;
  *intercept = mean_y - *slope * mean_x;
  return true;
}
