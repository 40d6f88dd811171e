// SPDX-License-Identifier: GPL-3.0-or-later
// A growing string, for messages that list things ("controls: gain, trim"),
// and a table whose columns are as wide as their widest cell.
#ifndef VERNIER_HOST_TEXT_H
#define VERNIER_HOST_TEXT_H

#include <stdbool.h>
#include <stddef.h>
#include <stdio.h>

#include "vernier.h"

typedef struct {
  char *data; // always NUL-terminated once anything was appended
  size_t length;
  size_t capacity;
  bool failed; // an allocation failed; data holds what fitted before
} VnText;

void vn_text_append(VnText *t, const char *fmt, ...) VN_PRINTF(2, 3);
// data, or "" when nothing was appended.
const char *vn_text_get(const VnText *t);
void vn_text_free(VnText *t);

#define VN_TABLE_MAX_COLUMNS 8

typedef struct {
  size_t n_columns;
  size_t n_rows;
  size_t capacity;
  char **cells; // n_rows * n_columns, each owned (NULL is an empty cell)
} VnTable;

void vn_table_init(VnTable *t, size_t n_columns);
// Adds one row; the n_columns cells are printf'd by the caller. false when
// out of memory.
bool vn_table_add(VnTable *t, const char *const *cells);
// Prints every row, indented, columns two spaces apart, no trailing blanks.
void vn_table_print(const VnTable *t, FILE *out, const char *indent);
void vn_table_free(VnTable *t);

// The byte length of the valid UTF-8 sequence at p, or 0 when it is not one
// (overlong, surrogate, beyond U+10FFFF, or cut short): for writers whose
// output must be valid UTF-8 (JSON, SVG) when file names need not be.
int vn_utf8_sequence_length(const unsigned char *p);

#endif
