// SPDX-License-Identifier: GPL-3.0-or-later
#include "text.h"

#include <stdarg.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

void vn_text_append(VnText *t, const char *fmt, ...) {
  if (t->failed) {
    return;
  }
  va_list ap;
  va_start(ap, fmt);
  const int n = vsnprintf(NULL, 0, fmt, ap);
  va_end(ap);
  if (n < 0) {
    t->failed = true;
    return;
  }
  const size_t need = t->length + (size_t)n + 1;
  if (need > t->capacity) {
    size_t capacity = t->capacity ? t->capacity : 64;
    while (capacity < need) {
      capacity *= 2;
    }
    char *data = realloc(t->data, capacity);
    if (!data) {
      t->failed = true;
      return;
    }
    t->data = data;
    t->capacity = capacity;
  }
  va_start(ap, fmt);
  vsnprintf(t->data + t->length, (size_t)n + 1, fmt, ap);
  va_end(ap);
  t->length += (size_t)n;
}

const char *vn_text_get(const VnText *t) {
  return t->data ? t->data : "";
}

void vn_text_free(VnText *t) {
  free(t->data);
  memset(t, 0, sizeof *t);
}

void vn_table_init(VnTable *t, size_t n_columns) {
  memset(t, 0, sizeof *t);
  t->n_columns =
      n_columns < VN_TABLE_MAX_COLUMNS ? n_columns : VN_TABLE_MAX_COLUMNS;
}

bool vn_table_add(VnTable *t, const char *const *cells) {
  if (t->n_rows == t->capacity) {
    const size_t capacity = t->capacity ? 2 * t->capacity : 16;
    char **grown = realloc(t->cells, capacity * t->n_columns * sizeof *grown);
    if (!grown) {
      return false;
    }
    t->cells = grown;
    t->capacity = capacity;
  }
  char **row = t->cells + t->n_rows * t->n_columns;
  for (size_t c = 0; c < t->n_columns; ++c) {
    row[c] = cells[c] ? strdup(cells[c]) : NULL;
  }
  ++t->n_rows;
  return true;
}

void vn_table_print(const VnTable *t, FILE *out, const char *indent) {
  size_t width[VN_TABLE_MAX_COLUMNS] = {0};
  for (size_t r = 0; r < t->n_rows; ++r) {
    for (size_t c = 0; c < t->n_columns; ++c) {
      const char *cell = t->cells[r * t->n_columns + c];
      const size_t len = cell ? strlen(cell) : 0;
      width[c] = len > width[c] ? len : width[c];
    }
  }
  for (size_t r = 0; r < t->n_rows; ++r) {
    char *const *row = t->cells + r * t->n_columns;
    size_t last = 0; // the last non-empty cell, so lines end without blanks
    for (size_t c = 0; c < t->n_columns; ++c) {
      last = row[c] && row[c][0] ? c : last;
    }
    fputs(indent, out);
    for (size_t c = 0; c <= last; ++c) {
      const char *cell = row[c] ? row[c] : "";
      if (c == last) {
        fputs(cell, out);
      } else {
        fprintf(out, "%-*s  ", (int)width[c], cell);
      }
    }
    fputc('\n', out);
  }
}

void vn_table_free(VnTable *t) {
  for (size_t i = 0; i < t->n_rows * t->n_columns; ++i) {
    free(t->cells[i]);
  }
  free(t->cells);
  memset(t, 0, sizeof *t);
}

// The byte length of the valid UTF-8 sequence at p, or 0 when it is not one
// (overlong, surrogate, beyond U+10FFFF, or cut short).
int vn_utf8_sequence_length(const unsigned char *p) {
  int length;
  uint32_t code, least;
  if (p[0] >= 0xC2 && p[0] <= 0xDF) {
    length = 2, code = p[0] & 0x1Fu, least = 0x80;
  } else if (p[0] >= 0xE0 && p[0] <= 0xEF) {
    length = 3, code = p[0] & 0x0Fu, least = 0x800;
  } else if (p[0] >= 0xF0 && p[0] <= 0xF4) {
    length = 4, code = p[0] & 0x07u, least = 0x10000;
  } else {
    return 0;
  }
  for (int i = 1; i < length; ++i) {
    if ((p[i] & 0xC0) != 0x80) {
      return 0;
    }
    code = (code << 6) | (p[i] & 0x3Fu);
  }
  if (code < least || code > 0x10FFFF || (code >= 0xD800 && code <= 0xDFFF)) {
    return 0;
  }
  return length;
}
