/*
  The ensemble step on real sampled instruments: a four-part session
  (flute, violin, clarinet, cello of the General MIDI soundfont of
  Debian's fluid-soundfont-gm, rendered by fluidsynth with chorus and
  reverb off, one mono file a part), each part analysed by the core on
  its own, then all parts compared by plumb_ensemble_run().

  What is checked, and against what:
  - the relative detunes: the session is rendered twice, once with every
    note at +0.3 cents (the reference) and once with each part at whole
    cents + 0.3. fluidsynth floors a voice's total pitch to whole cents
    (measured on Debian 12, fluidsynth 2.3.1), so the parts' relative
    detunes are the whole cents exactly, by construction. The samples
    are not in tune with one another (a few cents off is common, measured
    there too), so each track's offset is taken relative to its own
    offset in the reference render: that cancels the samples' tuning.
    Target, a project choice with no source: every track within 0.5 cent,
    the bound test_sampled holds a single note to; the offsets average
    many notes, so they should do at least as well;
  - the pairs: every two notes of two parts that the score has sounding
    together (by at least the default 80 ms) is found, and nothing else;
  - the intervals: each pair's semitones and its nearest 5-limit just
    ratio are the ones the score writes, from the 5-limit just chromatic
    scale (Helmholtz 1863, Ellis's translation 1885; Barbour 1951; both
    from memory, as in docs/ensemble.md) and its compounds by octaves.
  A detected note is a written one when it sounds at the written note's
  middle within 50 cents of its pitch: the flute's G5 of the last chord
  begins with some 40 ms at G4 (aubio's yinfft reads it too), which the
  core reports as a note of its own, too short to pair.
*/
#include "harness.h"
#include "plumb_ensemble.h"
#include "render.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#define FS_HZ       48000.0
#define PARTS       4
#define CHORDS      8
#define GAP_S       0.3 /* silence between chords: detached playing */
#define REF_BEND    0.3 /* cents; see above: whole cents + 0.3 */
#define LIMIT_CENTS 0.5 /* per track, the project's target (above) */
#define MATCH_CENTS 50.0

/* flute 73, violin 40, clarinet 71, cello 42 (General MIDI 1,
   zero-based programs), top part first. */
static const char *const part_names[PARTS] = {"flute", "violin", "clarinet", "cello"};
static const int part_programs[PARTS] = {73, 40, 71, 42};
/* Each part's heard detune in whole cents (exact by the +0.3 rule). */
static const int detune_cents[PARTS] = {0, 4, -3, 7};

/* A few bars of four-part harmony in C: C F G Am A(unison) Dm G C. The
   fifth chord has violin and clarinet in unison on A4, the flute an
   octave above and the cello an octave below them. */
static const int chord_midi[CHORDS][PARTS] = {{72, 67, 64, 48}, {72, 69, 65, 53}, {71, 67, 62, 43},
                                              {72, 69, 64, 45}, {81, 69, 69, 57}, {74, 69, 65, 50},
                                              {79, 71, 62, 43}, {79, 72, 64, 48}};
static const double chord_s[CHORDS] = {1.2, 0.9, 1.5, 1.4, 1.4, 0.8, 1.4, 1.5};
/* Late entries: the violin comes in 0.4 s into the Am chord, and every
   part but the cello 0.3 s into the second G chord. */
static const double entry_s[CHORDS][PARTS] = {{0, 0, 0, 0},       {0, 0, 0, 0}, {0, 0, 0, 0},
                                              {0, 0.4, 0, 0},     {0, 0, 0, 0}, {0, 0, 0, 0},
                                              {0.3, 0.3, 0.3, 0}, {0, 0, 0, 0}};

typedef struct {
  sampled_note written[PARTS][CHORDS];
  harness_result detected[PARTS];
  int match[PARTS][CHORDS];               /* detected note of each written one, or -1 */
  int chord_of[PARTS][HARNESS_MAX_NOTES]; /* written chord of a detected note, or -1 */
  plumb_ensemble_note notes[PARTS][HARNESS_MAX_NOTES];
  plumb_ensemble_track tracks[PARTS];
} session;

static char work_dir[64];
static bool have_renderer;
static bool rendered, render_failed;
static session sessions[2]; /* [0] the reference, [1] detuned */

