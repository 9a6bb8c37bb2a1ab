/*
  Frame pitch refined from the harmonic peaks.

  Each harmonic's frequency comes from the phase advance of its peak bin
  between two spectra `hop` samples apart: the phase-vocoder instantaneous
  frequency, which has no bias on a steady sinusoid (Brown & Puckette 1993).
  The harmonics are searched from the lowest up, and after each one the
  fundamental is re-fitted, so that the search window for the next harmonic
  is centred on the refitted estimate: the coarse estimate's 1 % at first,
  then the acceptance window of 30 cents. The fit is weighted least squares of
  f_n = n f0 with weights |X_n|^2, since the variance of a peak's frequency
  estimate falls with its power (Rife & Boorstyn 1974).
*/
#include "frame/harmonics.h"

#include "frame/bins.h"
#include "frame/peaks.h"

#include <math.h>
#include <string.h>

/* Relative error allowed for the coarse YIN estimate, and for a partial
   once the fit has a harmonic (30 cents; common practice, no source). */
#define COARSE_RELATIVE_ERROR 0.01
#define COARSE_LOW_RELATIVE_ERROR 0.05
#define ACCEPT_RELATIVE_ERROR 0.0175
/* The stiffest string that stays pitched: the project's target, B up to
   0.01. Young (1952) finds partial 2 of C4 about 1.2 cents sharp (B about
   3.5e-4) and the inharmonicity doubling every eight semitones above, so
   B reaches 0.01 near D#7 (derived). */
#define ACCEPT_B_MAX 0.01
/* Common practice, no source. */
#define MISSES_TO_STOP 4

static double wrap_phase(double phase) {
  return phase - 2.0 * M_PI * floor(phase / (2.0 * M_PI) + 0.5);
}

/* Instantaneous frequency, in bins, of bin k from the phase advance
   arg(X_t conj(X_t-1)) less the advance expected of the bin centre. */
double plumb_vocoder_frequency_bins(const fftwf_complex *current,
                              const fftwf_complex *previous, int k, int fft_size,
                              int hop) {
  double re = (double)current[k][0] * previous[k][0] + (double)current[k][1] * previous[k][1];
  double im = (double)current[k][1] * previous[k][0] - (double)current[k][0] * previous[k][1];
  double expected = 2.0 * M_PI * k * hop / fft_size;
  double deviation = wrap_phase(atan2(im, re) - expected);
  return k + deviation * fft_size / (2.0 * M_PI * hop);
}

/* A harmonic's frequency: the power-weighted mean of the instantaneous
   frequencies of the bins around its peak, out to `radius` bins and down
   to PEAK_RANGE below the peak. For a steady sinusoid every bin of the
   main lobe reads the true frequency; for a swept one the weighted mean is
   the spectrogram's local mean frequency, which weights the instantaneous
   frequency by the squared window (Cohen 1995), whatever the sweep. */
#define PEAK_RANGE 1e-3 /* 30 dB */

static double harmonic_frequency_bins(const fftwf_complex *current,
                                      const fftwf_complex *previous, int peak,
                                      int radius, int fft_size, int hop,
                                      bool peak_only, double *power_sum) {
  const int last_bin = fft_size / 2;
  /* The phase advance over a hop reads frequencies unambiguously only
     within fft_size / (2 hop) bins of a bin's centre. */
  const double unambiguous_bins = fft_size / (2.0 * hop);
  int reach = (int)floor(unambiguous_bins) - 1;
  if (reach < 0) reach = 0;
  if (radius > reach) radius = reach;
  const double deviation_limit = fmin(2.0, unambiguous_bins - 0.5);
  double peak_power = bin_power(current, peak);
  double weighted = 0.0, total = 0.0;
  for (int k = peak - radius; k <= peak + radius; ++k) {
    if (k < 1 || k >= last_bin) continue;
    double p = bin_power(current, k);
    if (p < PEAK_RANGE * peak_power) continue;
    total += p;
    if (peak_only) continue;
    double f = plumb_vocoder_frequency_bins(current, previous, k, fft_size, hop);
    if (fabs(f - k) > deviation_limit) { /* a bin no partial drives */
      total -= p;
      continue;
    }
    weighted += p * f;
  }
  *power_sum = total;
  if (peak_only) return plumb_vocoder_frequency_bins(current, previous, peak, fft_size, hop);
  return total > 0.0 ? weighted / total : (double)peak;
}

