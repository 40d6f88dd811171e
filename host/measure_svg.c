// SPDX-License-Identifier: GPL-3.0-or-later
#include "measure_svg.h"

#include <math.h>
#include <stdarg.h>
#include <string.h>

#include "text.h"

#define TICK_FONT "font-size=\"11\" fill=\"#333\""
#define LABEL_FONT "font-size=\"12\" fill=\"#222\""
#define GRID_STYLE "stroke=\"#d9d9d9\" stroke-width=\"0.7\""
// Legend text at 12 px is about this wide per character (a sans-serif
// average), enough to place the next entry.
#define LEGEND_CHAR_PX 6.6

void vn_svg_printf(VnSvg *s, const char *fmt, ...) {
  if (!s->ok) {
    return;
  }
  va_list ap;
  va_start(ap, fmt);
  if (vfprintf(s->out, fmt, ap) < 0) {
    s->ok = false;
  }
  va_end(ap);
}

void vn_svg_escaped(VnSvg *s, const char *text) {
  for (const unsigned char *p = (const unsigned char *)text; *p;) {
    const unsigned char c = *p;
    int length = 1;
    if (c == '&') {
      vn_svg_printf(s, "&amp;");
    } else if (c == '<') {
      vn_svg_printf(s, "&lt;");
    } else if (c == '>') {
      vn_svg_printf(s, "&gt;");
    } else if (c == '"') {
      vn_svg_printf(s, "&quot;");
    } else if (c < 0x20 || c == 0x7F) {
      // XML 1.0 allows no control characters but tab and newlines.
    } else if (c < 0x80) {
      vn_svg_printf(s, "%c", c);
    } else if ((length = vn_utf8_sequence_length(p)) > 0) {
      vn_svg_printf(s, "%.*s", length, (const char *)p);
    } else {
      vn_svg_printf(s, "\xEF\xBF\xBD");
      length = 1;
    }
    p += length;
  }
}

double vn_svg_x_px(const VnSvgPanel *p, double x) {
  const double t = p->x_log ? log(x / p->x_lo) / log(p->x_hi / p->x_lo)
                            : (x - p->x_lo) / (p->x_hi - p->x_lo);
  return p->left_px + t * p->width_px;
}

double vn_svg_y_px(const VnSvgPanel *p, double y) {
  const double t = (y - p->y_lo) / (p->y_hi - p->y_lo);
  return p->top_px + (1.0 - t) * p->height_px;
}

// A step of 1, 2 or 5 times a power of ten giving about `count` ticks.
static double round_step(double span, int count) {
  const double raw = span / count;
  const double decade = pow(10.0, floor(log10(raw)));
  const double m = raw / decade;
  return decade * (m < 1.5 ? 1.0 : m < 3.5 ? 2.0 : m < 7.5 ? 5.0 : 10.0);
}

static void format_tick(char *buf, size_t size, double v, bool hertz) {
  if (hertz && v >= 1000.0) {
    snprintf(buf, size, "%gk", v / 1000.0);
  } else {
    snprintf(buf, size, "%g", fabs(v) < 1e-9 ? 0.0 : v);
  }
}

static void x_tick(VnSvg *s, const VnSvgPanel *p, double x, bool label,
                   bool hertz) {
  const double px = vn_svg_x_px(p, x);
  const double bottom = p->top_px + p->height_px;
  vn_svg_printf(s,
                "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" %s/>\n",
                px, p->top_px, px, bottom, GRID_STYLE);
  if (label) {
    char text[32];
    format_tick(text, sizeof text, x, hertz);
    vn_svg_printf(s,
                  "<text x=\"%.1f\" y=\"%.1f\" text-anchor=\"middle\" %s>%s"
                  "</text>\n",
                  px, bottom + 15, TICK_FONT, text);
  }
}

static void x_ticks(VnSvg *s, const VnSvgPanel *p) {
  if (p->x_log) {
    for (double decade = pow(10.0, floor(log10(p->x_lo))); decade <= p->x_hi;
         decade *= 10.0) {
      for (int m = 1; m <= 9; ++m) {
        const double x = m * decade;
        if (x >= p->x_lo * 0.999 && x <= p->x_hi * 1.001) {
          x_tick(s, p, x, m == 1 || m == 2 || m == 5, true);
        }
      }
    }
    return;
  }
  const double step = round_step(p->x_hi - p->x_lo, 8);
  for (double x = ceil(p->x_lo / step) * step; x <= p->x_hi + step * 1e-6;
       x += step) {
    x_tick(s, p, x, true, false);
  }
}

