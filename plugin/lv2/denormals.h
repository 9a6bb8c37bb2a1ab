/*
  plumb LV2: flush denormals to zero for the length of one run().

  Denormal floats (tiny values near zero, e.g. a decaying tail) make x86
  arithmetic up to a hundred times slower. Setting FTZ (flush results to
  zero) and DAZ (treat denormal inputs as zero) in MXCSR avoids that. The
  host's own mode is restored before run() returns, because the host and
  other plugins on this thread may rely on it. [RT]: two register moves.
*/
#ifndef PLUMB_LV2_DENORMALS_H
#define PLUMB_LV2_DENORMALS_H

#if defined(__SSE__)
#include <pmmintrin.h>
#include <xmmintrin.h>
#endif

typedef struct {
  unsigned int saved_mxcsr;
} denormal_guard;

static inline denormal_guard denormals_flush(void) {
  denormal_guard guard = {0};
#if defined(__SSE__)
  guard.saved_mxcsr = _mm_getcsr();
  _mm_setcsr(guard.saved_mxcsr | _MM_FLUSH_ZERO_ON | _MM_DENORMALS_ZERO_ON);
#endif
  return guard;
}

static inline void denormals_restore(denormal_guard guard) {
#if defined(__SSE__)
  _mm_setcsr(guard.saved_mxcsr);
#else
  (void)guard;
#endif
}

#endif /* PLUMB_LV2_DENORMALS_H */
