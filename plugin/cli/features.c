#include "features.h"

#include "progress.h"

#include <lv2/buf-size/buf-size.h>
#include <lv2/urid/urid.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

/* The plugin's own messages. Notes and traces are left out: a batch of
   many takes should show what went wrong, not every step that went right. */
static int log_vprintf(LV2_Log_Handle handle, LV2_URID type, const char *format,
                       va_list args) {
  instance_features *set = handle;
  if (type == set->uris->log_Note || type == set->uris->log_Trace) {
    return 0;
  }
  char message[1024];
  int length = vsnprintf(message, sizeof message, format, args);
  if (length < 0) {
    return length;
  }
  /* One message, one line: fold the plugin's line breaks. */
  for (char *c = message; *c; ++c) {
    if (*c == '\n' || *c == '\r') {
      *c = c[1] ? ' ' : '\0';
    }
  }
  /* The plugin names itself for a workstation's log; here the line
     already starts "plumb: " and names the track instead. */
  const char *text = message;
  if (strncmp(text, "plumb: ", 7) == 0) {
    text += 7;
  }
  console_error("%s: %s", set->track_label, text);
  atomic_fetch_add(&set->messages_shown, 1);
  return length;
}

static int log_printf(LV2_Log_Handle handle, LV2_URID type, const char *format,
                      ...) {
  va_list args;
  va_start(args, format);
  int length = log_vprintf(handle, type, format, args);
  va_end(args);
  return length;
}

static void init_options(instance_features *set) {
  const host_uris *uris = set->uris;
  const LV2_Options_Option options[FEATURES_OPTION_COUNT + 1] = {
      {LV2_OPTIONS_INSTANCE, 0, uris->param_sampleRate, sizeof(float),
       uris->atom_Float, &set->sample_rate_hz},
      {LV2_OPTIONS_INSTANCE, 0, uris->bufsz_minBlockLength, sizeof(int32_t),
       uris->atom_Int, &set->min_block_frames},
      {LV2_OPTIONS_INSTANCE, 0, uris->bufsz_maxBlockLength, sizeof(int32_t),
       uris->atom_Int, &set->max_block_frames},
      {LV2_OPTIONS_INSTANCE, 0, uris->bufsz_nominalBlockLength, sizeof(int32_t),
       uris->atom_Int, &set->max_block_frames},
      {LV2_OPTIONS_INSTANCE, 0, 0, 0, 0, NULL}};
  for (int i = 0; i <= FEATURES_OPTION_COUNT; ++i) {
    set->options[i] = options[i];
  }
}

void features_init(instance_features *set, urid_table *table,
                   const host_uris *uris, const char *track_label,
                   double sample_rate_hz, uint32_t max_block_frames) {
  set->track_label = track_label;
  set->uris = uris;
  atomic_init(&set->messages_shown, 0);
  set->sample_rate_hz = (float)sample_rate_hz;
  /* Every block is full except the last, which can be a single frame. */
  set->min_block_frames = 1;
  set->max_block_frames = (int32_t)max_block_frames;
  set->log.handle = set;
  set->log.printf = log_printf;
  set->log.vprintf = log_vprintf;
  init_options(set);
  const LV2_Feature features[FEATURES_COUNT] = {
      {LV2_URID__map, urid_table_map_feature(table)},
      {LV2_URID__unmap, urid_table_unmap_feature(table)},
      {LV2_LOG__log, &set->log},
      {LV2_OPTIONS__options, set->options},
      {LV2_BUF_SIZE__boundedBlockLength, NULL}};
  for (int i = 0; i < FEATURES_COUNT; ++i) {
    set->features[i] = features[i];
    set->list[i] = &set->features[i];
  }
  set->list[FEATURES_COUNT] = NULL;
}
