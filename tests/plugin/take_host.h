/*
  The takes the project's plugin tests play through their host
  (take_host.c): synthetic notes of tests/lib/signal.c in one voice, a
  sawtooth of 8 partials with random phases, a 20 ms linear attack, a
  100 ms decay to -4 dB and a 40 ms exponential release, its
  fundamental at 0.2 (-14 dBFS) at level 0 dB.
*/
#ifndef PLUMB_TEST_TAKE_HOST_H
#define PLUMB_TEST_TAKE_HOST_H

#include "signal.h"

#include <stddef.h>
#include <stdint.h>

/* The voice, its partials' phases drawn from `phase_seed`. */
sig_voice host_take_voice(uint64_t phase_seed);

/* round(take_s * sample_rate_hz) samples of `notes` (sorted by start_s)
   in that voice, in a calloc'd buffer of *frames samples; NULL (and
   *frames set) when it cannot be made. */
float *host_take_render(const sig_note *notes, size_t count, double take_s, double sample_rate_hz,
                        uint64_t phase_seed, size_t *frames);

#endif
