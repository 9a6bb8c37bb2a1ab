/*
  plumb ensemble: every track of a session measured against the others.

  The public interface of the ensemble step of the analysis library. It
  knows nothing of LV2, files or threads: it takes the notes of several
  tracks on one timeline (as plumb_pop_note() gives them, or as read back
  from the logs) and returns the pairs of notes that sound together, each
  track's offset and drift against the others, and the whole ensemble's
  drift. All calls are [non-RT]: they allocate; none touches a plumb
  instance. See docs/ensemble.md for the method and its sources.
*/
#ifndef PLUMB_ENSEMBLE_H
#define PLUMB_ENSEMBLE_H

#include "plumb.h"

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

/* ------------------------------------------------------------ the input */

/* One note of one track, on the session's timeline. */
typedef struct {
  uint32_t index;         /* the note's index in its own track's log */
  double start_s;         /* on the timeline */
  double end_s;           /* on the timeline; > start_s */
  double f0_hz;           /* centre fundamental; NaN: unpitched */
  double inharmonicity_b; /* B of f_k = k f0 sqrt(1 + B k^2); NaN reads as 0 */
  bool vibrato;           /* the note has vibrato: no beat rate */
  double bar;             /* the note's bar, from 1; NaN when not known */
  double beat;            /* its beat in that bar, from 1.0; NaN */
} plumb_ensemble_note;

/* Fills a note from a core record: the timeline start is timeline_s
   (start_s when that is NaN), the note keeps its own length. */
void plumb_ensemble_note_from(const plumb_note *note, plumb_ensemble_note *out);

typedef struct {
  const char *label; /* the track's name (a log's STEM); not copied */
  const plumb_ensemble_note *notes;
  size_t count; /* any order: they are sorted inside */
} plumb_ensemble_track;

typedef enum {
  PLUMB_INTERVALS_EQUAL = 0, /* pairs judged against equal temperament */
  PLUMB_INTERVALS_JUST       /* against the nearest 5-limit just ratio */
} plumb_interval_target;

typedef struct {
  plumb_interval_target target;
  double tolerance_cents; /* wide/narrow beyond +-this; > 0 */
  double min_overlap_s;   /* shortest time two notes sound together; > 0 */
} plumb_ensemble_settings;

/* Equal temperament, 10 cents, 80 ms (the per-note defaults). */
void plumb_ensemble_settings_default(plumb_ensemble_settings *settings);

/* ----------------------------------------------------------- the result */

typedef enum {
  PLUMB_PAIR_NO_VERDICT = 0, /* a note is unpitched: no definite interval */
  PLUMB_PAIR_IN_TUNE,
  PLUMB_PAIR_WIDE,  /* the interval is larger than its target */
  PLUMB_PAIR_NARROW /* smaller */
} plumb_pair_verdict;

/* "", "in-tune", "wide", "narrow". */
const char *plumb_pair_verdict_name(plumb_pair_verdict verdict);

typedef struct {
  double start_s, end_s; /* where the two notes overlap */
  size_t track_low;      /* index into the tracks given */
  size_t note_low;       /* index into that track's notes as given */
  size_t track_high;     /* the upper note (either, for a unison) */
  size_t note_high;
  double interval_cents; /* 1200 log2(f0_high / f0_low); NaN if unpitched */
  int semitones;         /* nearest whole number; -1 if unpitched */
  double et_dev_cents;   /* interval_cents - 100 semitones */
  int just_p, just_q;    /* nearest 5-limit ratio p/q; 0/0 if unpitched */
  double just_dev_cents; /* interval_cents - 1200 log2(p/q) */
  double beat_hz;        /* coincident partials' beat; NaN when none */
  plumb_pair_verdict verdict;
} plumb_ensemble_pair;

typedef struct {
  size_t notes;               /* notes given */
  size_t pairs;               /* pairs this track is in */
  size_t flagged_pairs;       /* of which wide or narrow */
  double offset_cents;        /* above (+) the rest while they play together;
                                 zero mean over the tracks it is compared
                                 with; NaN with no pitched pair */
  double drift_cents_per_min; /* the track's own pitch movement; NaN with
                                 fewer than 2 pitched notes or no time span */
} plumb_ensemble_track_result;

typedef struct {
  plumb_ensemble_pair *pairs; /* sorted by start_s */
  size_t pair_count;
  plumb_ensemble_track_result *tracks; /* one per track given, same order */
  size_t track_count;
  size_t flagged_pairs;
  double drift_cents_per_min; /* the whole ensemble; NaN when unknown */
} plumb_ensemble_result;

/* Pairs, offsets and drifts of the tracks. PLUMB_ERR_ARGUMENT for NULL
   pointers or settings out of range (tolerance not above 0, overlap not
   above 0, an unknown target), PLUMB_ERR_MEMORY; *result is then NULL.
   Notes whose times are not finite or whose end is not after their start
   are left out of the pairs (and still counted in `notes`). One track, or
   none, gives no pairs and PLUMB_OK. */
plumb_status plumb_ensemble_run(const plumb_ensemble_track *tracks, size_t count,
                                const plumb_ensemble_settings *settings,
                                plumb_ensemble_result **result);

/* Frees a result; NULL does nothing. */
void plumb_ensemble_free(plumb_ensemble_result *result);

/* ------------------------------------------------ the pieces, for tests */

/* The nearest ratio of the 5-limit just table (1/1, 16/15, 9/8, 6/5, 5/4,
   4/3, 45/32, 3/2, 8/5, 5/3, 9/5, 15/8 and their compounds by octaves, in
   lowest terms) to an interval of `cents` >= 0. Writes p, q and returns
   the deviation cents - 1200 log2(p/q); NaN (and 0/0) for a negative or
   non-finite interval. */
double plumb_just_nearest(double cents, int *p, int *q);

/* The interval of `semitones` (0 .. 127) in the trade's short form:
   "P1", "m2", "M2", "m3", "M3", "P4", "TT", "P5", "m6", "M6", "m7", "M7",
   "P8", "m9" ... "P15" ...; "" for a negative number. */
void plumb_interval_name(int semitones, char name[8]);

/* The beat of partial p of the lower note against partial q of the upper
   note, each placed as f_k = k f0 sqrt(1 + B k^2) (Fletcher 1964), in Hz:
   |p f_low sqrt(1 + B_low p^2) - q f_high sqrt(1 + B_high q^2)|
   (coincident partials, Helmholtz 1863). NaN B reads as 0. */
double plumb_beat_hz(double f_low_hz, double b_low, int p, double f_high_hz, double b_high, int q);

#ifdef __cplusplus
}
#endif

#endif /* PLUMB_ENSEMBLE_H */
