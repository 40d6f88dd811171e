// SPDX-License-Identifier: GPL-3.0-or-later
// A shared object that is not an LV2 plugin binary: it loads, but exports
// no lv2_descriptor (nor lv2_lib_descriptor), so a host finds nothing in it.
int no_descriptor_here(void);
int no_descriptor_here(void) {
  return 0;
}
