/*
  bench_accuracy [TAKES] [SECONDS]: note accuracy on the harness's random
  takes, per condition and in total.

  Conditions: sample rates 44.1, 48 and 96 kHz, each at 15, 20 and 40 dB
  SNR; TAKES seeded takes (default 2) of SECONDS (default 30) each, with
  vibrato and legato. Every take runs through the core in 1024-frame
  blocks and is scored with harness_score_notes (onset +-50 ms, pitch
  +-50 cents, one-to-one matching, as mir_eval and MIREX). For the matched
  notes: |cents error| of f0_hz against the true centre pitch (median and
  95th percentile, interpolated between order statistics); for the
  matched notes played with vibrato: how many were reported with vibrato,
  and the median |rate error| (Hz) and |extent error| (cents, peak
  deviation from the centre); for those played without: how many were
  wrongly reported with vibrato.
*/
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness.h"

#define MAX_VALUES (64 * HARNESS_MAX_NOTES)

typedef struct {
  int reference, estimated, matched;
  int cents_n, vibrato_n, vibrato_found, plain_n, plain_false;
  double cents[MAX_VALUES];
  double rate_hz[MAX_VALUES];
  double extent_cents[MAX_VALUES];
} tally;

static int compare_double(const void *a, const void *b) {
  double x = *(const double *)a, y = *(const double *)b;
  return (x > y) - (x < y);
}

/* Percentile of values[0..n) (sorted here), linear between order
   statistics; NaN when empty. */
static double percentile(double *values, int n, double p) {
  if (n == 0) return NAN;
  qsort(values, (size_t)n, sizeof *values, compare_double);
  double position = p / 100.0 * (n - 1);
  int below = (int)position;
  if (below + 1 >= n) return values[n - 1];
  return values[below] + (position - below) * (values[below + 1] - values[below]);
}

static void add_note(tally *t, const sig_note *truth, double true_f0_hz,
                     const plumb_note *estimate) {
  if (t->cents_n < MAX_VALUES)
    t->cents[t->cents_n++] = fabs(harness_cents(estimate->f0_hz, true_f0_hz));
  bool reported = isfinite(estimate->vibrato_hz);
  if (truth->vibrato_hz <= 0.0) {
    t->plain_n++;
    if (reported) t->plain_false++;
    return;
  }
  t->vibrato_n++;
  if (!reported || t->vibrato_found >= MAX_VALUES) return;
  t->rate_hz[t->vibrato_found] = fabs(estimate->vibrato_hz - truth->vibrato_hz);
  t->extent_cents[t->vibrato_found] = fabs(estimate->vibrato_cents - truth->vibrato_cents);
  t->vibrato_found++;
}

/* Analyse and score one take into the condition's and the total tally. */
static int score_take(const harness_take_spec *spec, tally *condition, tally *total) {
  static harness_take take;
  static harness_result result;
  static harness_score score;
  if (harness_random_take(spec, &take) != 0) return -1;
  int status = harness_run_default(spec->sample_rate_hz, take.samples, take.n, 1024, &result);
  if (status == 0) {
    harness_score_notes(take.truth, take.count, &result, &score);
    tally *both[2] = {condition, total};
    for (int k = 0; k < 2; ++k) {
      both[k]->reference += score.reference;
      both[k]->estimated += score.estimated;
      both[k]->matched += score.matched;
      for (int r = 0; r < take.count; ++r)
        if (score.match[r] >= 0)
          add_note(both[k], &take.notes[r], take.true_f0_hz[r], &result.notes[score.match[r]]);
    }
  }
  harness_take_free(&take);
  return status;
}

static void print_tally(const char *label, tally *t) {
  double precision = t->estimated ? (double)t->matched / t->estimated : 0.0;
  double recall = t->reference ? (double)t->matched / t->reference : 0.0;
  double f1 = precision + recall > 0.0 ? 2.0 * precision * recall / (precision + recall) : 0.0;
  printf("accuracy: %-14s notes %4d found %4d matched %4d  P %.3f R %.3f F1 %.3f  "
         "|cents| median %5.2f p95 %5.2f  vibrato found %3d/%-3d rate err %.2f Hz "
         "extent err %4.1f c  false vibrato %d/%d\n",
         label, t->reference, t->estimated, t->matched, precision, recall, f1,
         percentile(t->cents, t->cents_n, 50.0), percentile(t->cents, t->cents_n, 95.0),
         t->vibrato_found, t->vibrato_n, percentile(t->rate_hz, t->vibrato_found, 50.0),
         percentile(t->extent_cents, t->vibrato_found, 50.0), t->plain_false, t->plain_n);
}

int main(int argc, char **argv) {
  static const double rates_hz[] = {44100.0, 48000.0, 96000.0};
  static const double snrs_db[] = {15.0, 20.0, 40.0};
  int takes = argc > 1 ? atoi(argv[1]) : 2;
  double seconds = argc > 2 ? atof(argv[2]) : 30.0;
  if (takes < 1 || seconds < 2.0) return 2;
  static tally condition, total;
  printf("accuracy: %d takes x %.0f s per condition, vibrato and legato, block 1024\n",
         takes, seconds);
  for (int r = 0; r < 3; ++r)
    for (int s = 0; s < 3; ++s) {
      memset(&condition, 0, sizeof condition);
      for (int k = 0; k < takes; ++k) {
        harness_take_spec spec = {rates_hz[r], snrs_db[s], seconds, true, true,
                                  (uint64_t)(100 * r + 10 * s + k + 1)};
        if (score_take(&spec, &condition, &total) != 0) {
          fprintf(stderr, "bench_accuracy: take %d at %.0f Hz failed\n", k, rates_hz[r]);
          return 1;
        }
      }
      char label[32];
      snprintf(label, sizeof label, "%.1fk %2.0fdB", rates_hz[r] / 1000.0, snrs_db[s]);
      print_tally(label, &condition);
    }
  print_tally("total", &total);
  double precision = total.estimated ? (double)total.matched / total.estimated : 0.0;
  double recall = total.reference ? (double)total.matched / total.reference : 0.0;
  printf("values: f1=%.4f cents_median=%.3f cents_p95=%.3f\n",
         precision + recall > 0 ? 2 * precision * recall / (precision + recall) : 0.0,
         percentile(total.cents, total.cents_n, 50.0),
         percentile(total.cents, total.cents_n, 95.0));
  return 0;
}
