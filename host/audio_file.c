// SPDX-License-Identifier: GPL-3.0-or-later
#define _GNU_SOURCE // renameat2 and RENAME_NOREPLACE
#include "audio_file.h"

#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "format.h"
#include "interrupt.h"
#include "vernier.h"

// Integer samples are scaled by 2^(bits-1) both ways, here rather than in
// libsndfile, whose float-to-integer write scales by 2^(bits-1) - 1 unless
// clipping is on: a PCM file through a pass-through chain then comes out
// bit for bit, and we know exactly which samples clipped.
#define INT_TO_FLOAT 0x1p-31 // sf_readf_int left-justifies to 32 bits

// Files move in chunks of about 256 KiB, many plugin blocks at a time: a
// system call per 512-frame block (4 KiB of stereo float) costs more than
// the gain plugin does. A whole number of blocks; at least one.
#define IO_CHUNK_BYTES (256 * 1024)
static size_t io_chunk_frames(size_t block_frames, int channels) {
  size_t frames = IO_CHUNK_BYTES / ((size_t)channels * sizeof(float));
  frames -= frames % block_frames;
  return frames < block_frames ? block_frames : frames;
}

int vn_input_open(VnInput *in, const char *path, size_t block_frames) {
  memset(in, 0, sizeof *in);
  in->path = path;
  struct stat st;
  int fd = -1;
  if (stat(path, &st) != 0) {
    vn_error("%s: cannot open the input (%s)", path, strerror(errno));
    return VN_EXIT_INPUT;
  }
  if (S_ISDIR(st.st_mode)) {
    vn_error("%s: is a folder, not an audio file", path);
    return VN_EXIT_INPUT;
  }
  // Before open(): opening a FIFO with no writer blocks for ever, and the
  // SIGINT/SIGTERM handler's SA_RESTART resumes the wait. Reading seeks
  // (measure reads where the segments are), so pipes and devices are out
  // anyway.
  if (!S_ISREG(st.st_mode)) {
    vn_error("%s: is not a regular file (a FIFO, device or socket); give an "
             "audio file",
             path);
    return VN_EXIT_INPUT;
  }
  if ((fd = open(path, O_RDONLY)) < 0) {
    vn_error("%s: cannot open the input (%s)", path, strerror(errno));
    return VN_EXIT_INPUT;
  }
  close(fd);
  in->sf = sf_open(path, SFM_READ, &in->info);
  if (!in->sf) {
    vn_error("%s: not an audio file libsndfile can read (%s)", path,
             sf_strerror(NULL));
    return VN_EXIT_INPUT;
  }
  if (in->info.frames <= 0 || in->info.channels <= 0) {
    vn_error("%s: no audio frames", path);
    return VN_EXIT_INPUT;
  }
  in->max_frames = io_chunk_frames(block_frames, in->info.channels);
  in->pcm_bits = vn_format_pcm_bits(in->info.format);
  if (in->pcm_bits) {
    in->ints =
        malloc(in->max_frames * (size_t)in->info.channels * sizeof(int32_t));
    if (!in->ints) {
      vn_error("%s: out of memory for %d channels", path, in->info.channels);
      return VN_EXIT_INPUT;
    }
  }
  return VN_EXIT_OK;
}

long vn_input_read(VnInput *in, float *samples, size_t frames) {
  frames = frames < in->max_frames ? frames : in->max_frames;
  sf_count_t got;
  if (in->pcm_bits) {
    got = sf_readf_int(in->sf, in->ints, (sf_count_t)frames);
    const size_t n = got > 0 ? (size_t)got * (size_t)in->info.channels : 0;
    for (size_t i = 0; i < n; ++i) {
      samples[i] = (float)(in->ints[i] * INT_TO_FLOAT);
    }
  } else {
    got = sf_readf_float(in->sf, samples, (sf_count_t)frames);
  }
  // A decoder that meets damage returns what it could and sets the error:
  // look at every short read, not only at the empty one.
  if (got < 0 ||
      ((size_t)got < frames && sf_error(in->sf) != SF_ERR_NO_ERROR)) {
    vn_error("%s: read error (%s)", in->path, sf_strerror(in->sf));
    return -1;
  }
  return (long)got;
}

