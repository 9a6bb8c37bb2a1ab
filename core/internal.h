/*
  Internal types shared by the core's modules. Not installed; hosts use
  plumb.h only. Every module here follows one rule: memory is obtained in an
  _init function (called from plumb_new) and never on the processing path.
*/
#ifndef PLUMB_INTERNAL_H
#define PLUMB_INTERNAL_H

#include "plumb.h"

#include <fftw3.h>
#include <math.h>

/* At most this many pitch candidates (YIN troughs) per frame. */
#define PLUMB_CANDIDATES_MAX 8
/* Partials measured in every frame: the note's partial analysis averages
   them over its steady part. */
#define PLUMB_FRAME_HARMONICS PLUMB_MAX_PARTIALS
/* The lowest partials, which a note's pitch is measured from (partial_fit.c). */
#define PLUMB_PITCH_PARTIALS 16
/* Each frame carries the signal's mean square over this many equal steps
   of its window's oldest hop: the note's envelope, at 0.67-0.73 ms. */
#define PLUMB_ENVELOPE_STEPS 16
/* Partials are searched up to this share of the sample rate, below the
   anti-aliasing filters' transition band. Common practice, no source. */
#define PLUMB_PARTIAL_LIMIT_RATE_SHARE 0.45
/* Frames between a frame's analysis and its Viterbi decision. */
#define PLUMB_DECODE_LAG 8
/* Spectra kept for decisions: the lag, the frame before it, and slack. */
#define PLUMB_SPECTRUM_RING (PLUMB_DECODE_LAG + 3)
/* Frames one note keeps; a longer note is closed there and the sound goes
   on as a new note. */
#define PLUMB_NOTE_FRAMES_MAX 1024
/* Completed notes waiting for the consumer. Power of two. */
#define PLUMB_QUEUE_CAPACITY 256
/* Bands of the onset detection function. */
#define PLUMB_BANDS_MAX 40
/* Frames of a slow attack looked back over, at most (about 0.34 s at 48 kHz). */
#define PLUMB_PREROLL_FRAMES 32
/* Voiced frames whose trimmed mean is a note's running pitch. */
#define PLUMB_REFERENCE_FRAMES 48
/* Timeline marks remembered. Power of two. */
#define PLUMB_TIMELINE_MARKS 64

/* ------------------------------------------------------------ fft.c */

/* FFTW's planner is not thread-safe, and other plugins in the same host
   plan too: every plan is made under one process-wide lock. */
fftwf_plan plumb_fft_plan_r2c(int n, float *in, fftwf_complex *out);
fftwf_plan plumb_fft_plan_c2r(int n, fftwf_complex *in, float *out);
void plumb_fft_destroy(fftwf_plan plan);

/* ------------------------------------------------------------ halfband.c */

#define PLUMB_HALFBAND_TAPS 31 /* odd; the filter delays by 15 input samples */

typedef struct {
  double taps[PLUMB_HALFBAND_TAPS];
} halfband_filter;

void halfband_init(halfband_filter *filter);
/* Decimate input[0 .. count) (count even) into count / 2 samples; input
   must be preceded by PLUMB_HALFBAND_TAPS - 1 samples of history. */
void halfband_decimate(const halfband_filter *filter, const float *input, int count,
                       float *output);

/* ------------------------------------------------------------ yin.c */

typedef struct {
  double lag_samples; /* refined by parabolic interpolation */
  double value;       /* cumulative-mean-normalised difference there */
} yin_trough;

typedef struct {
  int fft_size;        /* transform length */
  int window_samples;  /* W, the integration window */
  int lag_max_samples; /* largest lag the buffers allow */
  float *segment;      /* W + lag_max samples, mean removed */
  float *window_part;  /* the first W samples, zero padded */
  float *correlation;  /* inverse transform output */
  float *cmndf;        /* d'(tau), tau = 0 .. lag_max */
  fftwf_complex *spectrum_segment;
  fftwf_complex *spectrum_window;
  fftwf_plan forward;
  fftwf_plan inverse;
} yin_analyser;

plumb_status yin_init(yin_analyser *yin, int fft_size, int window_samples,
                      int lag_max_samples);
void yin_destroy(yin_analyser *yin);
/* Offset into a frame of fft_size samples where the segment starts, so
   that the segment is centred on the frame. */
int yin_segment_offset(const yin_analyser *yin);
/* Compute d'(tau) of the centred segment of `frame` and return up to
   max_troughs local minima with lag in [lag_min, lag_max], in order of lag.
   Returns 0 for a segment with no energy. */
int yin_analyse(yin_analyser *yin, const float *frame, int lag_min,
                int lag_max, yin_trough *troughs, int max_troughs);

/* ------------------------------------------------------------ pitch_prob.c */

