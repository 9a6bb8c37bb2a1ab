/*
  What the plugin's ports are, read once from its description before any
  thread starts, so that the tracks never touch the lilv world (which is
  not thread-safe) except to instantiate.
*/
#ifndef PLUMB_CLI_PORTS_H
#define PLUMB_CLI_PORTS_H

#include <lilv/lilv.h>
#include <stdbool.h>
#include <stdint.h>

typedef enum {
  PORT_AUDIO_IN,
  PORT_AUDIO_OUT,
  PORT_CONTROL_IN,
  PORT_CONTROL_OUT,
  PORT_ATOM_IN,
  PORT_ATOM_OUT,
  PORT_OTHER /* connected to nothing; only allowed when optional */
} port_kind;

typedef struct {
  port_kind kind;
  char symbol[64];
  float default_value;    /* lv2:default, else lv2:minimum, else 0 */
  uint32_t minimum_bytes; /* atom ports: rsz:minimumSize, 0 if none */
} port_info;

typedef struct {
  uint32_t count;
  port_info *ports; /* ports[i] has lv2:index i */
} port_layout;

/* Reads every port; reports one line and returns false when a port cannot
   be hosted (a required port of a kind this host does not connect). */
bool port_layout_read(LilvWorld *world, const LilvPlugin *plugin,
                      port_layout *layout);

void port_layout_free(port_layout *layout);

/* Index of the port with `symbol`, or -1. */
int port_layout_find(const port_layout *layout, const char *symbol);

#endif
