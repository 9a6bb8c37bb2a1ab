#include "urid_table.h"

#include <pthread.h>
#include <stdint.h>
#include <string.h>

#define URI_TABLE_SIZE 256 /* a plugin test maps about 75; room for more */
#define URI_MAX_BYTES 160

static char uri_table[URI_TABLE_SIZE][URI_MAX_BYTES];
static uint32_t uri_count;
static pthread_mutex_t uri_lock = PTHREAD_MUTEX_INITIALIZER;

LV2_URID urid_table_map(LV2_URID_Map_Handle handle, const char *uri) {
  (void)handle;
  size_t length = strlen(uri);
  LV2_URID urid = 0;
  pthread_mutex_lock(&uri_lock);
  for (uint32_t row = 0; row < uri_count && !urid; ++row)
    if (strcmp(uri_table[row], uri) == 0) urid = row + 1;
  if (!urid && uri_count < URI_TABLE_SIZE && length < URI_MAX_BYTES) {
    memcpy(uri_table[uri_count], uri, length + 1);
    urid = ++uri_count;
  }
  pthread_mutex_unlock(&uri_lock);
  return urid;
}

const char *urid_table_unmap(LV2_URID_Unmap_Handle handle, LV2_URID urid) {
  (void)handle;
  pthread_mutex_lock(&uri_lock);
  const char *uri = urid >= 1 && urid <= uri_count ? uri_table[urid - 1] : NULL;
  pthread_mutex_unlock(&uri_lock);
  return uri;
}
