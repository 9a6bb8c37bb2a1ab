/* Deterministic test signals: see signal.h. */
#include "signal.h"

#include <math.h>
#include <sndfile.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define TWO_PI (2.0 * SIG_PI)

/* ------------------------------------------------------------ random */

static uint64_t rotate_left(uint64_t x, int k) {
  return (x << k) | (x >> (64 - k));
}

/* splitmix64 spreads one seed over the whole state, as the xoshiro
   authors recommend, so that seeds 0, 1, 2 ... give unrelated streams. */
static uint64_t splitmix64(uint64_t *x) {
  uint64_t z = (*x += 0x9e3779b97f4a7c15u);
  z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9u;
  z = (z ^ (z >> 27)) * 0x94d049bb133111ebu;
  return z ^ (z >> 31);
}

void sig_rng_seed(sig_rng *rng, uint64_t seed) {
  for (int i = 0; i < 4; ++i)
    rng->state[i] = splitmix64(&seed);
  rng->has_spare = false;
  rng->spare = 0.0;
}

/* xoshiro256** 1.0 (Blackman & Vigna, "Scrambled linear pseudorandom
   number generators", 2018). */
uint64_t sig_rng_next(sig_rng *rng) {
  uint64_t *s = rng->state;
  const uint64_t result = rotate_left(s[1] * 5, 7) * 9;
  const uint64_t t = s[1] << 17;
  s[2] ^= s[0];
  s[3] ^= s[1];
  s[1] ^= s[2];
  s[0] ^= s[3];
  s[2] ^= t;
  s[3] = rotate_left(s[3], 45);
  return result;
}

double sig_rng_uniform(sig_rng *rng) {
  return (double)(sig_rng_next(rng) >> 11) * 0x1.0p-53;
}

/* Marsaglia's polar method (Marsaglia & Bray 1964): needs only sqrt and
   log, not sin/cos, which keeps the stream the same across libm builds. */
double sig_rng_gauss(sig_rng *rng) {
  if (rng->has_spare) {
    rng->has_spare = false;
    return rng->spare;
  }
  double u, v, s;
  do {
    u = 2.0 * sig_rng_uniform(rng) - 1.0;
    v = 2.0 * sig_rng_uniform(rng) - 1.0;
    s = u * u + v * v;
  } while (s >= 1.0 || s == 0.0);
  const double m = sqrt(-2.0 * log(s) / s);
  rng->spare = v * m;
  rng->has_spare = true;
  return u * m;
}

/* ------------------------------------------------------------ pitch */

double sig_midi_to_hz(double midi, double reference_hz) {
  return reference_hz * pow(2.0, (midi - 69.0) / 12.0);
}

void sig_contour_constant(double *f0_hz, size_t n, double frequency_hz) {
  for (size_t i = 0; i < n; ++i)
    f0_hz[i] = frequency_hz;
}

void sig_contour_detune(double *f0_hz, size_t n, double cents) {
  const double ratio = pow(2.0, cents / 1200.0);
  for (size_t i = 0; i < n; ++i)
    f0_hz[i] *= ratio;
}

void sig_contour_vibrato(double *f0_hz, size_t n, double sample_rate_hz,
                         double rate_hz, double extent_cents,
                         double phase_rad) {
  for (size_t i = 0; i < n; ++i) {
    const double t_s = (double)i / sample_rate_hz;
    const double cents = extent_cents * sin(TWO_PI * rate_hz * t_s + phase_rad);
    f0_hz[i] *= pow(2.0, cents / 1200.0);
  }
}

/* Linear in cents, i.e. exponential in Hz: from * (to/from)^fraction. */
static double glide_hz(double from_hz, double to_hz, double fraction) {
  return from_hz * pow(to_hz / from_hz, fraction);
}

void sig_contour_glide(double *f0_hz, size_t n, double sample_rate_hz,
                       double from_hz, double to_hz, double start_s,
                       double glide_s) {
  for (size_t i = 0; i < n; ++i) {
    const double t_s = (double)i / sample_rate_hz - start_s;
    if (t_s < 0.0)
      f0_hz[i] = from_hz;
    else if (t_s >= glide_s)
      f0_hz[i] = to_hz;
    else
      f0_hz[i] = glide_hz(from_hz, to_hz, t_s / glide_s);
  }
}

