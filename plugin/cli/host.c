/*
  The host side of the LV2 run cycle for one track. Each port gets its own
  buffer; the control atom input carries the parameters on the first run
  and an empty sequence after; the notify output is offered at full
  capacity before every run, as an atom:Chunk.
*/
#include "host.h"

#include "audio_file.h"
#include "control_messages.h"
#include "features.h"
#include "progress.h"

#include <lv2/atom/atom.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Atom buffers hold at least this, more if the port asks: room for the
   parameters (a folder path can be 4096 bytes) or a burst of note records. */
#define ATOM_BUFFER_MIN_BYTES 16384
/* Report frames to the progress line in lumps, not every block. */
#define PROGRESS_LUMP_FRAMES 16384

typedef struct {
  const host_context *context;
  const host_track *track;
  LilvInstance *instance;
  instance_features features;
  void **port_buffers;  /* one per port, NULL for a PORT_OTHER port */
  uint32_t *port_bytes; /* the capacity of each */
  float *controls;      /* one float per port, used by the control ports */
  float *audio_in;      /* the one audio input's buffer */
  float *interleaved;   /* block_frames * channels, as the file gives them */
  uint64_t reported_frames;
  uint64_t pending_frames;
} track_run;

static uint32_t buffer_bytes(const port_info *info, uint32_t block_frames) {
  switch (info->kind) {
  case PORT_AUDIO_IN:
  case PORT_AUDIO_OUT:
    return block_frames * (uint32_t)sizeof(float);
  case PORT_ATOM_IN:
  case PORT_ATOM_OUT:
    return info->minimum_bytes > ATOM_BUFFER_MIN_BYTES ? info->minimum_bytes
                                                       : ATOM_BUFFER_MIN_BYTES;
  default:
    return 0;
  }
}

/* Audio and atom buffers are 8-byte aligned (atoms require it) by calloc. */
static bool buffers_new(track_run *run, int channels) {
  const host_context *context = run->context;
  uint32_t count = context->layout->count;
  run->port_buffers = calloc(count, sizeof *run->port_buffers);
  run->port_bytes = calloc(count, sizeof *run->port_bytes);
  run->controls = calloc(count, sizeof *run->controls);
  run->interleaved =
      calloc((size_t)context->block_frames * (size_t)channels, sizeof(float));
  if (!run->port_buffers || !run->port_bytes || !run->controls ||
      !run->interleaved) {
    return false;
  }
  memcpy(run->controls, context->control_values, count * sizeof *run->controls);
  for (uint32_t i = 0; i < count; ++i) {
    const port_info *info = &context->layout->ports[i];
    run->port_bytes[i] = buffer_bytes(info, context->block_frames);
    if (run->port_bytes[i]) {
      run->port_buffers[i] = calloc(1, run->port_bytes[i]);
      if (!run->port_buffers[i]) {
        return false;
      }
    }
    if (info->kind == PORT_AUDIO_IN) {
      run->audio_in = run->port_buffers[i];
    }
  }
  return true;
}

static void buffers_free(track_run *run) {
  for (uint32_t i = 0; run->port_buffers && i < run->context->layout->count;
       ++i) {
    free(run->port_buffers[i]);
  }
  free(run->port_buffers);
  free(run->port_bytes);
  free(run->controls);
  free(run->interleaved);
}

static void connect_ports(track_run *run) {
  const port_layout *layout = run->context->layout;
  for (uint32_t i = 0; i < layout->count; ++i) {
    port_kind kind = layout->ports[i].kind;
    void *location = kind == PORT_CONTROL_IN || kind == PORT_CONTROL_OUT
                         ? &run->controls[i]
                         : run->port_buffers[i];
    lilv_instance_connect_port(run->instance, i, location);
  }
}

/* lilv's instantiate and free touch the world's list of open libraries,
   which is not thread-safe: both run under the context's mutex. */
static bool instantiate(track_run *run, double sample_rate_hz) {
  const host_context *context = run->context;
  features_init(&run->features, context->urids, context->uris,
                run->track->label, sample_rate_hz, context->block_frames);
  pthread_mutex_lock(context->lilv_mutex);
  run->instance = lilv_plugin_instantiate(context->plugin, sample_rate_hz,
                                          run->features.list);
  pthread_mutex_unlock(context->lilv_mutex);
  if (!run->instance) {
    /* The plugin usually says why itself; one line is enough. */
    if (atomic_load(&run->features.messages_shown) == 0) {
      console_error("%s: the plugin could not start at %.0f Hz",
                    run->track->label, sample_rate_hz);
    }
    return false;
  }
  connect_ports(run);
  return true;
}

static void free_instance(track_run *run) {
  if (run->instance) {
    pthread_mutex_lock(run->context->lilv_mutex);
    lilv_instance_free(run->instance);
    pthread_mutex_unlock(run->context->lilv_mutex);
    run->instance = NULL;
  }
}

