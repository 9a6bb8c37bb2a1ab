/*
  Small statistics: the median, a least-squares line.
*/
#ifndef PLUMB_UTIL_STATS_H
#define PLUMB_UTIL_STATS_H

#include <stdbool.h>

double plumb_stats_median(double *values, int count); /* reorders values */
/* Least-squares line y = a + b x; returns false when x has no spread. */
bool plumb_stats_line_fit(const double *x, const double *y, int count,
                    double *intercept, double *slope);

#endif /* PLUMB_UTIL_STATS_H */
