/*
  A note's amplitude envelope: attack (10 % to 90 % of the peak), decay to
  the sustain plateau, the plateau's level, and the release as a decay-rate
  line fit reported as the time to fall 60 dB (in the manner of ISO 3382's
  T20 and T30); for a note with no plateau (plucked, struck), the free
  decay rate in dB/s. Definitions: docs/methods.md, section 7.

  The envelope is the RMS of the signal smoothed by two running means in
  cascade (a triangular window), each about one period of the note long:
  a tone's own ripple at twice its frequency then stays below about 1 %
  of the mean square, and the window's spread (its standard deviation,
  about 0.4 period) barely moves an attack's crossings. The steps come from
  the frames (PLUMB_ENVELOPE_STEPS each, from the oldest hop of each
  frame's window). Every pass is one running sum: the cost is linear in
  the note's length.
*/
#include "internal.h"

#include <math.h>

/* Common practice, no source. */
#define SMOOTHING_MIN_S 0.001 /* for events with no pitch */
#define SMOOTHING_MAX_STEPS 128
#define PLATEAU_SLOPE_MAX_DB_PER_S 3.0
#define PLATEAU_MIN_S 0.1
#define PLATEAU_BAND_DB 1.0 /* the release starts below the dwelling level by this */
#define DECAY_END_DB 1.0    /* the decay has reached the plateau within this */
/* ISO 3382-1: the line is fitted from 5 dB below the start level down to
   25 dB (T20) or 35 dB (T30) below it. T20 is taken when T30's range is
   not reached; a fall of less than 25 dB gives no release. */
#define FIT_FROM_DB 5.0
#define FIT_T20_DB 25.0
#define FIT_T30_DB 35.0
#define SOUNDING_DB 40.0 /* steps this far below the peak are silence */

/* The envelope as a sequence of steps: step j's mean square, and its
   centre time. */
typedef struct {
  const frame_record *frames;
  int steps;      /* frames * PLUMB_ENVELOPE_STEPS */
  int length;     /* steps of each running mean */
  double step_s;
  double first_s; /* centre of step 0 */
} envelope;

static double step_energy(const envelope *e, int j) {
  if (j < 0) j = 0; /* the ends are held */
  if (j >= e->steps) j = e->steps - 1;
  return e->frames[j / PLUMB_ENVELOPE_STEPS].energy[j % PLUMB_ENVELOPE_STEPS];
}

static double step_time_s(const envelope *e, double j) { return e->first_s + j * e->step_s; }

/* Two running means in cascade, walked one step at a time; the output at
   step j is centred on it (each mean delays by (length - 1) / 2). */
typedef struct {
  const envelope *e;
  int length;
  double first[SMOOTHING_MAX_STEPS], second[SMOOTHING_MAX_STEPS];
  double first_sum, second_sum;
  int slot, next; /* ring position; the next input step */
} smoother;

static void smoother_feed(smoother *s) {
  int n = s->length;
  double x = step_energy(s->e, s->next++);
  s->first_sum += x - s->first[s->slot];
  s->first[s->slot] = x;
  double mean = s->first_sum / n;
  s->second_sum += mean - s->second[s->slot];
  s->second[s->slot] = mean;
  s->slot = (s->slot + 1) % n;
}

static void smoother_start_length(smoother *s, const envelope *e, int length) {
  s->e = e;
  s->length = length;
  int n = length;
  double x = step_energy(e, 0);
  for (int i = 0; i < n; ++i) s->first[i] = s->second[i] = x;
  s->first_sum = s->second_sum = n * x;
  s->slot = 0;
  s->next = 0;
  for (int i = 0; i <= n - 1; ++i) smoother_feed(s); /* now centred on step 0 */
}

static void smoother_start(smoother *s, const envelope *e) {
  smoother_start_length(s, e, e->length);
}

static void smoother_next(smoother *s) { smoother_feed(s); }

static double smoother_db(const smoother *s) {
  double mean = fmax(s->second_sum, 0.0) / s->length;
  return mean > 0.0 ? 10.0 * log10(mean) : -INFINITY;
}

/* Least-squares line through (time, dB). */
typedef struct {
  double n, t, y, tt, ty;
} line_sums;