typedef struct {
  double frequency_hz;
  double probability;
} pitch_candidate;

typedef struct {
  int count;
  pitch_candidate candidate[PLUMB_CANDIDATES_MAX];
  double voiced_probability; /* sum of the candidates' probabilities */
} candidate_set;

#define PLUMB_THRESHOLDS 100

/* Weights of the thresholds 0.01, 0.02 ... 1.00 under a Beta(2, 18) prior
   (Mauch & Dixon 2014). */
void pitch_prob_thresholds(double weights[PLUMB_THRESHOLDS]);
/* Turn YIN troughs into pitch candidates with probabilities. */
void pitch_prob_candidates(const double weights[PLUMB_THRESHOLDS],
                           const yin_trough *troughs, int count,
                           double sample_rate_hz, candidate_set *out);

/* ------------------------------------------------------------ viterbi.c */

typedef struct {
  candidate_set frames[PLUMB_SPECTRUM_RING];
  signed char back[PLUMB_SPECTRUM_RING][PLUMB_CANDIDATES_MAX + 1];
  double score[PLUMB_CANDIDATES_MAX + 1]; /* state 0: unvoiced */
  uint64_t frames_pushed;
} viterbi_decoder;

void viterbi_reset(viterbi_decoder *decoder);
void viterbi_push(viterbi_decoder *decoder, const candidate_set *frame);
/* The state decided for the frame `lag` frames before the newest one:
   0 for unvoiced, 1 + candidate index for voiced. */
int viterbi_decide(const viterbi_decoder *decoder, int lag);
const candidate_set *viterbi_frame(const viterbi_decoder *decoder, int lag);

/* ------------------------------------------------------------ spectrum.c */

typedef struct {
  int fft_size;
  double sample_rate_hz;
  float *window;        /* Hann */
  float *windowed;
  fftwf_plan forward;   /* executed with the new-array interface */
  int band_count;
  int band_first_bin[PLUMB_BANDS_MAX + 1];
  double window_power;  /* sum of window^2, for dBFS */
  double windowed_energy; /* of the last frame transformed */
} spectrum_analyser;

plumb_status spectrum_init(spectrum_analyser *spectrum, int fft_size,
                           double sample_rate_hz);
void spectrum_destroy(spectrum_analyser *spectrum);
/* Window `frame` and transform it into `out` (fft_size/2 + 1 bins, from
   fftwf_alloc_complex). */
void spectrum_transform(spectrum_analyser *spectrum, const float *frame,
                        fftwf_complex *out);
/* Band levels in dB (floored) and the frame level in dBFS, of the frame
   spectrum_transform() made last. */
void spectrum_levels(const spectrum_analyser *spectrum,
                     const fftwf_complex *bins, float *band_db,
                     double *frame_dbfs);

/* ------------------------------------------------------------ peaks.c */

#define PLUMB_FRAME_PEAKS 8
/* A bin of white noise exceeds 20 times the median power with probability
   e^(-20 ln 2), about 1e-6. */
#define PLUMB_ABOVE_NOISE 20.0

typedef struct {
  float frequency_hz; /* phase-vocoder instantaneous frequency */
  float power;
} spectral_peak;

/* Median power of (at most 64, evenly spread) bins in [first, last]. */
double spectrum_noise_floor(const fftwf_complex *bins, int first_bin, int last_bin);
/* The strongest local maxima between low_hz and high_hz that stand within
   30 dB of the strongest and PLUMB_ABOVE_NOISE times above noise_power
   (from spectrum_noise_floor), strongest first. */
int spectrum_strong_peaks(const fftwf_complex *current, const fftwf_complex *previous,
                          int fft_size, int hop, double sample_rate_hz, double low_hz,
                          double high_hz, double noise_power, spectral_peak *peaks,
                          int max_peaks);

/* ------------------------------------------------------------ harmonics.c */

typedef struct {
  float frequency_hz[PLUMB_FRAME_HARMONICS]; /* 0 where not found */
  float amplitude[PLUMB_FRAME_HARMONICS];    /* linear, 0 where not found */
} harmonic_set;

typedef struct {
  double f0_hz;           /* weighted fit over the harmonics */
  double harmonic_ratio;  /* energy in harmonic peaks / all energy */
  int found;              /* harmonics found */
  /* For the harmonic-to-noise ratio: the power of the bins of the found
     harmonics' lobes and how many bins they are, and the same of every bin
     of the band searched (from half the fundamental to the last window). */
  double lobe_power;
  int lobe_bins;
  double band_power;
  int band_bins;
} harmonic_fit;

/* The bins of a band low_hz … high_hz, cut to the bins that have both
   neighbours (1 … fft_size / 2 - 1): at a low sample rate a band limit
   in Hz can lie past Nyquist. False when the band holds no bin. */
