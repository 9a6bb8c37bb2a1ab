/*
  demo_session DIR: write the invented demo session into DIR.

  An invented amateur quartet with a drummer (the players are named only
  by their parts) records take 3 of a short original tune, "Kestrel
  Steps", at 96 beats a minute in D major. Each part is one mono 48 kHz
  float WAV, about 11 s long, with its peak at -12 dBFS, and beside it
  <stem>.truth.csv lists the notes as they were meant and played
  (start_s,end_s,midi,detune_cents; the drum hits leave midi empty).

  Some notes are deliberately out of tune (beyond the usual +-10 cents,
  a common-practice tolerance with no single source); a few are off by
  less than that and must not be flagged. Everything here is invented.
*/
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "signal.h"

#define SAMPLE_RATE_HZ 48000
#define TRACK_S 11.0
#define PEAK_DBFS -12.0  /* test tones: keep them well below full scale */
#define ROOM_SNR_DB 45.0 /* a quiet room's hiss under every part */

#define LEAD_S 0.5    /* silence before the first beat */
#define BEAT_S 0.625  /* 96 beats a minute */
#define GAP_S 0.08    /* a detached note is released this early */
#define AT(beat) (LEAD_S + (beat) * BEAT_S)

/* Detached: {start, end, midi, detune, vibrato Hz, vibrato cents, glide, level}. */
#define NOTE(beat, beats, midi, detune, vib_hz, vib_cents) \
  {AT(beat), AT((beat) + (beats)) - GAP_S, midi, detune, vib_hz, vib_cents, 0.0, 0.0}
/* Slurred into the next note: ends where the next one starts. */
#define SLUR(beat, beats, midi, detune, vib_hz, vib_cents, glide_s) \
  {AT(beat), AT((beat) + (beats)), midi, detune, vib_hz, vib_cents, glide_s, 0.0}

/* Fiddle: the tune. String vibrato of about +-12 cents at 5.5 Hz, inside
   the 0.2-0.35 semitone peak-to-peak range (Timmers & Desain 2000). */
static const sig_note fiddle_notes[] = {
    NOTE(0, 1, 74, 0.0, 0, 0),      NOTE(1, 1, 76, 0.0, 0, 0),
    NOTE(2, 1, 78, 0.0, 0, 0),      NOTE(3, 1, 81, 0.0, 0, 0),
    NOTE(4, 2, 79, 0.0, 5.5, 12),   NOTE(6, 1, 78, +18.0, 0, 0),
    NOTE(7, 1, 76, 0.0, 0, 0),      NOTE(8, 1, 74, 0.0, 0, 0),
    SLUR(9, 1, 73, +4.0, 0, 0, 0),  SLUR(10, 1, 71, 0.0, 0, 0, 0.04),
    NOTE(11, 1, 73, 0.0, 0, 0),     NOTE(12, 4, 74, 0.0, 5.5, 12),
};

/* Reed: the harmony, a third or sixth below, in half notes. The ensemble
   fault: the whole part sits 6 cents sharp (REED_SHARP), inside the
   per-note tolerance, and its second note doubles the fiddle's A5, a
   unison 6 cents wide that beats at 880 (2^(6/1200) - 1) = 3.06 Hz. */
#define REED_SHARP 6.0
static const sig_note reed_notes[] = {
    NOTE(0, 2, 66, REED_SHARP, 0, 0),          NOTE(2, 2, 81, REED_SHARP, 0, 0),
    NOTE(4, 2, 71, REED_SHARP, 0, 0),          NOTE(6, 2, 69, REED_SHARP, 0, 0),
    NOTE(8, 2, 67, -25.0 + REED_SHARP, 0, 0), NOTE(10, 2, 66, -6.0 + REED_SHARP, 0, 0),
    NOTE(12, 4, 69, REED_SHARP, 0, 0),
};

/* Voice: three legato phrases with glides, vibrato of +-35 cents at
   5.8 Hz (singers: 0.6-2 semitones peak-to-peak, Timmers & Desain 2000;
   about 6 Hz, Prame 1994, from memory). */
#define SUNG(beat, beats, midi, detune, glide_s) \
  {AT(beat), AT((beat) + (beats)) - GAP_S, midi, detune, 5.8, 35.0, glide_s, 0.0}