void sig_contour_segments(double *f0_hz, size_t n, double sample_rate_hz,
                          const sig_segment *segments, size_t count) {
  size_t i = 0;
  double segment_start_s = 0.0;
  for (size_t k = 0; k < count; ++k) {
    const sig_segment *seg = &segments[k];
    const double end_s = segment_start_s + seg->duration_s;
    for (; i < n && (double)i / sample_rate_hz < end_s; ++i) {
      const double fraction =
          ((double)i / sample_rate_hz - segment_start_s) / seg->duration_s;
      f0_hz[i] = glide_hz(seg->from_hz, seg->to_hz, fraction);
    }
    segment_start_s = end_s;
  }
  const double last_hz = count > 0 ? segments[count - 1].to_hz : 0.0;
  for (; i < n; ++i)
    f0_hz[i] = last_hz;
}

/* ------------------------------------------------------------ timbre */

double sig_partial_amplitude(const sig_timbre *timbre, int n) {
  if (n < 1 || n > timbre->partials)
    return 0.0;
  switch (timbre->law) {
  case SIG_AMPS_SAWTOOTH:
    return 1.0 / n;
  case SIG_AMPS_ODD:
    return (n % 2 == 1) ? 1.0 / n : 0.0;
  case SIG_AMPS_EXPLICIT:
    return timbre->amps ? timbre->amps[n - 1] : 0.0;
  }
  return 0.0;
}

/* Stiff string, Fletcher (1964): f_n = n f0 sqrt(1 + B n^2). */
double sig_partial_ratio(double inharmonicity_b, int n) {
  return n * sqrt(1.0 + inharmonicity_b * (double)n * (double)n);
}

static double max_value(const double *x, size_t n) {
  double m = 0.0;
  for (size_t i = 0; i < n; ++i)
    if (x[i] > m)
      m = x[i];
  return m;
}

/* One partial by phase accumulation: the phase advances by the partial's
   own instantaneous frequency each sample, so glides and vibrato stay
   continuous and every partial keeps the ratio of the stiff-string law. */
static void partial_add(double ratio, double amplitude, double phase_rad,
                        const double *f0_hz, const double *gain, size_t n,
                        double sample_rate_hz, double *acc) {
  double phase = phase_rad;
  const double step = TWO_PI * ratio / sample_rate_hz;
  for (size_t i = 0; i < n; ++i) {
    const double g = gain ? gain[i] : 1.0;
    acc[i] += amplitude * g * sin(phase);
    phase += step * f0_hz[i];
    if (phase >= TWO_PI)
      phase -= TWO_PI * floor(phase / TWO_PI);
  }
}

int sig_tone_add(const sig_timbre *timbre, const double *f0_hz,
                 const double *gain, size_t n, double sample_rate_hz,
                 float *out) {
  if (!timbre || !f0_hz || !out || sample_rate_hz <= 0.0)
    return -1;
  double *acc = calloc(n ? n : 1, sizeof *acc);
  if (!acc)
    return -1;
  sig_rng rng;
  sig_rng_seed(&rng, timbre->phase_seed);
  const double limit_hz = SIG_MAX_PARTIAL_FRACTION * sample_rate_hz;
  const double top_f0_hz = max_value(f0_hz, n);
  int kept = 0;
  for (int k = 1; k <= timbre->partials; ++k) {
    /* Draw every phase, kept or not, so the cut does not shift them. */
    const double phase = timbre->random_phase ? TWO_PI * sig_rng_uniform(&rng) : 0.0;
    const double ratio = sig_partial_ratio(timbre->inharmonicity_b, k);
    const double amplitude = sig_partial_amplitude(timbre, k);
    if (amplitude == 0.0 || ratio * top_f0_hz > limit_hz)
      continue;
    partial_add(ratio, amplitude, phase, f0_hz, gain, n, sample_rate_hz, acc);
    ++kept;
  }
  for (size_t i = 0; i < n; ++i)
    out[i] += (float)acc[i];
  free(acc);
  return kept;
}

/* ------------------------------------------------------------ envelope */

sig_envelope sig_envelope_gate(double ramp_s) {
  sig_envelope e = {SIG_RAMP_COSINE, ramp_s, 0.0, 0.0, SIG_RAMP_COSINE, ramp_s};
  return e;
}