static inline bool band_bins(double low_hz, double high_hz, double bin_hz, int fft_size,
                             int *first, int *last) {
  double first_bin = ceil(low_hz / bin_hz), last_bin = floor(high_hz / bin_hz);
  double top = fft_size / 2 - 1;
  *first = first_bin < 1.0 ? 1 : first_bin > top ? (int)top : (int)first_bin;
  *last = last_bin > top ? (int)top : last_bin < 1.0 ? 1 : (int)last_bin;
  return *first <= *last && first_bin <= last_bin;
}

/* |X_k|^2 */
static inline double bin_power(const fftwf_complex *bins, int k) {
  return (double)bins[k][0] * bins[k][0] + (double)bins[k][1] * bins[k][1];
}
/* Instantaneous frequency of bin k, in bins, from its phase advance over a
   hop (the phase vocoder). */
double vocoder_frequency_bins(const fftwf_complex *current,
                              const fftwf_complex *previous, int k, int fft_size,
                              int hop);

/* Refine a coarse f0 from the harmonic peaks of two consecutive spectra
   `hop` samples apart, by phase-vocoder instantaneous frequency (Brown &
   Puckette 1993). Returns false when too little harmonic energy is found. */
bool harmonics_refine(const fftwf_complex *current,
                      const fftwf_complex *previous, int fft_size, int hop,
                      double sample_rate_hz, double f0_coarse_hz, double noise_power,
                      harmonic_set *harmonics, harmonic_fit *fit);

/* ------------------------------------------------------------ frames */

/* What the analysis knows of one decided frame; the note tracker's input. */
typedef struct {
  uint64_t centre_sample; /* frame centre, in samples since reset */
  bool voiced;
  double f0_hz;           /* NaN when unvoiced */
  double voiced_probability;
  double harmonic_ratio;
  bool legato_start;      /* first frame of a note split off by a pitch change */
  double level_before_dbfs; /* first frame of a note: the level of the frame before */
  double level_dbfs;      /* windowed frame level */
  double onset_db;        /* onset detection function */
  float peak;             /* peak |sample| over the hop around the centre */
  harmonic_set harmonics;
  float noise_power;      /* the spectrum's noise floor, per bin */
  float lobe_power;       /* harmonic_fit's, for the harmonic-to-noise ratio */
  int lobe_bins;
  float band_power;
  int band_bins;
  float total_power;      /* of every bin from 1 to fft_size / 2 - 1 */
  float energy[PLUMB_ENVELOPE_STEPS]; /* mean square of each step of the hop */
  int peak_count;
  spectral_peak peaks[PLUMB_FRAME_PEAKS]; /* the strongest spectral peaks */
} frame_record;

/* ------------------------------------------------------------ note_measures.c */

typedef struct {
  double sample_rate_hz;
  double hop_s;
  double frame_s;         /* analysis frame length, for window corrections */
  int fft_size;
  int hop;
  plumb_tuning tuning;
  double tolerance_cents;
  bool previous_unpitched; /* a legato continuation of such a sound is too */
} measure_context;

/* ------------------------------------------------------------ partial_fit.c */

/* A note's steady part: its frame range, and the band around its median
   pitch (reference_hz) outside which a frame is a slip, not the pitch. */
typedef struct {
  int first, last; /* inclusive frame range */
  double reference_hz;
  double band_cents;
} steady_part;

/* Voiced, and within the band. */
bool steady_frame(const frame_record *f, const steady_part *part);

/* The stiff-string model f_n = n f0 sqrt(1 + B n^2) of a note's partials. */
typedef struct {
  double b;                  /* fitted B; NaN with fewer than three partials */
  double b_error;            /* its standard error */
  bool stiff;                /* B stands clear of zero: pitch is read under it */
  double noise_scale;        /* a partial's relative variance is this / (a^2 n^2) */
  double independent_frames; /* of the steady part */
  int partials;              /* found in at least half the steady frames */
  /* Every frame's fundamental under the model, once computed: the note's
     measures ask for it many times (partial_model_cache). */
  const frame_record *cached_frames;
  const double *cached_f0_hz;
  int cached_count;
} partial_model;

partial_model partial_model_fit(const measure_context *context, const frame_record *frames,
                                const steady_part *part);
/* A frame's fundamental under the model. */
double partial_model_f0_hz(const partial_model *model, const frame_record *frame);
/* Compute it once for frames [0, count) into f0_hz (count doubles), which
   partial_model_f0_hz then reads for them. */
void partial_model_cache(partial_model *model, const frame_record *frames, int count,
                         double *f0_hz);

/* Onsets are placed where the level crosses this far below the attack's
   peak. Common practice, no source. */
#define PLUMB_ONSET_THRESHOLD_DB (-20.0)

