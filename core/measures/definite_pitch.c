/*
  Definite pitch or not: the share of the strong spectral peaks that the
  note's own partial series n f0 sqrt(1 + B n^2) does not account for,
  weighted by power, over the frames within 10 dB of the note's peak and
  over its attack (a bar's or a membrane's upper modes die first).
*/
#include "measures/definite_pitch.h"

#include <math.h>

#define SERIES_TOLERANCE_CENTS 30.0
#define UNVOICED_TOLERANCE_CENTS 60.0
#define OWN_PITCH_RANGE_CENTS 150.0
#define SUBFUNDAMENTAL_RATIO 0.9
#define STRONG_FRAME_RANGE_DB 10.0
#define ATTACK_FRAMES_AFTER_PEAK 8
/* Synthetic harmonic tones read below 0.02, bars 0.16 and up, membranes
   0.3 and up (the project's tests); the limits sit between. */
#define MAX_STRAY_SHARE 0.1
#define MAX_ATTACK_STRAY_SHARE 0.12

static bool near_series(double f_hz, double f0_hz, double b, double tolerance_cents,
                        double slack_hz) {
  double tolerance_hz = f_hz * (exp2(tolerance_cents / 1200.0) - 1.0) + slack_hz;
  double ratio = f_hz / f0_hz;
  int guess = (int)floor(ratio / sqrt(1.0 + b * ratio * ratio));
  for (int n = guess - 1; n <= guess + 2; ++n) {
    if (n < 1) continue;
    if (fabs(f_hz - n * f0_hz * sqrt(1.0 + b * n * n)) <= tolerance_hz) return true;
  }
  return false;
}

/* On the stiff-string series of the fitted B, or on the harmonic one (a
   small B fitted to a bowed or blown tone must not make its upper
   harmonics stray). */
static bool on_series(double f_hz, double f0_hz, double b, double tolerance_cents,
                      double slack_hz) {
  return near_series(f_hz, f0_hz, b, tolerance_cents, slack_hz) ||
         near_series(f_hz, f0_hz, 0.0, tolerance_cents, slack_hz);
}

/* Amplitude-weighted share of a frame's peaks within 20 dB of its
   strongest (the list is strongest first) that lie off the series. */
#define STRAY_PEAK_RANGE 0.01

static void stray_amplitude(const frame_record *f, double f0_hz, double b,
                            double tolerance_cents, double slack_hz, double *stray,
                            double *total) {
  *stray = *total = 0.0;
  for (int i = 0; i < f->peak_count; ++i) {
    if (f->peaks[i].power < STRAY_PEAK_RANGE * f->peaks[0].power) break;
    /* Below the fundamental lie body and room resonances and the ringing
       of earlier notes; a strike's modes lie above its lowest one. */
    if (f->peaks[i].frequency_hz < SUBFUNDAMENTAL_RATIO * f0_hz) continue;
    double amplitude = sqrt((double)f->peaks[i].power);
    *total += amplitude;
    if (!on_series(f->peaks[i].frequency_hz, f0_hz, b, tolerance_cents, slack_hz))
      *stray += amplitude;
  }
}

bool plumb_definite_pitch_fits_no_series(const measure_context *context,
                                   const frame_record *frames, int count, double f0_hz,
                                   const partial_model *model) {
  double slack_hz = 0.6 * context->sample_rate_hz / context->fft_size;
  double b = model->stiff ? model->b : 0.0;
  int loudest = 0;
  for (int i = 1; i < count; ++i)
    if (frames[i].level_dbfs > frames[loudest].level_dbfs) loudest = i;
  double floor_dbfs = frames[loudest].level_dbfs - STRONG_FRAME_RANGE_DB;
  double strong_stray = 0.0, strong_total = 0.0, attack_stray = 0.0, attack_total = 0.0;
  for (int i = 0; i < count; ++i) {
    double stray, total;
    /* A voiced frame is tested against its own pitch, so vibrato and
       drift do not count as stray; an unvoiced one (an attack, a scoop)
       or one whose pitch slipped far from the note's against the note's,
       with more room. */
    double own_f0_hz = frames[i].voiced ? plumb_partial_model_f0_hz(model, &frames[i]) : f0_hz;
    bool own = frames[i].voiced &&
               fabs(1200.0 * log2(own_f0_hz / f0_hz)) <= OWN_PITCH_RANGE_CENTS;
    stray_amplitude(&frames[i], own ? own_f0_hz : f0_hz, b,
                    own ? SERIES_TOLERANCE_CENTS : UNVOICED_TOLERANCE_CENTS, slack_hz,
                    &stray, &total);
    if (!(total > 0.0)) continue;
    double weight = pow(10.0, frames[i].level_dbfs / 10.0) / total;
    if (frames[i].level_dbfs >= floor_dbfs) {
      strong_stray += weight * stray;
      strong_total += weight * total;
    }
    if (i <= loudest + ATTACK_FRAMES_AFTER_PEAK) {
      attack_stray += weight * stray;
      attack_total += weight * total;
    }
  }
  return (strong_total > 0.0 && strong_stray / strong_total > MAX_STRAY_SHARE) ||
         (attack_total > 0.0 && attack_stray / attack_total > MAX_ATTACK_STRAY_SHARE);
}
