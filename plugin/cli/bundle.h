/*
  The plugin bundle the command hosts: found beside the executable, with
  no environment variable, so that `build/plumb` runs `build/plumb.lv2`
  and an installed plumb runs the installed bundle.
*/
#ifndef PLUMB_CLI_BUNDLE_H
#define PLUMB_CLI_BUNDLE_H

#include <lilv/lilv.h>
#include <limits.h>

#define BUNDLE_PLUGIN_URI "urn:plumb:intonation"

typedef struct {
  LilvWorld *world;
  const LilvPlugin *plugin;
  void *pinned_library; /* our own reference to the plugin binary, or NULL */
  char path[PATH_MAX];  /* the bundle folder, ending in '/' */
} bundle;

/* Finds and loads the bundle. On failure reports one line on stderr and
   returns false (the world is then freed). */
bool bundle_open(bundle *loaded);

/* bundle_close on a bundle that failed to open does nothing. */
void bundle_close(bundle *loaded);

#endif
