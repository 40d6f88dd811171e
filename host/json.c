// SPDX-License-Identifier: GPL-3.0-or-later
#include "json.h"

#include <inttypes.h>
#include <math.h>
#include <stdlib.h>

#include "text.h"

void vn_json_init(VnJson *j, FILE *out) {
  *j = (VnJson){.out = out};
}

static void newline_indent(VnJson *j) {
  fputc('\n', j->out);
  for (int i = 0; i < j->depth; ++i) {
    fputs("  ", j->out);
  }
}

static void before_value(VnJson *j) {
  if (j->after_key) {
    j->after_key = false;
    return;
  }
  if (j->depth > 0) {
    if (j->has_items[j->depth]) {
      fputc(',', j->out);
    }
    j->has_items[j->depth] = true;
    newline_indent(j);
  }
}

static void write_string(FILE *out, const char *s) {
  fputc('"', out);
  for (const unsigned char *p = (const unsigned char *)s; *p;) {
    const unsigned char c = *p;
    if (c == '"' || c == '\\') {
      fputc('\\', out);
      fputc(c, out);
      ++p;
    } else if (c < 0x20) {
      switch (c) {
      case '\b':
        fputs("\\b", out);
        break;
      case '\f':
        fputs("\\f", out);
        break;
      case '\n':
        fputs("\\n", out);
        break;
      case '\r':
        fputs("\\r", out);
        break;
      case '\t':
        fputs("\\t", out);
        break;
      default:
        fprintf(out, "\\u%04x", c);
        break;
      }
      ++p;
    } else if (c < 0x80) {
      fputc(c, out);
      ++p;
    } else {
      const int length = vn_utf8_sequence_length(p);
      if (length == 0) {
        fputs("\\ufffd", out); // a stray byte of a Latin-1 file name, say
        ++p;
      } else {
        fwrite(p, 1, (size_t)length, out);
        p += length;
      }
    }
  }
  fputc('"', out);
}

static void open_container(VnJson *j, char bracket) {
  before_value(j);
  fputc(bracket, j->out);
  if (j->depth < VN_JSON_MAX_DEPTH) {
    ++j->depth;
    j->has_items[j->depth] = false;
  }
}

static void close_container(VnJson *j, char bracket) {
  const bool had_items = j->has_items[j->depth];
  if (j->depth > 0) {
    --j->depth;
  }
  if (had_items) {
    newline_indent(j);
  }
  fputc(bracket, j->out);
}

void vn_json_begin_object(VnJson *j) {
  open_container(j, '{');
}
void vn_json_end_object(VnJson *j) {
  close_container(j, '}');
}
void vn_json_begin_array(VnJson *j) {
  open_container(j, '[');
}
void vn_json_end_array(VnJson *j) {
  close_container(j, ']');
}

void vn_json_key(VnJson *j, const char *key) {
  before_value(j);
  write_string(j->out, key);
  fputs(": ", j->out);
  j->after_key = true;
}

void vn_json_string(VnJson *j, const char *s) {
  if (!s) {
    vn_json_null(j);
    return;
  }
  before_value(j);
  write_string(j->out, s);
}

// Whole numbers as integers (48000, not 4.8e+04): sample rates and frame
// counts read better, and nothing is lost below 2^53.
static bool format_whole(char *buf, size_t size, double v) {
  if (v == trunc(v) && fabs(v) < 1e15) {
    snprintf(buf, size, "%.0f", v);
    return true;
  }
  return false;
}

void vn_format_float(char *buf, size_t size, float v) {
  if (format_whole(buf, size, v)) {
    return;
  }
  for (int digits = 1; digits <= 9; ++digits) {
    snprintf(buf, size, "%.*g", digits, (double)v);
    if (strtof(buf, NULL) == v) {
      return;
    }
  }
}

void vn_json_float(VnJson *j, float v) {
  if (!isfinite(v)) {
    vn_json_null(j);
    return;
  }
  char buf[32];
  vn_format_float(buf, sizeof buf, v);
  before_value(j);
  fputs(buf, j->out);
}

void vn_json_double(VnJson *j, double v) {
  if (!isfinite(v)) {
    vn_json_null(j);
    return;
  }
  char buf[40];
  for (int digits = 1; !format_whole(buf, sizeof buf, v) && digits <= 17;
       ++digits) {
    snprintf(buf, sizeof buf, "%.*g", digits, v);
    if (strtod(buf, NULL) == v) {
      break;
    }
  }
  before_value(j);
  fputs(buf, j->out);
}

void vn_json_int(VnJson *j, int64_t v) {
  before_value(j);
  fprintf(j->out, "%" PRId64, v);
}

void vn_json_bool(VnJson *j, bool v) {
  before_value(j);
  fputs(v ? "true" : "false", j->out);
}

void vn_json_null(VnJson *j) {
  before_value(j);
  fputs("null", j->out);
}

void vn_json_finish(VnJson *j) {
  fputc('\n', j->out);
}