/* The strongest local maximum within radius of `centre`; -1 if none.
   Each bin's power is computed once, as the window slides. */
static int find_peak(const fftwf_complex *bins, int centre, int radius,
                     int last_bin) {
  int from = centre - radius < 1 ? 1 : centre - radius;
  int to = centre + radius > last_bin - 1 ? last_bin - 1 : centre + radius;
  if (from > to) return -1;
  int best = -1;
  double best_power = 0.0;
  double before = bin_power(bins, from - 1), here = bin_power(bins, from);
  for (int k = from; k <= to; ++k) {
    double after = bin_power(bins, k + 1);
    if (here > best_power && here >= before && here >= after) {
      best = k;
      best_power = here;
    }
    before = here;
    here = after;
  }
  return best;
}

/* Running sums of two weighted least-squares fits over the harmonics
   found so far: f_n = n f0 (the frame pitch), and (f_n / n)^2 = f0^2 (1 +
   B n^2) (the stiff-string model, Fletcher 1964), whose B steers the search
   for the next harmonic so that stretched partials are followed. */
typedef struct {
  double weighted_nf; /* sum w n f */
  double weighted_nn; /* sum w n^2 */
  double sw, sx, sy, sxx, sxy, syy; /* (x, y) = (n^2, (f/n)^2) */
  int count;
} fit_sums;

static void add_harmonic(fit_sums *sums, int n, double frequency_hz, double power) {
  double x = (double)n * n, y = (frequency_hz / n) * (frequency_hz / n);
  sums->weighted_nf += power * n * frequency_hz;
  sums->weighted_nn += power * x;
  double w = power * x;
  sums->sw += w;
  sums->sx += w * x;
  sums->sy += w * y;
  sums->sxx += w * x * x;
  sums->sxy += w * x * y;
  sums->syy += w * y * y;
  sums->count++;
}

#define SEARCH_B_MAX 0.02

/* Where harmonic n is expected: n f0 sqrt(1 + B n^2) once four harmonics
   give a B that stands at least three standard errors clear of zero (a B
   from a few noisy low harmonics would steer the search onto the wrong
   harmonic numbers), n times the frame pitch otherwise. */
#define SEARCH_B_MIN_HARMONICS 4
#define SEARCH_B_SIGNIFICANCE 3.0

static double expected_harmonic_hz(const fit_sums *sums, int n, double f0_hz) {
  double determinant = sums->sw * sums->sxx - sums->sx * sums->sx;
  if (sums->count < SEARCH_B_MIN_HARMONICS || !(determinant > 0.0)) return n * f0_hz;
  double slope = (sums->sw * sums->sxy - sums->sx * sums->sy) / determinant;
  double intercept = (sums->sy - slope * sums->sx) / sums->sw;
  if (!(intercept > 0.0) || !(slope > 0.0)) return n * f0_hz;
  double residual = sums->syy - intercept * sums->sy - slope * sums->sxy;
  double slope_variance = fmax(residual, 0.0) / (sums->count - 2) * sums->sw / determinant;
  if (slope < SEARCH_B_SIGNIFICANCE * sqrt(slope_variance)) return n * f0_hz;
  double b = fmin(slope / intercept, SEARCH_B_MAX);
  return n * sqrt(intercept) * sqrt(1.0 + b * n * n);
}

/* A partial taken for the wrong harmonic number (a high one, where the
   acceptance windows of neighbours come close) pulls the fit far off.
   Partials more than OUTLIER_CENTS from the fitted stiff-string model are
   dropped and the sums rebuilt from the rest. */