void vn_input_close(VnInput *in) {
  if (in->sf) {
    sf_close(in->sf);
  }
  free(in->ints);
  memset(in, 0, sizeof *in);
}

// The folder part of path, with its trailing slash ("" for a bare name).
static char *folder_prefix(const char *path) {
  const char *slash = strrchr(path, '/');
  return strndup(path, slash ? (size_t)(slash - path) + 1 : 0);
}

static int check_folder(const char *out_path) {
  char *prefix = folder_prefix(out_path);
  if (!prefix) {
    vn_error("out of memory");
    return VN_EXIT_OUTPUT;
  }
  // "d/" is stat'ed as it is (so "/" stays "/"), but named as "d".
  const size_t length = strlen(prefix);
  const char *folder = length ? prefix : ".";
  char *name = strndup(folder, length > 1 ? length - 1 : strlen(folder));
  struct stat st;
  int rc = VN_EXIT_OK;
  if (stat(folder, &st) != 0) {
    vn_error("%s: cannot write there: folder '%s' (%s)", out_path,
             name ? name : folder, strerror(errno));
    rc = VN_EXIT_OUTPUT;
  } else if (!S_ISDIR(st.st_mode)) {
    vn_error("%s: cannot write there: '%s' is not a folder", out_path,
             name ? name : folder);
    rc = VN_EXIT_OUTPUT;
  } else if (access(folder, W_OK | X_OK) != 0) {
    vn_error("%s: cannot write in folder '%s' (%s)", out_path,
             name ? name : folder, strerror(errno));
    rc = VN_EXIT_OUTPUT;
  }
  free(name);
  free(prefix);
  return rc;
}

int vn_output_check(const char *out_path, const char *in_path, bool overwrite) {
  const size_t length = strlen(out_path);
  if (length == 0 || out_path[length - 1] == '/') {
    vn_error("'%s' names a folder; OUT must be a file name", out_path);
    return VN_EXIT_OUTPUT;
  }
  struct stat out_st, in_st;
  if (stat(out_path, &out_st) == 0) {
    // dev and inode, not names: catches hard and symbolic links, ./x, ../d/x
    if (stat(in_path, &in_st) == 0 && out_st.st_dev == in_st.st_dev &&
        out_st.st_ino == in_st.st_ino) {
      vn_error("%s is the same file as the input %s", out_path, in_path);
      return VN_EXIT_INPUT;
    }
    if (S_ISDIR(out_st.st_mode)) {
      vn_error("%s is a folder; OUT must be a file name", out_path);
      return VN_EXIT_OUTPUT;
    }
    // The output is renamed into place: --overwrite would put a regular
    // file where a device or FIFO was (as root, /dev/null itself).
    if (!S_ISREG(out_st.st_mode)) {
      vn_error("%s is not a regular file (a FIFO, device or socket); OUT "
               "must be a file name",
               out_path);
      return VN_EXIT_OUTPUT;
    }
    if (!overwrite) {
      vn_error("%s exists; add --overwrite to replace it", out_path);
      return VN_EXIT_OUTPUT;
    }
  } else if (lstat(out_path, &out_st) == 0 && !overwrite) {
    vn_error("%s exists (a symbolic link to nothing); add --overwrite to "
             "replace it",
             out_path);
    return VN_EXIT_OUTPUT;
  }
  return check_folder(out_path);
}

static void copy_metadata(SNDFILE *from, SNDFILE *to) {
  SF_BROADCAST_INFO_VAR(16 * 1024) bext;
  memset(&bext, 0, sizeof bext);
  // SET takes the size in use: libsndfile refuses a buffer as large as its
  // 16 KiB maximum. It fails, harmlessly, where the container has no bext.
  if (sf_command(from, SFC_GET_BROADCAST_INFO, &bext, sizeof bext) == SF_TRUE) {
    const size_t history_offset =
        (size_t)((char *)bext.coding_history - (char *)&bext);
    const size_t history_bytes = bext.coding_history_size < 16 * 1024
                                     ? bext.coding_history_size
                                     : 16 * 1024 - 1;
    sf_command(to, SFC_SET_BROADCAST_INFO, &bext,
               (int)(history_offset + history_bytes));
  }
  // Not a range: the SF_STR_* values skip from 0x09 to 0x10.
  static const int kinds[] = {
      SF_STR_TITLE,       SF_STR_COPYRIGHT, SF_STR_SOFTWARE, SF_STR_ARTIST,
      SF_STR_COMMENT,     SF_STR_DATE,      SF_STR_ALBUM,    SF_STR_LICENSE,
      SF_STR_TRACKNUMBER, SF_STR_GENRE};
  for (size_t i = 0; i < sizeof kinds / sizeof kinds[0]; ++i) {
    const char *s = sf_get_string(from, kinds[i]);
    if (s && s[0]) {
      sf_set_string(to, kinds[i], s); // fails where the container has none
    }
  }
}

