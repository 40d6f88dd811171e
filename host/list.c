// SPDX-License-Identifier: GPL-3.0-or-later
// `vernier list`: every installed plugin, ours first.
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "args.h"
#include "json.h"
#include "text.h"
#include "vernier.h"
#include "world.h"

static const char usage[] =
    "usage: vernier list [--json]\n"
    "\n"
    "Lists the LV2 plugins lilv finds (on LV2_PATH when it is set): ours\n"
    "first (short name, URI, name), then every other (URI, name).\n"
    "\n"
    "Options:\n"
    "  --json         print {\"plugins\": [...]} on stdout\n"
    "  -h, --help     this help\n"
    "      --version  the version\n";

typedef struct {
  const char *uri;
  char *name;
  char short_name[256];
  bool ours;
} Entry;

static void print_text(const Entry *entries, size_t n) {
  VnTable ours, others;
  vn_table_init(&ours, 3);
  vn_table_init(&others, 2);
  for (size_t i = 0; i < n; ++i) {
    const Entry *e = &entries[i];
    if (e->ours) {
      const char *row[] = {e->short_name, e->uri, e->name};
      vn_table_add(&ours, row);
    } else {
      const char *row[] = {e->uri, e->name};
      vn_table_add(&others, row);
    }
  }
  vn_table_print(&ours, stdout, "");
  if (ours.n_rows && others.n_rows) {
    fputc('\n', stdout);
  }
  vn_table_print(&others, stdout, "");
  vn_table_free(&ours);
  vn_table_free(&others);
}

static void print_json(const Entry *entries, size_t n) {
  VnJson j;
  vn_json_init(&j, stdout);
  vn_json_begin_object(&j);
  vn_json_key(&j, "plugins");
  vn_json_begin_array(&j);
  for (size_t i = 0; i < n; ++i) {
    vn_json_begin_object(&j);
    vn_json_key(&j, "uri");
    vn_json_string(&j, entries[i].uri);
    vn_json_key(&j, "name");
    vn_json_string(&j, entries[i].name);
    vn_json_key(&j, "short_name");
    vn_json_string(&j, entries[i].ours ? entries[i].short_name : NULL);
    vn_json_key(&j, "ours");
    vn_json_bool(&j, entries[i].ours);
    vn_json_end_object(&j);
  }
  vn_json_end_array(&j);
  vn_json_end_object(&j);
  vn_json_finish(&j);
}

// Ours first; within each group lilv's order, which is by URI.
static int by_group(const void *a, const void *b) {
  const Entry *x = a, *y = b;
  if (x->ours != y->ours) {
    return x->ours ? -1 : 1;
  }
  return strcmp(x->uri, y->uri);
}

static int list_plugins(bool json) {
  VnWorld w;
  int rc = vn_world_open(&w);
  const LilvPlugins *all =
      rc == VN_EXIT_OK ? lilv_world_get_all_plugins(w.lilv) : NULL;
  const size_t n = all ? lilv_plugins_size(all) : 0;
  Entry *entries = calloc(n ? n : 1, sizeof *entries);
  if (rc == VN_EXIT_OK && !entries) {
    vn_error("out of memory");
    rc = VN_EXIT_PLUGIN;
  }
  size_t count = 0;
  if (rc == VN_EXIT_OK) {
    LILV_FOREACH(plugins, i, all) {
      const LilvPlugin *p = lilv_plugins_get(all, i);
      Entry *e = &entries[count++];
      e->uri = lilv_node_as_uri(lilv_plugin_get_uri(p));
      LilvNode *name = lilv_plugin_get_name(p);
      e->name = name ? strdup(lilv_node_as_string(name)) : NULL;
      lilv_node_free(name);
      e->ours = vn_short_name(e->uri, e->short_name, sizeof e->short_name);
    }
    qsort(entries, count, sizeof *entries, by_group);
    json ? print_json(entries, count) : print_text(entries, count);
  }
  for (size_t i = 0; i < count; ++i) {
    free(entries[i].name);
  }
  free(entries);
  vn_world_close(&w);
  return rc;
}

int vn_list_main(int argc, char **argv) {
  bool json = false;
  VnArgs a;
  vn_args_init(&a, argc, argv);
  char *word = NULL;
  for (VnArgKind kind; (kind = vn_args_next(&a, &word)) != VN_ARG_END;) {
    if (kind == VN_ARG_WORD) {
      vn_error("list takes no arguments (got '%s'); for one plugin, "
               "'vernier describe %s'",
               word, word);
      return VN_EXIT_USAGE;
    }
    if (vn_args_help_or_version(&a, usage)) {
      return VN_EXIT_OK;
    }
    if (!vn_args_is(&a, "--json", NULL)) {
      vn_error("unknown option '%s'; list options: --json, --help, --version",
               word);
      return VN_EXIT_USAGE;
    }
    if (!vn_args_flag(&a)) {
      return VN_EXIT_USAGE;
    }
    json = true;
  }
  return list_plugins(json);
}
