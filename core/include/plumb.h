/*
  plumb: per-note intonation and harmonicity analysis.

  The public interface of the analysis core (libplumb). The core knows
  nothing of LV2, files or threads: it takes mono float samples and gives
  back one record per completed note, plus live readings every hop.

  Threading contract, stated once:
  - One plumb instance is driven by one thread at a time ("the audio
    thread"). Calls marked [RT] are real-time safe: they do not allocate,
    lock, block, log or make system calls, and their cost is bounded.
  - plumb_pop_note() may be called from one other thread (a single
    consumer) while the audio thread calls plumb_process().
  - Calls marked [non-RT] may allocate; plumb_new() plans FFTW transforms
    under one process-wide lock, so instances may be created on any thread.
  - Functions that take no plumb instance are pure and [RT].

  Conventions: every measurement that does not apply is NaN, never 0.
  Frequencies are in Hz, pitch differences in cents, times in seconds
  unless a name says otherwise.
*/
#ifndef PLUMB_H
#define PLUMB_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

#define PLUMB_VERSION "0.3.0"

/* The calls the shared library exports; everything else in it is hidden. */
#if defined(__GNUC__)
#define PLUMB_API __attribute__((visibility("default")))
#else
#define PLUMB_API
#endif

/* ---------------------------------------------------------------- status */

typedef enum {
  PLUMB_OK = 0,
  PLUMB_ERR_ARGUMENT,    /* a NULL pointer or an argument out of range */
  PLUMB_ERR_MEMORY,      /* allocation failed */
  PLUMB_ERR_FFT,         /* FFTW could not plan a transform */
  PLUMB_ERR_SAMPLE_RATE, /* sample rate outside 8 kHz .. 384 kHz */
  PLUMB_ERR_PARSE,       /* text that should hold numbers does not */
  PLUMB_ERR_UNKNOWN_NAME /* a temperament or note name that is not known */
} plumb_status;

/* [RT] A static English sentence for a status; never NULL. */
PLUMB_API const char *plumb_strerror(plumb_status status);

/* ---------------------------------------------------------------- tuning */

typedef enum {
  PLUMB_TEMPERAMENT_EQUAL = 0,
  PLUMB_TEMPERAMENT_JUST,
  PLUMB_TEMPERAMENT_PYTHAGOREAN,
  PLUMB_TEMPERAMENT_MEANTONE, /* quarter-comma */
  PLUMB_TEMPERAMENT_WERCKMEISTER3,
  PLUMB_TEMPERAMENT_KIRNBERGER3,
  PLUMB_TEMPERAMENT_VALLOTTI,
  PLUMB_TEMPERAMENT_CUSTOM, /* twelve offsets given by the user */
  PLUMB_TEMPERAMENT_COUNT
} plumb_temperament;

/* What the user chooses. */
typedef struct {
  double reference_hz;          /* frequency of A4, e.g. 440 */
  plumb_temperament temperament;
  int tonic_pitch_class;        /* 0 = C, 1 = C#, ... 11 = B */
  /* For PLUMB_TEMPERAMENT_CUSTOM: offsets in cents from equal temperament
     for the scale degrees counted up from the tonic (degree 0 = tonic). */
  double custom_offsets_cents[12];
} plumb_tuning_spec;

/* The resolved tuning: for every absolute pitch class (0 = C) the offset in
   cents from equal temperament at reference_hz. Pitch class A is always 0,
   so A4 sounds at reference_hz whatever the temperament and tonic. */
typedef struct {
  double reference_hz;
  double offset_cents[12];
} plumb_tuning;

/* The largest custom offset, either way: half an octave. Beyond it a
   pitch class would sit nearer another class's place than its own, so a
   file holding such a number is far more likely a mistake than a tuning
   (common practice, no source). */
#define PLUMB_CUSTOM_OFFSET_LIMIT_CENTS 600.0

/* Fill a spec with equal temperament, A4 = 440 Hz, tonic C. */
PLUMB_API void plumb_tuning_spec_default(plumb_tuning_spec *spec);

/* Resolve a spec: build the temperament from its chain of fifths (or its
   ratios, for just intonation), rotate it to the tonic and anchor A.
   PLUMB_ERR_ARGUMENT (and *tuning untouched) when the reference is not
   within PLUMB_SETTINGS_MIN_REFERENCE_HZ .. _MAX_REFERENCE_HZ (below),
   the tonic is outside 0..11, the temperament
   outside the enumeration, or (custom only) an offset is not finite or
   is beyond +-PLUMB_CUSTOM_OFFSET_LIMIT_CENTS. */
PLUMB_API plumb_status plumb_tuning_build(const plumb_tuning_spec *spec,
                                plumb_tuning *tuning);

