/*
  A thread-safe URID map and unmap for the plugin instances of one run.
  Every track's instance shares the table, and tracks run on several
  threads, so each call takes the table's mutex.
*/
#ifndef PLUMB_CLI_URID_MAP_H
#define PLUMB_CLI_URID_MAP_H

#include <lv2/urid/urid.h>

typedef struct urid_table urid_table;

/* NULL when memory runs out. */
urid_table *urid_table_new(void);

/* urid_table_free(NULL) does nothing. */
void urid_table_free(urid_table *table);

/* The URID of `uri`, mapping it first if it is new; 0 on failure. */
LV2_URID urid_table_map(urid_table *table, const char *uri);

/* The features' data, pointing into `table` (valid while it lives). */
LV2_URID_Map *urid_table_map_feature(urid_table *table);
LV2_URID_Unmap *urid_table_unmap_feature(urid_table *table);

#endif
