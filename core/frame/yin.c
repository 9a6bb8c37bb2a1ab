/*
  YIN's cumulative-mean-normalised difference function, computed with FFTs
  (de Cheveigné & Kawahara 2002, steps 2 and 3).

  d(tau) = sum_{j<W} (x_j - x_{j+tau})^2 = E_0 + E_tau - 2 r(tau), where r is
  the cross-correlation of the first W samples with the whole segment. One
  forward transform of each and one inverse give r for every lag at once.
*/
#include "frame/yin.h"

#include "frame/fft.h"

#include <math.h>
#include <string.h>

plumb_status plumb_yin_init(yin_analyser *yin, int fft_size, int window_samples,
                      int lag_max_samples) {
  memset(yin, 0, sizeof *yin);
  if (window_samples + lag_max_samples + 1 > fft_size) return PLUMB_ERR_ARGUMENT;
  yin->fft_size = fft_size;
  yin->window_samples = window_samples;
  yin->lag_max_samples = lag_max_samples;
  int bins = fft_size / 2 + 1;
  yin->segment = fftwf_alloc_real((size_t)fft_size);
  yin->window_part = fftwf_alloc_real((size_t)fft_size);
  yin->correlation = fftwf_alloc_real((size_t)fft_size);
  yin->cmndf = fftwf_alloc_real((size_t)lag_max_samples + 2);
  yin->spectrum_segment = fftwf_alloc_complex((size_t)bins);
  yin->spectrum_window = fftwf_alloc_complex((size_t)bins);
  if (!yin->segment || !yin->window_part || !yin->correlation ||
      !yin->cmndf || !yin->spectrum_segment ||
      !yin->spectrum_window) {
    plumb_yin_destroy(yin);
    return PLUMB_ERR_MEMORY;
  }
  memset(yin->segment, 0, sizeof(float) * (size_t)fft_size);
  memset(yin->window_part, 0, sizeof(float) * (size_t)fft_size);
  yin->forward = plumb_fft_plan_r2c(fft_size, yin->segment,
                                    yin->spectrum_segment);
  yin->inverse = plumb_fft_plan_c2r(fft_size, yin->spectrum_segment,
                                    yin->correlation);
  if (!yin->forward || !yin->inverse) {
    plumb_yin_destroy(yin);
    return PLUMB_ERR_FFT;
  }
  return PLUMB_OK;
}

void plumb_yin_destroy(yin_analyser *yin) {
  plumb_fft_destroy(yin->forward);
  plumb_fft_destroy(yin->inverse);
  fftwf_free(yin->segment);
  fftwf_free(yin->window_part);
  fftwf_free(yin->correlation);
  fftwf_free(yin->cmndf);
  fftwf_free(yin->spectrum_segment);
  fftwf_free(yin->spectrum_window);
  memset(yin, 0, sizeof *yin);
}

int plumb_yin_segment_offset(const yin_analyser *yin) {
  return (yin->fft_size - yin->window_samples - yin->lag_max_samples) / 2;
}

/* Copy the centred segment and remove its mean (DC would otherwise lower
   d(tau) at every lag alike). Sums run in four interleaved parts so the
   additions pipeline; the order is fixed, so results repeat exactly.
   Returns the energy of the first W samples. */
static double load_segment(yin_analyser *yin, const float *frame) {
  const int length = yin->window_samples + yin->lag_max_samples;
  const int whole = length - length % 4;
  const float *source = frame + plumb_yin_segment_offset(yin);
  double part[4] = {0.0, 0.0, 0.0, 0.0};
  for (int i = 0; i < whole; i += 4)
    for (int j = 0; j < 4; ++j) part[j] += source[i + j];
  for (int i = whole; i < length; ++i) part[0] += source[i];
  const float mean = (float)(((part[0] + part[1]) + (part[2] + part[3])) / length);
  for (int i = 0; i < length; ++i) yin->segment[i] = source[i] - mean;
  for (int i = length; i < yin->fft_size; ++i) yin->segment[i] = 0.0f;
  memcpy(yin->window_part, yin->segment, sizeof(float) * (size_t)yin->window_samples);
  double energy[4] = {0.0, 0.0, 0.0, 0.0};
  const int w = yin->window_samples, w_whole = w - w % 4;
  for (int i = 0; i < w_whole; i += 4)
    for (int j = 0; j < 4; ++j) energy[j] += (double)yin->segment[i + j] * yin->segment[i + j];
  for (int i = w_whole; i < w; ++i) energy[0] += (double)yin->segment[i] * yin->segment[i];
  return (energy[0] + energy[1]) + (energy[2] + energy[3]);
}