static double ramp_up(sig_ramp shape, double ramp_s, double t_s) {
  if (t_s <= 0.0)
    return 0.0;
  if (shape == SIG_RAMP_EXP)
    return ramp_s > 0.0 ? 1.0 - exp(-t_s / ramp_s) : 1.0;
  if (t_s >= ramp_s)
    return 1.0;
  if (shape == SIG_RAMP_LINEAR)
    return t_s / ramp_s;
  return 0.5 * (1.0 - cos(SIG_PI * t_s / ramp_s));
}

/* 80 dB below: inaudible under any test tone, and a finite tail. */
static const double exp_tail_taus = 9.210340371976184; /* ln(10^4) */

static double ramp_down(sig_ramp shape, double ramp_s, double t_s) {
  if (t_s <= 0.0)
    return 1.0;
  if (shape == SIG_RAMP_EXP)
    return t_s < exp_tail_taus * ramp_s ? exp(-t_s / ramp_s) : 0.0;
  if (t_s >= ramp_s)
    return 0.0;
  if (shape == SIG_RAMP_LINEAR)
    return 1.0 - t_s / ramp_s;
  return 0.5 * (1.0 + cos(SIG_PI * t_s / ramp_s));
}

double sig_envelope_gain(const sig_envelope *e, double t_s, double gate_s) {
  double decay = 1.0;
  if (e->decay_s > 0.0 && t_s > e->attack_s) {
    const double fraction = fmin((t_s - e->attack_s) / e->decay_s, 1.0);
    decay = pow(10.0, e->sustain_db * fraction / 20.0);
  }
  return ramp_up(e->attack, e->attack_s, t_s) * decay *
         ramp_down(e->release, e->release_s, t_s - gate_s);
}

double sig_envelope_tail_s(const sig_envelope *e) {
  return e->release == SIG_RAMP_EXP ? exp_tail_taus * e->release_s
                                    : e->release_s;
}

void sig_envelope_fill(const sig_envelope *envelope, double gate_s,
                       double level, double sample_rate_hz, double *gain,
                       size_t n) {
  for (size_t i = 0; i < n; ++i)
    gain[i] = level * sig_envelope_gain(envelope, (double)i / sample_rate_hz,
                                        gate_s);
}

/* ------------------------------------------------------------ noise */

double sig_power(const float *samples, size_t n) {
  double sum = 0.0;
  for (size_t i = 0; i < n; ++i)
    sum += (double)samples[i] * samples[i];
  return n ? sum / (double)n : 0.0;
}

double sig_peak(const float *samples, size_t n) {
  double peak = 0.0;
  for (size_t i = 0; i < n; ++i)
    peak = fmax(peak, fabs((double)samples[i]));
  return peak;
}

void sig_scale_to_peak_dbfs(float *samples, size_t n, double peak_dbfs) {
  const double peak = sig_peak(samples, n);
  if (peak == 0.0)
    return;
  const double scale = pow(10.0, peak_dbfs / 20.0) / peak;
  for (size_t i = 0; i < n; ++i)
    samples[i] = (float)(samples[i] * scale);
}

double sig_add_noise_snr(float *samples, size_t n, double snr_db,
                         sig_rng *rng) {
  const double sigma = sqrt(sig_power(samples, n) / pow(10.0, snr_db / 10.0));
  for (size_t i = 0; i < n; ++i)
    samples[i] = (float)(samples[i] + sigma * sig_rng_gauss(rng));
  return sigma;
}

void sig_sine_in_noise(float *out, size_t n, double sample_rate_hz,
                       double frequency_hz, double amplitude,
                       double phase_rad, double snr_db, sig_rng *rng) {
  const double snr = pow(10.0, snr_db / 10.0);
  const double sigma = sqrt(amplitude * amplitude / (2.0 * snr));
  for (size_t i = 0; i < n; ++i) {
    const double t_s = (double)i / sample_rate_hz;
    const double clean = amplitude * sin(TWO_PI * frequency_hz * t_s + phase_rad);
    out[i] = (float)(clean + sigma * sig_rng_gauss(rng));
  }
}

/* ------------------------------------------------------------ strikes */

/* j_mk / j_01, computed from the Bessel zeros (tests compare them with
   scipy.special.jn_zeros). */
const double sig_membrane_ratios[SIG_MEMBRANE_MODES] = {
    1.0,      1.593341, 2.135549, 2.295417, 2.653066,
    2.917295, 3.155465, 3.500147, 3.598485};