#define SUNG_SLUR(beat, beats, midi, detune, glide_s) \
  SLUR(beat, beats, midi, detune, 5.8, 35.0, glide_s)
static const sig_note voice_notes[] = {
    SUNG_SLUR(0, 1, 69, 0.0, 0),   SUNG_SLUR(1, 1, 71, +5.0, 0.08),
    SUNG(2, 2, 73, 0.0, 0.08),     SUNG_SLUR(4, 1.5, 74, 0.0, 0),
    SUNG_SLUR(5.5, 1, 73, 0.0, 0.08), SUNG(6.5, 1.5, 71, 0.0, 0.08),
    SUNG_SLUR(8, 2, 69, -15.0, 0), SUNG_SLUR(10, 2, 66, 0.0, 0.1),
    SUNG(12, 4, 69, 0.0, 0.12),
};

/* Keys: the bass line on a stiff-string keyboard, decaying notes. */
static const sig_note keys_notes[] = {
    NOTE(0, 2, 50, 0.0, 0, 0),  NOTE(2, 2, 57, 0.0, 0, 0),
    NOTE(4, 2, 55, 0.0, 0, 0),  NOTE(6, 2, 54, +22.0, 0, 0),
    NOTE(8, 2, 52, -3.0, 0, 0), NOTE(10, 2, 57, 0.0, 0, 0),
    NOTE(12, 4, 50, 0.0, 0, 0),
};

/* A vowel-like spectrum: a broad bump near the third to fifth partials. */
static const double voice_amps[14] = {1.0,  0.9,  0.75, 0.5,  0.55,
                                      0.35, 0.2,  0.15, 0.12, 0.08,
                                      0.05, 0.04, 0.03, 0.02};
#define KEYS_PARTIALS 16
static double keys_amps[KEYS_PARTIALS];

/* A string struck at 1/8 of its length lacks its 8th and 16th partials
   (sin(n pi / 8) vanishes there: ideal string; the striking point is
   common practice, no source); the felt hammer's softness is an extra
   1/sqrt(n) roll-off (invented). */
static void fill_keys_amps(void) {
  for (int n = 1; n <= KEYS_PARTIALS; ++n)
    keys_amps[n - 1] = fabs(sin(n * SIG_PI / 8.0)) / (n * sqrt((double)n));
}

typedef struct {
  const char *stem;
  sig_voice voice;
  const sig_note *notes;
  size_t count;
} pitched_track;

static const sig_envelope bowed = {SIG_RAMP_LINEAR, 0.07, 0.0, 0.0, SIG_RAMP_EXP, 0.06};
static const sig_envelope blown = {SIG_RAMP_EXP, 0.025, 0.0, 0.0, SIG_RAMP_EXP, 0.05};
static const sig_envelope sung = {SIG_RAMP_LINEAR, 0.06, 0.0, 0.0, SIG_RAMP_EXP, 0.07};
/* Struck: fast attack, then 30 dB down over 2.5 s, damped at release. */
static const sig_envelope struck = {SIG_RAMP_LINEAR, 0.004, 2.5, -30.0, SIG_RAMP_EXP, 0.12};

static int write_track(const char *dir, const char *stem, float *samples,
                       size_t n, const sig_note *truth, size_t count,
                       uint64_t noise_seed) {
  sig_rng rng;
  sig_rng_seed(&rng, noise_seed);
  sig_add_noise_snr(samples, n, ROOM_SNR_DB, &rng);
  sig_scale_to_peak_dbfs(samples, n, PEAK_DBFS);
  char wav[4096], csv[4096];
  snprintf(wav, sizeof wav, "%s/%s.wav", dir, stem);
  snprintf(csv, sizeof csv, "%s/%s.truth.csv", dir, stem);
  if (sig_write_wav(wav, samples, n, 1, SAMPLE_RATE_HZ) != 0 ||
      sig_write_truth_csv(csv, truth, count) != 0)
    return -1;
  int deliberate = 0;
  for (size_t i = 0; i < count; ++i)
    deliberate += truth[i].midi >= 0 && fabs(truth[i].detune_cents) > 10.0;
  printf("  %-8s %5.1f s, peak %.1f dBFS, %2zu %s, %d deliberately out of tune\n",
         stem, (double)n / SAMPLE_RATE_HZ, 20.0 * log10(sig_peak(samples, n)),
         count, truth[0].midi >= 0 ? "notes" : "hits ", deliberate);
  return 0;
}