#define OUTLIER_CENTS 35.0

static void drop_outliers(harmonic_set *harmonics, fit_sums *sums, harmonic_fit *fit,
                          double *harmonic_energy) {
  double f0_model = sums->weighted_nf / sums->weighted_nn;
  fit_sums kept;
  memset(&kept, 0, sizeof kept);
  *harmonic_energy = 0.0;
  fit->found = 0;
  for (int k = 0; k < PLUMB_FRAME_HARMONICS; ++k) {
    double f = harmonics->frequency_hz[k];
    if (!(f > 0.0)) continue;
    int n = k + 1;
    double predicted = expected_harmonic_hz(sums, n, f0_model);
    if (fabs(1200.0 * log2(f / predicted)) > OUTLIER_CENTS) {
      harmonics->frequency_hz[k] = 0.0f;
      harmonics->amplitude[k] = 0.0f;
      continue;
    }
    double power = (double)harmonics->amplitude[k] * harmonics->amplitude[k];
    add_harmonic(&kept, n, f, power);
    *harmonic_energy += power;
    fit->found++;
  }
  *sums = kept;
}

/* For the harmonic-to-noise ratio: every bin of each found harmonic's
   lobe (the bins nearer to it than to its neighbours). */
static void lobe_power(const fftwf_complex *bins, int fft_size, double bin_hz,
                       int lobe_radius, const harmonic_set *harmonics, harmonic_fit *fit) {
  const int last_bin = fft_size / 2;
  fit->lobe_power = 0.0;
  fit->lobe_bins = 0;
  int covered_to = 0; /* lobes never overlap, nor count a bin twice */
  for (int n = 0; n < PLUMB_FRAME_HARMONICS; ++n) {
    if (!(harmonics->frequency_hz[n] > 0.0f)) continue;
    int centre = (int)lround(harmonics->frequency_hz[n] / bin_hz);
    int from = centre - lobe_radius, to = centre + lobe_radius;
    if (from <= covered_to) from = covered_to + 1;
    if (to > last_bin - 1) to = last_bin - 1;
    for (int k = from; k <= to; ++k) {
      fit->lobe_power += bin_power(bins, k);
      fit->lobe_bins++;
    }
    if (to > covered_to) covered_to = to;
  }
}

