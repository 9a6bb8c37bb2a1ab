#include "tuning_file.h"

#include "plumb.h"

#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Twelve numbers with comments fit in far less; a bigger file is not one. */
#define MAX_TUNING_FILE_BYTES 65536

/* Reads the whole file into a NUL-terminated buffer, or writes a reason. */
static char *read_text(const char *path, bool *open_failed, char *reason,
                       size_t reason_size) {
  FILE *file = fopen(path, "rb");
  *open_failed = file == NULL;
  if (!file) {
    snprintf(reason, reason_size, "%s", strerror(errno));
    return NULL;
  }
  char *text = malloc(MAX_TUNING_FILE_BYTES + 1);
  size_t length = text ? fread(text, 1, MAX_TUNING_FILE_BYTES + 1, file) : 0;
  bool failed = !text || ferror(file);
  int read_errno = errno;
  fclose(file);
  if (failed) {
    snprintf(reason, reason_size, "%s%s", text ? "cannot be read: " : "",
             text ? strerror(read_errno) : "out of memory");
  } else if (length > MAX_TUNING_FILE_BYTES) {
    snprintf(reason, reason_size,
             "is larger than %d bytes, too big for twelve offsets",
             MAX_TUNING_FILE_BYTES);
    failed = true;
  } else if (memchr(text, '\0', length)) {
    snprintf(reason, reason_size, "is not a text file");
    failed = true;
  }
  if (failed) {
    free(text);
    return NULL;
  }
  text[length] = '\0';
  return text;
}

bool tuning_file_read(const char *path, double offsets_cents[12],
                      bool *open_failed, char *reason, size_t reason_size) {
  char *text = read_text(path, open_failed, reason, reason_size);
  if (!text) {
    return false;
  }
  plumb_status status = plumb_tuning_parse_offsets(text, offsets_cents);
  double beyond_cents = 0.0;
  int degree = status == PLUMB_ERR_ARGUMENT
                   ? plumb_tuning_parse_find_beyond_limit(text, &beyond_cents)
                   : -1;
  free(text);
  if (degree >= 0) {
    /* The plugin takes offsets within the same limit only, so the take
       would otherwise run with other offsets than the file's. */
    snprintf(reason, reason_size,
             "holds the offset %g cents (number %d, degree %d), beyond the "
             "limit of +-%g cents",
             beyond_cents, degree + 1, degree, PLUMB_CUSTOM_OFFSET_LIMIT_CENTS);
    return false;
  }
  if (status != PLUMB_OK) {
    snprintf(reason, reason_size, "does not hold twelve offsets in cents (%s)",
             plumb_strerror(status));
    return false;
  }
  return true;
}