static void correlate(yin_analyser *yin) {
  int bins = yin->fft_size / 2 + 1;
  fftwf_execute_dft_r2c(yin->forward, yin->segment, yin->spectrum_segment);
  fftwf_execute_dft_r2c(yin->forward, yin->window_part, yin->spectrum_window);
  /* conj(W) * S is the transform of r(tau) = sum_j w_j s_{j+tau}. */
  for (int k = 0; k < bins; ++k) {
    float wr = yin->spectrum_window[k][0], wi = yin->spectrum_window[k][1];
    float sr = yin->spectrum_segment[k][0], si = yin->spectrum_segment[k][1];
    yin->spectrum_segment[k][0] = wr * sr + wi * si;
    yin->spectrum_segment[k][1] = wr * si - wi * sr;
  }
  fftwf_execute_dft_c2r(yin->inverse, yin->spectrum_segment, yin->correlation);
}

/* d(tau) = E_0 + E_tau - 2 r(tau), with the energy E_tau of the window
   starting at tau slid along one sample at a time, then normalised by its
   cumulative mean (YIN step 3). */
static void normalise(yin_analyser *yin, int lag_max, double energy_0) {
  const double scale = 1.0 / yin->fft_size; /* FFTW does not normalise */
  const int w = yin->window_samples;
  const float *x = yin->segment;
  double energy_tau = energy_0, running = 0.0;
  yin->cmndf[0] = 1.0f;
  for (int tau = 1; tau <= lag_max + 1; ++tau) {
    energy_tau += (double)x[tau + w - 1] * x[tau + w - 1] - (double)x[tau - 1] * x[tau - 1];
    double d = energy_0 + energy_tau - 2.0 * scale * yin->correlation[tau];
    if (d < 0.0) d = 0.0;
    running += d;
    yin->cmndf[tau] = running > 0.0 ? (float)(d * tau / running) : 1.0f;
  }
}

int plumb_yin_analyse(yin_analyser *yin, const float *frame, int lag_min,
                int lag_max, yin_trough *troughs, int max_troughs) {
  if (lag_max > yin->lag_max_samples) lag_max = yin->lag_max_samples;
  if (lag_min < 2) lag_min = 2;
  double energy_0 = load_segment(yin, frame);
  if (!(energy_0 > 1e-12 * yin->window_samples)) return 0;
  correlate(yin);
  normalise(yin, lag_max, energy_0);
  int count = 0;
  const float *d = yin->cmndf;
  for (int tau = lag_min; tau <= lag_max && count < max_troughs; ++tau) {
    if (!(d[tau] < d[tau - 1] && d[tau] <= d[tau + 1])) continue;
    /* Parabolic interpolation of the trough (step 5 of YIN). */
    double a = d[tau - 1], b = d[tau], c = d[tau + 1];
    double denominator = a - 2.0 * b + c;
    double shift = denominator > 0.0 ? 0.5 * (a - c) / denominator : 0.0;
    if (shift > 0.5) shift = 0.5;
    if (shift < -0.5) shift = -0.5;
    troughs[count].lag_samples = tau + shift;
    troughs[count].value = b - 0.25 * (a - c) * shift;
    if (troughs[count].value < 0.0) troughs[count].value = 0.0;
    ++count;
  }
  return count;
}