/* (x_k / x_1)^2, x_k roots of cos x cosh x = 1 (tests solve it). */
const double sig_bar_ratios[SIG_BAR_MODES] = {1.0, 2.756539, 5.403918,
                                              8.932950};

void sig_strike_add(const sig_strike *strike, float *out, size_t n,
                    double sample_rate_hz) {
  const bool membrane = strike->kind == SIG_STRIKE_MEMBRANE;
  const double *ratios = membrane ? sig_membrane_ratios : sig_bar_ratios;
  const int modes = membrane ? SIG_MEMBRANE_MODES : SIG_BAR_MODES;
  const size_t length =
      (size_t)fmin((double)n, exp_tail_taus * strike->decay_s * sample_rate_hz);
  sig_rng rng;
  sig_rng_seed(&rng, strike->seed);
  for (int k = 0; k < modes; ++k) {
    const double phase = TWO_PI * sig_rng_uniform(&rng);
    const double f_hz = strike->f1_hz * ratios[k];
    if (f_hz > SIG_MAX_PARTIAL_FRACTION * sample_rate_hz)
      continue;
    /* Higher modes lose energy faster: common practice, no source. */
    const double tau_s = strike->decay_s / ratios[k];
    const double amplitude = strike->amplitude / ratios[k];
    for (size_t i = 0; i < length; ++i) {
      const double t_s = (double)i / sample_rate_hz;
      out[i] += (float)(amplitude * exp(-t_s / tau_s) *
                        sin(TWO_PI * f_hz * t_s + phase));
    }
  }
}

void sig_noise_burst_add(float *out, size_t n, double sample_rate_hz,
                         double amplitude, double decay_s, sig_rng *rng) {
  const size_t length =
      (size_t)fmin((double)n, exp_tail_taus * decay_s * sample_rate_hz);
  for (size_t i = 0; i < length; ++i) {
    const double t_s = (double)i / sample_rate_hz;
    const double gain = fmin(t_s / 0.001, 1.0) * exp(-t_s / decay_s);
    out[i] += (float)(amplitude * gain * sig_rng_gauss(rng));
  }
}

/* ------------------------------------------------------------ notes */

static double note_hz(const sig_voice *voice, const sig_note *note) {
  return sig_midi_to_hz(note->midi + note->detune_cents / 100.0,
                        voice->reference_hz);
}

static size_t clamp_index(double t_s, double sample_rate_hz, size_t n) {
  const double i = floor(t_s * sample_rate_hz + 0.5);
  return i <= 0.0 ? 0 : (i >= (double)n ? n : (size_t)i);
}

/* Pitch of one legato phrase: each note holds its pitch from its start
   to the next note's start; a joined note first glides from the previous
   pitch, then its vibrato starts at phase 0 (no jump in pitch). */
static void phrase_contour(const sig_voice *voice, const sig_note *notes,
                           size_t count, double sample_rate_hz,
                           double *f0_hz, size_t length) {
  const double start_s = notes[0].start_s;
  for (size_t k = 0; k < count; ++k) {
    const size_t a = clamp_index(notes[k].start_s - start_s, sample_rate_hz, length);
    const size_t b = k + 1 < count
        ? clamp_index(notes[k + 1].start_s - start_s, sample_rate_hz, length)
        : length;
    if (b <= a)
      continue;
    const double to_hz = note_hz(voice, &notes[k]);
    const double glide_s = k > 0 ? notes[k].glide_s : 0.0;
    const double from_hz = k > 0 ? note_hz(voice, &notes[k - 1]) : to_hz;
    sig_contour_glide(f0_hz + a, b - a, sample_rate_hz, from_hz, to_hz, 0.0, glide_s);
    const size_t held = a + clamp_index(glide_s, sample_rate_hz, b - a);
    if (notes[k].vibrato_hz > 0.0)
      sig_contour_vibrato(f0_hz + held, b - held, sample_rate_hz,
                          notes[k].vibrato_hz, notes[k].vibrato_cents, 0.0);
  }
}

