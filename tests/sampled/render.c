/* Sampled instruments through fluidsynth: see render.h. */
#include "render.h"

#include <fcntl.h>
#include <math.h>
#include <sndfile.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/wait.h>
#include <unistd.h>

/* One tick is one millisecond: 480 ticks a quarter at 480000 us a
   quarter (Standard MIDI File 1.0: division and Set Tempo). */
#define TICKS_PER_QUARTER 480
#define MICROSECONDS_PER_QUARTER 480000
#define MELODIC_CHANNELS 15 /* channel 10 (index 9) is GM percussion */

/* ------------------------------------------------------------ bend */

int sampled_bend_value(double bend_cents) {
  const double value = 8192.0 + floor(bend_cents / SAMPLED_BEND_STEP_CENTS + 0.5);
  return value < 0.0 ? 0 : (value > 16383.0 ? 16383 : (int)value);
}

double sampled_bend_value_cents(int value) {
  return (value - 8192) * SAMPLED_BEND_STEP_CENTS;
}

/* ------------------------------------------------------------ events */

typedef struct {
  uint32_t tick;
  int order;   /* at one tick: set-up, note-off, bend, note-on */
  int sequence;
  uint8_t bytes[3];
  int length;
} midi_event;

enum { ORDER_SETUP, ORDER_OFF, ORDER_BEND, ORDER_ON };

static int compare_events(const void *a, const void *b) {
  const midi_event *x = a, *y = b;
  if (x->tick != y->tick)
    return x->tick < y->tick ? -1 : 1;
  if (x->order != y->order)
    return x->order - y->order;
  return x->sequence - y->sequence;
}

static int channel_of(int index) {
  const int c = index % MELODIC_CHANNELS;
  return c < 9 ? c : c + 1;
}

static uint32_t to_ticks(double seconds) {
  return (uint32_t)floor(seconds * 1000.0 + 0.5);
}

static void add_event(midi_event *events, int *count, uint32_t tick, int order,
                      int b0, int b1, int b2, int length) {
  midi_event *e = &events[*count];
  e->tick = tick;
  e->order = order;
  e->sequence = *count;
  e->bytes[0] = (uint8_t)b0;
  e->bytes[1] = (uint8_t)b1;
  e->bytes[2] = (uint8_t)b2;
  e->length = length;
  ++*count;
}

/* Program, then RPN 0 (pitch bend sensitivity) = range semitones + 0
   cents, then the null RPN so later data entry changes nothing
   (GM Level 1 / MIDI 1.0 RPN procedure). */
static void add_channel_setup(midi_event *events, int *count, int channel,
                              int gm_program) {
  const int cc = 0xB0 | channel;
  add_event(events, count, 0, ORDER_SETUP, 0xC0 | channel, gm_program, 0, 2);
  add_event(events, count, 0, ORDER_SETUP, cc, 101, 0, 3);
  add_event(events, count, 0, ORDER_SETUP, cc, 100, 0, 3);
  add_event(events, count, 0, ORDER_SETUP, cc, 6, SAMPLED_BEND_RANGE_SEMITONES, 3);
  add_event(events, count, 0, ORDER_SETUP, cc, 38, 0, 3);
  add_event(events, count, 0, ORDER_SETUP, cc, 101, 127, 3);
  add_event(events, count, 0, ORDER_SETUP, cc, 100, 127, 3);
}

static int check_notes(const sampled_note *notes, int n) {
  const double limit_cents = 8191.0 * SAMPLED_BEND_STEP_CENTS;
  for (int i = 0; i < n; ++i) {
    const sampled_note *note = &notes[i];
    if (note->midi < 0 || note->midi > 127 || note->velocity < 1 ||
        note->velocity > 127 || !(note->start_s >= 0.0) ||
        !(note->duration_s > 0.0) || !(fabs(note->bend_cents) < limit_cents)) {
      fprintf(stderr, "sampled: note %d out of range (midi %d, velocity %d, "
              "start %g s, %g s, bend %g cents)\n", i, note->midi,
              note->velocity, note->start_s, note->duration_s, note->bend_cents);
      return -1;
    }
  }
  return 0;
}

