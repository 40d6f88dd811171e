// SPDX-License-Identifier: GPL-3.0-or-later
// libFuzzer target: the Turtle the host reads through lilv, as a bundle on
// LV2_PATH beside ours (a preset bundle such as `vernier measure --write`
// makes, or any bundle a user installs).
//
// The input is the bundle: a manifest.ttl, then, after a line "#--8<--",
// a second file fuzz.ttl that the manifest may name (rdfs:seeAlso). Without
// that line the input is fuzz.ttl and a fixed manifest names a preset of
// our Gain in it. For each input: a new world (vn_world_open, on LV2_PATH),
// then for every plugin on it what `vernier describe --json` and `vernier
// process` ask: its ports, its presets, the JSON, and each preset applied
// (as "PLUGIN @LABEL" and "PLUGIN @URI") through vn_steps_resolve. Nothing
// is instantiated: a hostile manifest may name any binary. What must hold:
// no crash, no sanitizer report, no leak. If lilv or serd itself fails on
// an input, that is theirs (tests/fuzz/README says what to do).
#define _GNU_SOURCE // memmem
#include <stdbool.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "describe.h"
#include "ports.h"
#include "steps.h"
#include "time_value.h"
#include "vernier.h"
#include "world.h"

#define SPLIT "#--8<--\n"

static char bundle_dir[4096];

static const char fixed_manifest[] =
    "@prefix lv2: <http://lv2plug.in/ns/lv2core#> .\n"
    "@prefix pset: <http://lv2plug.in/ns/ext/presets#> .\n"
    "@prefix rdfs: <http://www.w3.org/2000/01/rdf-schema#> .\n"
    "<urn:fuzz:preset> a pset:Preset ; lv2:appliesTo "
    "<urn:vernier:gain-mono> ; rdfs:seeAlso <fuzz.ttl> .\n";

int LLVMFuzzerInitialize(int *argc, char ***argv);
int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static void write_file(const char *name, const void *data, size_t size) {
  char path[4200];
  snprintf(path, sizeof path, "%s/%s", bundle_dir, name);
  FILE *f = fopen(path, "wb");
  if (!f || fwrite(data, 1, size, f) != size || fclose(f) != 0) {
    fprintf(stderr, "fuzz_preset: cannot write %s\n", path);
    abort();
  }
}

static char *tmp_root;

static void remove_bundle(void) {
  char path[4200];
  snprintf(path, sizeof path, "%s/manifest.ttl", bundle_dir);
  unlink(path);
  snprintf(path, sizeof path, "%s/fuzz.ttl", bundle_dir);
  unlink(path);
  rmdir(bundle_dir);
  rmdir(tmp_root);
}

// One folder for the whole run: <tmp>/fuzz.lv2, put after LV2_PATH.
int LLVMFuzzerInitialize(int *argc, char ***argv) {
  (void)argc;
  (void)argv;
  const char *path = getenv("LV2_PATH");
  if (!path) {
    fprintf(stderr, "fuzz_preset: set LV2_PATH to the folder of vernier.lv2\n");
    abort();
  }
  static char root[4096];
  const char *tmp = getenv("TMPDIR");
  snprintf(root, sizeof root, "%s/vernier-fuzz.XXXXXX", tmp ? tmp : "/tmp");
  tmp_root = mkdtemp(root);
  snprintf(bundle_dir, sizeof bundle_dir, "%s/fuzz.lv2", root);
  if (!tmp_root || mkdir(bundle_dir, 0700) != 0) {
    fprintf(stderr, "fuzz_preset: cannot make %s\n", bundle_dir);
    abort();
  }
  atexit(remove_bundle);
  static char lv2_path[8192];
  snprintf(lv2_path, sizeof lv2_path, "%s:%s", path, tmp_root);
  setenv("LV2_PATH", lv2_path, 1);
  return 0;
}

// "PLUGIN @NAME" through the path `vernier process` takes.
static void apply_preset(VnWorld *w, const char *plugin, const char *name) {
  char *at = malloc(strlen(name) + 2);
  if (!at) {
    return;
  }
  at[0] = '@';
  strcpy(at + 1, name);
  char *words[] = {(char *)plugin, at};
  VnSteps s;
  if (vn_steps_parse(&s, words, 2) == VN_EXIT_OK) {
    (void)vn_steps_resolve(&s, w, 48000.0, VN_AIR_TEMP_DEFAULT_C);
  }
  vn_steps_free(&s);
  free(at);
}

static void visit_plugin(VnDescription *d, const LilvPlugin *p) {
  memset(&d->info, 0, sizeof d->info);
  d->presets = NULL;
  d->n_presets = 0;
  d->rate_hz = 48000.0;
  d->air_temp_c = VN_AIR_TEMP_DEFAULT_C;
  d->latency_known = false;
  snprintf(d->class_name, sizeof d->class_name, "Plugin");
  d->short_name[0] = '\0';
  d->license = NULL;
  d->license_node = NULL;
  if (vn_plugin_info_load(&d->info, &d->world, p) &&
      vn_presets_load(&d->world, p, &d->presets, &d->n_presets)) {
    vn_short_name(d->info.uri, d->short_name, sizeof d->short_name);
    vn_describe_print_json(d);
    for (size_t i = 0; i < d->n_presets; ++i) {
      apply_preset(&d->world, d->info.uri, d->presets[i].label);
      apply_preset(&d->world, d->info.uri, d->presets[i].uri);
    }
  }
  vn_presets_free(d->presets, d->n_presets);
  vn_plugin_info_free(&d->info);
}

// Loading a plugin's data is what costs (lilv reads it on first use), so
// only the plugins the input can touch: its own, and ours it names (the
// fixed manifest names the Gain).
static bool worth_visiting(const LilvPlugin *p, const uint8_t *data,
                           size_t size) {
  const char *bundle = lilv_node_as_uri(lilv_plugin_get_bundle_uri(p));
  const char *uri = lilv_node_as_uri(lilv_plugin_get_uri(p));
  return strstr(bundle, "/fuzz.lv2/") ||
         strcmp(uri, "urn:vernier:gain-mono") == 0 ||
         memmem(data, size, uri, strlen(uri));
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size) {
  const uint8_t *split = memmem(data, size, SPLIT, strlen(SPLIT));
  if (split) {
    const size_t head = (size_t)(split - data);
    write_file("manifest.ttl", data, head);
    write_file("fuzz.ttl", split + strlen(SPLIT), size - head - strlen(SPLIT));
  } else {
    write_file("manifest.ttl", fixed_manifest, strlen(fixed_manifest));
    write_file("fuzz.ttl", data, size);
  }
  static VnDescription d;
  memset(&d, 0, sizeof d);
  if (vn_world_open(&d.world) == VN_EXIT_OK) {
    const LilvPlugins *all = lilv_world_get_all_plugins(d.world.lilv);
    LILV_FOREACH(plugins, i, all) {
      const LilvPlugin *p = lilv_plugins_get(all, i);
      if (worth_visiting(p, data, size)) {
        visit_plugin(&d, p);
      }
    }
  }
  vn_world_close(&d.world);
  return 0;
}