static mode_t new_file_mode(const char *path, bool overwrite) {
  struct stat st;
  if (overwrite && stat(path, &st) == 0) {
    return st.st_mode & 07777; // a replaced file keeps its permissions
  }
  const mode_t mask = umask(0);
  umask(mask);
  return 0666 & ~mask; // mkstemp's 0600 is for the temporary file only
}

int vn_output_open(VnOutput *out, const char *path, const VnInput *in,
                   int format, size_t max_frames, bool overwrite) {
  memset(out, 0, sizeof *out);
  out->path = path;
  out->max_frames = max_frames;
  char *prefix = folder_prefix(path);
  const char *base = strrchr(path, '/') ? strrchr(path, '/') + 1 : path;
  const size_t size = (prefix ? strlen(prefix) : 0) + strlen(base) + 32;
  out->temp_path = prefix ? malloc(size) : NULL;
  if (!out->temp_path) {
    free(prefix);
    vn_error("out of memory");
    return VN_EXIT_OUTPUT;
  }
  // In OUT's folder, so that the final rename stays on one filesystem.
  snprintf(out->temp_path, size, "%s.%s.vernier-XXXXXX", prefix, base);
  free(prefix);
  out->fd = mkstemp(out->temp_path);
  if (out->fd < 0) {
    vn_error("%s: cannot create a temporary file beside it (%s)", path,
             strerror(errno));
    free(out->temp_path);
    out->temp_path = NULL;
    return VN_EXIT_OUTPUT;
  }
  out->has_fd = true;
  vn_interrupt_set_temp(out->temp_path);
  if (fchmod(out->fd, new_file_mode(path, overwrite)) != 0) {
    vn_warn("%s: cannot set its permissions (%s)", path, strerror(errno));
  }
  out->info.samplerate = in->info.samplerate;
  out->info.channels = in->info.channels;
  out->info.format = format;
  out->sf = sf_open_fd(out->fd, SFM_WRITE, &out->info, SF_FALSE);
  if (!out->sf) {
    char name[64];
    vn_format_name(format, name, sizeof name);
    vn_error("%s: cannot write %s (%s)", path, name, sf_strerror(NULL));
    return VN_EXIT_OUTPUT;
  }
  out->pcm_bits = vn_format_pcm_bits(format);
  out->fixed_point = vn_format_is_fixed_point(format);
  if (!out->pcm_bits && out->fixed_point) {
    sf_command(out->sf, SFC_SET_CLIPPING, NULL, SF_TRUE); // a-law, ADPCM, ...
  }
  copy_metadata(in->sf, out->sf);
  if (out->pcm_bits) {
    out->ints =
        malloc(max_frames * (size_t)out->info.channels * sizeof(int32_t));
    if (!out->ints) {
      vn_error("out of memory");
      return VN_EXIT_OUTPUT;
    }
  }
  return VN_EXIT_OK;
}

// How much the output may run ahead of the disk (see vn_output_write).
#define WRITEBACK_BYTES (8u << 20)

static void quantize(VnOutput *out, const float *samples, size_t n) {
  const double full_scale = ldexp(1.0, out->pcm_bits - 1);
  const double top = full_scale - 1.0, bottom = -full_scale;
  const double justify = ldexp(1.0, 32 - out->pcm_bits);
  for (size_t i = 0; i < n; ++i) {
    double x = samples[i];
    if (isnan(x)) {
      ++out->nonfinite_samples;
      x = 0.0;
    }
    double q = nearbyint(x * full_scale); // to nearest, ties to even
    // The contract's count: beyond full scale, or clipped by rounding (the
    // top code is one step short of +1.0, so +1.0 itself clips).
    const bool clipped = fabs(x) > 1.0 || q > top || q < bottom;
    out->clipped_samples += clipped;
    q = q > top ? top : q < bottom ? bottom : q;
    out->ints[i] = (int32_t)(q * justify); // exact: |q * justify| < 2^31
  }
}