/* Per note: bend, note-on, note-off, on a channel of its own. */
static int build_events(int gm_program, const sampled_note *notes, int n,
                        midi_event *events, uint32_t *end_tick) {
  int count = 0;
  const int channels = n < MELODIC_CHANNELS ? n : MELODIC_CHANNELS;
  for (int c = 0; c < channels; ++c)
    add_channel_setup(events, &count, channel_of(c), gm_program);
  *end_tick = 0;
  for (int i = 0; i < n; ++i) {
    const int channel = channel_of(i);
    const uint32_t on = to_ticks(notes[i].start_s);
    uint32_t off = to_ticks(notes[i].start_s + notes[i].duration_s);
    if (off <= on)
      off = on + 1;
    const int bend = sampled_bend_value(notes[i].bend_cents);
    add_event(events, &count, on, ORDER_BEND, 0xE0 | channel, bend & 0x7F, bend >> 7, 3);
    add_event(events, &count, on, ORDER_ON, 0x90 | channel, notes[i].midi,
              notes[i].velocity, 3);
    add_event(events, &count, off, ORDER_OFF, 0x80 | channel, notes[i].midi, 0, 3);
    if (off > *end_tick)
      *end_tick = off;
  }
  qsort(events, (size_t)count, sizeof *events, compare_events);
  return count;
}

/* ------------------------------------------------------------ file */

static void put_u32(FILE *f, uint32_t v) {
  fputc((int)(v >> 24) & 0xFF, f);
  fputc((int)(v >> 16) & 0xFF, f);
  fputc((int)(v >> 8) & 0xFF, f);
  fputc((int)v & 0xFF, f);
}

/* Variable-length quantity (SMF 1.0): 7 bits a byte, high bit = more. */
static void put_vlq(FILE *f, uint32_t v) {
  uint8_t bytes[5];
  int k = 0;
  do {
    bytes[k++] = (uint8_t)(v & 0x7F);
    v >>= 7;
  } while (v && k < 5);
  while (k-- > 0)
    fputc(bytes[k] | (k > 0 ? 0x80 : 0), f);
}

static void write_track(FILE *f, const midi_event *events, int count,
                        uint32_t end_tick) {
  static const uint8_t tempo[6] = {0xFF, 0x51, 0x03,
                                   (MICROSECONDS_PER_QUARTER >> 16) & 0xFF,
                                   (MICROSECONDS_PER_QUARTER >> 8) & 0xFF,
                                   MICROSECONDS_PER_QUARTER & 0xFF};
  put_vlq(f, 0);
  fwrite(tempo, 1, sizeof tempo, f);
  uint32_t now = 0;
  for (int i = 0; i < count; ++i) {
    put_vlq(f, events[i].tick - now);
    fwrite(events[i].bytes, 1, (size_t)events[i].length, f);
    now = events[i].tick;
  }
  put_vlq(f, end_tick - now);
  fputc(0xFF, f); /* End of Track */
  fputc(0x2F, f);
  fputc(0x00, f);
}

int sampled_write_midi(const char *path, int gm_program,
                       const sampled_note *notes, int n) {
  if (!path || !notes || n < 1 || gm_program < 0 || gm_program > 127) {
    fprintf(stderr, "sampled_write_midi: bad arguments\n");
    return -1;
  }
  if (check_notes(notes, n) != 0)
    return -1;
  midi_event *events = malloc(sizeof *events * (size_t)(3 * n + 7 * MELODIC_CHANNELS));
  FILE *f = fopen(path, "wb");
  if (!events || !f) {
    fprintf(stderr, "sampled_write_midi: cannot create '%s'\n", path);
    free(events);
    if (f)
      fclose(f);
    return -1;
  }
  uint32_t end_tick = 0;
  const int count = build_events(gm_program, notes, n, events, &end_tick);
  /* Header: format 0, one track, division in ticks a quarter. */
  fwrite("MThd", 1, 4, f);
  put_u32(f, 6);
  const uint8_t header[6] = {0, 0, 0, 1, TICKS_PER_QUARTER >> 8, TICKS_PER_QUARTER & 0xFF};
  fwrite(header, 1, sizeof header, f);
  fwrite("MTrk", 1, 4, f);
  const long length_at = ftell(f);
  put_u32(f, 0); /* patched below */
  write_track(f, events, count, end_tick + to_ticks(SAMPLED_TAIL_S));
  const long end = ftell(f);
  fseek(f, length_at, SEEK_SET);
  put_u32(f, (uint32_t)(end - length_at - 4));
  free(events);
  if (ferror(f) | fclose(f)) {
    fprintf(stderr, "sampled_write_midi: cannot write '%s'\n", path);
    return -1;
  }
  return 0;
}

