/*
  Deterministic test signals for plumb's tests, benchmarks and demo.

  Everything is synthesised in double precision and written to float
  buffers. This is not real-time code: functions may allocate. The same
  seed gives the same samples on every machine with IEEE doubles (the
  noise uses only integer arithmetic, sqrt and log).

  Conventions: frequencies in Hz, pitch offsets in cents, times in
  seconds, levels in dB. Functions named *_add mix into the buffer
  (they add, they do not overwrite), so voices, strikes and noise can be
  layered. Functions that can fail return 0 on success and -1 with a
  message on stderr.
*/
#ifndef PLUMB_TEST_SIGNAL_H
#define PLUMB_TEST_SIGNAL_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#define SIG_PI 3.14159265358979323846
/* Partials whose frequency would pass this fraction of the sample rate
   are dropped, so nothing aliases. */
#define SIG_MAX_PARTIAL_FRACTION 0.45

/* ------------------------------------------------------------ random */

/* xoshiro256** (Blackman & Vigna 2018), seeded through splitmix64. */
typedef struct {
  uint64_t state[4];
  bool has_spare;   /* the polar method makes Gaussians in pairs */
  double spare;
} sig_rng;

void sig_rng_seed(sig_rng *rng, uint64_t seed);
uint64_t sig_rng_next(sig_rng *rng);
double sig_rng_uniform(sig_rng *rng);  /* [0, 1), 53 random bits */
double sig_rng_gauss(sig_rng *rng);    /* mean 0, variance 1 */

/* ------------------------------------------------------------ pitch */

/* Equal temperament from the MIDI Tuning Standard formula. */
double sig_midi_to_hz(double midi, double reference_hz);

/* Contours fill f0_hz[0..n) with an instantaneous frequency per sample;
   the modifiers multiply what is already there. */
void sig_contour_constant(double *f0_hz, size_t n, double frequency_hz);
void sig_contour_detune(double *f0_hz, size_t n, double cents);
/* f0 *= 2^(extent * sin(2 pi rate t + phase) / 1200): extent_cents is
   the peak deviation from the centre (half the peak-to-peak swing). */
void sig_contour_vibrato(double *f0_hz, size_t n, double sample_rate_hz,
                         double rate_hz, double extent_cents,
                         double phase_rad);
/* from_hz until start_s, then linear in cents to to_hz over glide_s. */
void sig_contour_glide(double *f0_hz, size_t n, double sample_rate_hz,
                       double from_hz, double to_hz, double start_s,
                       double glide_s);

/* One piece of a piecewise contour: linear in cents from from_hz to
   to_hz over duration_s (equal values hold a pitch). */
typedef struct {
  double duration_s;
  double from_hz;
  double to_hz;
} sig_segment;

/* Segments follow each other from sample 0; the last value holds to n. */
void sig_contour_segments(double *f0_hz, size_t n, double sample_rate_hz,
                          const sig_segment *segments, size_t count);

/* ------------------------------------------------------------ timbre */

typedef enum {
  SIG_AMPS_SAWTOOTH, /* a_n = 1/n */
  SIG_AMPS_ODD,      /* a_n = 1/n for odd n, 0 for even n */
  SIG_AMPS_EXPLICIT  /* a_n = amps[n - 1] */
} sig_amp_law;

typedef struct {
  int partials;            /* partials before the 0.45 fs cut */
  sig_amp_law law;
  const double *amps;      /* SIG_AMPS_EXPLICIT only: `partials` values */
  double inharmonicity_b;  /* f_n = n f0 sqrt(1 + B n^2) (Fletcher 1964) */
  bool random_phase;       /* false: every partial starts at phase 0 */
  uint64_t phase_seed;
} sig_timbre;

double sig_partial_amplitude(const sig_timbre *timbre, int n);
double sig_partial_ratio(double inharmonicity_b, int n); /* f_n / f0 */

/* Mix the tone following f0_hz[] into out[], each sample scaled by
   gain[] (NULL = 1). Partials are synthesised by accumulating their own
   instantaneous frequency in double precision; a partial is dropped when
   it would anywhere pass 0.45 fs. Returns the partials kept, -1 on bad
   arguments or no memory. */
int sig_tone_add(const sig_timbre *timbre, const double *f0_hz,
                 const double *gain, size_t n, double sample_rate_hz,
                 float *out);

/* ------------------------------------------------------------ envelope */

typedef enum {
  SIG_RAMP_COSINE, /* raised cosine over ramp_s: a plain gate */
  SIG_RAMP_LINEAR, /* straight line over ramp_s */
  SIG_RAMP_EXP     /* 1 - e^(-t/tau) up, e^(-t/tau) down; ramp_s = tau */
} sig_ramp;

/* gain = attack(t) * decay(t) * release(t - gate_s), where decay falls
   linearly in dB from 0 dB at attack_s to sustain_db at attack_s +
   decay_s and then holds (no decay when decay_s is 0). */