static int pitched(const char *dir, const pitched_track *track, uint64_t seed,
                   float *samples, size_t n) {
  memset(samples, 0, n * sizeof *samples);
  if (sig_render_notes(&track->voice, track->notes, track->count,
                       SAMPLE_RATE_HZ, samples, n) != 0) {
    fprintf(stderr, "demo_session: cannot render %s\n", track->stem);
    return -1;
  }
  return write_track(dir, track->stem, samples, n, track->notes, track->count, seed);
}

/* Drums: a low membrane on the beats, a snare-like burst over a small
   membrane on the off-beats; no definite pitch, never to be flagged. */
static int drums(const char *dir, float *samples, size_t n) {
  enum { HITS = 32 };
  sig_note truth[HITS];
  sig_rng rng;
  sig_rng_seed(&rng, 505);
  memset(samples, 0, n * sizeof *samples);
  for (int k = 0; k < HITS; ++k) {
    const double start_s = AT(k * 0.5);
    const size_t first = (size_t)(start_s * SAMPLE_RATE_HZ);
    const bool on_beat = k % 2 == 0;
    const sig_strike low = {SIG_STRIKE_MEMBRANE, 92.0, 0.5, 0.30, 600 + (uint64_t)k};
    const sig_strike high = {SIG_STRIKE_MEMBRANE, 185.0, 0.25, 0.08, 700 + (uint64_t)k};
    sig_strike_add(on_beat ? &low : &high, samples + first, n - first, SAMPLE_RATE_HZ);
    if (!on_beat)
      sig_noise_burst_add(samples + first, n - first, SAMPLE_RATE_HZ, 0.2, 0.09, &rng);
    truth[k] = (sig_note){start_s, start_s + 0.25, -1, 0.0, 0, 0, 0, 0};
  }
  return write_track(dir, "drums", samples, n, truth, HITS, 909);
}

int main(int argc, char **argv) {
  if (argc != 2) {
    fprintf(stderr, "usage: demo_session DIR\n");
    return 2;
  }
  const char *dir = argv[1];
  if (mkdir(dir, 0755) != 0 && errno != EEXIST) {
    fprintf(stderr, "demo_session: cannot create '%s': %s\n", dir, strerror(errno));
    return 3;
  }
  fill_keys_amps();
  const pitched_track tracks[] = {
      {"fiddle", {{18, SIG_AMPS_SAWTOOTH, NULL, 0.0, true, 11}, bowed, 440.0, 0.2},
       fiddle_notes, sizeof fiddle_notes / sizeof *fiddle_notes},
      {"reed", {{21, SIG_AMPS_ODD, NULL, 0.0, true, 12}, blown, 440.0, 0.2},
       reed_notes, sizeof reed_notes / sizeof *reed_notes},
      {"voice", {{14, SIG_AMPS_EXPLICIT, voice_amps, 0.0, true, 13}, sung, 440.0, 0.2},
       voice_notes, sizeof voice_notes / sizeof *voice_notes},
      /* B = 2e-4 (invented): below the 3.5e-4 implied near middle C by
         Young (1952), as inharmonicity falls toward two octaves below
         middle C (Schuck & Young 1943). */
      {"keys", {{KEYS_PARTIALS, SIG_AMPS_EXPLICIT, keys_amps, 2e-4, true, 14}, struck, 440.0, 0.2},
       keys_notes, sizeof keys_notes / sizeof *keys_notes},
  };
  const size_t n = (size_t)(TRACK_S * SAMPLE_RATE_HZ);
  float *samples = malloc(n * sizeof *samples);
  if (!samples) {
    fprintf(stderr, "demo_session: out of memory\n");
    return 3;
  }
  printf("demo session in %s (48 kHz mono float WAV):\n", dir);
  int status = 0;
  for (size_t t = 0; t < sizeof tracks / sizeof *tracks && status == 0; ++t)
    status = pitched(dir, &tracks[t], 100 + t, samples, n);
  if (status == 0)
    status = drums(dir, samples, n);
  free(samples);
  return status == 0 ? 0 : 3;
}
