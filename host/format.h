// SPDX-License-Identifier: GPL-3.0-or-later
// Output file formats: the names --format takes, the choice between the
// input's format, OUT's extension and --format, and how samples are scaled.
#ifndef VERNIER_HOST_FORMAT_H
#define VERNIER_HOST_FORMAT_H

#include <stdbool.h>
#include <stddef.h>

#include <sndfile.h>

// Picks the libsndfile format for OUT. option is --format or NULL. Returns
// an exit code (the error printed); *format is set on success.
int vn_format_choose(const SF_INFO *input, const char *option,
                     const char *out_path, int *format);
// "wav:pcm16", in --format's words where it has them.
void vn_format_name(int format, char *buf, size_t size);
// Bits per sample of an integer PCM encoding (8, 16, 24, 32), else 0.
// These go through sf_readf_int / sf_writef_int with our own scaling.
int vn_format_pcm_bits(int format);
// An encoding that cannot hold values beyond full scale, so that they clip.
bool vn_format_is_fixed_point(int format);

#endif
