// SPDX-License-Identifier: GPL-3.0-or-later
#include "steps.h"

#include <float.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#include "args.h"
#include "json.h"
#include "text.h"
#include "values.h"
#include "vernier.h"

// ASCII classes by hand: the locale must not change what a STEP word means.
static bool is_symbol_start(char c) {
  return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || c == '_';
}

static bool is_symbol_char(char c) {
  return is_symbol_start(c) || (c >= '0' && c <= '9');
}

bool vn_word_is_setting(const char *word) {
  if (word[0] == '@') {
    return true;
  }
  if (!is_symbol_start(word[0])) {
    return false;
  }
  const char *p = word + 1;
  while (is_symbol_char(*p)) {
    ++p;
  }
  return *p == '=';
}

int vn_steps_parse(VnSteps *s, char *const *words, size_t n_words) {
  memset(s, 0, sizeof *s);
  if (n_words == 0) {
    vn_error("process needs at least one STEP after IN and OUT; see "
             "'vernier process --help'");
    return VN_EXIT_USAGE;
  }
  if (vn_word_is_setting(words[0])) {
    vn_error(
        "'%s' is a setting, but no plugin comes before it; a STEP "
        "starts with a plugin name (gain, polarity, rotate, allpass, delay, "
        "strip) "
        "or a URI",
        words[0]);
    return VN_EXIT_USAGE;
  }
  for (size_t i = 0; i < n_words; ++i) {
    s->n_steps += !vn_word_is_setting(words[i]);
  }
  s->steps = calloc(s->n_steps, sizeof *s->steps);
  if (!s->steps) {
    vn_error("out of memory");
    return VN_EXIT_USAGE;
  }
  // Arrays sized by a first pass over the words, filled by a second.
  VnStep *step = NULL;
  for (size_t i = 0; i < n_words; ++i) {
    if (!vn_word_is_setting(words[i])) {
      step = step ? step + 1 : s->steps;
      step->word = words[i];
    } else if (words[i][0] == '@') {
      ++step->n_presets;
    } else {
      ++step->n_settings;
    }
  }
  for (size_t k = 0; k < s->n_steps; ++k) {
    step = &s->steps[k];
    step->preset_names = calloc(step->n_presets + 1, sizeof(char *));
    step->settings = calloc(step->n_settings + 1, sizeof(VnSetting));
    step->n_presets = step->n_settings = 0;
    if (!step->preset_names || !step->settings) {
      vn_error("out of memory");
      return VN_EXIT_USAGE;
    }
  }
  step = NULL;
  for (size_t i = 0; i < n_words; ++i) {
    const char *w = words[i];
    if (!vn_word_is_setting(w)) {
      step = step ? step + 1 : s->steps;
    } else if (w[0] == '@') {
      if (w[1] == '\0') {
        vn_error("%s: '@' names no preset; write @LABEL or @URI", step->word);
        return VN_EXIT_USAGE;
      }
      step->preset_names[step->n_presets++] = w + 1;
    } else {
      const char *eq = strchr(w, '=');
      VnSetting *set = &step->settings[step->n_settings++];
      set->word = w;
      set->symbol = strndup(w, (size_t)(eq - w));
      set->value_text = eq + 1;
      if (!set->symbol) {
        vn_error("out of memory");
        return VN_EXIT_USAGE;
      }
    }
  }
  return VN_EXIT_OK;
}

static void list_controls(VnText *t, const VnPluginInfo *info) {
  for (uint32_t i = 0; i < info->n_ports; ++i) {
    if (vn_port_is_control_input(&info->ports[i])) {
      vn_text_append(t, "%s%s", t->length ? ", " : "", info->ports[i].symbol);
    }
  }
  if (!t->length) {
    vn_text_append(t, "none");
  }
}

typedef struct {
  VnStep *step;
  VnWorld *world;
  const char *preset;
} PresetTarget;

// Called by lilv_state_restore for each port value a preset stores.
static void set_port_value(const char *symbol, void *user_data,
                           const void *value, uint32_t size, uint32_t type) {
  PresetTarget *t = user_data;
  const VnPortInfo *port = vn_port_by_symbol(&t->step->info, symbol);
  if (!port || !vn_port_is_control_input(port)) {
    vn_warn("%s: preset '%s' sets '%s', which is not a control input; "
            "ignored",
            t->step->word, t->preset, symbol);
    return;
  }
  // memcpy: lilv gives no alignment promise for the value.
  float f = NAN;
  if (type == t->world->atom_float && size == sizeof(float)) {
    memcpy(&f, value, sizeof f);
  } else if (type == t->world->atom_double && size == sizeof(double)) {
    double d;
    memcpy(&d, value, sizeof d);
    f = vn_fits_float(d) ? (float)d : NAN;
  } else if ((type == t->world->atom_int || type == t->world->atom_bool) &&
             size == sizeof(int32_t)) {
    int32_t i;
    memcpy(&i, value, sizeof i);
    f = (float)i;
  } else if (type == t->world->atom_long && size == sizeof(int64_t)) {
    int64_t l;
    memcpy(&l, value, sizeof l);
    f = (float)l;
  } else {
    vn_warn("%s: preset '%s' gives '%s' a value that is not a number; "
            "ignored",
            t->step->word, t->preset, symbol);
    return;
  }
  t->step->controls[port->index] = f;
}