bool plumb_harmonics_refine(const fftwf_complex *current,
                      const fftwf_complex *previous, int fft_size, int hop,
                      double sample_rate_hz, double f0_coarse_hz, double noise_power,
                      harmonic_set *harmonics, harmonic_fit *fit) {
  memset(harmonics, 0, sizeof *harmonics);
  fit->f0_hz = NAN;
  fit->harmonic_ratio = 0.0;
  fit->found = 0;
  const double bin_hz = sample_rate_hz / fft_size;
  const double limit_hz = PLUMB_PARTIAL_LIMIT_RATE_SHARE * sample_rate_hz;
  const int last_bin = fft_size / 2;
  const int spacing_radius = (int)floor(0.4 * f0_coarse_hz / bin_hz);
  /* Bins that belong to one harmonic: up to 0.45 of the spacing away, so
     that the neighbours' main lobes stay out. */
  int lobe_radius = (int)floor(0.45 * f0_coarse_hz / bin_hz - 0.5);
  if (lobe_radius < 1) lobe_radius = 1;
  double f0 = f0_coarse_hz;
  fit_sums sums;
  memset(&sums, 0, sizeof sums);
  double harmonic_energy = 0.0;
  int last_harmonic_bin = 0;
  const double floor_power = PLUMB_ABOVE_NOISE * noise_power;
  int missed_in_a_row = 0;
  for (int n = 1; n <= PLUMB_FRAME_HARMONICS; ++n) {
    double expected_hz = expected_harmonic_hz(&sums, n, f0);
    if (expected_hz > limit_hz) break;
    /* The window a partial may fall in: the estimate's uncertainty either
       side (the coarse error until a harmonic is found), and above it, until
       enough harmonics are found to steer by B, the stretch of the
       stiffest string accepted. A mode outside the window is not a
       harmonic. A window wider than the harmonics' spacing is cut to it:
       about n f0 once a harmonic anchors the fit, from its low edge before
       (so that it still reaches down to a stiff string's short YIN
       reading). */
    double relative = fit->found == 0 ? COARSE_RELATIVE_ERROR : ACCEPT_RELATIVE_ERROR;
    /* YIN reads a stiff string's period short (its stretched partials pull
       it), so until a harmonic is found the window reaches further down. */
    double low_relative = fit->found == 0 ? COARSE_LOW_RELATIVE_ERROR : relative;
    double low_hz = expected_hz * (1.0 - low_relative);
    double high_hz = expected_hz * (1.0 + relative);
    if (sums.count < SEARCH_B_MIN_HARMONICS) high_hz *= sqrt(1.0 + ACCEPT_B_MAX * n * n);
    int low_bin = (int)floor(low_hz / bin_hz), high_bin = (int)ceil(high_hz / bin_hz);
    int radius = (high_bin - low_bin + 1) / 2;
    int centre = low_bin + radius;
    if (radius > spacing_radius) {
      radius = spacing_radius > 1 ? spacing_radius : 1;
      centre = fit->found > 0 ? (int)lround(expected_hz / bin_hz) : low_bin + radius;
    }
    last_harmonic_bin = centre + radius;
    int k = find_peak(current, centre, radius, last_bin);
    if (k < 0 || bin_power(current, k) < floor_power) {
      /* Above the partials the pitch uses, a run of misses ends the
         search: the series has sunk into the noise. */
      if (++missed_in_a_row >= MISSES_TO_STOP && n > PLUMB_PITCH_PARTIALS) break;
      continue;
    }
    missed_in_a_row = 0;
    double power;
    /* The partials above those the pitch uses need no local mean
       frequency (it is for vibrato, 3.3 of docs/methods.md): the peak bin's
       instantaneous frequency, exact on a steady partial, is enough. */
    double frequency_bins =
        harmonic_frequency_bins(current, previous, k, lobe_radius, fft_size, hop,
                                n > PLUMB_PITCH_PARTIALS, &power);
    if (!(power > 0.0)) continue; /* no bin of the lobe read as a partial */
    double frequency_hz = frequency_bins * bin_hz;
    if (frequency_hz < low_hz - 0.5 * bin_hz || frequency_hz > high_hz + 0.5 * bin_hz)
      continue; /* an inharmonic mode, or not a steady peak */
    harmonics->frequency_hz[n - 1] = (float)frequency_hz;
    harmonics->amplitude[n - 1] = (float)sqrt(power);
    harmonic_energy += power;
    fit->found++;
    add_harmonic(&sums, n, frequency_hz, power);
    f0 = sums.weighted_nf / sums.weighted_nn;
  }
  if (fit->found >= 3) drop_outliers(harmonics, &sums, fit, &harmonic_energy);
  if (fit->found == 0 || !(sums.weighted_nn > 0.0)) return false;
  f0 = sums.weighted_nf / sums.weighted_nn;
  /* Energy from half the fundamental up to the last harmonic searched. */
  double total = 0.0;
  int first_bin = (int)floor(0.5 * f0_coarse_hz / bin_hz);
  if (first_bin < 1) first_bin = 1;
  if (last_harmonic_bin + 2 > last_bin) last_harmonic_bin = last_bin - 2;
  for (int k = first_bin; k <= last_harmonic_bin + 2; ++k) total += bin_power(current, k);
  fit->f0_hz = f0;
  fit->harmonic_ratio = total > 0.0 ? fmin(1.0, harmonic_energy / total) : 0.0;
  fit->band_power = total;
  fit->band_bins = last_harmonic_bin + 2 - first_bin + 1;
  lobe_power(current, fft_size, bin_hz, lobe_radius, harmonics, fit);
  return true;
}