void vn_svg_axes(VnSvg *s, const VnSvgPanel *p, double y_step,
                 const char *x_label, const char *y_label) {
  const double right = p->left_px + p->width_px;
  const double bottom = p->top_px + p->height_px;
  vn_svg_printf(s,
                "<clipPath id=\"plot%d\"><rect x=\"%.1f\" y=\"%.1f\" "
                "width=\"%.1f\" height=\"%.1f\"/></clipPath>\n"
                "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" "
                "height=\"%.1f\" fill=\"#fff\"/>\n",
                p->clip_id, p->left_px, p->top_px, p->width_px, p->height_px,
                p->left_px, p->top_px, p->width_px, p->height_px);
  x_ticks(s, p);
  for (double y = p->y_lo; y <= p->y_hi + y_step * 1e-6; y += y_step) {
    const double py = vn_svg_y_px(p, y);
    char text[32];
    format_tick(text, sizeof text, y, false);
    vn_svg_printf(s,
                  "<line x1=\"%.1f\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" %s/>\n"
                  "<text x=\"%.1f\" y=\"%.1f\" text-anchor=\"end\" %s>%s"
                  "</text>\n",
                  p->left_px, py, right, py, GRID_STYLE, p->left_px - 6, py + 4,
                  TICK_FONT, text);
  }
  vn_svg_printf(s,
                "<rect x=\"%.1f\" y=\"%.1f\" width=\"%.1f\" "
                "height=\"%.1f\" fill=\"none\" stroke=\"#555\"/>\n",
                p->left_px, p->top_px, p->width_px, p->height_px);
  vn_svg_printf(s, "<text x=\"%.1f\" y=\"%.1f\" text-anchor=\"middle\" %s>",
                p->left_px + p->width_px / 2, bottom + 32, LABEL_FONT);
  vn_svg_escaped(s, x_label);
  vn_svg_printf(s, "</text>\n");
  const double mid_y = p->top_px + p->height_px / 2;
  vn_svg_printf(s,
                "<text transform=\"translate(%.1f %.1f) rotate(-90)\" "
                "text-anchor=\"middle\" %s>",
                p->left_px - 42, mid_y, LABEL_FONT);
  vn_svg_escaped(s, y_label);
  vn_svg_printf(s, "</text>\n");
}

void vn_svg_title(VnSvg *s, const VnSvgPanel *p, const char *title) {
  vn_svg_printf(s,
                "<text x=\"%.1f\" y=\"%.1f\" font-size=\"14\" "
                "font-weight=\"bold\" fill=\"#111\">",
                p->left_px, p->top_px - 30);
  vn_svg_escaped(s, title);
  vn_svg_printf(s, "</text>\n");
}

// Far beyond the plot area a point only needs to be outside it: held a
// panel's height away, so that the numbers stay short.
static double y_px_near(const VnSvgPanel *p, double y) {
  const double px = vn_svg_y_px(p, y);
  const double lo = p->top_px - p->height_px;
  const double hi = p->top_px + 2 * p->height_px;
  return px < lo ? lo : px > hi ? hi : px;
}

void vn_svg_line(VnSvg *s, const VnSvgPanel *p, const double *x,
                 const double *y, size_t n, double break_jump,
                 const char *style) {
  vn_svg_printf(s,
                "<path %s fill=\"none\" stroke-linejoin=\"round\" "
                "clip-path=\"url(#plot%d)\" d=\"",
                style, p->clip_id);
  bool pen_down = false;
  double last_y = 0.0;
  for (size_t i = 0; i < n; ++i) {
    if (!isfinite(y[i]) || !isfinite(x[i])) {
      pen_down = false;
      continue;
    }
    if (pen_down && break_jump > 0 && fabs(y[i] - last_y) > break_jump) {
      pen_down = false;
    }
    const double py = y_px_near(p, y[i]);
    vn_svg_printf(s, "%c%.1f %.1f", pen_down ? 'L' : 'M', vn_svg_x_px(p, x[i]),
                  py);
    pen_down = true;
    last_y = y[i];
  }
  vn_svg_printf(s, "\"/>\n");
}

void vn_svg_area(VnSvg *s, const VnSvgPanel *p, const double *x,
                 const double *y, size_t n, double y_base, const char *style) {
  const double base_px = vn_svg_y_px(p, y_base);
  vn_svg_printf(s, "<path %s clip-path=\"url(#plot%d)\" d=\"", style,
                p->clip_id);
  bool open = false;
  double last_x_px = 0.0;
  for (size_t i = 0; i <= n; ++i) {
    const bool usable = i < n && isfinite(y[i]) && isfinite(x[i]);
    if (!usable) {
      if (open) {
        vn_svg_printf(s, "L%.1f %.1fZ", last_x_px, base_px);
        open = false;
      }
      continue;
    }
    const double px = vn_svg_x_px(p, x[i]);
    const double py = y_px_near(p, y[i]);
    if (!open) {
      vn_svg_printf(s, "M%.1f %.1f", px, base_px);
      open = true;
    }
    vn_svg_printf(s, "L%.1f %.1f", px, py);
    last_x_px = px;
  }
  vn_svg_printf(s, "\"/>\n");
}

double vn_svg_legend(VnSvg *s, const VnSvgPanel *p, double x_px,
                     const char *style, const char *label) {
  const double y = p->top_px - 10;
  vn_svg_printf(s,
                "<path %s fill=\"none\" d=\"M%.1f %.1fh22\"/>\n"
                "<text x=\"%.1f\" y=\"%.1f\" %s>",
                style, x_px, y - 4, x_px + 27, y, LABEL_FONT);
  vn_svg_escaped(s, label);
  vn_svg_printf(s, "</text>\n");
  return x_px + 27 + LEGEND_CHAR_PX * (double)strlen(label) + 22;
}

void vn_svg_note(VnSvg *s, const VnSvgPanel *p, const char *text) {
  vn_svg_printf(s,
                "<text x=\"%.1f\" y=\"%.1f\" text-anchor=\"middle\" "
                "font-size=\"13\" fill=\"#666\">",
                p->left_px + p->width_px / 2, p->top_px + p->height_px / 2);
  vn_svg_escaped(s, text);
  vn_svg_printf(s, "</text>\n");
}
