// SPDX-License-Identifier: GPL-3.0-or-later
// The VALUE of a SYMBOL=VALUE setting, checked against its port: toggles by
// word, enumerations by label or value, integers whole, times with their
// units (time_value.h), everything finite and within the port's range.
#ifndef VERNIER_HOST_VALUES_H
#define VERNIER_HOST_VALUES_H

#include <stdbool.h>
#include <stdint.h>

#include "ports.h"
#include "steps.h"
#include "time_value.h"

// Converting a double beyond FLT_MAX to float is undefined behaviour.
bool vn_fits_float(double d);

// The port value set->value_text means for step's plugin, at ctx's rate and
// air temperature. *host_frames is 0, or, for a delay beyond the Fine
// Delay's own range, the whole frames the host moves the file by (the port
// value is then the rest). Returns an exit code (the error printed).
int vn_value_parse(const VnStep *step, const VnPortInfo *port,
                   const VnSetting *set, const VnTimeContext *ctx, float *value,
                   int64_t *host_frames);

#endif
