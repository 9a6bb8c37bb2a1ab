#include "ports.h"

#include "progress.h"

#include <lv2/atom/atom.h>
#include <lv2/core/lv2.h>
#include <lv2/resize-port/resize-port.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

typedef struct {
  LilvNode *input;
  LilvNode *output;
  LilvNode *audio;
  LilvNode *control;
  LilvNode *atom;
  LilvNode *optional;
  LilvNode *minimum_size;
} port_classes;

static void classes_new(LilvWorld *world, port_classes *classes) {
  classes->input = lilv_new_uri(world, LV2_CORE__InputPort);
  classes->output = lilv_new_uri(world, LV2_CORE__OutputPort);
  classes->audio = lilv_new_uri(world, LV2_CORE__AudioPort);
  classes->control = lilv_new_uri(world, LV2_CORE__ControlPort);
  classes->atom = lilv_new_uri(world, LV2_ATOM__AtomPort);
  classes->optional = lilv_new_uri(world, LV2_CORE__connectionOptional);
  classes->minimum_size = lilv_new_uri(world, LV2_RESIZE_PORT__minimumSize);
}

static void classes_free(port_classes *classes) {
  lilv_node_free(classes->input);
  lilv_node_free(classes->output);
  lilv_node_free(classes->audio);
  lilv_node_free(classes->control);
  lilv_node_free(classes->atom);
  lilv_node_free(classes->optional);
  lilv_node_free(classes->minimum_size);
}

static port_kind kind_of(const LilvPlugin *plugin, const LilvPort *port,
                         const port_classes *classes) {
  bool input = lilv_port_is_a(plugin, port, classes->input);
  bool output = lilv_port_is_a(plugin, port, classes->output);
  if (input == output) {
    return PORT_OTHER;
  }
  if (lilv_port_is_a(plugin, port, classes->audio)) {
    return input ? PORT_AUDIO_IN : PORT_AUDIO_OUT;
  }
  if (lilv_port_is_a(plugin, port, classes->control)) {
    return input ? PORT_CONTROL_IN : PORT_CONTROL_OUT;
  }
  if (lilv_port_is_a(plugin, port, classes->atom)) {
    return input ? PORT_ATOM_IN : PORT_ATOM_OUT;
  }
  return PORT_OTHER;
}

static uint32_t minimum_bytes(const LilvPlugin *plugin, const LilvPort *port,
                              const port_classes *classes) {
  LilvNodes *sizes = lilv_port_get_value(plugin, port, classes->minimum_size);
  const LilvNode *size = sizes ? lilv_nodes_get_first(sizes) : NULL;
  int bytes = size && lilv_node_is_int(size) ? lilv_node_as_int(size) : 0;
  lilv_nodes_free(sizes);
  return bytes > 0 ? (uint32_t)bytes : 0;
}

/* Fills one port's entry; false after reporting a port that cannot be
   connected. */
static bool read_port(const LilvPlugin *plugin, uint32_t index,
                      const port_classes *classes, float default_value,
                      port_info *info) {
  const LilvPort *port = lilv_plugin_get_port_by_index(plugin, index);
  const LilvNode *symbol = lilv_port_get_symbol(plugin, port);
  snprintf(info->symbol, sizeof info->symbol, "%s",
           lilv_node_as_string(symbol));
  info->kind = kind_of(plugin, port, classes);
  info->default_value = default_value;
  info->minimum_bytes = minimum_bytes(plugin, port, classes);
  if (info->kind == PORT_OTHER &&
      !lilv_port_has_property(plugin, port, classes->optional)) {
    console_error(
        "the plugin's port '%s' is of a kind this host cannot connect",
        info->symbol);
    return false;
  }
  return true;
}

/* Each track is one channel, so the plugin must take exactly one. */
static bool has_one_audio_input(const port_layout *layout) {
  uint32_t inputs = 0;
  for (uint32_t i = 0; i < layout->count; ++i) {
    inputs += layout->ports[i].kind == PORT_AUDIO_IN;
  }
  if (inputs != 1) {
    console_error("the plugin has %u audio inputs; this host feeds exactly one",
                  inputs);
  }
  return inputs == 1;
}

bool port_layout_read(LilvWorld *world, const LilvPlugin *plugin,
                      port_layout *layout) {
  layout->count = lilv_plugin_get_num_ports(plugin);
  layout->ports =
      calloc(layout->count ? layout->count : 1, sizeof *layout->ports);
  float *minimum = calloc(layout->count ? layout->count : 1, sizeof *minimum);
  float *defaults = calloc(layout->count ? layout->count : 1, sizeof *defaults);
  bool ok = layout->ports && minimum && defaults;
  if (!ok) {
    console_error("out of memory reading the plugin's ports");
  } else {
    lilv_plugin_get_port_ranges_float(plugin, minimum, NULL, defaults);
  }
  port_classes classes;
  classes_new(world, &classes);
  for (uint32_t i = 0; ok && i < layout->count; ++i) {
    float value = !isnan(defaults[i])  ? defaults[i]
                  : !isnan(minimum[i]) ? minimum[i]
                                       : 0.0f;
    ok = read_port(plugin, i, &classes, value, &layout->ports[i]);
  }
  classes_free(&classes);
  free(minimum);
  free(defaults);
  ok = ok && has_one_audio_input(layout);
  if (!ok) {
    port_layout_free(layout);
  }
  return ok;
}

void port_layout_free(port_layout *layout) {
  free(layout->ports);
  layout->ports = NULL;
  layout->count = 0;
}

int port_layout_find(const port_layout *layout, const char *symbol) {
  for (uint32_t i = 0; i < layout->count; ++i) {
    if (strcmp(layout->ports[i].symbol, symbol) == 0) {
      return (int)i;
    }
  }
  return -1;
}
