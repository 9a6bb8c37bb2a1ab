/*
  A note's amplitude envelope: attack (10 % to 90 % of the peak), decay to
  the sustain plateau, the plateau's level, and the release as a decay-rate
  line fit reported as the time to fall 60 dB (in the manner of ISO 3382's
  T20 and T30); for a note with no plateau (plucked, struck), the free
  decay rate in dB/s. Definitions: docs/methods.md, section 9.

  The envelope is the RMS of the signal smoothed by two running means in
  cascade (a triangular window), each about one period of the note long:
  a tone's own ripple at twice its frequency then stays below about 1 %
  of the mean square, and the window's spread (its standard deviation,
  about 0.4 period) barely moves an attack's crossings. The steps come from
  the frames (PLUMB_ENVELOPE_STEPS each, from the oldest hop of each
  frame's window). The smoothed levels are computed once, into the
  caller's buffer; every reading is then a pass over them: the cost is
  linear in the note's length.
*/
#include "measures/envelope.h"

#include "util/stats.h"

#include <math.h>
#include <stdlib.h>

/* Common practice, no source; set on the project's synthetic envelopes
   and FluidR3's organ, guitar and piano (tests/core/test_envelope.c,
   tests/sampled/test_sampled_timbre.c). */
#define SMOOTHING_MIN_S 0.001 /* for events with no pitch */
#define SMOOTHING_MAX_STEPS 128
#define PLATEAU_SLOPE_MAX_DB_PER_S 5.0 /* a held organ's level wanders +-1.5 dB */
#define PLATEAU_MIN_S 0.1
#define PLATEAU_MIN_DB (-20.0) /* a pluck's faint, slow tail is no sustain */
#define PLATEAU_HELD_DB 1.0    /* the plateau is tested up to its last step this close */
#define PLATEAU_BAND_DB 3.0    /* the release starts below the dwelling level by this */
#define DECAY_END_DB 1.0       /* the decay has reached the plateau within this */
#define TOP_DB 0.5             /* the attack has reached the peak within this */
/* A note that starts out of sound (a legato change, a re-articulation)
   within this of its own peak: its envelope starts at its onset, not half
   a window before, where the sound before it still rings. */
#define FROM_SOUND_DB 20.0
/* A peak less than this above the plateau is the level wandering, not a
   decay stage: the attack then rises to the plateau, not to the peak. */
#define ATTACK_TO_PLATEAU_DB 4.0
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
  int skipped;    /* steps of the frames left out at the start */
  int steps;      /* the steps used */
  int length;     /* steps of each running mean */
  double step_s;
  double first_s; /* centre of step 0 */
  double head_energy, tail_energy; /* what the ends are held at */
  float *db;      /* the smoothed level of every step, dBFS */
} envelope;

static double raw_energy(const envelope *e, int j) {
  j += e->skipped;
  return e->frames[j / PLUMB_ENVELOPE_STEPS].energy[j % PLUMB_ENVELOPE_STEPS];
}

/* Beyond the ends the envelope is held at its first and last values that
   the smoothing fully covers (the triangle-weighted mean of the first or
   last 2 length - 1 steps): one step of a peaky waveform may sit 2 dB off
   its mean, and holding it would add a false rise or fall at the ends. */
static double step_energy(const envelope *e, int j) {
  if (j < 0) return e->head_energy;
  if (j >= e->steps) return e->tail_energy;
  return raw_energy(e, j);
}

