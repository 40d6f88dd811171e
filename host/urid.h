// SPDX-License-Identifier: GPL-3.0-or-later
// The urid:map and urid:unmap features: URIs to small integers and back.
#ifndef VERNIER_HOST_URID_H
#define VERNIER_HOST_URID_H

#include <stddef.h>

#include <lv2/urid/urid.h>

typedef struct {
  char **uris; // URID n is uris[n - 1]; 0 means "could not map"
  size_t count;
  size_t capacity;
  LV2_URID_Map map;
  LV2_URID_Unmap unmap;
} VnUrids;

// The features point into u: it must not move after this.
void vn_urids_init(VnUrids *u);
void vn_urids_free(VnUrids *u);
LV2_URID vn_urid(VnUrids *u, const char *uri);

#endif
