// SPDX-License-Identifier: GPL-3.0-or-later
// The correction of one measurement as LV2 presets for a DAW. They hold
// the very floats `vernier process` makes of the step words (both come from
// one VnStepCorrection), so a preset loaded into the host gives the
// corrected file bit for bit.
#define _GNU_SOURCE // asprintf

#include <errno.h>
#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include <serd/serd.h>

#include "../plugins/dsp/allpass.h"
#include "../plugins/dsp/bipolar_gain.h"
#include "../plugins/dsp/frac_delay.h"
#include "measure_write.h"
#include "text.h"
#include "time_value.h"
#include "vernier.h"

typedef struct {
  const char *symbol;
  float value;
} PortValue;

typedef struct {
  const char *file;  // in the bundle
  char plugin[48];   // its URI
  const char *what;  // "the delay", for the comment
  bool delay_beyond; // holds a delay split from the region move
  PortValue ports[12];
  size_t n_ports;
} Preset;

#define N_PRESETS_MAX 5

typedef struct {
  const VnMeasureResult *r;
  VnStepCorrection c;
  double delay_ms;     // the whole correction
  float plugin_ms;     // what the plugins can hold of it
  int64_t move_frames; // the rest, the region's move in the DAW
  Preset presets[N_PRESETS_MAX];
  size_t n_presets;
} Bundle;

static Preset *add_preset(Bundle *b, const char *file, const char *plugin,
                          const char *what) {
  Preset *p = &b->presets[b->n_presets++];
  memset(p, 0, sizeof *p);
  p->file = file;
  snprintf(p->plugin, sizeof p->plugin, "urn:vernier:%s-%s", plugin,
           b->c.stereo ? "stereo" : "mono");
  p->what = what;
  return p;
}

static void set_port(Preset *p, const char *symbol, float value) {
  p->ports[p->n_ports++] = (PortValue){symbol, value};
}

static void set_invert(Preset *p, const Bundle *b) {
  const float on = b->c.invert ? 1.0f : 0.0f;
  if (b->c.stereo) {
    set_port(p, "invert_left", on);
    set_port(p, "invert_right", on);
  } else {
    set_port(p, "invert", on);
  }
}

// As the host reads the words: values.c parses "delay=Xsmp" to ms in double
// and splits what lies beyond the range the same way (time_value.h).
static void plan_bundle(Bundle *b, const VnMeasureResult *r) {
  memset(b, 0, sizeof *b);
  b->r = r;
  vn_step_correction(r, &b->c);
  const VnStepCorrection *c = &b->c;
  b->delay_ms = strtod(c->delay_smp, NULL) * 1000.0 / r->rate_hz;
  b->plugin_ms = (float)b->delay_ms;
  // Compared as floats, as the host compares them with the port's range.
  if (b->plugin_ms < FRAC_DELAY_MIN_MS || b->plugin_ms > FRAC_DELAY_MAX_MS) {
    if (!vn_time_split(b->delay_ms, FRAC_DELAY_MIN_MS, FRAC_DELAY_MAX_MS,
                       r->rate_hz, &b->move_frames, &b->plugin_ms)) {
      b->move_frames = 0; // beyond what anything shifts: held at the edge
      b->plugin_ms = b->delay_ms < 0 ? FRAC_DELAY_MIN_MS : FRAC_DELAY_MAX_MS;
    }
  }
  const float angle = (float)strtod(c->angle_deg, NULL);
  const float frequency = c->allpass ? (float)strtod(c->frequency_hz, NULL)
                                     : ALLPASS_FREQUENCY_DEFAULT_HZ;
  const float q = c->allpass ? (float)strtod(c->q, NULL) : ALLPASS_Q_DEFAULT;
  const float order = (float)(c->allpass ? c->order : ALLPASS_ORDER_DEFAULT);

  // Every control input of the strip, so that loading it sets them all.
  Preset *p = add_preset(b, "strip.ttl", "strip", "the whole correction");
  p->delay_beyond = b->move_frames != 0;
  set_invert(p, b);
  set_port(p, "delay", b->plugin_ms);
  set_port(p, "angle", angle);
  set_port(p, "frequency", frequency);
  set_port(p, "q", q);
  set_port(p, "stages", (float)(c->allpass ? c->stages : 0));
  set_port(p, "order", order);
  set_port(p, "gain", BIPOLAR_GAIN_DEFAULT);
  set_port(p, "trim", BIPOLAR_TRIM_DEFAULT_DB);
  if (c->invert) {
    set_invert(add_preset(b, "polarity.ttl", "polarity", "the polarity"), b);
  }
  p = add_preset(b, "delay.ttl", "delay", "the delay");
  p->delay_beyond = b->move_frames != 0;
  set_port(p, "delay", b->plugin_ms);
  set_port(add_preset(b, "rotate.ttl", "rotate", "the rotation"), "angle",
           angle);
  if (c->allpass) {
    p = add_preset(b, "allpass.ttl", "allpass", "the all-pass");
    set_port(p, "frequency", frequency);
    set_port(p, "q", q);
    set_port(p, "stages", (float)c->stages);
    set_port(p, "order", order);
  }
}