typedef struct {
  sig_ramp attack;
  double attack_s;
  double decay_s;
  double sustain_db;
  sig_ramp release;
  double release_s;
} sig_envelope;

/* A gate with raised-cosine ramps of ramp_s at both ends. */
sig_envelope sig_envelope_gate(double ramp_s);
/* Gain at t_s after the onset of a note held for gate_s. */
double sig_envelope_gain(const sig_envelope *envelope, double t_s,
                         double gate_s);
/* How long the release lasts after the gate: the ramp, or for an
   exponential release the time to fall by 80 dB (9.21 tau). */
double sig_envelope_tail_s(const sig_envelope *envelope);
/* gain[i] = level * sig_envelope_gain(envelope, i / fs, gate_s) */
void sig_envelope_fill(const sig_envelope *envelope, double gate_s,
                       double level, double sample_rate_hz, double *gain,
                       size_t n);

/* ------------------------------------------------------------ noise */

double sig_power(const float *samples, size_t n); /* mean square */
double sig_peak(const float *samples, size_t n);  /* max |x| */
/* Scale so the largest |sample| sits at peak_dbfs. No-op on silence. */
void sig_scale_to_peak_dbfs(float *samples, size_t n, double peak_dbfs);

/* Add white Gaussian noise so that (power of samples[0..n) before) /
   (noise power) = snr_db. Returns the noise standard deviation. */
double sig_add_noise_snr(float *samples, size_t n, double snr_db,
                         sig_rng *rng);
/* For Cramer-Rao tests (Rife & Boorstyn 1974): out = A sin(2 pi f t +
   phase) + w, with w Gaussian of variance A^2 / (2 SNR). Overwrites. */
void sig_sine_in_noise(float *out, size_t n, double sample_rate_hz,
                       double frequency_hz, double amplitude,
                       double phase_rad, double snr_db, sig_rng *rng);

/* ------------------------------------------------------------ strikes */

/* Mode frequency ratios, derived: the ideal circular membrane's Bessel
   zeros j_mk / j_01 in ascending order (modes 01 11 21 02 31 12 41 22
   03), and the free-free uniform bar's (x_k / x_1)^2 with x_k the roots
   of cos x cosh x = 1. Tests recompute both. */
#define SIG_MEMBRANE_MODES 9
#define SIG_BAR_MODES 4
extern const double sig_membrane_ratios[SIG_MEMBRANE_MODES];
extern const double sig_bar_ratios[SIG_BAR_MODES];

typedef enum { SIG_STRIKE_MEMBRANE, SIG_STRIKE_BAR } sig_strike_kind;

typedef struct {
  sig_strike_kind kind;
  double f1_hz;       /* lowest mode */
  double amplitude;   /* of the lowest mode */
  double decay_s;     /* tau of the lowest mode; mode k decays with
                         tau / ratio_k (higher modes die faster) */
  uint64_t seed;      /* random mode phases */
} sig_strike;

/* Mix one strike starting at out[0]; modes above 0.45 fs are dropped. */
void sig_strike_add(const sig_strike *strike, float *out, size_t n,
                    double sample_rate_hz);
/* A snare-like burst: Gaussian noise, 1 ms linear attack, e^(-t/tau). */
void sig_noise_burst_add(float *out, size_t n, double sample_rate_hz,
                         double amplitude, double decay_s, sig_rng *rng);

/* ------------------------------------------------------------ notes */

/* One note of the ground truth. A note that starts at or before the
   previous note's end_s is played legato: the tone goes on without a new
   attack and glides from the previous pitch over glide_s. */
typedef struct {
  double start_s;
  double end_s;          /* gate off; the release rings after it */
  int midi;              /* < 0: unpitched (truth files only) */
  double detune_cents;   /* deliberate offset from the equal target */
  double vibrato_hz;     /* 0: none */
  double vibrato_cents;  /* peak deviation from the centre */
  double glide_s;        /* legato only */
  double level_db;       /* re the voice's amplitude; a legato phrase
                            keeps the level of its first note */
} sig_note;

typedef struct {
  sig_timbre timbre;
  sig_envelope envelope;
  double reference_hz;   /* A4 */
  double amplitude;      /* fundamental's amplitude at level 0 dB */
} sig_voice;

/* Mix the notes (sorted by start_s) into out[0..n). Returns 0, or -1 on
   bad arguments or no memory. */
int sig_render_notes(const sig_voice *voice, const sig_note *notes,
                     size_t count, double sample_rate_hz, float *out,
                     size_t n);

/* ------------------------------------------------------------ files */

/* Float WAV via libsndfile; samples are interleaved. */
int sig_write_wav(const char *path, const float *samples, size_t n_frames,
                  int channels, int sample_rate_hz);
/* "start_s,end_s,midi,detune_cents" then one row a note; unpitched
   notes leave midi and detune_cents empty. */
int sig_write_truth_csv(const char *path, const sig_note *notes,
                        size_t count);

#endif /* PLUMB_TEST_SIGNAL_H */