static int setup(void **state) {
  (void)state;
  snprintf(work_dir, sizeof work_dir, "/tmp/plumb-sampled-ens-XXXXXX");
  if (!mkdtemp(work_dir)) return -1;
  have_renderer = sampled_available();
  return 0;
}

static int teardown(void **state) {
  (void)state;
  if (getenv("PLUMB_TEST_KEEP")) return 0; /* keep the renders to look at */
  char command[128];
  snprintf(command, sizeof command, "rm -rf '%s'", work_dir);
  return system(command) == 0 ? 0 : -1;
}

static void write_score(session *s, bool detuned) {
  double t = 0.5;
  for (int c = 0; c < CHORDS; ++c) {
    for (int p = 0; p < PARTS; ++p)
      s->written[p][c] = (sampled_note){.midi = chord_midi[c][p],
                                        .velocity = 96,
                                        .start_s = t + entry_s[c][p],
                                        .duration_s = chord_s[c] - entry_s[c][p],
                                        .bend_cents = REF_BEND + (detuned ? detune_cents[p] : 0)};
    t += chord_s[c] + GAP_S;
  }
}

static double written_hz(const sampled_note *note) {
  return 440.0 * pow(2.0, (note->midi - 69) / 12.0 + note->bend_cents / 1200.0);
}

/* The detected pitched note that sounds at the written note's middle, at
   its pitch to within MATCH_CENTS (the harness's pitch window, mir_eval /
   MIREX), the nearest in onset if several do. Onsets are test_sampled's
   concern; here a note only has to be the one the score wrote. */
static int find_note(const harness_result *result, const sampled_note *note) {
  const double middle_s = note->start_s + 0.5 * note->duration_s;
  int best = -1;
  for (int i = 0; i < result->count; ++i) {
    const plumb_note *e = &result->notes[i];
    if (e->verdict == PLUMB_VERDICT_UNPITCHED) continue;
    if (!(e->start_s <= middle_s && e->end_s >= middle_s)) continue;
    if (fabs(harness_cents(e->f0_hz, written_hz(note))) > MATCH_CENTS) continue;
    if (best < 0 ||
        fabs(e->start_s - note->start_s) < fabs(result->notes[best].start_s - note->start_s))
      best = i;
  }
  return best;
}

static int analyse_part(session *s, int p) {
  char wav[512];
  if (sampled_render(work_dir, part_programs[p], s->written[p], CHORDS, FS_HZ, wav, sizeof wav) !=
      0)
    return -1;
  size_t frames = 0;
  int rate = 0;
  float *x = sampled_read_mono(wav, &frames, &rate);
  if (!x) return -1;
  int status = harness_run_default(rate, x, frames, 1024, &s->detected[p]);
  free(x);
  if (status != 0) return -1;
  const harness_result *r = &s->detected[p];
  for (int i = 0; i < r->count; ++i) {
    plumb_ensemble_note_from(&r->notes[i], &s->notes[p][i]);
    s->chord_of[p][i] = -1;
  }
  for (int c = 0; c < CHORDS; ++c) {
    s->match[p][c] = find_note(r, &s->written[p][c]);
    if (s->match[p][c] >= 0) s->chord_of[p][s->match[p][c]] = c;
  }
  s->tracks[p] = (plumb_ensemble_track){part_names[p], s->notes[p], (size_t)r->count};
  return 0;
}

/* Render and analyse both sessions once; skip without the renderer. */
static void need_sessions(void) {
  if (!have_renderer) {
    print_message("fluidsynth or the GM soundfont missing: skipped\n");
    skip();
  }
  if (!rendered) {
    rendered = true;
    for (int k = 0; k < 2 && !render_failed; ++k) {
      write_score(&sessions[k], k == 1);
      for (int p = 0; p < PARTS && !render_failed; ++p)
        render_failed = analyse_part(&sessions[k], p) != 0;
    }
  }
  assert_false(render_failed);
}

static plumb_ensemble_result *run(const session *s, plumb_interval_target target) {
  plumb_ensemble_settings settings;
  plumb_ensemble_settings_default(&settings);
  settings.target = target;
  plumb_ensemble_result *result = NULL;
  assert_int_equal(plumb_ensemble_run(s->tracks, PARTS, &settings, &result), PLUMB_OK);
  assert_non_null(result);
  return result;
}

static double overlap_s(const sampled_note *a, const sampled_note *b) {
  return fmin(a->start_s + a->duration_s, b->start_s + b->duration_s) -
         fmax(a->start_s, b->start_s);
}

