#include "preset.h"

#include "progress.h"

#include <lv2/atom/atom.h>
#include <lv2/presets/presets.h>
#include <stdio.h>
#include <string.h>
#include <strings.h>

#define RDFS_LABEL "http://www.w3.org/2000/01/rdf-schema#label"

/* What the port-value callback needs. */
typedef struct {
  const port_layout *layout;
  float *control_values;
  LV2_URID_Map *map;
  bool failed;
} port_value_sink;

/* "urn:plumb:preset:choir" -> "choir", "http://x/p#warm" -> "warm". */
static const char *uri_suffix(const char *uri) {
  const char *suffix = uri;
  for (const char *c = uri; *c; ++c) {
    if (*c == '/' || *c == '#' || *c == ':') {
      suffix = c + 1;
    }
  }
  return suffix;
}

/* The preset's rdfs:label, or its URI's suffix when it has none. */
static const char *display_name(LilvWorld *world, const LilvNode *preset,
                                const LilvNode *label_property,
                                LilvNode **label) {
  *label = lilv_world_get(world, preset, label_property, NULL);
  if (*label && lilv_node_is_string(*label)) {
    return lilv_node_as_string(*label);
  }
  return uri_suffix(lilv_node_as_uri(preset));
}

static bool to_float(const port_value_sink *sink, const void *value,
                     uint32_t size, uint32_t type, float *result) {
  LV2_URID_Map *map = sink->map;
  if (type == map->map(map->handle, LV2_ATOM__Float) && size == sizeof(float)) {
    memcpy(result, value, sizeof(float));
  } else if (type == map->map(map->handle, LV2_ATOM__Double) &&
             size == sizeof(double)) {
    double number;
    memcpy(&number, value, sizeof number);
    *result = (float)number;
  } else if ((type == map->map(map->handle, LV2_ATOM__Int) ||
              type == map->map(map->handle, LV2_ATOM__Bool)) &&
             size == sizeof(int32_t)) {
    int32_t number;
    memcpy(&number, value, sizeof number);
    *result = (float)number;
  } else if (type == map->map(map->handle, LV2_ATOM__Long) &&
             size == sizeof(int64_t)) {
    int64_t number;
    memcpy(&number, value, sizeof number);
    *result = (float)number;
  } else {
    return false;
  }
  return true;
}

static void set_port_value(const char *symbol, void *user_data,
                           const void *value, uint32_t size, uint32_t type) {
  port_value_sink *sink = user_data;
  int index = port_layout_find(sink->layout, symbol);
  float number = 0.0f;
  if (index < 0 || sink->layout->ports[index].kind != PORT_CONTROL_IN) {
    console_error(
        "--preset: the preset sets '%s', which is not a control input", symbol);
    sink->failed = true;
  } else if (!to_float(sink, value, size, type, &number)) {
    console_error("--preset: the preset's value for '%s' is not a number",
                  symbol);
    sink->failed = true;
  } else {
    sink->control_values[index] = number;
  }
}

static bool emit_values(const bundle *loaded, const LilvNode *preset,
                        port_value_sink *sink) {
  LilvState *state =
      lilv_state_new_from_world(loaded->world, sink->map, preset);
  if (!state) {
    console_error("--preset: cannot load the preset %s",
                  lilv_node_as_uri(preset));
    return false;
  }
  lilv_state_emit_port_values(state, set_port_value, sink);
  lilv_state_free(state);
  return !sink->failed;
}

/* The first preset whose label or URI suffix is `name`; NULL if none, with
   the names there are written into `available`. */
static const LilvNode *find_preset(const bundle *loaded,
                                   const LilvNodes *presets, const char *name,
                                   char *available, size_t size) {
  LilvNode *label_property = lilv_new_uri(loaded->world, RDFS_LABEL);
  const LilvNode *found = NULL;
  available[0] = '\0';
  LILV_FOREACH(nodes, i, presets) {
    const LilvNode *preset = lilv_nodes_get(presets, i);
    lilv_world_load_resource(loaded->world, preset);
    LilvNode *label = NULL;
    const char *shown =
        display_name(loaded->world, preset, label_property, &label);
    bool matches = strcasecmp(shown, name) == 0 ||
                   strcasecmp(uri_suffix(lilv_node_as_uri(preset)), name) == 0;
    size_t used = strlen(available);
    snprintf(available + used, size - used, "%s'%s'", used ? ", " : "", shown);
    lilv_node_free(label);
    if (matches) {
      found = preset;
      break;
    }
  }
  lilv_node_free(label_property);
  return found;
}

bool preset_apply(const bundle *loaded, const port_layout *layout,
                  LV2_URID_Map *map, const char *name, float *control_values) {
  LilvNode *preset_class = lilv_new_uri(loaded->world, LV2_PRESETS__Preset);
  LilvNodes *presets = lilv_plugin_get_related(loaded->plugin, preset_class);
  char available[1024];
  const LilvNode *preset =
      presets ? find_preset(loaded, presets, name, available, sizeof available)
              : NULL;
  bool ok = false;
  if (preset) {
    port_value_sink sink = {layout, control_values, map, false};
    ok = emit_values(loaded, preset, &sink);
  } else if (!presets || lilv_nodes_size(presets) == 0) {
    console_error("--preset: no preset '%s': the plugin has no presets", name);
  } else {
    console_error("--preset: no preset '%s'; the plugin has %s", name,
                  available);
  }
  lilv_nodes_free(presets);
  lilv_node_free(preset_class);
  return ok;
}