/* Frequency of MIDI note `midi` in the tuning. */
PLUMB_API double plumb_tuning_target_hz(const plumb_tuning *tuning, int midi);

/* The nearest target to f_hz: returns its MIDI number and writes its
   frequency and the deviation 1200*log2(f_hz/target) in cents. Returns -1
   (and NaN outputs) when f_hz is not a positive finite number. */
PLUMB_API int plumb_tuning_nearest(const plumb_tuning *tuning, double f_hz,
                         double *target_hz, double *cents);

/* Parse the text of a user tuning file: twelve numbers (cents from equal
   temperament, degree 0 = tonic first), separated by white space, commas or
   newlines; '#' starts a comment that runs to the end of the line.
   PLUMB_ERR_PARSE when the text is not twelve such numbers;
   PLUMB_ERR_ARGUMENT when it is, but one is beyond
   +-PLUMB_CUSTOM_OFFSET_LIMIT_CENTS (plumb_tuning_parse_find_beyond_limit()
   then names it). Either way offsets_cents is left unchanged. */
PLUMB_API plumb_status plumb_tuning_parse_offsets(const char *text,
                                        double offsets_cents[12]);

/* [RT] The first offset (0..11) that is not a finite number within
   +-PLUMB_CUSTOM_OFFSET_LIMIT_CENTS, or -1 when all twelve are (0 for
   NULL). */
PLUMB_API int plumb_tuning_offsets_beyond_limit(const double offsets_cents[12]);

/* For a text that plumb_tuning_parse_offsets() refuses with
   PLUMB_ERR_ARGUMENT: the position (0..11) of the first number beyond
   the limit, with its value in *offset_cents; -1 for any other text. */
PLUMB_API int plumb_tuning_parse_find_beyond_limit(const char *text,
                                         double *offset_cents);

/* Names used by the command line and the TTL enumerations. */
PLUMB_API const char *plumb_temperament_name(plumb_temperament temperament);
PLUMB_API plumb_status plumb_temperament_from_name(const char *name,
                                         plumb_temperament *temperament);

/* "C", "C#", "Db", "c#" ... -> 0..11; -1 when not a pitch class name. */
PLUMB_API int plumb_pitch_class_from_name(const char *name);

/* Scientific pitch notation, sharps only: 60 -> "C4", 61 -> "C#4",
   21 -> "A0". Writes "" for a number outside 0..127. */
PLUMB_API void plumb_note_name(int midi, char name[8]);

/* 1200*log2(f_hz/reference_hz) (Ellis 1885). */
PLUMB_API double plumb_cents(double f_hz, double reference_hz);

/* ---------------------------------------------------------------- notes */

typedef enum {
  PLUMB_VERDICT_IN_TUNE = 0,
  PLUMB_VERDICT_SHARP,
  PLUMB_VERDICT_FLAT,
  PLUMB_VERDICT_UNSTEADY,  /* pitch wanders without periodic vibrato */
  PLUMB_VERDICT_UNPITCHED, /* no definite pitch: never flagged */
  PLUMB_VERDICT_COUNT
} plumb_verdict;

/* "in-tune", "sharp", "flat", "unsteady", "unpitched". */
PLUMB_API const char *plumb_verdict_name(plumb_verdict verdict);

/* True for the verdicts that count as flagged: sharp, flat, unsteady. */
PLUMB_API bool plumb_verdict_is_flagged(plumb_verdict verdict);

#define PLUMB_MAX_PARTIALS 40

/* One completed note. Fields that do not apply are NaN (integers: -1). */
typedef struct {
  uint32_t index;            /* 0, 1, 2 ... in the order notes start */
  double start_s;            /* where the note starts in the audio */
  double end_s;              /* where it ends */
  double timeline_s;         /* host transport position at the onset */
  double bar;                /* host's bar at the onset, from 1; NaN if not given */
  double beat;               /* beat within that bar, from 1.0 */
  int midi;                  /* nearest target, -1 when unpitched */
  double target_hz;
  double f0_hz;              /* centre fundamental, from the partial model */
  double cents;              /* 1200*log2(f0_hz/target_hz) */
  double spread_cents;       /* std. deviation of frame pitch, steady part */
  double drift_cents_per_s;  /* slope of frame pitch, steady part */
  double vibrato_hz;         /* NaN without vibrato */
  double vibrato_cents;      /* peak deviation from the centre */
  double confidence;         /* 0..1 */
  double inharmonicity_b;    /* B of f_n = n f0 sqrt(1 + B n^2) */
  int partials;              /* partials found above the noise, -1 if none */
  double hnr_db;
  double odd_even_db;
  double centroid_hz;
  double attack_ms;
  double decay_ms;
  double sustain_db;
  double release_ms;          /* T60 from a decay-rate line fit after the offset */
  double decay_db_per_s;      /* free decay rate of a note with no plateau (plucked, struck) */
  double tristimulus[3];      /* T1, T2, T3 (Pollard & Jansson 1982) */
  double peak_dbfs;
  plumb_verdict verdict;
  /* Deviation of partial k+1 from (k+1)*f0 in cents; NaN where not found.
     For an unpitched event, each strong mode sits at the slot of the
     harmonic of its lowest mode nearest to it. */
  float partial_cents[PLUMB_MAX_PARTIALS];
} plumb_note;