static void line_add(line_sums *l, double t, double y) {
  l->n += 1.0;
  l->t += t;
  l->y += y;
  l->tt += t * t;
  l->ty += t * y;
}

static double line_slope(const line_sums *l) {
  double d = l->n * l->tt - l->t * l->t;
  return l->n >= 3.0 && d > 0.0 ? (l->n * l->ty - l->t * l->y) / d : NAN;
}

/* Where the level crosses `level` between steps j - 1 (at db_before) and j. */
static double crossing_s(const envelope *e, int j, double db_before, double db, double level) {
  double span = db - db_before;
  double fraction = isfinite(span) && span != 0.0 ? (level - db_before) / span : 1.0;
  if (!(fraction >= 0.0)) fraction = 0.0;
  if (fraction > 1.0) fraction = 1.0;
  return step_time_s(e, j - 1 + fraction);
}

typedef struct {
  int peak;           /* step of the peak */
  double peak_db;
  double attack_ms;
  int sounding_end;   /* last step within SOUNDING_DB of the peak */
} attack_reading;

/* Pass 1: the peak. Pass 2: from the last step below 10 % of the peak
   before it, the 10 % and 90 % crossings (amplitude: -20 and -0.915 dB).
   What is left of a tone's ripple (about 0.05 dB) lifts the peak a little,
   which moves a slow attack's 90 % crossing, where the level hardly
   rises, late by 2-3 % (tests/test_envelope.c). */
static void measure_attack(const envelope *e, attack_reading *a) {
  smoother s;
  smoother_start(&s, e);
  a->peak = 0;
  a->peak_db = -INFINITY;
  for (int j = 0; j < e->steps; ++j, smoother_next(&s)) {
    double db = smoother_db(&s);
    if (db > a->peak_db) {
      a->peak_db = db;
      a->peak = j;
    }
    if (db >= a->peak_db - SOUNDING_DB) a->sounding_end = j;
  }
  a->attack_ms = NAN;
  double low = a->peak_db + 20.0 * log10(0.1), high = a->peak_db + 20.0 * log10(0.9);
  double previous = -INFINITY, t10 = NAN, t90 = NAN;
  smoother_start(&s, e);
  for (int j = 0; j <= a->peak; ++j, smoother_next(&s)) {
    double db = smoother_db(&s);
    if (db < low) t10 = t90 = NAN; /* the attack starts after the last quiet step */
    else if (isnan(t10) && j > 0 && previous < low) t10 = crossing_s(e, j, previous, db, low);
    if (!isnan(t10) && isnan(t90) && db >= high) t90 = crossing_s(e, j, previous, db, high);
    previous = db;
  }
  if (!isnan(t10) && !isnan(t90)) a->attack_ms = 1000.0 * (t90 - t10);
}

/* The level the note dwells at longest after the peak: the centre of
   the MODE_WINDOW_DB span that holds most steps, from a histogram of 0.1 dB
   bins down to SOUNDING_DB (no scratch memory). A held note's plateau
   gathers there; a release or a free decay runs through every level at its
   own rate and gathers nowhere (the slope test then finds no plateau). */
#define HISTOGRAM_DB 0.1
#define HISTOGRAM_BINS 400 /* SOUNDING_DB / HISTOGRAM_DB */
#define MODE_WINDOW_BINS 10 /* 1 dB */

static double dwelling_level_db(const envelope *e, const attack_reading *a) {
  int counts[HISTOGRAM_BINS] = {0};
  smoother s;
  smoother_start(&s, e);
  for (int j = 0; j <= a->sounding_end; ++j, smoother_next(&s)) {
    if (j < a->peak) continue;
    int bin = (int)floor((a->peak_db - smoother_db(&s)) / HISTOGRAM_DB);
    if (bin < 0) bin = 0;
    if (bin >= HISTOGRAM_BINS) bin = HISTOGRAM_BINS - 1;
    counts[bin]++;
  }
  int window = 0, best = -1, best_from = 0;
  for (int bin = 0; bin < HISTOGRAM_BINS; ++bin) {
    window += counts[bin];
    if (bin >= MODE_WINDOW_BINS) window -= counts[bin - MODE_WINDOW_BINS];
    int from = bin - MODE_WINDOW_BINS + 1;
    if (from >= 0 && window > best) {
      best = window;
      best_from = from;
    }
  }
  return -(best_from + 0.5 * MODE_WINDOW_BINS) * HISTOGRAM_DB;
}

