/*
  URIDs are 1 + the index of the URI in a growing array of copies. A linear
  search is enough: a run maps a few hundred URIs at most, nearly all of
  them while the plugin instantiates.
*/
#include "urid_map.h"

#include <pthread.h>
#include <stdlib.h>
#include <string.h>

struct urid_table {
  pthread_mutex_t mutex;
  char **uris; /* uris[id - 1] is the URI of URID id */
  size_t count;
  size_t capacity;
  LV2_URID_Map map;
  LV2_URID_Unmap unmap;
};

static LV2_URID map_uri(LV2_URID_Map_Handle handle, const char *uri);
static const char *unmap_urid(LV2_URID_Unmap_Handle handle, LV2_URID urid);

urid_table *urid_table_new(void) {
  urid_table *table = calloc(1, sizeof *table);
  if (!table) {
    return NULL;
  }
  if (pthread_mutex_init(&table->mutex, NULL) != 0) {
    free(table);
    return NULL;
  }
  table->map.handle = table;
  table->map.map = map_uri;
  table->unmap.handle = table;
  table->unmap.unmap = unmap_urid;
  return table;
}

void urid_table_free(urid_table *table) {
  if (!table) {
    return;
  }
  for (size_t i = 0; i < table->count; ++i) {
    free(table->uris[i]);
  }
  free(table->uris);
  pthread_mutex_destroy(&table->mutex);
  free(table);
}

/* Caller holds the mutex. */
static LV2_URID find_or_add(urid_table *table, const char *uri) {
  for (size_t i = 0; i < table->count; ++i) {
    if (strcmp(table->uris[i], uri) == 0) {
      return (LV2_URID)(i + 1);
    }
  }
  if (table->count == table->capacity) {
    size_t capacity = table->capacity ? 2 * table->capacity : 64;
    char **grown = realloc(table->uris, capacity * sizeof *grown);
    if (!grown) {
      return 0;
    }
    table->uris = grown;
    table->capacity = capacity;
  }
  char *copy = strdup(uri);
  if (!copy) {
    return 0;
  }
  table->uris[table->count++] = copy;
  return (LV2_URID)table->count;
}

LV2_URID urid_table_map(urid_table *table, const char *uri) {
  if (!table || !uri) {
    return 0;
  }
  pthread_mutex_lock(&table->mutex);
  LV2_URID urid = find_or_add(table, uri);
  pthread_mutex_unlock(&table->mutex);
  return urid;
}

static LV2_URID map_uri(LV2_URID_Map_Handle handle, const char *uri) {
  return urid_table_map(handle, uri);
}

/* The returned string stays valid after the array grows: only the array of
   pointers moves, never the copies it points to. */
static const char *unmap_urid(LV2_URID_Unmap_Handle handle, LV2_URID urid) {
  urid_table *table = handle;
  const char *uri = NULL;
  pthread_mutex_lock(&table->mutex);
  if (urid >= 1 && urid <= table->count) {
    uri = table->uris[urid - 1];
  }
  pthread_mutex_unlock(&table->mutex);
  return uri;
}

LV2_URID_Map *urid_table_map_feature(urid_table *table) { return &table->map; }

LV2_URID_Unmap *urid_table_unmap_feature(urid_table *table) {
  return &table->unmap;
}