/* ---------------------------------------------------------------- setup */

/* Every field is checked by plumb_new() and plumb_configure(), which
   refuse a value outside its range (NaN and the infinities included)
   with PLUMB_ERR_ARGUMENT and change nothing; the ranges are generous
   bounds that keep every internal conversion exact (no float-to-int
   overflow), not advice (common practice, no source). */
typedef struct {
  double sample_rate_hz;   /* 8000 .. 384000 Hz (else PLUMB_ERR_SAMPLE_RATE);
                              plumb_configure() ignores it */
  plumb_tuning tuning;     /* resolved with plumb_tuning_build(): reference_hz
                              within PLUMB_SETTINGS_MIN/MAX_REFERENCE_HZ, each
                              offset finite and within +-2 x
                              PLUMB_CUSTOM_OFFSET_LIMIT_CENTS (the A anchor
                              can double a custom offset) */
  double tolerance_cents;  /* sharp/flat beyond +-tolerance; above 0, at most
                              PLUMB_SETTINGS_MAX_TOLERANCE_CENTS */
  int lowest_midi;         /* search range, default 28 (E1); both ends within
                              PLUMB_SETTINGS_LOWEST_MIDI .. _HIGHEST_MIDI */
  int highest_midi;        /* default 96 (C7); lowest <= highest */
  double min_note_ms;      /* shortest held pitch change (legato) and shortest
                              spacing of re-articulations; shorter events are
                              still reported. PLUMB_SETTINGS_MIN/MAX_NOTE_MS */
} plumb_settings;

#define PLUMB_SETTINGS_MIN_REFERENCE_HZ 100.0
#define PLUMB_SETTINGS_MAX_REFERENCE_HZ 1000.0
#define PLUMB_SETTINGS_MAX_TOLERANCE_CENTS 600.0
#define PLUMB_SETTINGS_LOWEST_MIDI 21  /* A0, the piano's lowest key */
#define PLUMB_SETTINGS_HIGHEST_MIDI 108 /* C8, its highest */
#define PLUMB_SETTINGS_MIN_NOTE_MS 1.0
#define PLUMB_SETTINGS_MAX_NOTE_MS 10000.0

/* [RT] PLUMB_OK when every field but the sample rate is within the
   ranges above, else PLUMB_ERR_ARGUMENT (also for NULL). */
PLUMB_API plumb_status plumb_settings_check(const plumb_settings *settings);

/* Defaults: equal temperament at 440 Hz, 10 cents, E1..C7, 80 ms. */
PLUMB_API void plumb_settings_default(plumb_settings *settings, double sample_rate_hz);

typedef struct plumb plumb;

/* [non-RT] Create an analyser. All memory and FFTW plans are made here.
   Returns NULL and writes *status (if status is not NULL) on failure. */
PLUMB_API plumb *plumb_new(const plumb_settings *settings, plumb_status *status);

/* [non-RT] Free an analyser; plumb_free(NULL) does nothing. */
PLUMB_API void plumb_free(plumb *analyser);

/* [RT] Forget all audio and notes, as if just created. Settings stay. */
PLUMB_API void plumb_reset(plumb *analyser);

/* [RT] Change settings between process calls. The sample rate cannot
   change (create a new instance). Settings outside the ranges of
   plumb_settings are refused with PLUMB_ERR_ARGUMENT and the previous
   ones stay. Applies to notes that complete afterwards. */
PLUMB_API plumb_status plumb_configure(plumb *analyser, const plumb_settings *settings);

/* ---------------------------------------------------------------- process */

/* [RT] Analyse n_frames mono samples (any count, 0 and 1 included).
   NaN and Inf samples are treated as 0 and counted. Results do not depend
   on how the audio is split into calls. */
PLUMB_API void plumb_process(plumb *analyser, const float *samples, size_t n_frames);

/* [RT] The take has ended: analyse what is still pending and complete the
   current note, as if silence followed. Costs a few dozen hops. */
PLUMB_API void plumb_finish(plumb *analyser);

