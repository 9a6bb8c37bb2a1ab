#include "utf8_cut.h"

size_t utf8_cut(const char *text, size_t length, size_t limit) {
  if (length <= limit) {
    return length;
  }
  size_t cut = limit;
  while (cut > 0 && ((unsigned char)text[cut] & 0xC0u) == 0x80u) {
    --cut; /* text[cut] continues a character: cut before its start */
  }
  return cut;
}
