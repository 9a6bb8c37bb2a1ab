/*
  Small statistics (util/stats.c): the median by quickselect and the
  least-squares line. References: numpy.median and numpy.polyfit (NumPy
  1.24.2, Debian 12's python3-numpy) on the same numbers, and lines known
  exactly.
*/
#include "util/stats.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

static void test_median_of_an_odd_count(void **state) {
  (void)state;
  /* numpy.median([3.5, -1.25, 7.0, 2.0, 2.0, 9.75, -4.5]) = 2.0 (a tie on
     the middle value). */
  double v[] = {3.5, -1.25, 7.0, 2.0, 2.0, 9.75, -4.5};
  assert_true(plumb_stats_median(v, 7) == 2.0);
  /* One value is its own median. */
  double one[] = {-3.25};
  assert_true(plumb_stats_median(one, 1) == -3.25);
}

static void test_median_of_an_even_count(void **state) {
  (void)state;
  /* numpy.median([3.5, -1.25, 7.0, 2.0, 9.75, -4.5]) = 2.75, the mean of
     the two middle values 2.0 and 3.5. */
  double v[] = {3.5, -1.25, 7.0, 2.0, 9.75, -4.5};
  assert_true(plumb_stats_median(v, 6) == 2.75);
  double two[] = {10.0, -2.0};
  assert_true(plumb_stats_median(two, 2) == 4.0);
}

static int compare_doubles(const void *a, const void *b) {
  double x = *(const double *)a, y = *(const double *)b;
  return (x > y) - (x < y);
}

static void test_median_matches_sorting_on_many_inputs(void **state) {
  (void)state;
  /* The median's definition (the middle of the sorted values, or the mean
     of the two middle ones; numpy.median's), checked against qsort over
     lengths 1 ... 200 of pseudo-random values with many ties, sorted and
     reverse-sorted runs: the inputs where a quickselect goes wrong. */
  static double v[200], sorted[200];
  unsigned seed = 12345u;
  for (int n = 1; n <= 200; ++n) {
    for (int shape = 0; shape < 3; ++shape) {
      for (int i = 0; i < n; ++i) {
        seed = seed * 1103515245u + 12345u; /* the C standard's example rand() */
        double r = (double)((seed >> 16) % 17u);
        v[i] = shape == 0 ? r : (shape == 1 ? (double)i : (double)(n - i));
      }
      memcpy(sorted, v, (size_t)n * sizeof *v);
      qsort(sorted, (size_t)n, sizeof *sorted, compare_doubles);
      double expected = n % 2 ? sorted[n / 2] : 0.5 * (sorted[n / 2 - 1] + sorted[n / 2]);
      assert_true(plumb_stats_median(v, n) == expected);
    }
  }
}

static void test_median_of_nothing_is_nan(void **state) {
  (void)state;
  /* No value, no median: NaN (the project's "does not apply"; numpy.median
     of an empty array is nan too). */
  double v[1] = {1.0};
  assert_true(isnan(plumb_stats_median(v, 0)));
}

static void test_line_fit_is_exact_on_a_line(void **state) {
  (void)state;
  /* y = 3 - 0.5 x at x = 0 ... 9: the least-squares line is the line. */
  double x[10], y[10];
  for (int i = 0; i < 10; ++i) {
    x[i] = i;
    y[i] = 3.0 - 0.5 * i;
  }
  double a = NAN, b = NAN;
  assert_true(plumb_stats_line_fit(x, y, 10, &a, &b));
  assert_true(fabs(a - 3.0) < 1e-14);
  assert_true(fabs(b + 0.5) < 1e-14);
}

static void test_line_fit_matches_numpy_polyfit(void **state) {
  (void)state;
  /* numpy.polyfit(x, y, 1) = [0.83809524, 1.06666667] (slope, intercept)
     for these points; in closed form (normal equations) the slope is
     88 / 105 and the intercept 1.066666...= 16 / 15. */
  const double x[8] = {0, 1, 2, 3, 4, 5, 6, 7};
  const double y[8] = {1.3, 2.1, 2.2, 3.9, 4.1, 5.2, 5.8, 7.4};
  double a = NAN, b = NAN;
  assert_true(plumb_stats_line_fit(x, y, 8, &a, &b));
  assert_true(fabs(b - 88.0 / 105.0) < 1e-12);
  assert_true(fabs(a - 16.0 / 15.0) < 1e-12);
}

static void test_line_fit_refuses_no_spread(void **state) {
  (void)state;
  /* A vertical set of points (every x equal) has no least-squares line,
     nor have fewer than two points: false, outputs untouched. */
  const double x[4] = {2.0, 2.0, 2.0, 2.0};
  const double y[4] = {1.0, 2.0, 3.0, 4.0};
  double a = 42.0, b = 42.0;
  assert_false(plumb_stats_line_fit(x, y, 4, &a, &b));
  assert_false(plumb_stats_line_fit(x, y, 1, &a, &b));
  assert_false(plumb_stats_line_fit(x, y, 0, &a, &b));
  assert_true(a == 42.0 && b == 42.0);
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_median_of_an_odd_count),
      cmocka_unit_test(test_median_of_an_even_count),
      cmocka_unit_test(test_median_matches_sorting_on_many_inputs),
      cmocka_unit_test(test_median_of_nothing_is_nan),
      cmocka_unit_test(test_line_fit_is_exact_on_a_line),
      cmocka_unit_test(test_line_fit_matches_numpy_polyfit),
      cmocka_unit_test(test_line_fit_refuses_no_spread),
  };
  return cmocka_run_group_tests(tests, NULL, NULL);
}