// The shortest decimal that reads back as v, through the C library and
// through serd (which reads the presets for lilv), without an exponent:
// Turtle then types it xsd:decimal, which every host takes as a number.
static void format_value(char *buf, size_t size, float v) {
  if (!isfinite(v)) {
    v = 0.0f;
  }
  for (int decimals = 1; decimals <= 60; ++decimals) {
    snprintf(buf, size, "%.*f", decimals, (double)v);
    if (strtof(buf, NULL) == v && (float)serd_strtod(buf, NULL) == v) {
      return;
    }
  }
}

// A Turtle string literal. File names need not be UTF-8; a byte that does
// not start a well-formed UTF-8 sequence becomes U+FFFD.
static void put_string(FILE *f, const char *s) {
  fputc('"', f);
  const unsigned char *p = (const unsigned char *)s;
  while (*p) {
    const unsigned char b = *p;
    size_t len = b < 0x80                 ? 1
                 : b >= 0xC2 && b <= 0xDF ? 2
                 : b >= 0xE0 && b <= 0xEF ? 3
                 : b >= 0xF0 && b <= 0xF4 ? 4
                                          : 0;
    // The second byte's range rules out overlong forms, surrogates and
    // code points beyond U+10FFFF.
    const unsigned char lo = b == 0xE0 ? 0xA0 : b == 0xF0 ? 0x90 : 0x80;
    const unsigned char hi = b == 0xED ? 0x9F : b == 0xF4 ? 0x8F : 0xBF;
    for (size_t k = 1; k < len; ++k) {
      const unsigned char cont = p[k];
      if (cont < (k == 1 ? lo : 0x80) || cont > (k == 1 ? hi : 0xBF)) {
        len = 0;
        break;
      }
    }
    if (len == 0) {
      fputs("\\uFFFD", f);
      ++p;
    } else if (len > 1) {
      fwrite(p, 1, len, f);
      p += len;
    } else {
      if (b == '"' || b == '\\') {
        fprintf(f, "\\%c", b);
      } else if (b == '\n') {
        fputs("\\n", f);
      } else if (b < 0x20 || b == 0x7F) {
        fprintf(f, "\\u%04X", b);
      } else {
        fputc(b, f);
      }
      ++p;
    }
  }
  fputc('"', f);
}

static const char prefixes[] =
    "@prefix lv2:  <http://lv2plug.in/ns/lv2core#> .\n"
    "@prefix pset: <http://lv2plug.in/ns/ext/presets#> .\n"
    "@prefix rdfs: <http://www.w3.org/2000/01/rdf-schema#> .\n";

// What the preset is, for rdfs:comment: the numbers in the trade's units.
static void comment_of(VnText *t, const Bundle *b, const Preset *p) {
  const VnMeasureResult *r = b->r;
  const VnStepCorrection *c = &b->c;
  vn_text_append(t, "vernier measure: %s of what makes %s sum with %s. ",
                 p->what, vn_path_base(r->target_path),
                 vn_path_base(r->ref_path));
  vn_text_append(t,
                 "%s, delay %.6g ms (%s samples at %g Hz), angle %s "
                 "degrees",
                 c->invert ? "Polarity inverted" : "Polarity as recorded",
                 b->delay_ms, c->delay_smp, r->rate_hz, c->angle_deg);
  if (c->allpass) {
    vn_text_append(t, ", all-pass at %s Hz, q %s, %d %s-order %s",
                   c->frequency_hz, c->q, c->stages,
                   c->order == 1 ? "first" : "second",
                   c->stages == 1 ? "stage" : "stages");
  }
  vn_text_append(t, ".");
  if (p->delay_beyond) {
    vn_text_append(t,
                   " The delay is beyond the plugin's %g .. +%g ms: it holds "
                   "%.6g ms; move the region %" PRId64 " frames %s as well.",
                   (double)FRAC_DELAY_MIN_MS, (double)FRAC_DELAY_MAX_MS,
                   (double)b->plugin_ms, (int64_t)llabs(b->move_frames),
                   b->move_frames < 0 ? "earlier" : "later");
  }
}

