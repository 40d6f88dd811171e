// SPDX-License-Identifier: GPL-3.0-or-later
// The baseline for the host's throughput: the least a program can do to turn
// IN into OUT through libsndfile. Reads and writes float frames 512 at a time
// (the host's default block) and writes the input's format, channels and
// sample rate. No plugins, no metadata copy, no temporary file.
//
//   raw_copy [--sync] IN OUT   exit 0 on success, 1 on any error
//
// --sync flushes OUT to the disk (fsync) before exiting, as `vernier` does
// before it renames its temporary file into place: the baseline with the
// same durability.
#include <fcntl.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include <sndfile.h>

#define BLOCK_FRAMES 512

static int sync_file(const char *path) {
  const int fd = open(path, O_WRONLY);
  const int rc = fd >= 0 && fsync(fd) == 0 ? 0 : 1;
  if (fd >= 0) {
    close(fd);
  }
  return rc;
}

int main(int argc, char **argv) {
  const int sync = argc == 4 && !strcmp(argv[1], "--sync");
  argv += sync;
  argc -= sync;
  if (argc != 3) {
    fprintf(stderr, "usage: raw_copy [--sync] IN OUT\n");
    return 1;
  }
  SF_INFO info = {0};
  SNDFILE *in = sf_open(argv[1], SFM_READ, &info);
  if (!in) {
    fprintf(stderr, "raw_copy: %s: %s\n", argv[1], sf_strerror(NULL));
    return 1;
  }
  SF_INFO out_info = {.samplerate = info.samplerate,
                      .channels = info.channels,
                      .format = info.format};
  SNDFILE *out = sf_open(argv[2], SFM_WRITE, &out_info);
  if (!out) {
    fprintf(stderr, "raw_copy: %s: %s\n", argv[2], sf_strerror(NULL));
    sf_close(in);
    return 1;
  }
  float *buf = malloc(sizeof(float) * BLOCK_FRAMES * (size_t)info.channels);
  int status = buf ? 0 : 1;
  sf_count_t n;
  while (!status && (n = sf_readf_float(in, buf, BLOCK_FRAMES)) > 0) {
    if (sf_writef_float(out, buf, n) != n) {
      fprintf(stderr, "raw_copy: %s: %s\n", argv[2], sf_strerror(out));
      status = 1;
    }
  }
  if (!status && sf_error(in) != SF_ERR_NO_ERROR) {
    fprintf(stderr, "raw_copy: %s: %s\n", argv[1], sf_strerror(in));
    status = 1;
  }
  free(buf);
  sf_close(in);
  if (sf_close(out) != 0 && !status) {
    fprintf(stderr, "raw_copy: %s: cannot close\n", argv[2]);
    status = 1;
  }
  if (!status && sync && sync_file(argv[2]) != 0) {
    fprintf(stderr, "raw_copy: %s: cannot sync\n", argv[2]);
    status = 1;
  }
  return status;
}