int vn_output_write(VnOutput *out, const float *samples, size_t frames) {
  frames = frames < out->max_frames ? frames : out->max_frames;
  const size_t n = frames * (size_t)out->info.channels;
  sf_count_t written;
  if (out->pcm_bits) {
    quantize(out, samples, n);
    written = sf_writef_int(out->sf, out->ints, (sf_count_t)frames);
  } else {
    if (out->fixed_point) {
      for (size_t i = 0; i < n; ++i) {
        out->clipped_samples += fabsf(samples[i]) > 1.0f;
      }
    }
    written = sf_writef_float(out->sf, samples, (sf_count_t)frames);
  }
  if (written != (sf_count_t)frames) {
    vn_error("%s: write failed (%s)", out->path, sf_strerror(out->sf));
    return VN_EXIT_OUTPUT;
  }
  // Start the disk writes now, without waiting for them, so the fsync()
  // before the rename finds little left to do. Advice only: a failure here
  // changes nothing, fsync() reports real errors.
  out->unflushed_bytes += n * sizeof(float);
  if (out->unflushed_bytes >= WRITEBACK_BYTES) {
    sync_file_range(out->fd, 0, 0, SYNC_FILE_RANGE_WRITE);
    out->unflushed_bytes = 0;
  }
  return VN_EXIT_OK;
}

// Without --overwrite, an OUT that appeared while we worked is kept.
static bool place_without_replacing(const char *from, const char *to) {
  if (renameat2(AT_FDCWD, from, AT_FDCWD, to, RENAME_NOREPLACE) == 0) {
    return true;
  }
  if (errno != EINVAL && errno != ENOSYS && errno != EOPNOTSUPP) {
    return false;
  }
  // A filesystem without RENAME_NOREPLACE: link() refuses an existing name.
  if (link(from, to) != 0) {
    return false;
  }
  unlink(from);
  return true;
}

static void sync_folder(const char *path) {
  char *prefix = folder_prefix(path);
  if (!prefix) {
    return;
  }
  const int fd = open(prefix[0] ? prefix : ".", O_RDONLY | O_DIRECTORY);
  if (fd >= 0) {
    fsync(fd); // the rename itself survives a crash too
    close(fd);
  }
  free(prefix);
}

int vn_output_commit(VnOutput *out, bool overwrite) {
  const int sf_rc = sf_close(out->sf);
  out->sf = NULL;
  if (sf_rc != 0) {
    vn_error("%s: write failed (%s)", out->path, sf_error_number(sf_rc));
    return VN_EXIT_OUTPUT;
  }
  if (fsync(out->fd) != 0 || close(out->fd) != 0) {
    out->has_fd = false;
    vn_error("%s: write failed (%s)", out->path, strerror(errno));
    return VN_EXIT_OUTPUT;
  }
  out->has_fd = false;
  sigset_t saved;
  vn_interrupt_hold(&saved);
  const bool placed = overwrite
                          ? rename(out->temp_path, out->path) == 0
                          : place_without_replacing(out->temp_path, out->path);
  const int err = errno;
  if (placed) {
    vn_interrupt_set_temp(NULL);
    free(out->temp_path);
    out->temp_path = NULL;
  }
  vn_interrupt_release(&saved);
  if (!placed) {
    if (err == EEXIST) {
      vn_error("%s appeared while processing and is left as it was; add "
               "--overwrite to replace it",
               out->path);
    } else {
      vn_error("%s: cannot put the output in place (%s)", out->path,
               strerror(err));
    }
    return VN_EXIT_OUTPUT;
  }
  sync_folder(out->path);
  return VN_EXIT_OK;
}

void vn_output_discard(VnOutput *out) {
  if (out->sf) {
    sf_close(out->sf);
    out->sf = NULL;
  }
  if (out->has_fd) {
    close(out->fd);
    out->has_fd = false;
  }
  if (out->temp_path) {
    unlink(out->temp_path);
    vn_interrupt_set_temp(NULL);
    free(out->temp_path);
    out->temp_path = NULL;
  }
  free(out->ints);
  out->ints = NULL;
}
