// SPDX-License-Identifier: GPL-3.0-or-later
// Test-only plugin urn:vernier-test:host-features: passes its input through
// when the host gave what spec/cli.md says it gives, else outputs silence and
// logs (log:log, warning level) which check failed. It logs one line
// "host-features: log:log works" at instantiation, so a test can see that
// the host's log goes to stderr.
#include <stdbool.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include <lv2/atom/atom.h>
#include <lv2/buf-size/buf-size.h>
#include <lv2/core/lv2.h>
#include <lv2/log/logger.h>
#include <lv2/options/options.h>
#include <lv2/parameters/parameters.h>
#include <lv2/urid/urid.h>

#define HOST_FEATURES_URI "urn:vernier-test:host-features"

// Mirrors lv2:index in host-features.ttl.
typedef enum { PORT_OK = 0, PORT_IN = 1, PORT_OUT = 2, PORT_LAST } PortIndex;

typedef struct {
  float *ok;
  const float *in;
  float *out;
  LV2_Log_Logger logger;
  int64_t max_block; // frames, from bufsz:maxBlockLength
  bool options_ok;   // every option present and consistent
  bool runs_ok;      // no run() longer than max_block so far
} HostFeatures;

static const LV2_Feature *find_feature(const LV2_Feature *const *features,
                                       const char *uri) {
  for (size_t i = 0; features && features[i]; ++i) {
    if (!strcmp(features[i]->URI, uri)) {
      return features[i];
    }
  }
  return NULL;
}

// The feature's data; NULL when absent (or when its data is NULL).
static void *feature_data(const LV2_Feature *const *features, const char *uri) {
  const LV2_Feature *f = find_feature(features, uri);
  return f ? f->data : NULL;
}

// An integer option of either atom width; -1 when absent.
static int64_t int_option(const LV2_Options_Option *o, LV2_URID key,
                          LV2_URID atom_int, LV2_URID atom_long) {
  for (; o && o->key; ++o) {
    if (o->key == key && o->type == atom_int && o->size == sizeof(int32_t)) {
      return *(const int32_t *)o->value;
    }
    if (o->key == key && o->type == atom_long && o->size == sizeof(int64_t)) {
      return *(const int64_t *)o->value;
    }
  }
  return -1;
}

static double float_option(const LV2_Options_Option *o, LV2_URID key,
                           LV2_URID atom_float, LV2_URID atom_double) {
  for (; o && o->key; ++o) {
    if (o->key == key && o->type == atom_float && o->size == sizeof(float)) {
      return *(const float *)o->value;
    }
    if (o->key == key && o->type == atom_double && o->size == sizeof(double)) {
      return *(const double *)o->value;
    }
  }
  return -1.0;
}

// Instantiation thread.
static LV2_Handle instantiate(const LV2_Descriptor *d, double rate_hz,
                              const char *path,
                              const LV2_Feature *const *features) {
  (void)d, (void)path;
  LV2_URID_Map *map = feature_data(features, LV2_URID__map);
  const LV2_Options_Option *options =
      feature_data(features, LV2_OPTIONS__options);
  if (!map || !options ||
      !find_feature(features, LV2_BUF_SIZE__boundedBlockLength)) { // no data
    return NULL; // required features (the host should have refused first)
  }
  HostFeatures *self = calloc(1, sizeof(HostFeatures));
  if (!self) {
    return NULL;
  }
  lv2_log_logger_init(&self->logger, map, feature_data(features, LV2_LOG__log));
  lv2_log_warning(&self->logger, "host-features: log:log works\n");

  const LV2_URID i32 = map->map(map->handle, LV2_ATOM__Int);
  const LV2_URID i64 = map->map(map->handle, LV2_ATOM__Long);
  const LV2_URID f32 = map->map(map->handle, LV2_ATOM__Float);
  const LV2_URID f64 = map->map(map->handle, LV2_ATOM__Double);
  self->max_block = int_option(
      options, map->map(map->handle, LV2_BUF_SIZE__maxBlockLength), i32, i64);
  const int64_t min_block = int_option(
      options, map->map(map->handle, LV2_BUF_SIZE__minBlockLength), i32, i64);
  const int64_t nominal = int_option(
      options, map->map(map->handle, LV2_BUF_SIZE__nominalBlockLength), i32,
      i64);
  const double rate_option = float_option(
      options, map->map(map->handle, LV2_PARAMETERS__sampleRate), f32, f64);

  self->options_ok = true;
  if (self->max_block < 1) {
    lv2_log_warning(&self->logger, "host-features: FAIL no maxBlockLength\n");
    self->options_ok = false;
  }
  if (min_block != 0) {
    lv2_log_warning(&self->logger,
                    "host-features: FAIL minBlockLength %lld, not 0\n",
                    (long long)min_block);
    self->options_ok = false;
  }
  if (nominal != self->max_block) {
    lv2_log_warning(&self->logger,
                    "host-features: FAIL nominalBlockLength %lld, "
                    "maxBlockLength %lld\n",
                    (long long)nominal, (long long)self->max_block);
    self->options_ok = false;
  }
  if (rate_option != rate_hz) {
    lv2_log_warning(&self->logger,
                    "host-features: FAIL param:sampleRate %g, instantiated "
                    "at %g Hz\n",
                    rate_option, rate_hz);
    self->options_ok = false;
  }
  self->runs_ok = true;
  return self;
}

// Audio thread.
static void connect_port(LV2_Handle h, uint32_t port, void *data) {
  HostFeatures *self = h;
  switch ((PortIndex)port) {
  case PORT_OK:
    self->ok = data;
    break;
  case PORT_IN:
    self->in = data;
    break;
  case PORT_OUT:
    self->out = data;
    break;
  case PORT_LAST:
    break;
  }
}

// Audio thread. Logging here is not real-time safe; this is a test plugin,
// and it logs at most once.
static void run(LV2_Handle h, uint32_t n_frames) {
  HostFeatures *self = h;
  if (self->runs_ok && (int64_t)n_frames > self->max_block) {
    lv2_log_warning(&self->logger,
                    "host-features: FAIL run(%u) beyond maxBlockLength %lld\n",
                    n_frames, (long long)self->max_block);
    self->runs_ok = false;
  }
  const bool ok = self->options_ok && self->runs_ok;
  if (self->ok) {
    *self->ok = ok ? 1.0f : 0.0f;
  }
  if (!self->in || !self->out) {
    return;
  }
  if (ok) {
    memmove(self->out, self->in, n_frames * sizeof(float));
  } else {
    memset(self->out, 0, n_frames * sizeof(float));
  }
}

// Instantiation thread.
static void cleanup(LV2_Handle h) {
  free(h);
}

static const LV2_Descriptor descriptor = {
    HOST_FEATURES_URI, instantiate, connect_port, NULL, run, NULL,
    cleanup,           NULL};

// Discovery thread.
LV2_SYMBOL_EXPORT const LV2_Descriptor *lv2_descriptor(uint32_t index) {
  return index == 0 ? &descriptor : NULL;
}