static FILE *open_in(const char *folder, const char *name) {
  char *path = vn_path_in(folder, name);
  FILE *f = path ? fopen(path, "w") : NULL;
  if (!f) {
    vn_error("%s/%s: cannot create it (%s)", folder, name,
             path ? strerror(errno) : "out of memory");
  }
  free(path);
  return f;
}

// Flushed and synced before closed: the bundle is renamed into place next.
static bool close_synced(FILE *f, const char *folder, const char *name) {
  const bool ok = !ferror(f) && fflush(f) == 0 && fsync(fileno(f)) == 0;
  const int err = errno;
  if (fclose(f) != 0 || !ok) {
    vn_error("%s/%s: write failed (%s)", folder, name,
             strerror(ok ? errno : err));
    return false;
  }
  return true;
}

static bool write_preset(const char *folder, const Bundle *b, const Preset *p,
                         const char *label) {
  FILE *f = open_in(folder, p->file);
  if (!f) {
    return false;
  }
  fprintf(f,
          "# Written by vernier measure " VERNIER_VERSION ".\n%s\n<>\n"
          "\ta pset:Preset ;\n\tlv2:appliesTo <%s> ;\n\trdfs:label ",
          prefixes, p->plugin);
  put_string(f, label);
  fputs(" ;\n\trdfs:comment ", f);
  VnText comment = {0};
  comment_of(&comment, b, p);
  put_string(f, vn_text_get(&comment));
  vn_text_free(&comment);
  fputs(" ;\n\tlv2:port ", f);
  for (size_t i = 0; i < p->n_ports; ++i) {
    char value[80];
    format_value(value, sizeof value, p->ports[i].value);
    fprintf(f, "%s[\n\t\tlv2:symbol \"%s\" ;\n\t\tpset:value %s\n\t]",
            i ? " , " : "", p->ports[i].symbol, value);
  }
  fputs(" .\n", f);
  return close_synced(f, folder, p->file);
}

// Relative URIs: each preset is its own file, as lilv saves presets, so
// that the URI is unique wherever the bundle is copied.
static bool write_manifest(const char *folder, const Bundle *b,
                           const char *label) {
  FILE *f = open_in(folder, "manifest.ttl");
  if (!f) {
    return false;
  }
  fprintf(f, "# Written by vernier measure " VERNIER_VERSION ".\n%s", prefixes);
  for (size_t i = 0; i < b->n_presets; ++i) {
    const Preset *p = &b->presets[i];
    fprintf(f,
            "\n<%s>\n\ta pset:Preset ;\n\tlv2:appliesTo <%s> ;\n"
            "\trdfs:label ",
            p->file, p->plugin);
    put_string(f, label);
    fprintf(f, " ;\n\trdfs:seeAlso <%s> .\n", p->file);
  }
  return close_synced(f, folder, "manifest.ttl");
}

bool vn_measure_presets_write(const char *folder, const char *stem,
                              const VnMeasureResult *r) {
  Bundle *b = malloc(sizeof *b);
  char *label = NULL;
  if (!b || asprintf(&label, "%s aligned", stem) < 0) {
    free(b);
    vn_error("out of memory");
    return false;
  }
  plan_bundle(b, r);
  bool ok = write_manifest(folder, b, label);
  for (size_t i = 0; ok && i < b->n_presets; ++i) {
    ok = write_preset(folder, b, &b->presets[i], label);
  }
  if (ok && b->move_frames != 0) {
    const int64_t move = (int64_t)llabs(b->move_frames);
    vn_warn("%s: the correction moves it by %.6g ms, beyond the %g .. +%g "
            "ms a plugin in a DAW can; its presets hold %.6g ms, so move "
            "the region %" PRId64 " frames (%.6g ms) %s as well (the "
            "corrected file needs nothing more)",
            r->target_path, b->delay_ms, (double)FRAC_DELAY_MIN_MS,
            (double)FRAC_DELAY_MAX_MS, (double)b->plugin_ms, move,
            (double)move * 1000.0 / r->rate_hz,
            b->move_frames < 0 ? "earlier" : "later");
  }
  free(label);
  free(b);
  return ok;
}