/* --------------------------------------------------------------- notes */

static void test_every_written_note_detected(void **state) {
  (void)state;
  need_sessions();
  int missing = 0;
  for (int k = 0; k < 2; ++k)
    for (int p = 0; p < PARTS; ++p) {
      for (int c = 0; c < CHORDS; ++c) {
        const int i = sessions[k].match[p][c];
        if (i < 0) {
          print_message("%s %s chord %d (midi %d): not found\n", k ? "detuned" : "reference",
                        part_names[p], c, chord_midi[c][p]);
          missing++;
        } else if (fabs(sessions[k].detected[p].notes[i].start_s -
                        sessions[k].written[p][c].start_s) > 0.1) {
          print_message("%s %s chord %d: onset %.3f s, written %.3f s\n",
                        k ? "detuned" : "reference", part_names[p], c,
                        sessions[k].detected[p].notes[i].start_s,
                        sessions[k].written[p][c].start_s);
        }
      }
      if (missing || getenv("PLUMB_TEST_VERBOSE")) harness_print(&sessions[k].detected[p]);
    }
  assert_int_equal(missing, 0);
}

/* --------------------------------------------------------------- pairs */

/* The nearest 5-limit ratio of a written interval, from the table one
   ratio a semitone (Helmholtz 1863; Barbour 1951; from memory),
   compounded by octaves and reduced to lowest terms. */
static void written_ratio(int semitones, int *p, int *q) {
  static const int table[12][2] = {{1, 1},   {16, 15}, {9, 8}, {6, 5}, {5, 4}, {4, 3},
                                   {45, 32}, {3, 2},   {8, 5}, {5, 3}, {9, 5}, {15, 8}};
  int num = table[semitones % 12][0], den = table[semitones % 12][1];
  for (int k = 0; k < semitones / 12; ++k) {
    if (den % 2 == 0)
      den /= 2;
    else
      num *= 2;
  }
  *p = num;
  *q = den;
}

/* Each pair of the score found once, with its interval as written;
   every pair found is one of the score's. */
static void check_pairs(const session *s, const char *label) {
  plumb_ensemble_result *result = run(s, PLUMB_INTERVALS_EQUAL);
  int found[PARTS][PARTS][CHORDS] = {{{0}}};
  int stray = 0, wrong_interval = 0;
  for (size_t i = 0; i < result->pair_count; ++i) {
    const plumb_ensemble_pair *pair = &result->pairs[i];
    size_t a = pair->track_low, b = pair->track_high;
    int ca = s->chord_of[a][pair->note_low], cb = s->chord_of[b][pair->note_high];
    if (ca < 0 || ca != cb) {
      print_message("%s: stray pair %s#%zu-%s#%zu at %.3f-%.3f s\n", label, part_names[a],
                    pair->note_low, part_names[b], pair->note_high, pair->start_s, pair->end_s);
      stray++;
      continue;
    }
    found[a][b][ca]++;
    const int semitones = abs(chord_midi[ca][a] - chord_midi[ca][b]);
    int p = 0, q = 0;
    written_ratio(semitones, &p, &q);
    if (pair->semitones != semitones || pair->just_p != p || pair->just_q != q) {
      print_message("%s: chord %d %s-%s: %d semitones %d/%d, written %d %d/%d (%.2f c)\n", label,
                    ca, part_names[a], part_names[b], pair->semitones, pair->just_p, pair->just_q,
                    semitones, p, q, pair->interval_cents);
      wrong_interval++;
    }
    if (getenv("PLUMB_TEST_VERBOSE"))
      print_message("%s: chord %d %-8s-%-8s %3d %2d/%-2d et %+6.2f c\n", label, ca, part_names[a],
                    part_names[b], pair->semitones, pair->just_p, pair->just_q, pair->et_dev_cents);
  }
  int written_pairs = 0, missed = 0, doubled = 0;
  plumb_ensemble_settings settings;
  plumb_ensemble_settings_default(&settings);
  for (int c = 0; c < CHORDS; ++c)
    for (int a = 0; a < PARTS; ++a)
      for (int b = a + 1; b < PARTS; ++b) {
        if (overlap_s(&s->written[a][c], &s->written[b][c]) < settings.min_overlap_s) continue;
        written_pairs++;
        int n = found[a][b][c] + found[b][a][c];
        missed += n == 0;
        doubled += n > 1;
        if (n != 1)
          print_message("%s: chord %d %s-%s found %d times\n", label, c, part_names[a],
                        part_names[b], n);
      }
  print_message("%s: %zu pairs found, %d written (%d missed, %d stray)\n", label,
                result->pair_count, written_pairs, missed, stray);
  /* Every chord of the score has all four parts sounding together (the
     score, by construction); the pairs are the definition's
     (docs/ensemble.md, "Pairs") and the intervals the score's. */
  assert_int_equal(written_pairs, CHORDS * PARTS * (PARTS - 1) / 2);
  assert_int_equal(missed, 0);
  assert_int_equal(doubled, 0);
  assert_int_equal(stray, 0);
  assert_int_equal(wrong_interval, 0);
  assert_int_equal(result->pair_count, (size_t)written_pairs);
  plumb_ensemble_free(result);
}

