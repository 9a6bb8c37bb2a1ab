/*
  Where the bundle is, in order:
  1. <folder of the executable>/plumb.lv2/ (the build tree: build/plumb and
     build/plumb.lv2);
  2. <folder of the executable>/../lib/lv2/plumb.lv2/ (an installed
     layout, PREFIX/bin/plumb and PREFIX/lib/lv2/plumb.lv2);
  3. <folder of the executable>/../../.lv2/plumb.lv2/ (make install-user:
     ~/.local/bin/plumb and ~/.lv2/plumb.lv2).
  Only this one bundle is loaded, so another plumb installed elsewhere on
  LV2_PATH can never be picked up by mistake.
*/
#include "bundle.h"

#include "progress.h"

#include <dlfcn.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

static const char *const bundle_places[] = {"plumb.lv2/", "../lib/lv2/plumb.lv2/",
                                            "../../.lv2/plumb.lv2/"};

/* The folder of /proc/self/exe, with a trailing '/'. */
static bool executable_folder(char *folder, size_t size) {
  ssize_t length = readlink("/proc/self/exe", folder, size - 1);
  if (length <= 0) {
    return false;
  }
  folder[length] = '\0';
  char *slash = strrchr(folder, '/');
  if (!slash) {
    return false;
  }
  slash[1] = '\0';
  return true;
}

static bool has_manifest(const char *bundle_path) {
  char manifest[PATH_MAX + 16];
  struct stat info;
  snprintf(manifest, sizeof manifest, "%smanifest.ttl", bundle_path);
  return stat(manifest, &info) == 0 && S_ISREG(info.st_mode);
}

static bool find_bundle(char *path, size_t size) {
  char folder[PATH_MAX];
  if (!executable_folder(folder, sizeof folder)) {
    console_error("cannot find the folder of the plumb executable");
    return false;
  }
  size_t places = sizeof bundle_places / sizeof bundle_places[0];
  for (size_t i = 0; i < places; ++i) {
    int length = snprintf(path, size, "%s%s", folder, bundle_places[i]);
    if (length > 0 && (size_t)length < size && has_manifest(path)) {
      return true;
    }
  }
  console_error("cannot find the plugin bundle: no manifest.ttl in %s%s, %s%s or %s%s",
                folder, bundle_places[0], folder, bundle_places[1], folder,
                bundle_places[2]);
  return false;
}

static bool load_plugin(bundle *loaded) {
  LilvNode *bundle_uri = lilv_new_file_uri(loaded->world, NULL, loaded->path);
  LilvNode *plugin_uri = lilv_new_uri(loaded->world, BUNDLE_PLUGIN_URI);
  if (bundle_uri) {
    lilv_world_load_bundle(loaded->world, bundle_uri);
  }
  /* Only what the loaded bundle declares: no LV2_PATH search. */
  lilv_world_load_specifications(loaded->world);
  lilv_world_load_plugin_classes(loaded->world);
  const LilvPlugins *plugins = lilv_world_get_all_plugins(loaded->world);
  loaded->plugin =
      plugin_uri ? lilv_plugins_get_by_uri(plugins, plugin_uri) : NULL;
  lilv_node_free(plugin_uri);
  lilv_node_free(bundle_uri);
  if (!loaded->plugin) {
    console_error("the bundle %s does not describe %s", loaded->path,
                  BUNDLE_PLUGIN_URI);
    return false;
  }
  if (!lilv_plugin_verify(loaded->plugin)) {
    console_error("the description of %s in %s is incomplete",
                  BUNDLE_PLUGIN_URI, loaded->path);
    return false;
  }
  return true;
}

/* lilv unloads the plugin binary whenever its last instance is freed, so
   tracks run one after another would load it again for each track, and
   each load starts the plugin's libraries afresh (FFTW's planner among
   them, whose state is never freed). One reference of our own keeps it
   loaded for the whole run. Failing to take it costs only time. */
static void pin_library(bundle *loaded) {
  const LilvNode *library = lilv_plugin_get_library_uri(loaded->plugin);
  char *path =
      library ? lilv_file_uri_parse(lilv_node_as_uri(library), NULL) : NULL;
  if (path) {
    loaded->pinned_library = dlopen(path, RTLD_NOW | RTLD_LOCAL);
  }
  lilv_free(path);
}

bool bundle_open(bundle *loaded) {
  memset(loaded, 0, sizeof *loaded);
  if (!find_bundle(loaded->path, sizeof loaded->path)) {
    return false;
  }
  loaded->world = lilv_world_new();
  if (!loaded->world) {
    console_error("out of memory loading the plugin bundle");
    return false;
  }
  if (!load_plugin(loaded)) {
    bundle_close(loaded);
    return false;
  }
  pin_library(loaded);
  return true;
}

void bundle_close(bundle *loaded) {
  if (loaded->world) {
    lilv_world_free(loaded->world);
  }
  if (loaded->pinned_library) {
    dlclose(loaded->pinned_library);
  }
  loaded->pinned_library = NULL;
  loaded->world = NULL;
  loaded->plugin = NULL;
}
