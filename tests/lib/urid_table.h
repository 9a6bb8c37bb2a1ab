/*
  A URID map for the project's LV2 test hosts: a URID is its row in a
  table plus one. Locked, since the plugin's log writer thread may run
  while instantiate() maps. Not real-time code (a host's map need not be).
*/
#ifndef PLUMB_TEST_URID_TABLE_H
#define PLUMB_TEST_URID_TABLE_H

#include <lv2/urid/urid.h>

/* 0 when the table is full or the URI too long. */
LV2_URID urid_table_map(LV2_URID_Map_Handle handle, const char *uri);
/* NULL for a URID never given out. */
const char *urid_table_unmap(LV2_URID_Unmap_Handle handle, LV2_URID urid);

#endif
