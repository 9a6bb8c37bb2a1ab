/*
  plumb LV2: the control ports, in and out. All calls are [RT]: they
  only read and write port memory and the caller's structs.
*/
#ifndef PLUMB_LV2_CONTROLS_H
#define PLUMB_LV2_CONTROLS_H

#include "plumb.h"
#include "ports.h"
#include "take_settings.h"

#include <stdbool.h>

/* The port defaults, as ttl/plumb.ttl declares them. */
void controls_default(take_settings *settings, bool *logging);

/* Read the input control ports into settings and logging. A port that
   is not connected, or holds NaN, keeps the previous value; values are
   clamped to the declared ranges and enumerations rounded, so a host
   that ignores the ranges cannot push the core out of bounds. */
void controls_read(float *const ports[PORT_COUNT], take_settings *settings,
                   bool *logging);

bool controls_equal(const take_settings *a, const take_settings *b);

/* The core's settings for a take (resolves the tuning). */
plumb_status controls_to_core(const take_settings *settings,
                              double sample_rate_hz, plumb_settings *core);

/* What the output ports show. */
typedef struct {
  plumb_live live;
  plumb_counts counts;
  bool log_ok;
} control_readings;

/* Write every connected output port; values that do not apply show as
   documented in docs/ports.md (never NaN). Latency is always 0. */
void controls_write(float *const ports[PORT_COUNT],
                    const control_readings *readings);

#endif /* PLUMB_LV2_CONTROLS_H */