static int resolve_presets(VnStep *step, VnWorld *w) {
  if (step->n_presets == 0) {
    return VN_EXIT_OK;
  }
  VnPreset *list = NULL;
  size_t n_list = 0;
  int rc = vn_presets_load(w, step->info.plugin, &list, &n_list)
               ? VN_EXIT_OK
               : VN_EXIT_PLUGIN;
  step->presets = calloc(step->n_presets, sizeof *step->presets);
  if (rc == VN_EXIT_OK && !step->presets) {
    vn_error("out of memory");
    rc = VN_EXIT_PLUGIN;
  }
  for (size_t k = 0; rc == VN_EXIT_OK && k < step->n_presets; ++k) {
    const long found = vn_preset_find(list, n_list, step->preset_names[k]);
    if (found < 0) {
      VnText names = {0};
      for (size_t i = 0; i < n_list; ++i) {
        vn_text_append(&names, "%s%s", i ? ", " : "", list[i].label);
      }
      vn_error("%s: no preset '%s'; presets: %s", step->word,
               step->preset_names[k], n_list ? vn_text_get(&names) : "none");
      vn_text_free(&names);
      rc = VN_EXIT_USAGE;
      break;
    }
    LilvNode *uri = lilv_new_uri(w->lilv, list[found].uri);
    step->presets[k] =
        uri ? lilv_state_new_from_world(w->lilv, &w->urids.map, uri) : NULL;
    lilv_node_free(uri);
    if (!step->presets[k]) {
      vn_error("%s: preset '%s' (%s) cannot be loaded", step->word,
               step->preset_names[k], list[found].uri);
      rc = VN_EXIT_PLUGIN;
      break;
    }
    // Port values only here; a plugin's own state is restored into each
    // instance once it exists (chain.c).
    PresetTarget target = {step, w, step->preset_names[k]};
    lilv_state_restore(step->presets[k], NULL, set_port_value, &target, 0,
                       NULL);
  }
  vn_presets_free(list, n_list);
  return rc;
}

static int resolve_step(VnStep *step, VnWorld *w, const VnTimeContext *ctx) {
  const double rate_hz = ctx->rate_hz;
  const LilvPlugin *plugin = vn_world_find_plugin(w, step->word);
  if (!plugin) {
    return vn_world_unknown_plugin(w, step->word);
  }
  if (!vn_plugin_info_load(&step->info, w, plugin)) {
    return VN_EXIT_PLUGIN;
  }
  const VnPluginInfo *info = &step->info;
  step->controls = calloc(info->n_ports ? info->n_ports : 1, sizeof(float));
  if (!step->controls) {
    vn_error("out of memory");
    return VN_EXIT_PLUGIN;
  }
  for (uint32_t i = 0; i < info->n_ports; ++i) {
    if (vn_port_is_control_input(&info->ports[i])) {
      step->controls[i] = vn_port_start_value(&info->ports[i], rate_hz);
    }
  }
  int rc = resolve_presets(step, w);
  for (size_t k = 0; rc == VN_EXIT_OK && k < step->n_settings; ++k) {
    VnSetting *set = &step->settings[k];
    const VnPortInfo *port = vn_port_by_symbol(info, set->symbol);
    if (!port || !vn_port_is_control_input(port)) {
      VnText controls = {0};
      list_controls(&controls, info);
      if (port) {
        vn_error("%s: '%s' is not a control input; controls of %s: %s",
                 step->word, set->symbol, info->uri, vn_text_get(&controls));
      } else {
        vn_error("%s: no control '%s'; controls of %s: %s", step->word,
                 set->symbol, info->uri, vn_text_get(&controls));
      }
      vn_text_free(&controls);
      return VN_EXIT_USAGE;
    }
    int64_t host_frames = 0;
    rc = vn_value_parse(step, port, set, ctx, &set->value, &host_frames);
    if (rc == VN_EXIT_OK) {
      step->controls[port->index] = set->value;
      // The last setting of a control wins, its host shift with it.
      if (vn_time_host_can_shift(info->uri, port->symbol)) {
        step->host_shift_frames = host_frames;
      }
    }
  }
  return rc;
}

int vn_steps_resolve(VnSteps *s, VnWorld *w, double rate_hz,
                     double air_temp_c) {
  const VnTimeContext ctx = {rate_hz, air_temp_c};
  for (size_t i = 0; i < s->n_steps; ++i) {
    const int rc = resolve_step(&s->steps[i], w, &ctx);
    if (rc != VN_EXIT_OK) {
      return rc;
    }
  }
  return VN_EXIT_OK;
}

void vn_steps_free(VnSteps *s) {
  for (size_t i = 0; s->steps && i < s->n_steps; ++i) {
    VnStep *step = &s->steps[i];
    for (size_t k = 0; step->presets && k < step->n_presets; ++k) {
      if (step->presets[k]) {
        lilv_state_free(step->presets[k]);
      }
    }
    free(step->presets);
    for (size_t k = 0; step->settings && k < step->n_settings; ++k) {
      free(step->settings[k].symbol);
    }
    free(step->settings);
    free(step->preset_names);
    free(step->controls);
    vn_plugin_info_free(&step->info);
  }
  free(s->steps);
  memset(s, 0, sizeof *s);
}