/* ------------------------------------------------------------ render */

bool sampled_available(void) {
  if (access(SAMPLED_SOUNDFONT, R_OK) != 0) {
    fprintf(stderr, "sampled: %s missing (Debian package fluid-soundfont-gm)\n",
            SAMPLED_SOUNDFONT);
    return false;
  }
  if (system("command -v fluidsynth >/dev/null 2>&1") != 0) {
    fprintf(stderr, "sampled: fluidsynth not on PATH (Debian package fluidsynth)\n");
    return false;
  }
  return true;
}

/* FNV-1a over everything that changes the rendering. */
static uint64_t content_hash(int gm_program, const sampled_note *notes, int n,
                             double sample_rate) {
  uint64_t h = 0xcbf29ce484222325u;
  const unsigned char *parts[3] = {(const unsigned char *)&gm_program,
                                   (const unsigned char *)&sample_rate,
                                   (const unsigned char *)notes};
  const size_t sizes[3] = {sizeof gm_program, sizeof sample_rate,
                           sizeof *notes * (size_t)n};
  for (int p = 0; p < 3; ++p)
    for (size_t i = 0; i < sizes[p]; ++i)
      h = (h ^ parts[p][i]) * 0x100000001b3u;
  return h;
}

/* fork/exec with an argument vector: no shell, so no quoting issues. */
static int run_fluidsynth(const char *midi_path, const char *wav_path,
                          const char *log_path, double sample_rate) {
  char rate[32];
  snprintf(rate, sizeof rate, "%.0f", sample_rate);
  char *const argv[] = {"fluidsynth", "-ni", "-q", "-C", "0", "-R", "0",
                        "-r", rate, "-O", "float", "-T", "wav",
                        "-F", (char *)(uintptr_t)wav_path,
                        SAMPLED_SOUNDFONT, (char *)(uintptr_t)midi_path, NULL};
  const pid_t pid = fork();
  if (pid < 0)
    return -1;
  if (pid == 0) {
    const int log = open(log_path, O_WRONLY | O_CREAT | O_TRUNC, 0644);
    const int null_in = open("/dev/null", O_RDONLY);
    if (log >= 0) {
      dup2(log, STDOUT_FILENO);
      dup2(log, STDERR_FILENO);
    }
    if (null_in >= 0)
      dup2(null_in, STDIN_FILENO);
    execvp(argv[0], argv);
    _exit(127);
  }
  int status = 0;
  if (waitpid(pid, &status, 0) != pid)
    return -1;
  return WIFEXITED(status) && WEXITSTATUS(status) == 0 ? 0 : -1;
}

static int write_mono(const char *path, const float *samples, size_t n,
                      int sample_rate_hz) {
  SF_INFO info;
  memset(&info, 0, sizeof info);
  info.samplerate = sample_rate_hz;
  info.channels = 1;
  info.format = SF_FORMAT_WAV | SF_FORMAT_FLOAT;
  SNDFILE *file = sf_open(path, SFM_WRITE, &info);
  if (!file) {
    fprintf(stderr, "sampled: cannot create '%s': %s\n", path, sf_strerror(NULL));
    return -1;
  }
  const sf_count_t written = sf_writef_float(file, samples, (sf_count_t)n);
  return (sf_close(file) == 0 && written == (sf_count_t)n) ? 0 : -1;
}