/* The first run's parameters go into every atom input (plumb has one). */
static bool write_parameters(track_run *run, double sample_rate_hz) {
  const host_context *context = run->context;
  control_timeline timeline = context->timeline ? *context->timeline
                                                : (control_timeline){0};
  timeline.sample_rate_hz = sample_rate_hz;
  control_parameters parameters = {context->log_folder, run->track->label,
                                   context->custom_offsets_cents,
                                   run->track->name, run->track->channel + 1,
                                   context->timeline ? &timeline : NULL};
  LV2_Atom_Forge forge;
  lv2_atom_forge_init(&forge, urid_table_map_feature(context->urids));
  for (uint32_t i = 0; i < context->layout->count; ++i) {
    if (context->layout->ports[i].kind == PORT_ATOM_IN &&
        !control_messages_write_parameters(&forge, context->uris,
                                           run->port_buffers[i],
                                           run->port_bytes[i], &parameters)) {
      console_error(
          "%s: the parameters do not fit in the control port's %u bytes",
          run->track->label, run->port_bytes[i]);
      return false;
    }
  }
  return true;
}

/* Before every run: outputs offered at full capacity; inputs emptied,
   except on the first run, which carries the parameters. */
static void prepare_atom_ports(track_run *run, bool first) {
  const host_context *context = run->context;
  for (uint32_t i = 0; i < context->layout->count; ++i) {
    port_kind kind = context->layout->ports[i].kind;
    if (kind == PORT_ATOM_IN && !first) {
      control_messages_write_empty(context->uris, run->port_buffers[i]);
    } else if (kind == PORT_ATOM_OUT) {
      LV2_Atom *atom = run->port_buffers[i];
      atom->size = run->port_bytes[i] - (uint32_t)sizeof(LV2_Atom);
      atom->type = context->uris->atom_Chunk;
    }
  }
}

static void take_channel(track_run *run, sf_count_t frames, int channels) {
  for (sf_count_t i = 0; i < frames; ++i) {
    run->audio_in[i] = run->interleaved[i * channels + run->track->channel];
  }
}

static void count_frames(track_run *run, uint64_t frames) {
  run->pending_frames += frames;
  if (run->pending_frames >= PROGRESS_LUMP_FRAMES) {
    progress_add_frames(run->pending_frames);
    run->reported_frames += run->pending_frames;
    run->pending_frames = 0;
  }
}

/* Runs the whole file through the active instance. The first run happens
   even for an empty file, so that the parameters always arrive. */
static bool run_blocks(track_run *run, SNDFILE *file, int channels) {
  bool first = true;
  for (;;) {
    sf_count_t frames =
        sf_readf_float(file, run->interleaved, run->context->block_frames);
    if (frames <= 0 && !first) {
      break;
    }
    frames = frames > 0 ? frames : 0;
    take_channel(run, frames, channels);
    prepare_atom_ports(run, first);
    lilv_instance_run(run->instance, (uint32_t)frames);
    first = false;
    count_frames(run, (uint64_t)frames);
  }
  if (sf_error(file) != SF_ERR_NO_ERROR) {
    console_error("%s: reading stopped early: %s", run->track->name,
                  sf_strerror(file));
    return false;
  }
  return true;
}

/* The plugin's log_ok port: 0 once its log writer has failed. */
static bool log_is_ok(const track_run *run) {
  int index = port_layout_find(run->context->layout, "log_ok");
  if (index >= 0 && run->controls[index] < 0.5f) {
    console_error("%s: the plugin could not write its log in %s",
                  run->track->label, run->context->log_folder);
    return false;
  }
  return true;
}

/* The plugin's "notes" counter after the last run, or -1. */
static long notes_counted(const track_run *run) {
  int index = port_layout_find(run->context->layout, "notes");
  float value = index >= 0 ? run->controls[index] : -1.0f;
  return value >= 0.0f && value < 1e9f ? (long)value : -1;
}

static bool analyse(track_run *run, SNDFILE *file, const SF_INFO *info,
                    host_outcome *outcome) {
  if (!buffers_new(run, info->channels)) {
    console_error("%s: out of memory", run->track->label);
    return false;
  }
  if (!instantiate(run, (double)info->samplerate)) {
    return false;
  }
  if (!write_parameters(run, (double)info->samplerate)) {
    return false;
  }
  lilv_instance_activate(run->instance);
  bool ok = run_blocks(run, file, info->channels);
  ok = log_is_ok(run) && ok;
  /* Notes completed by the last run; deactivation may complete one more,
     which the ports no longer show. */
  outcome->ran = true;
  outcome->notes = notes_counted(run);
  lilv_instance_deactivate(run->instance);
  return ok;
}

bool host_run_track(const host_context *context, const host_track *track,
                    host_outcome *outcome) {
  *outcome = (host_outcome){false, -1};
  track_run run;
  memset(&run, 0, sizeof run);
  run.context = context;
  run.track = track;
  SF_INFO info;
  char reason[256];
  SNDFILE *file = audio_file_open(track->path, &info, reason, sizeof reason);
  bool ok = false;
  if (!file) {
    console_error("%s: %s", track->name, reason);
  } else if (track->channel >= info.channels) {
    console_error("%s: has %d channels now, no channel %d", track->name,
                  info.channels, track->channel + 1);
  } else {
    ok = analyse(&run, file, &info, outcome);
  }
  free_instance(&run);
  buffers_free(&run);
  if (file) {
    sf_close(file);
  }
  uint64_t reported = run.reported_frames + run.pending_frames;
  progress_add_frames(run.pending_frames);
  progress_track_done(track->frames > reported ? track->frames - reported : 0);
  return ok;
}
