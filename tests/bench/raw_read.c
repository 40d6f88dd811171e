// SPDX-License-Identifier: GPL-3.0-or-later
// The baseline for `vernier measure`'s speed: the least a program can do to
// look at every frame of two files through libsndfile. Reads each file with
// sf_readf_float, 65536 frames at a time, and prints one checksum (the sum
// of all samples) so that the reading cannot be optimised away.
//
//   raw_read A B   exit 0 on success, 1 on any error
#include <stdio.h>
#include <stdlib.h>

#include <sndfile.h>

#define CHUNK_FRAMES 65536

static int read_all(const char *path, float *buf, double *sum) {
  SF_INFO info = {0};
  SNDFILE *sf = sf_open(path, SFM_READ, &info);
  if (!sf) {
    fprintf(stderr, "raw_read: %s: %s\n", path, sf_strerror(NULL));
    return 1;
  }
  // Files of more channels than the buffer holds are read in fewer frames.
  const sf_count_t frames =
      info.channels <= 8 ? CHUNK_FRAMES : CHUNK_FRAMES * 8 / info.channels;
  sf_count_t n;
  while ((n = sf_readf_float(sf, buf, frames)) > 0) {
    for (sf_count_t i = 0; i < n * info.channels; ++i) {
      *sum += buf[i];
    }
  }
  const int rc = sf_error(sf) != SF_ERR_NO_ERROR;
  if (rc) {
    fprintf(stderr, "raw_read: %s: %s\n", path, sf_strerror(sf));
  }
  sf_close(sf);
  return rc;
}

int main(int argc, char **argv) {
  if (argc != 3) {
    fprintf(stderr, "usage: raw_read A B\n");
    return 1;
  }
  float *buf = malloc(sizeof(float) * CHUNK_FRAMES * 8);
  if (!buf) {
    fprintf(stderr, "raw_read: out of memory\n");
    return 1;
  }
  double sum = 0;
  const int rc = read_all(argv[1], buf, &sum) || read_all(argv[2], buf, &sum);
  free(buf);
  if (!rc) {
    printf("%.17g\n", sum);
  }
  return rc;
}
