/*
  The three ensemble files' text (docs/ensemble.md): ensemble.pairs.csv,
  ensemble.tracks.csv and ensemble.json. Numbers go through printf in the
  "C" locale (the command, the only writer, never sets another), so the
  decimal point is always '.'.
*/
#include "ensemble_files.h"

#include <math.h>
#include <string.h>

static void put_number(FILE *out, const char *format, double value) {
  if (isfinite(value)) fprintf(out, format, value);
}

static void put_pair(FILE *out, const ensemble_files *o, const plumb_ensemble_pair *pair) {
  const ensemble_files_track *low = &o->tracks[pair->track_low];
  const ensemble_files_track *high = &o->tracks[pair->track_high];
  char interval[8] = "";
  plumb_interval_name(pair->semitones, interval);
  fprintf(out, "%.4f,%.4f,%s,%u,%s,%s,%u,%s,%s,", pair->start_s, pair->end_s, low->stem,
          low->notes[pair->note_low].index, low->names[pair->note_low], high->stem,
          high->notes[pair->note_high].index, high->names[pair->note_high], interval);
  put_number(out, "%.3f", pair->interval_cents);
  fputc(',', out);
  put_number(out, "%.3f", pair->et_dev_cents);
  fputc(',', out);
  if (pair->just_p > 0) fprintf(out, "%d/%d", pair->just_p, pair->just_q);
  fputc(',', out);
  put_number(out, "%.3f", pair->just_dev_cents);
  fputc(',', out);
  put_number(out, "%.4f", pair->beat_hz);
  /* The later note starts the overlap: its bar and beat are the pair's. */
  bool high_later = high->notes[pair->note_high].start_s >= low->notes[pair->note_low].start_s;
  const plumb_ensemble_note *later =
      high_later ? &high->notes[pair->note_high] : &low->notes[pair->note_low];
  fprintf(out, ",%s,", plumb_pair_verdict_name(pair->verdict));
  put_number(out, "%.0f", later->bar);
  fputc(',', out);
  put_number(out, "%.3f", later->beat);
  fputc('\n', out);
}

void ensemble_files_pairs_csv(FILE *out, const ensemble_files *o) {
  fputs("start_s,end_s,track_low,index_low,note_low,track_high,index_high,note_high,interval,"
        "interval_cents,et_dev_cents,just_ratio,just_dev_cents,beat_hz,verdict,bar,beat\n",
        out);
  for (size_t i = 0; i < o->result->pair_count; ++i) put_pair(out, o, &o->result->pairs[i]);
}

void ensemble_files_tracks_csv(FILE *out, const ensemble_files *o) {
  fputs("track,notes,pairs,offset_cents,drift_cents_per_min,flagged_pairs,log\n", out);
  for (size_t t = 0; t < o->count; ++t) {
    const plumb_ensemble_track_result *r = &o->result->tracks[t];
    fprintf(out, "%s,%zu,%zu,", o->tracks[t].stem, r->notes, r->pairs);
    put_number(out, "%.3f", r->offset_cents);
    fputc(',', out);
    put_number(out, "%.3f", r->drift_cents_per_min);
    const char *name = strrchr(o->tracks[t].path, '/');
    fprintf(out, ",%zu,%s\n", r->flagged_pairs, name ? name + 1 : o->tracks[t].path);
  }
}

/* A JSON string (RFC 8259): quote, backslash and control characters
   escaped; labels and file names are the logs' own, already plain. */
static void put_json_string(FILE *out, const char *text) {
  fputc('"', out);
  for (const unsigned char *c = (const unsigned char *)text; *c; ++c) {
    if (*c == '"' || *c == '\\')
      fprintf(out, "\\%c", *c);
    else if (*c < 0x20 || *c == 0x7f)
      fprintf(out, "\\u%04x", *c);
    else
      fputc(*c, out);
  }
  fputc('"', out);
}

static void put_json_number(FILE *out, const char *format, double value) {
  if (isfinite(value))
    fprintf(out, format, value);
  else
    fputs("null", out);
}

void ensemble_files_json(FILE *out, const ensemble_files *o) {
  const plumb_ensemble_settings *s = o->settings;
  fprintf(out, "{\n  \"format\": \"plumb-ensemble-1\",\n  \"plumb_version\": \"%s\",\n",
          PLUMB_VERSION);
  fprintf(out, "  \"settings\": {\n    \"intervals\": \"%s\",\n",
          s->target == PLUMB_INTERVALS_JUST ? "just" : "equal");
  fprintf(out, "    \"tolerance_cents\": %.2f,\n    \"min_overlap_ms\": %.1f\n  },\n",
          s->tolerance_cents, 1000.0 * s->min_overlap_s);
  fputs("  \"logs\": [", out);
  for (size_t t = 0; t < o->count; ++t) {
    fputs(t ? ",\n    {\"track\": " : "\n    {\"track\": ", out);
    put_json_string(out, o->tracks[t].stem);
    fputs(", \"notes_file\": ", out);
    put_json_string(out, o->tracks[t].path);
    fputs(", \"run_id\": ", out);
    if (o->tracks[t].run_id && o->tracks[t].run_id[0])
      put_json_string(out, o->tracks[t].run_id);
    else
      fputs("null", out);
    fputc('}', out);
  }
  fputs(o->count ? "\n  ],\n  \"tracks\": [" : "],\n  \"tracks\": [", out);
  for (size_t t = 0; t < o->count; ++t) {
    const plumb_ensemble_track_result *r = &o->result->tracks[t];
    fputs(t ? ",\n    {\"track\": " : "\n    {\"track\": ", out);
    put_json_string(out, o->tracks[t].stem);
    fprintf(out, ", \"notes\": %zu, \"pairs\": %zu, \"offset_cents\": ", r->notes, r->pairs);
    put_json_number(out, "%.3f", r->offset_cents);
    fputs(", \"drift_cents_per_min\": ", out);
    put_json_number(out, "%.3f", r->drift_cents_per_min);
    fprintf(out, ", \"flagged_pairs\": %zu}", r->flagged_pairs);
  }
  fprintf(out, "%s  \"pairs\": %zu,\n  \"flagged_pairs\": %zu,\n  \"drift_cents_per_min\": ",
          o->count ? "\n  ],\n" : "],\n", o->result->pair_count, o->result->flagged_pairs);
  put_json_number(out, "%.3f", o->result->drift_cents_per_min);
  fputs("\n}\n", out);
}
