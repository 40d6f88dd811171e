// SPDX-License-Identifier: GPL-3.0-or-later
// A small streaming JSON writer: indented output, strings escaped and made
// valid UTF-8 (file names need not be), non-finite numbers written as null.
#ifndef VERNIER_HOST_JSON_H
#define VERNIER_HOST_JSON_H

#include <stdbool.h>
#include <stdint.h>
#include <stdio.h>

#define VN_JSON_MAX_DEPTH 16

typedef struct {
  FILE *out;
  int depth;
  bool has_items[VN_JSON_MAX_DEPTH + 1];
  bool after_key;
} VnJson;

void vn_json_init(VnJson *j, FILE *out);
void vn_json_begin_object(VnJson *j);
void vn_json_end_object(VnJson *j);
void vn_json_begin_array(VnJson *j);
void vn_json_end_array(VnJson *j);
void vn_json_key(VnJson *j, const char *key);
void vn_json_string(VnJson *j, const char *s); // NULL writes null
// The shortest decimal that reads back as the same float, so 0.7f is 0.7,
// not 0.699999988.
void vn_json_float(VnJson *j, float v);
void vn_json_double(VnJson *j, double v);
void vn_json_int(VnJson *j, int64_t v);
void vn_json_bool(VnJson *j, bool v);
void vn_json_null(VnJson *j);
// Ends the document with a newline.
void vn_json_finish(VnJson *j);

// Shortest "%g" form that reads back as the same float; buf of 32 bytes.
void vn_format_float(char *buf, size_t size, float v);

#endif