/* After the peak: the release starts after the last step within
   PLATEAU_BAND_DB of the dwelling level; the plateau is the second half of
   what lies between the peak and there, if it is long and flat enough. */
static void measure_after_peak(const envelope *e, const attack_reading *a, plumb_note *note) {
  int from = a->peak, to = a->sounding_end;
  if (to - from < 3) return;
  double dwelling_db = dwelling_level_db(e, a);
  int release_start = from;
  smoother s;
  smoother_start(&s, e);
  for (int j = 0; j <= to; ++j, smoother_next(&s))
    if (j >= from && smoother_db(&s) - a->peak_db >= dwelling_db - PLATEAU_BAND_DB)
      release_start = j;
  int middle = from + (release_start - from) / 2;
  line_sums held = {0};
  double held_sum = 0.0;
  smoother_start(&s, e);
  for (int j = 0; j <= release_start; ++j, smoother_next(&s)) {
    if (j < middle) continue;
    double db = smoother_db(&s) - a->peak_db;
    line_add(&held, step_time_s(e, j), db);
    held_sum += db;
  }
  double held_slope = line_slope(&held);
  bool plateau = (release_start - middle) * e->step_s >= PLATEAU_MIN_S &&
                 fabs(held_slope) <= PLATEAU_SLOPE_MAX_DB_PER_S;
  double top_db = plateau ? held_sum / held.n : 0.0;
  if (!plateau) release_start = from;
  /* Where the decay reaches the plateau, and the decay-rate lines from
     FIT_FROM_DB below the start level (the plateau, or the peak). */
  int decay_end = -1;
  line_sums t20 = {0}, t30 = {0};
  double deepest = 0.0;
  smoother_start(&s, e);
  for (int j = 0; j <= to; ++j, smoother_next(&s)) {
    if (j < from) continue;
    double db = smoother_db(&s) - a->peak_db;
    if (plateau && decay_end < 0 && db <= top_db + DECAY_END_DB) decay_end = j;
    if (j < release_start) continue;
    double below = top_db - db;
    if (below < FIT_FROM_DB) continue;
    deepest = fmax(deepest, below);
    if (below <= FIT_T20_DB) line_add(&t20, step_time_s(e, j), -below);
    if (below <= FIT_T30_DB) line_add(&t30, step_time_s(e, j), -below);
  }
  double slope = deepest >= FIT_T30_DB   ? line_slope(&t30)
                 : deepest >= FIT_T20_DB ? line_slope(&t20)
                                         : NAN;
  if (plateau) {
    note->sustain_db = top_db;
    if (decay_end >= 0) note->decay_ms = 1000.0 * (decay_end - from) * e->step_s;
    if (slope < 0.0) note->release_ms = 1000.0 * 60.0 / -slope;
  } else if (slope < 0.0) {
    note->decay_db_per_s = slope;
  }
}

void note_envelope(const measure_context *context, const frame_record *frames, int count,
                   double f0_hz, plumb_note *note) {
  if (count < 1) return;
  envelope e;
  e.frames = frames;
  e.steps = count * PLUMB_ENVELOPE_STEPS;
  e.step_s = context->hop_s / PLUMB_ENVELOPE_STEPS;
  /* Steps cover the oldest hop of each frame's window. */
  e.first_s = ((double)frames[0].centre_sample - 0.5 * context->fft_size) /
                  context->sample_rate_hz + 0.5 * e.step_s;
  /* Each mean one period long (whole periods of the ripple at twice the
     frequency), at least two steps. */
  double period_s = f0_hz > 0.0 ? 1.0 / f0_hz : SMOOTHING_MIN_S;
  int length = (int)lround(period_s / e.step_s);
  if (length < 2) length = 2;
  if (length > SMOOTHING_MAX_STEPS) length = SMOOTHING_MAX_STEPS;
  e.length = length;
  attack_reading a;
  measure_attack(&e, &a);
  if (!isfinite(a.peak_db)) return;
  note->attack_ms = a.attack_ms;
  measure_after_peak(&e, &a, note);
}
