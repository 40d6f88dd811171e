// SPDX-License-Identifier: GPL-3.0-or-later
#include "urid.h"

#include <stdlib.h>
#include <string.h>

// Instantiation thread (also called from our own code). A linear search is
// enough: a chain maps a few dozen URIs, all before processing starts.
static LV2_URID map_uri(LV2_URID_Map_Handle handle, const char *uri) {
  VnUrids *u = handle;
  if (!uri) {
    return 0;
  }
  for (size_t i = 0; i < u->count; ++i) {
    if (strcmp(u->uris[i], uri) == 0) {
      return (LV2_URID)(i + 1);
    }
  }
  if (u->count == u->capacity) {
    const size_t capacity = u->capacity ? 2 * u->capacity : 64;
    char **grown = realloc(u->uris, capacity * sizeof *grown);
    if (!grown) {
      return 0;
    }
    u->uris = grown;
    u->capacity = capacity;
  }
  char *copy = strdup(uri);
  if (!copy) {
    return 0;
  }
  u->uris[u->count++] = copy;
  return (LV2_URID)u->count;
}

static const char *unmap_urid(LV2_URID_Unmap_Handle handle, LV2_URID urid) {
  const VnUrids *u = handle;
  return urid > 0 && urid <= u->count ? u->uris[urid - 1] : NULL;
}

void vn_urids_init(VnUrids *u) {
  memset(u, 0, sizeof *u);
  u->map = (LV2_URID_Map){u, map_uri};
  u->unmap = (LV2_URID_Unmap){u, unmap_urid};
}

void vn_urids_free(VnUrids *u) {
  for (size_t i = 0; i < u->count; ++i) {
    free(u->uris[i]);
  }
  free(u->uris);
  memset(u, 0, sizeof *u);
}

LV2_URID vn_urid(VnUrids *u, const char *uri) {
  return map_uri(u, uri);
}