static int render_phrase(const sig_voice *voice, const sig_note *notes,
                         size_t count, uint64_t phrase_index,
                         double sample_rate_hz, float *out, size_t n) {
  const double gate_s = notes[count - 1].end_s - notes[0].start_s;
  const size_t first = clamp_index(notes[0].start_s, sample_rate_hz, n);
  const size_t last = clamp_index(notes[count - 1].end_s +
                                      sig_envelope_tail_s(&voice->envelope),
                                  sample_rate_hz, n);
  if (last <= first)
    return 0;
  const size_t length = last - first;
  double *f0_hz = malloc(length * sizeof *f0_hz);
  double *gain = malloc(length * sizeof *gain);
  int status = -1;
  if (f0_hz && gain) {
    phrase_contour(voice, notes, count, sample_rate_hz, f0_hz, length);
    const double level = voice->amplitude * pow(10.0, notes[0].level_db / 20.0);
    sig_envelope_fill(&voice->envelope, gate_s, level, sample_rate_hz, gain, length);
    sig_timbre timbre = voice->timbre;
    timbre.phase_seed += phrase_index; /* phrases differ, reproducibly */
    status = sig_tone_add(&timbre, f0_hz, gain, length, sample_rate_hz,
                          out + first) < 0 ? -1 : 0;
  }
  free(f0_hz);
  free(gain);
  return status;
}

int sig_render_notes(const sig_voice *voice, const sig_note *notes,
                     size_t count, double sample_rate_hz, float *out,
                     size_t n) {
  if (!voice || (!notes && count) || !out || sample_rate_hz <= 0.0)
    return -1;
  uint64_t phrase_index = 0;
  for (size_t i = 0; i < count;) {
    size_t j = i;
    while (j + 1 < count && notes[j + 1].start_s <= notes[j].end_s + 1e-9)
      ++j;
    if (render_phrase(voice, notes + i, j - i + 1, phrase_index++,
                      sample_rate_hz, out, n) != 0)
      return -1;
    i = j + 1;
  }
  return 0;
}

/* ------------------------------------------------------------ files */

int sig_write_wav(const char *path, const float *samples, size_t n_frames,
                  int channels, int sample_rate_hz) {
  if (!path || (!samples && n_frames) || channels < 1 || sample_rate_hz < 1) {
    fprintf(stderr, "sig_write_wav: bad arguments (path %s, %d channels, %d Hz)\n",
            path ? path : "(null)", channels, sample_rate_hz);
    return -1;
  }
  SF_INFO info;
  memset(&info, 0, sizeof info);
  info.samplerate = sample_rate_hz;
  info.channels = channels;
  info.format = SF_FORMAT_WAV | SF_FORMAT_FLOAT;
  SNDFILE *file = sf_open(path, SFM_WRITE, &info);
  if (!file) {
    fprintf(stderr, "sig_write_wav: cannot create '%s': %s\n", path,
            sf_strerror(NULL));
    return -1;
  }
  /* The PEAK chunk carries a time stamp: without it, the same samples
     make the same bytes. */
  sf_command(file, SFC_SET_ADD_PEAK_CHUNK, NULL, SF_FALSE);
  const sf_count_t written = sf_writef_float(file, samples, (sf_count_t)n_frames);
  int status = 0;
  if (written != (sf_count_t)n_frames) {
    fprintf(stderr, "sig_write_wav: short write to '%s': %s\n", path,
            sf_strerror(file));
    status = -1;
  }
  if (sf_close(file) != 0) {
    fprintf(stderr, "sig_write_wav: cannot close '%s'\n", path);
    status = -1;
  }
  return status;
}

int sig_write_truth_csv(const char *path, const sig_note *notes,
                        size_t count) {
  FILE *file = path ? fopen(path, "w") : NULL;
  if (!file) {
    fprintf(stderr, "sig_write_truth_csv: cannot create '%s'\n",
            path ? path : "(null)");
    return -1;
  }
  fprintf(file, "start_s,end_s,midi,detune_cents\n");
  for (size_t i = 0; i < count; ++i) {
    if (notes[i].midi < 0)
      fprintf(file, "%.6f,%.6f,,\n", notes[i].start_s, notes[i].end_s);
    else
      fprintf(file, "%.6f,%.6f,%d,%.3f\n", notes[i].start_s, notes[i].end_s,
              notes[i].midi, notes[i].detune_cents);
  }
  if (fclose(file) != 0) {
    fprintf(stderr, "sig_write_truth_csv: cannot write '%s'\n", path);
    return -1;
  }
  return 0;
}
