/*
  The 5-limit just ratios and their cents, interval names, and the beat
  of two coincident partials.

  The table is the 5-limit just chromatic scale of standard music theory
  (ratios of products of 2, 3 and 5; Helmholtz 1863, Ellis's translation
  1885, and Barbour 1951, from memory): 1/1, 16/15, 9/8, 6/5, 5/4, 4/3,
  45/32, 3/2, 8/5, 5/3, 9/5, 15/8, one a semitone, and their compounds by
  whole octaves. A ratio's cents are 1200 log2(p/q) (Ellis 1885).
*/
#include "ensemble/just_ratios.h"

#include <math.h>
#include <stdio.h>

static const int simple_ratios[12][2] = {{1, 1},   {16, 15}, {9, 8}, {6, 5}, {5, 4}, {4, 3},
                                         {45, 32}, {3, 2},   {8, 5}, {5, 3}, {9, 5}, {15, 8}};

static int greatest_divisor(int a, int b) {
  while (b != 0) {
    int r = a % b;
    a = b;
    b = r;
  }
  return a;
}

/* p/q of degree `step` raised by `octaves` (>= 0), in lowest terms. */
static void compound(int step, int octaves, int *p, int *q) {
  long num = simple_ratios[step][0];
  long den = simple_ratios[step][1];
  for (int k = 0; k < octaves; ++k) {
    if (den % 2 == 0) {
      den /= 2;
    } else {
      num *= 2;
    }
  }
  int g = greatest_divisor((int)num, (int)den);
  *p = (int)(num / g);
  *q = (int)(den / g);
}

static double ratio_cents(int p, int q) {
  return 1200.0 * log2((double)p / (double)q);
}

double plumb_just_nearest(double cents, int *p, int *q) {
  *p = 0;
  *q = 0;
  /* Ten octaves is past any two notes of the piano's compass. */
  if (!isfinite(cents) || cents < 0.0 || cents > 12000.0) {
    return NAN;
  }
  int base = (int)floor(cents / 1200.0);
  double best = INFINITY;
  /* The octave below the base is never nearer; the next octave's 1/1 is
     the only candidate above the base octave's 15/8. */
  for (int octave = base; octave <= base + 1; ++octave) {
    for (int step = 0; step < 12; ++step) {
      int num = 0;
      int den = 0;
      compound(step, octave, &num, &den);
      double deviation = cents - ratio_cents(num, den);
      if (fabs(deviation) < fabs(best)) {
        best = deviation;
        *p = num;
        *q = den;
      }
    }
  }
  return best;
}

void plumb_interval_name(int semitones, char name[8]) {
  static const char *const quality[12] = {"P",  "m", "M", "m", "M", "P",
                                          "TT", "P", "m", "M", "m", "M"};
  static const int degree[12] = {1, 2, 2, 3, 3, 4, 4, 5, 6, 6, 7, 7};
  if (semitones < 0 || semitones > 127) {
    name[0] = '\0';
    return;
  }
  int step = semitones % 12;
  int octaves = semitones / 12;
  if (step == 0 && octaves > 0) {
    snprintf(name, 8, "P%d", 7 * octaves + 1); /* P8, P15, P22 */
  } else if (step == 6 && octaves == 0) {
    snprintf(name, 8, "TT");
  } else if (step == 6) {
    snprintf(name, 8, "A%d", 7 * octaves + 4); /* augmented 11th ... */
  } else {
    snprintf(name, 8, "%s%d", quality[step], degree[step] + 7 * octaves);
  }
}

/* Partial k of a stiff string, f_k = k f0 sqrt(1 + B k^2) (Fletcher 1964). */
static double partial_hz(double f0_hz, double b, int k) {
  double stiffness = isfinite(b) && b > 0.0 ? b : 0.0;
  return k * f0_hz * sqrt(1.0 + stiffness * k * k);
}

double plumb_beat_hz(double f_low_hz, double b_low, int p, double f_high_hz, double b_high, int q) {
  return fabs(partial_hz(f_low_hz, b_low, p) - partial_hz(f_high_hz, b_high, q));
}