/* How long before a sudden start a Hann-windowed frame's level is
   level_db below its full value (level_db < 0). */
double window_step_lead_s(double level_db, double frame_s);

/* Measure one note from its frames and fill everything but index and
   timeline_s. `scratch` holds at least 5 * count doubles, levels_db
   count * PLUMB_ENVELOPE_STEPS floats. */
void note_measure(const measure_context *context, const frame_record *frames,
                  int count, double *scratch, float *levels_db, plumb_note *note);

/* ------------------------------------------------------------ timbre.c */

/* Partial deviations, odd/even balance, tristimulus, centroid and
   harmonic-to-noise ratio of a pitched note (f0_hz set). */
void note_timbre(const measure_context *context, const frame_record *frames,
                 const steady_part *part, const partial_model *model, plumb_note *note);
/* An unpitched event's strong modes against the harmonics of its lowest. */
void note_mode_cents(const measure_context *context, const frame_record *frames, int count,
                     plumb_note *note);

/* ------------------------------------------------------------ envelope.c */

/* Attack, decay, sustain, release and free decay rate; f0_hz (0 when the
   event has no pitch) sets the smoothing. */
void note_envelope(const measure_context *context, const frame_record *frames, int count,
                   double f0_hz, float *levels_db, plumb_note *note);

/* ------------------------------------------------------------ note_tracker.c */

typedef struct {
  double hop_s;
  int min_note_frames;
  /* state */
  bool active;
  int count;               /* frames in the current note */
  double reference_midi;   /* the note's running pitch (NaN before) */
  double reference_values[PLUMB_REFERENCE_FRAMES]; /* newest voiced frames */
  double reference_sorted[PLUMB_REFERENCE_FRAMES]; /* the same, in order */
  int reference_n;         /* frames taken since the reference started */
  int unvoiced_run;
  int quiet_run;
  int change_run;          /* frames the smoothed pitch has left the note */
  double peak_level_dbfs;
  double idle_floor_dbfs;  /* a release must not restart a note */
  double last_level_dbfs;  /* of the frame tracked last */
  double onset_history[16];
  int onset_history_n;
  frame_record pending;    /* one frame of look-ahead for onset peaks */
  bool has_pending;
  bool has_pending_peak;   /* the frame being tracked is a flux peak */
  double previous_onset_db;
  frame_record *frames;    /* PLUMB_NOTE_FRAMES_MAX */
  /* The frames since the last silence while no note sounds: a note whose
     pitch firms up only after a slow attack starts where its sound does. */
  frame_record preroll[PLUMB_PREROLL_FRAMES];
  int preroll_count;
  int preroll_next;
} note_tracker;

/* A segment closed by the tracker: frames [0, count) of tracker->frames. */
typedef void (*note_sink)(void *context, const frame_record *frames,
                          int count);

plumb_status note_tracker_init(note_tracker *tracker);
void note_tracker_destroy(note_tracker *tracker);
void note_tracker_reset(note_tracker *tracker, double hop_s,
                        double min_note_ms);
void note_tracker_set_min_note(note_tracker *tracker, double min_note_ms);
void note_tracker_push(note_tracker *tracker, const frame_record *frame,
                       note_sink sink, void *context);
void note_tracker_flush(note_tracker *tracker, note_sink sink, void *context);

/* ------------------------------------------------------------ note_queue.c */

typedef struct {
  plumb_note *slots;            /* PLUMB_QUEUE_CAPACITY */
  _Atomic uint32_t write_index;
  _Atomic uint32_t read_index;
} note_queue;

plumb_status note_queue_init(note_queue *queue);
void note_queue_destroy(note_queue *queue);
void note_queue_clear(note_queue *queue); /* only while no consumer runs */
bool note_queue_push(note_queue *queue, const plumb_note *note);
bool note_queue_pop(note_queue *queue, plumb_note *note);

/* ------------------------------------------------------------ timeline.c */

typedef struct {
  uint64_t sample[PLUMB_TIMELINE_MARKS];
  plumb_transport transport[PLUMB_TIMELINE_MARKS];
  uint32_t count;
} timeline_marks;

void timeline_reset(timeline_marks *marks);
void timeline_mark(timeline_marks *marks, uint64_t sample, const plumb_transport *transport);
/* The transport position (and bar and beat, NaN when unknown) of sample
   `sample`. */
void timeline_locate(const timeline_marks *marks, uint64_t sample, double sample_rate_hz,
                     double *position_s, double *bar, double *beat);

/* ------------------------------------------------------------ stats.c */

double stats_median(double *values, int count); /* reorders values */
/* Least-squares line y = a + b x; returns false when x has no spread. */
bool stats_line_fit(const double *x, const double *y, int count,
                    double *intercept, double *slope);

#endif /* PLUMB_INTERNAL_H */