/* fluidsynth writes stereo; the mono take is the mean of the channels. */
static int mix_to_mono(const char *stereo_path, const char *mono_path) {
  SF_INFO info;
  memset(&info, 0, sizeof info);
  SNDFILE *in = sf_open(stereo_path, SFM_READ, &info);
  if (!in) {
    fprintf(stderr, "sampled: cannot read '%s': %s\n", stereo_path, sf_strerror(NULL));
    return -1;
  }
  const size_t frames = (size_t)info.frames, channels = (size_t)info.channels;
  float *interleaved = malloc(sizeof(float) * (frames * channels + 1));
  float *mono = malloc(sizeof(float) * (frames + 1));
  int status = -1;
  if (interleaved && mono &&
      sf_readf_float(in, interleaved, (sf_count_t)frames) == (sf_count_t)frames) {
    double peak = 0.0;
    for (size_t i = 0; i < frames; ++i) {
      double sum = 0.0;
      for (size_t c = 0; c < channels; ++c)
        sum += interleaved[i * channels + c];
      mono[i] = (float)(sum / (double)channels);
      peak = fmax(peak, fabs((double)mono[i]));
    }
    if (peak > 0.0)
      status = write_mono(mono_path, mono, frames, info.samplerate);
    else
      fprintf(stderr, "sampled: '%s' is silent\n", stereo_path);
  }
  sf_close(in);
  free(interleaved);
  free(mono);
  return status;
}

int sampled_render(const char *dir, int gm_program, const sampled_note *notes,
                   int n, double sample_rate, char *out_wav_path, size_t cap) {
  if (!dir || !out_wav_path || cap == 0 || !(sample_rate >= 8000.0 && sample_rate <= 192000.0)) {
    fprintf(stderr, "sampled_render: bad arguments\n");
    return -1;
  }
  char stem[4096], midi_path[4200], stereo_path[4200], log_path[4200];
  snprintf(stem, sizeof stem, "%s/gm%03d-%016llx", dir, gm_program,
           (unsigned long long)content_hash(gm_program, notes, n, sample_rate));
  snprintf(midi_path, sizeof midi_path, "%s.mid", stem);
  snprintf(stereo_path, sizeof stereo_path, "%s.stereo.wav", stem);
  snprintf(log_path, sizeof log_path, "%s.log", stem);
  if ((size_t)snprintf(out_wav_path, cap, "%s.wav", stem) >= cap) {
    fprintf(stderr, "sampled_render: output path longer than %zu\n", cap);
    return -1;
  }
  if (sampled_write_midi(midi_path, gm_program, notes, n) != 0)
    return -1;
  if (run_fluidsynth(midi_path, stereo_path, log_path, sample_rate) != 0) {
    fprintf(stderr, "sampled_render: fluidsynth failed on '%s'; see '%s'\n",
            midi_path, log_path);
    return -1;
  }
  const int status = mix_to_mono(stereo_path, out_wav_path);
  remove(stereo_path);
  if (status == 0)
    remove(log_path); /* kept only to explain a failure */
  return status;
}

float *sampled_read_mono(const char *path, size_t *n_frames, int *sample_rate_hz) {
  SF_INFO info;
  memset(&info, 0, sizeof info);
  SNDFILE *in = path ? sf_open(path, SFM_READ, &info) : NULL;
  if (!in) {
    fprintf(stderr, "sampled: cannot read '%s': %s\n", path ? path : "(null)",
            sf_strerror(NULL));
    return NULL;
  }
  const size_t frames = (size_t)info.frames, channels = (size_t)info.channels;
  float *all = malloc(sizeof(float) * (frames * channels + 1));
  float *mono = malloc(sizeof(float) * (frames + 1));
  if (!all || !mono ||
      sf_readf_float(in, all, (sf_count_t)frames) != (sf_count_t)frames) {
    fprintf(stderr, "sampled: cannot read the samples of '%s'\n", path);
    free(all);
    free(mono);
    sf_close(in);
    return NULL;
  }
  for (size_t i = 0; i < frames; ++i)
    mono[i] = all[i * channels];
  sf_close(in);
  free(all);
  if (n_frames)
    *n_frames = frames;
  if (sample_rate_hz)
    *sample_rate_hz = info.samplerate;
  return mono;
}
