/*
  Reading a fuzzer's input as a stream of small decisions. Every read
  succeeds: past the end of the input it gives zeros, so that a harness
  never has to check, and `fuzz_input_done` says when to stop. Header-only
  (static inline), shared by the harnesses in tests/fuzz/.
*/
#ifndef PLUMB_FUZZ_INPUT_H
#define PLUMB_FUZZ_INPUT_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* libFuzzer's entry points. */
int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);
int LLVMFuzzerInitialize(int *argc, char ***argv);

typedef struct {
  const uint8_t *data;
  size_t size;
  size_t at;
} fuzz_input;

static inline fuzz_input fuzz_input_of(const uint8_t *data, size_t size) {
  fuzz_input in = {data, size, 0};
  return in;
}

static inline bool fuzz_input_done(const fuzz_input *in) {
  return in->at >= in->size;
}

static inline size_t fuzz_input_left(const fuzz_input *in) {
  return in->at < in->size ? in->size - in->at : 0;
}

static inline uint8_t fuzz_u8(fuzz_input *in) {
  return in->at < in->size ? in->data[in->at++] : 0;
}

static inline uint16_t fuzz_u16(fuzz_input *in) {
  uint16_t a = fuzz_u8(in);
  return (uint16_t)(a | (uint16_t)fuzz_u8(in) << 8);
}

static inline uint32_t fuzz_u32(fuzz_input *in) {
  uint32_t a = fuzz_u16(in);
  return a | (uint32_t)fuzz_u16(in) << 16;
}

static inline uint64_t fuzz_u64(fuzz_input *in) {
  uint64_t a = fuzz_u32(in);
  return a | (uint64_t)fuzz_u32(in) << 32;
}

/* Any bit pattern: NaNs with payloads, infinities, denormals. */
static inline double fuzz_raw_double(fuzz_input *in) {
  uint64_t bits = fuzz_u64(in);
  double value;
  memcpy(&value, &bits, sizeof value);
  return value;
}

static inline float fuzz_raw_float(fuzz_input *in) {
  uint32_t bits = fuzz_u32(in);
  float value;
  memcpy(&value, &bits, sizeof value);
  return value;
}

/* Uniform in [low, high] from 16 bits. */
static inline double fuzz_range(fuzz_input *in, double low, double high) {
  return low + (high - low) * (double)fuzz_u16(in) / 65535.0;
}

/* Up to `max` bytes of the input (fewer at its end); *length says how
   many. The bytes are not copied. */
static inline const uint8_t *fuzz_bytes(fuzz_input *in, size_t max,
                                        size_t *length) {
  size_t left = fuzz_input_left(in);
  *length = max < left ? max : left;
  const uint8_t *bytes = in->data + in->at;
  in->at += *length;
  return bytes;
}

/* Whether a known defect, reported and kept in tests/fuzz/regressions/,
   is waived for this run: PLUMB_FUZZ_WAIVE holds a comma-separated list
   of names (see tests/fuzz/README.md), so that a long run can look past
   it for others. Nothing is waived by default. */
static inline bool fuzz_waived(const char *name) {
  const char *list = getenv("PLUMB_FUZZ_WAIVE");
  size_t length = strlen(name);
  for (const char *at = list; at && *at;) {
    const char *comma = strchr(at, ',');
    size_t item = comma ? (size_t)(comma - at) : strlen(at);
    if (item == length && memcmp(at, name, length) == 0) return true;
    at = comma ? comma + 1 : NULL;
  }
  return false;
}

/* What a harness removes before it aborts (its temporary files), since
   abort() runs no atexit handler. */
static void (*fuzz_cleanup)(void);

/* A broken invariant: say which and where, then abort so that libFuzzer
   keeps the input as a crash. */
#define FUZZ_CHECK(condition, ...)                                             \
  do {                                                                         \
    if (!(condition)) {                                                        \
      fprintf(stderr, "%s:%d: invariant failed: %s\n  ", __FILE__, __LINE__,   \
              #condition);                                                     \
      fprintf(stderr, __VA_ARGS__);                                            \
      fprintf(stderr, "\n");                                                   \
      if (fuzz_cleanup) fuzz_cleanup();                                        \
      abort();                                                                 \
    }                                                                          \
  } while (0)

#endif /* PLUMB_FUZZ_INPUT_H */
