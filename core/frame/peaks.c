/*
  The strongest spectral peaks of a frame, whatever their relation to a
  fundamental. The note measures test them against the note's partial
  series: membranes, bars and bells have strong modes that no harmonic or
  stiff-string series accounts for.
*/
#include "frame/peaks.h"

#include "frame/bins.h"
#include "util/stats.h"

#include <math.h>

#define NOISE_SAMPLES 64
#define PEAK_RANGE 1e-3 /* 30 dB below the strongest */

double plumb_spectrum_noise_floor(const fftwf_complex *bins, int first_bin, int last_bin) {
  double sample[NOISE_SAMPLES];
  int span = last_bin - first_bin + 1;
  int step = span > NOISE_SAMPLES ? (span + NOISE_SAMPLES - 1) / NOISE_SAMPLES : 1;
  int n = 0;
  for (int k = first_bin; k <= last_bin && n < NOISE_SAMPLES; k += step)
    sample[n++] = bin_power(bins, k);
  return n > 0 ? plumb_stats_median(sample, n) : 0.0;
}

/* Insert into a list kept strongest first. */
static int insert_peak(spectral_peak *peaks, int count, int max_peaks, spectral_peak peak) {
  int at = count < max_peaks ? count : max_peaks - 1;
  if (count >= max_peaks && peak.power <= peaks[at].power) return count;
  while (at > 0 && peaks[at - 1].power < peak.power) {
    peaks[at] = peaks[at - 1];
    --at;
  }
  peaks[at] = peak;
  return count < max_peaks ? count + 1 : count;
}

int plumb_spectrum_strong_peaks(const fftwf_complex *current, const fftwf_complex *previous,
                          int fft_size, int hop, double sample_rate_hz, double low_hz,
                          double high_hz, double noise_power, spectral_peak *peaks,
                          int max_peaks) {
  const double bin_hz = sample_rate_hz / fft_size;
  int first, last;
  if (!band_bins(low_hz, high_hz, bin_hz, fft_size, &first, &last) || last <= first) return 0;
  double floor_power = PLUMB_ABOVE_NOISE * noise_power;
  double strongest = 0.0;
  for (int k = first; k <= last; ++k) {
    double p = bin_power(current, k);
    strongest = p > strongest ? p : strongest;
  }
  double threshold = floor_power > PEAK_RANGE * strongest ? floor_power : PEAK_RANGE * strongest;
  int count = 0;
  for (int k = first; k <= last; ++k) {
    double p = bin_power(current, k);
    if (p < threshold || p < bin_power(current, k - 1) || p < bin_power(current, k + 1))
      continue;
    /* Only a peak that makes the list needs its frequency. */
    if (count >= max_peaks && p <= peaks[max_peaks - 1].power) continue;
    spectral_peak peak;
    peak.frequency_hz =
        (float)(plumb_vocoder_frequency_bins(current, previous, k, fft_size, hop) * bin_hz);
    peak.power = (float)p;
    count = insert_peak(peaks, count, max_peaks, peak);
  }
  return count;
}