static void test_pairs_cover_the_score(void **state) {
  (void)state;
  need_sessions();
  check_pairs(&sessions[0], "reference");
  check_pairs(&sessions[1], "detuned");
}

/* ------------------------------------------------------------- offsets */

/* offset(detuned) - offset(reference) per track against the known
   detunes less their mean (the offsets' zero is the tracks' mean, see
   plumb_ensemble.h); and every two tracks' difference of those against
   the two detunes' difference. */
static void check_offsets(plumb_interval_target target, const char *label) {
  plumb_ensemble_result *reference = run(&sessions[0], target);
  plumb_ensemble_result *detuned = run(&sessions[1], target);
  double mean_cents = 0.0;
  for (int p = 0; p < PARTS; ++p) mean_cents += detune_cents[p] / (double)PARTS;
  double shift[PARTS], worst_track = 0.0, worst_pair = 0.0, worst_raw = 0.0;
  for (int p = 0; p < PARTS; ++p) {
    const double o_ref = reference->tracks[p].offset_cents;
    const double o_det = detuned->tracks[p].offset_cents;
    assert_true(isfinite(o_ref) && isfinite(o_det));
    shift[p] = o_det - o_ref;
    const double error = shift[p] - (detune_cents[p] - mean_cents);
    print_message("%s %-8s offset ref %+6.3f, detuned %+6.3f: shift %+6.3f, "
                  "expected %+6.3f, error %+6.3f c\n",
                  label, part_names[p], o_ref, o_det, shift[p], detune_cents[p] - mean_cents,
                  error);
    worst_track = fmax(worst_track, fabs(error));
    /* For comparison only: the detuned render alone, the samples' own
       tuning not cancelled. */
    worst_raw = fmax(worst_raw, fabs(o_det - (detune_cents[p] - mean_cents)));
  }
  for (int a = 0; a < PARTS; ++a)
    for (int b = a + 1; b < PARTS; ++b) {
      const double error = (shift[b] - shift[a]) - (detune_cents[b] - detune_cents[a]);
      worst_pair = fmax(worst_pair, fabs(error));
    }
  print_message("%s: worst track error %.3f c, worst two-track difference error %.3f c "
                "(without the reference render: %.3f c)\n",
                label, worst_track, worst_pair, worst_raw);
  /* The detunes are exact by construction (fluidsynth's whole-cent
     floor); the bound is the project's target (above). */
  assert_true(worst_track <= LIMIT_CENTS);
  assert_true(worst_pair <= LIMIT_CENTS);
  plumb_ensemble_free(reference);
  plumb_ensemble_free(detuned);
}

static void test_relative_offsets_equal(void **state) {
  (void)state;
  need_sessions();
  check_offsets(PLUMB_INTERVALS_EQUAL, "equal");
}

/* Against just intervals every pair's target moves by a constant of its
   written interval, which is the same in both renders: the shifts must
   come out the same. */
static void test_relative_offsets_just(void **state) {
  (void)state;
  need_sessions();
  check_offsets(PLUMB_INTERVALS_JUST, "just");
}

int main(void) {
  const struct CMUnitTest tests[] = {
      cmocka_unit_test(test_every_written_note_detected),
      cmocka_unit_test(test_pairs_cover_the_score),
      cmocka_unit_test(test_relative_offsets_equal),
      cmocka_unit_test(test_relative_offsets_just),
  };
  return cmocka_run_group_tests(tests, setup, teardown);
}