/* [RT] Tell the analyser the host transport position that belongs to the
   next sample given to plumb_process(), and the transport speed (1 rolling,
   0 stopped). Notes take timeline_s from the latest mark before their
   onset; with no mark, timeline_s is the time since the last reset. */
PLUMB_API void plumb_mark_timeline(plumb *analyser, double position_s, double speed);

/* The host transport at the next sample, with its musical time when the
   host gives it (LV2 time:Position's bar, barBeat, beatsPerBar and
   beatsPerMinute). */
typedef struct {
  double position_s;       /* transport position, seconds */
  double speed;            /* 1 rolling, 0 stopped */
  bool has_beats;          /* the four below are given */
  double bar;              /* bars before this one, from 0 */
  double bar_beat;         /* beats into the bar, from 0 */
  double beats_per_bar;
  double beats_per_minute;
} plumb_transport;

/* [RT] As plumb_mark_timeline(), with bar and beat: notes then also get
   `bar` and `beat` at their onset. */
PLUMB_API void plumb_mark_transport(plumb *analyser, const plumb_transport *transport);

/* ---------------------------------------------------------------- query */

/* [RT, single consumer] Take the oldest completed note. Returns false when
   there is none. May run on a thread other than plumb_process()'s.
   The struct calls below take the caller's sizeof through their macro, so
   that a program built against an older, shorter plumb_note gets the
   fields it knows (see "Growing" at the end of this header). */
PLUMB_API bool plumb_pop_note_sized(plumb *analyser, plumb_note *note, size_t note_size);
#define plumb_pop_note(analyser, note) plumb_pop_note_sized((analyser), (note), sizeof(plumb_note))

/* [RT, the thread that calls plumb_process()] Take the oldest completed
   note from a second queue meant for the audio thread itself (a host's
   notify output), independent of plumb_pop_note()'s. Returns false when
   there is none. */
PLUMB_API bool plumb_pop_note_here_sized(plumb *analyser, plumb_note *note,
                                         size_t note_size);
#define plumb_pop_note_here(analyser, note)                                                \
  plumb_pop_note_here_sized((analyser), (note), sizeof(plumb_note))

typedef struct {
  bool voiced;        /* a definite pitch is sounding */
  int midi;           /* nearest target, -1 when not voiced */
  double f0_hz;
  double cents;       /* from the nearest target */
  double confidence;  /* 0..1 */
  double time_s;      /* audio time the reading belongs to */
} plumb_live;

/* [RT] The latest frame reading (updated every hop). */
PLUMB_API void plumb_get_live_sized(const plumb *analyser, plumb_live *live, size_t live_size);
#define plumb_get_live(analyser, live) plumb_get_live_sized((analyser), (live), sizeof(plumb_live))

typedef struct {
  uint32_t notes;          /* notes completed since reset */
  uint32_t flagged;        /* of which flagged */
  uint32_t dropped;        /* notes lost because the queue was full */
  uint64_t bad_samples;    /* NaN or Inf samples replaced by 0 */
  bool has_last;           /* last_note is valid */
  plumb_note last_note;    /* the most recently completed note */
} plumb_counts;

/* [RT] Counters and the last completed note. */
PLUMB_API void plumb_get_counts_sized(const plumb *analyser, plumb_counts *counts,
                                      size_t counts_size);
#define plumb_get_counts(analyser, counts)                                                 \
  plumb_get_counts_sized((analyser), (counts), sizeof(plumb_counts))

/* [RT] Samples between a sound entering plumb_process() and the frame
   reading that covers it (the analysis delay; audio is never delayed). */
PLUMB_API uint32_t plumb_analysis_delay_frames(const plumb *analyser);

/* [RT] The hop and frame lengths this instance analyses with. */
PLUMB_API uint32_t plumb_hop_frames(const plumb *analyser);
PLUMB_API uint32_t plumb_frame_frames(const plumb *analyser);

/* ---------------------------------------------------------------- growing

  How this interface grows without breaking a program built against an
  older header of the same major version (libplumb.so.0):
  - The structs the library fills (plumb_note, plumb_live, plumb_counts)
    only ever grow at their end. The calls that fill them are macros that
    pass the caller's sizeof to a _sized function, which writes no more
    than that: an older program gets the fields it was built with.
  - The structs the caller fills (plumb_settings, plumb_tuning_spec,
    plumb_tuning, plumb_transport) keep their layout within a major
    version; a new setting comes with a new call, and a changed layout
    changes the major version and the soname.
  - Enumerations only gain values at their end (before a _COUNT member,
    which is not a stable value), and a program must accept a value it
    does not know.
  - Calls are added, never changed or removed, within a major version.
*/

#ifdef __cplusplus
}
#endif

#endif /* PLUMB_H */
