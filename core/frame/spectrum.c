/*
  The Hann-windowed spectrum of each frame, its level and its band levels.
  The spectra feed both the harmonic refinement (phase vocoder) and the
  onset detection function (band-wise spectral flux).
*/
#include "frame/spectrum.h"

#include "frame/bins.h"
#include "frame/fft.h"

#include <math.h>
#include <string.h>

/* Bands a third of an octave wide from 50 Hz: narrow enough to see a new
   note's partials arrive, wide enough that vibrato moves energy within a
   band rather than across bands. Common practice, no source. */
#define BAND_LOWEST_HZ 50.0
#define BAND_HIGHEST_HZ 10000.0
#define BAND_RATIO 1.2599210498948732 /* 2^(1/3) */
/* Band levels are floored so that changes in near-silence do not count. */
#define BAND_FLOOR_POWER 1e-9

static void layout_bands(spectrum_analyser *spectrum) {
  const double bin_hz = spectrum->sample_rate_hz / spectrum->fft_size;
  const double top_hz = fmin(BAND_HIGHEST_HZ, 0.45 * spectrum->sample_rate_hz);
  int count = 0;
  int first = (int)ceil(BAND_LOWEST_HZ / bin_hz);
  double low_hz = BAND_LOWEST_HZ;
  while (count < PLUMB_BANDS_MAX && low_hz < top_hz) {
    double high_hz = fmin(low_hz * BAND_RATIO, top_hz);
    int next = (int)ceil(high_hz / bin_hz);
    /* A band narrower than one bin merges into the next one. */
    if (next > first) {
      spectrum->band_first_bin[count++] = first;
      first = next;
    }
    low_hz = high_hz;
  }
  spectrum->band_first_bin[count] = first;
  spectrum->band_count = count;
}

plumb_status plumb_spectrum_init(spectrum_analyser *spectrum, int fft_size,
                           double sample_rate_hz) {
  memset(spectrum, 0, sizeof *spectrum);
  spectrum->fft_size = fft_size;
  spectrum->sample_rate_hz = sample_rate_hz;
  spectrum->window = fftwf_alloc_real((size_t)fft_size);
  spectrum->windowed = fftwf_alloc_real((size_t)fft_size);
  fftwf_complex *scratch = fftwf_alloc_complex((size_t)fft_size / 2 + 1);
  if (!spectrum->window || !spectrum->windowed || !scratch) {
    fftwf_free(scratch);
    plumb_spectrum_destroy(spectrum);
    return PLUMB_ERR_MEMORY;
  }
  double power = 0.0;
  for (int i = 0; i < fft_size; ++i) {
    /* Periodic Hann: its hop-N/8 copies sum to a constant. */
    double w = 0.5 - 0.5 * cos(2.0 * M_PI * i / fft_size);
    spectrum->window[i] = (float)w;
    power += w * w;
  }
  spectrum->window_power = power;
  spectrum->forward = plumb_fft_plan_r2c(fft_size, spectrum->windowed, scratch);
  fftwf_free(scratch);
  if (!spectrum->forward) {
    plumb_spectrum_destroy(spectrum);
    return PLUMB_ERR_FFT;
  }
  layout_bands(spectrum);
  return PLUMB_OK;
}

void plumb_spectrum_destroy(spectrum_analyser *spectrum) {
  plumb_fft_destroy(spectrum->forward);
  fftwf_free(spectrum->window);
  fftwf_free(spectrum->windowed);
  memset(spectrum, 0, sizeof *spectrum);
}

void plumb_spectrum_transform(spectrum_analyser *spectrum, const float *frame,
                        fftwf_complex *out) {
  /* The windowed frame's energy is summed here, in four interleaved sums
     so that the additions pipeline (the order is fixed: same result on
     every run). */
  double energy[4] = {0.0, 0.0, 0.0, 0.0};
  const int n = spectrum->fft_size, whole = n - n % 4;
  for (int i = 0; i < whole; i += 4)
    for (int j = 0; j < 4; ++j) {
      float v = frame[i + j] * spectrum->window[i + j];
      spectrum->windowed[i + j] = v;
      energy[j] += (double)v * v;
    }
  for (int i = whole; i < n; ++i) {
    float v = frame[i] * spectrum->window[i];
    spectrum->windowed[i] = v;
    energy[0] += (double)v * v;
  }
  spectrum->windowed_energy = (energy[0] + energy[1]) + (energy[2] + energy[3]);
  fftwf_execute_dft_r2c(spectrum->forward, spectrum->windowed, out);
}

void plumb_spectrum_levels(const spectrum_analyser *spectrum,
                     const fftwf_complex *bins, float *band_db,
                     double *frame_dbfs) {
  const int n = spectrum->fft_size;
  /* The mean square of the windowed frame divided by the window's,
     relative to a full-scale sine (0 dBFS). */
  double mean_square = spectrum->windowed_energy / spectrum->window_power;
  *frame_dbfs = 10.0 * log10(mean_square / 0.5 + 1e-20);
  /* Parseval: a bin's share of the frame's mean square. */
  const double scale = 2.0 / ((double)n * spectrum->window_power);
  for (int b = 0; b < spectrum->band_count; ++b) {
    double power = 0.0;
    for (int k = spectrum->band_first_bin[b]; k < spectrum->band_first_bin[b + 1]; ++k)
      power += bin_power(bins, k);
    band_db[b] = (float)(10.0 * log10(power * scale + BAND_FLOOR_POWER));
  }
}

/* A sudden start at t0 puts into a frame centred at c the energy of the
   squared window that lies after t0: with u = (t0 - c) / frame, the
   fraction F(u) = (integral of cos^4(pi v) from u to 1/2) / (3/8), in
   closed form. Solve F(u) = 10^(level_db / 10) by bisection; the lead is
   u * frame. */
static double hann_squared_tail(double u) {
  double v = M_PI * u;
  double antiderivative_half = 3.0 * M_PI / 16.0;
  double antiderivative = 3.0 * v / 8.0 + sin(2.0 * v) / 4.0 + sin(4.0 * v) / 32.0;
  return (antiderivative_half - antiderivative) / M_PI / 0.375;
}

double plumb_window_step_lead_s(double level_db, double frame_s) {
  double target = pow(10.0, level_db / 10.0);
  double low = 0.0, high = 0.5; /* F(0) = 1/2, F(1/2) = 0 */
  for (int i = 0; i < 60; ++i) {
    double middle = 0.5 * (low + high);
    if (hann_squared_tail(middle) > target) low = middle;
    else high = middle;
  }
  return 0.5 * (low + high) * frame_s;
}