static void hold_ends(envelope *e) {
  int n = e->length, span = 2 * n - 1;
  if (span > e->steps) {
    n = (e->steps + 1) / 2;
    span = 2 * n - 1;
  }
  double head = 0.0, tail = 0.0, weights = 0.0;
  for (int i = 0; i < span; ++i) {
    double w = n - abs(i - (n - 1));
    head += w * raw_energy(e, i);
    tail += w * raw_energy(e, e->steps - 1 - i);
    weights += w;
  }
  e->head_energy = weights > 0.0 ? head / weights : 0.0;
  e->tail_energy = weights > 0.0 ? tail / weights : 0.0;
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

static void smoother_start(smoother *s, const envelope *e) {
  s->e = e;
  s->length = e->length;
  int n = e->length;
  double x = step_energy(e, -1); /* what the start is held at */
  for (int i = 0; i < n; ++i) s->first[i] = s->second[i] = x;
  s->first_sum = s->second_sum = n * x;
  s->slot = 0;
  s->next = 0;
  for (int i = 0; i <= n - 1; ++i) smoother_feed(s); /* now centred on step 0 */
}

static void smoother_next(smoother *s) { smoother_feed(s); }

/* In single precision: the levels are kept as floats, and log10f costs
   about half of log10 on every step of a note. */
static float smoother_db(const smoother *s) {
  float mean = (float)(fmax(s->second_sum, 0.0) / s->length);
  return mean > 0.0f ? 10.0f * log10f(mean) : -INFINITY;
}

/* The smoothed level of every step, once: the passes below read it. */
static void smooth_levels(envelope *e) {
  smoother s;
  smoother_start(&s, e);
  for (int j = 0; j < e->steps; ++j, smoother_next(&s)) e->db[j] = smoother_db(&s);
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

/* Levels below the peak in 0.1 dB bins down to SOUNDING_DB: medians and
   the most visited level without scratch memory. */
#define HISTOGRAM_DB 0.1
#define HISTOGRAM_BINS 400  /* SOUNDING_DB / HISTOGRAM_DB */
#define MODE_WINDOW_BINS 10 /* 1 dB */

typedef struct {
  int counts[HISTOGRAM_BINS];
  int total;
} level_histogram;

static void histogram_add(level_histogram *h, double below_peak_db) {
  int bin = HISTOGRAM_BINS - 1; /* and a silent step (-inf dB) */
  if (below_peak_db < SOUNDING_DB) bin = (int)floor(below_peak_db / HISTOGRAM_DB);
  if (bin < 0) bin = 0;
  h->counts[bin]++;
  h->total++;
}

/* In dB relative to the peak (<= 0). */
static double histogram_median_db(const level_histogram *h) {
  int seen = 0;
  for (int bin = 0; bin < HISTOGRAM_BINS; ++bin) {
    seen += h->counts[bin];
    if (2 * seen >= h->total) return -(bin + 0.5) * HISTOGRAM_DB;
  }
  return -SOUNDING_DB;
}

/* The centre of the 1 dB span that holds most steps: a held note's
   plateau gathers there, while a release or a free decay runs through
   every level at its own rate and gathers nowhere. */
static double histogram_dwelling_db(const level_histogram *h) {
  int window = 0, best = -1, best_from = 0;
  for (int bin = 0; bin < HISTOGRAM_BINS; ++bin) {
    window += h->counts[bin];
    if (bin >= MODE_WINDOW_BINS) window -= h->counts[bin - MODE_WINDOW_BINS];
    int from = bin - MODE_WINDOW_BINS + 1;
    if (from >= 0 && window > best) {
      best = window;
      best_from = from;
    }
  }
  return -(best_from + 0.5 * MODE_WINDOW_BINS) * HISTOGRAM_DB;
}

/* Where the level crosses `level` between steps j - 1 (at db_before) and j. */
static double crossing_s(const envelope *e, int j, double db_before, double db, double level) {
  double span = db - db_before;
  double fraction = isfinite(span) && span != 0.0 ? (level - db_before) / span : 1.0;
  if (!(fraction >= 0.0)) fraction = 0.0;
  if (fraction > 1.0) fraction = 1.0;
  return step_time_s(e, j - 1 + fraction);
}

/* What the passes find, in dB relative to the peak. */
typedef struct {
  int peak;          /* step of the peak */
  int top;           /* the first step within TOP_DB of it */
  double peak_db;    /* absolute */
  int sounding_end;  /* last step within SOUNDING_DB of the peak */
  bool plateau;
  double plateau_db; /* the plateau's level */
  int release_start; /* the plateau's last step (the peak without one) */
} envelope_shape;

/* The peak, and the last step that still sounds. */
static void find_peak(const envelope *e, envelope_shape *shape) {
  shape->peak = 0;
  shape->peak_db = -INFINITY;
  shape->sounding_end = 0;
  for (int j = 0; j < e->steps; ++j) {
    double db = e->db[j];
    if (db > shape->peak_db) {
      shape->peak_db = db;
      shape->peak = j;
    }
    if (db >= shape->peak_db - SOUNDING_DB) shape->sounding_end = j;
  }
  /* On a flat plateau the maximum may fall anywhere, even near the end;
     what follows the attack starts where the level first comes near it. */
  shape->top = shape->peak;
  for (int j = 0; j < shape->peak; ++j)
    if (e->db[j] >= shape->peak_db - TOP_DB) {
      shape->top = j;
      break;
    }
}

/* After the peak: the dwelling level, the last steps within
   PLATEAU_HELD_DB and PLATEAU_BAND_DB of it (the latter is where the
   release starts), and whether the second half of what lies between the
   peak and the former is a plateau:
   long enough, high enough, and level (the medians of its two halves,
   which a release's first decibels at the end cannot move). */
static void find_plateau(const envelope *e, envelope_shape *shape) {
  int from = shape->top, to = shape->sounding_end;
  shape->plateau = false;
  shape->plateau_db = 0.0;
  shape->release_start = from;
  if (to - from < 3) return;
  static const level_histogram empty;
  level_histogram all = empty;
  for (int j = 0; j <= to; ++j)
    if (j >= from) histogram_add(&all, shape->peak_db - e->db[j]);
  double dwelling_db = histogram_dwelling_db(&all);
  int held_end = from, release_start = from;
  for (int j = 0; j <= to; ++j) {
    if (j < from) continue;
    double db = e->db[j] - shape->peak_db;
    if (db >= dwelling_db - PLATEAU_HELD_DB) held_end = j;
    if (db >= dwelling_db - PLATEAU_BAND_DB) release_start = j;
  }
  int middle = from + (held_end - from) / 2, quarter = middle + (held_end - middle) / 2;
  level_histogram early = empty, late = empty, both = empty;
  for (int j = 0; j <= held_end; ++j) {
    if (j < middle) continue;
    double below = shape->peak_db - e->db[j];
    histogram_add(j < quarter ? &early : &late, below);
    histogram_add(&both, below);
  }
  double held_s = (held_end - middle) * e->step_s;
  if (held_s < PLATEAU_MIN_S || early.total == 0 || late.total == 0) return;
  double slope = (histogram_median_db(&late) - histogram_median_db(&early)) / (0.5 * held_s);
  double level_db = histogram_median_db(&both);
  if (fabs(slope) > PLATEAU_SLOPE_MAX_DB_PER_S || level_db < PLATEAU_MIN_DB) return;
  shape->plateau = true;
  shape->plateau_db = level_db;
  shape->release_start = release_start;
}

/* The 10 % and 90 % crossings (amplitude: -20 and -0.915 dB) of the top
   level, from the last step below 10 % before the peak. */
static double attack_ms(const envelope *e, const envelope_shape *shape) {
  double top_db = shape->peak_db;
  if (shape->plateau && shape->plateau_db > -ATTACK_TO_PLATEAU_DB) top_db += shape->plateau_db;
  double low = top_db + 20.0 * log10(0.1), high = top_db + 20.0 * log10(0.9);
  double previous = -INFINITY, t10 = NAN, t90 = NAN;
  for (int j = 0; j <= shape->top; ++j) {
    double db = e->db[j];
    if (db < low) t10 = t90 = NAN; /* the attack starts after the last quiet step */
    else if (isnan(t10) && j > 0 && previous < low) t10 = crossing_s(e, j, previous, db, low);
    if (!isnan(t10) && isnan(t90) && db >= high) t90 = crossing_s(e, j, previous, db, high);
    previous = db;
  }
  return !isnan(t10) && !isnan(t90) ? 1000.0 * (t90 - t10) : NAN;
}

/* The decay to the plateau, and the decay-rate line from FIT_FROM_DB
   below the start level (the plateau's, or the peak's) down to T30's or
   T20's depth. */
static void measure_decays(const envelope *e, const envelope_shape *shape, plumb_note *note) {
  double top_db = shape->plateau ? shape->plateau_db : 0.0;
  int decay_end = -1;
  line_sums t20 = {0}, t30 = {0};
  double deepest = 0.0;
  for (int j = 0; j <= shape->sounding_end; ++j) {
    if (j < shape->top) continue;
    double db = e->db[j] - shape->peak_db;
    if (shape->plateau && decay_end < 0 && db <= top_db + DECAY_END_DB) decay_end = j;
    if (j < shape->release_start) continue;
    double below = top_db - db;
    if (below < FIT_FROM_DB) continue;
    deepest = fmax(deepest, below);
    if (below <= FIT_T20_DB) line_add(&t20, step_time_s(e, j), -below);
    if (below <= FIT_T30_DB) line_add(&t30, step_time_s(e, j), -below);
  }
  double slope = deepest >= FIT_T30_DB   ? line_slope(&t30)
                 : deepest >= FIT_T20_DB ? line_slope(&t20)
                                         : NAN;
  if (shape->plateau) {
    note->sustain_db = shape->plateau_db;
    if (decay_end >= 0) note->decay_ms = 1000.0 * (decay_end - shape->top) * e->step_s;
    if (slope < 0.0) note->release_ms = 1000.0 * 60.0 / -slope;
  } else if (slope < 0.0) {
    note->decay_db_per_s = slope;
  }
}

void plumb_note_envelope(const measure_context *context, const frame_record *frames, int count,
                   double f0_hz, float *levels_db, plumb_note *note) {
  if (count < 1) return;
  envelope e;
  e.frames = frames;
  e.db = levels_db;
  e.step_s = context->hop_s / PLUMB_ENVELOPE_STEPS;
  /* Steps cover the oldest hop of each frame's window. */
  double steps_start_s = ((double)frames[0].centre_sample - 0.5 * context->fft_size) /
                         context->sample_rate_hz;
  e.skipped = 0;
  double loudest_dbfs = -INFINITY;
  for (int i = 0; i < count; ++i) loudest_dbfs = fmax(loudest_dbfs, frames[i].level_dbfs);
  bool from_sound = frames[0].legato_start ||
                    frames[0].level_before_dbfs >= loudest_dbfs - FROM_SOUND_DB;
  if (from_sound && note->start_s > steps_start_s) {
    e.skipped = (int)floor((note->start_s - steps_start_s) / e.step_s);
    if (e.skipped > count * PLUMB_ENVELOPE_STEPS - 1) e.skipped = count * PLUMB_ENVELOPE_STEPS - 1;
  }
  e.steps = count * PLUMB_ENVELOPE_STEPS - e.skipped;
  e.first_s = steps_start_s + (e.skipped + 0.5) * e.step_s;
  /* Each mean one period long (whole periods of the ripple at twice the
     frequency), at least two steps. */
  double period_s = f0_hz > 0.0 ? 1.0 / f0_hz : SMOOTHING_MIN_S;
  int length = (int)lround(period_s / e.step_s);
  if (length < 2) length = 2;
  if (length > SMOOTHING_MAX_STEPS) length = SMOOTHING_MAX_STEPS;
  e.length = length;
  hold_ends(&e);
  smooth_levels(&e);
  envelope_shape shape;
  find_peak(&e, &shape);
  if (!isfinite(shape.peak_db)) return;
  find_plateau(&e, &shape);
  note->attack_ms = attack_ms(&e, &shape);
  measure_decays(&e, &shape, note);
}
