// SPDX-License-Identifier: GPL-3.0-or-later
// Audio files through libsndfile: the input, and the output written to a
// temporary file beside OUT and renamed into place only when all went well.
#ifndef VERNIER_HOST_AUDIO_FILE_H
#define VERNIER_HOST_AUDIO_FILE_H

#include <stdbool.h>
#include <stdint.h>
#include <sys/types.h>

#include <sndfile.h>

typedef struct {
  const char *path;
  SNDFILE *sf;
  SF_INFO info;
  int pcm_bits;      // > 0: read as integers and scaled here
  int32_t *ints;     // interleaved scratch for the integer path
  size_t max_frames; // per read
} VnInput;

typedef struct {
  const char *path; // OUT as given
  char *temp_path;  // NULL when no temporary file exists
  int fd;           // valid while has_fd
  bool has_fd;
  SNDFILE *sf;
  SF_INFO info;
  int pcm_bits;
  bool fixed_point;
  uint64_t clipped_samples;
  uint64_t nonfinite_samples; // NaN written as 0 to a fixed-point file
  int32_t *ints;
  size_t max_frames;
  size_t unflushed_bytes; // written since the last writeback was started
} VnOutput;

// Exit 3 with the error printed unless path is audio with frames.
// Reads come in chunks of max_frames, a whole number of block_frames.
int vn_input_open(VnInput *in, const char *path, size_t block_frames);
// Interleaved, at most max_frames; 0 at the end, -1 on a read error (the
// error printed).
long vn_input_read(VnInput *in, float *samples, size_t frames);
void vn_input_close(VnInput *in);

// Before any work: OUT must not be IN (exit 3), must not exist without
// overwrite, and must be in a folder we can write (exit 4).
int vn_output_check(const char *out_path, const char *in_path, bool overwrite);
// Creates the temporary file as format, with the input's broadcast chunk
// and strings where the format holds them. Exit 4 on failure.
int vn_output_open(VnOutput *out, const char *path, const VnInput *in,
                   int format, size_t max_frames, bool overwrite);
// Exit 4 on a failed write (the error printed).
int vn_output_write(VnOutput *out, const float *samples, size_t frames);
// Closes, syncs and renames the temporary file to OUT; without overwrite
// never replaces a file that appeared meanwhile. Exit 4 on failure.
int vn_output_commit(VnOutput *out, bool overwrite);
// Closes and removes the temporary file, if any; safe to call twice.
void vn_output_discard(VnOutput *out);

#endif
