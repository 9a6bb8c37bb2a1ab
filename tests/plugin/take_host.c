/*
  The takes the project's plugin tests play: see take_host.h.
*/
#include "take_host.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

sig_voice host_take_voice(uint64_t phase_seed) {
  sig_voice voice;
  memset(&voice, 0, sizeof voice);
  voice.timbre = (sig_timbre){8, SIG_AMPS_SAWTOOTH, NULL, 0.0, true, phase_seed};
  voice.envelope = (sig_envelope){SIG_RAMP_LINEAR, 0.02, 0.10, -4.0, SIG_RAMP_EXP, 0.04};
  voice.reference_hz = 440.0;
  voice.amplitude = 0.2;
  return voice;
}

float *host_take_render(const sig_note *notes, size_t count, double take_s, double sample_rate_hz,
                        uint64_t phase_seed, size_t *frames) {
  *frames = (size_t)llround(take_s * sample_rate_hz);
  float *samples = calloc(*frames, sizeof *samples);
  sig_voice voice = host_take_voice(phase_seed);
  if (!samples || sig_render_notes(&voice, notes, count, sample_rate_hz, samples, *frames) != 0) {
    free(samples);
    return NULL;
  }
  return samples;
}
