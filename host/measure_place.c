// SPDX-License-Identifier: GPL-3.0-or-later
// Files and folders that appear whole or not at all: written under a hidden
// temporary name beside their own, synced, and renamed into place (as
// audio_file.c does for `vernier process`).
#define _GNU_SOURCE // renameat2, RENAME_NOREPLACE, RENAME_EXCHANGE, asprintf
#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "interrupt.h"
#include "measure_write.h"
#include "vernier.h"

char *vn_path_in(const char *dir, const char *name) {
  const size_t len = strlen(dir);
  char *path = NULL;
  if (asprintf(&path, "%s%s%s", dir, len && dir[len - 1] == '/' ? "" : "/",
               name) < 0) {
    return NULL;
  }
  return path;
}

const char *vn_path_base(const char *path) {
  const char *slash = strrchr(path, '/');
  return slash ? slash + 1 : path;
}

char *vn_place_temp_name(const char *path) {
  const char *base = vn_path_base(path);
  char *temp = NULL;
  if (asprintf(&temp, "%.*s.%s.XXXXXX", (int)(base - path), path, base) < 0) {
    vn_error("out of memory");
    return NULL;
  }
  return temp;
}

mode_t vn_place_mode(mode_t mode) {
  const mode_t mask = umask(0);
  umask(mask);
  return mode & ~mask;
}

bool vn_place_remove(const char *path) {
  struct stat st;
  if (lstat(path, &st) != 0) {
    return errno == ENOENT;
  }
  if (!S_ISDIR(st.st_mode)) {
    return unlink(path) == 0;
  }
  DIR *d = opendir(path);
  if (d) {
    for (struct dirent *e; (e = readdir(d));) {
      if (strcmp(e->d_name, ".") != 0 && strcmp(e->d_name, "..") != 0) {
        char *entry = vn_path_in(path, e->d_name);
        if (entry) {
          unlink(entry);
        }
        free(entry);
      }
    }
    closedir(d);
  }
  return rmdir(path) == 0;
}

void vn_place_sync_folder(const char *folder) {
  const int fd = open(folder, O_RDONLY | O_DIRECTORY);
  if (fd >= 0) {
    fsync(fd);
    close(fd);
  }
}

// A name that is not there yet: never replaces one that appeared meanwhile
// (EEXIST). Without RENAME_NOREPLACE, link() refuses an existing name, and
// a folder renamed onto anything but an empty folder fails.
static bool put_new(const char *from, const char *to, bool from_dir) {
  if (renameat2(AT_FDCWD, from, AT_FDCWD, to, RENAME_NOREPLACE) == 0) {
    return true;
  }
  if (errno != EINVAL && errno != ENOSYS) {
    return false;
  }
  if (from_dir) {
    return rename(from, to) == 0;
  }
  return link(from, to) == 0 && unlink(from) == 0;
}

// --overwrite with a folder on either side: the two swap names in one step
// where the filesystem can, else the old one is moved aside first; then the
// old one is removed.
static bool swap_in(const char *from, const char *to) {
  if (renameat2(AT_FDCWD, from, AT_FDCWD, to, RENAME_EXCHANGE) == 0) {
    vn_place_remove(from); // now the old one
    return true;
  }
  if (errno != EINVAL && errno != ENOSYS) {
    return false;
  }
  char *aside = NULL;
  bool placed = false;
  if (asprintf(&aside, "%s.old", from) >= 0 && rename(to, aside) == 0) {
    placed = rename(from, to) == 0;
    const int err = errno;
    if (placed) {
      vn_place_remove(aside);
    } else {
      rename(aside, to); // as it was
    }
    errno = err;
  }
  free(aside);
  return placed;
}

int vn_place(const char *from, const char *path, bool overwrite, bool quiet) {
  sigset_t saved;
  vn_interrupt_hold(&saved);
  struct stat from_st, to_st;
  const bool from_dir = lstat(from, &from_st) == 0 && S_ISDIR(from_st.st_mode);
  const bool exists = lstat(path, &to_st) == 0;
  bool placed;
  if (!overwrite) {
    placed = put_new(from, path, from_dir);
  } else if (exists && (from_dir || S_ISDIR(to_st.st_mode))) {
    placed = swap_in(from, path);
  } else {
    placed = rename(from, path) == 0;
  }
  const int err = errno;
  vn_interrupt_release(&saved);
  if (!placed) {
    if (err == EEXIST || err == ENOTEMPTY) {
      vn_error("%s appeared while writing and is left as it was; add "
               "--overwrite to replace it",
               path);
    } else {
      vn_error("%s: cannot put it in place (%s)", path, strerror(err));
    }
    return VN_EXIT_OUTPUT;
  }
  const char *base = vn_path_base(path);
  char *folder = base == path ? strdup(".") : strndup(path, base - path);
  if (folder) {
    vn_place_sync_folder(folder);
  }
  free(folder);
  if (!quiet) {
    fprintf(stderr, "vernier: wrote %s\n", path);
  }
  return VN_EXIT_OK;
}

int vn_place_file(const char *path, mode_t mode, bool overwrite, bool quiet,
                  VnPlaceWriter write, const void *ctx) {
  char *temp = vn_place_temp_name(path);
  if (!temp) {
    return VN_EXIT_OUTPUT;
  }
  const int fd = mkstemp(temp);
  FILE *f = fd >= 0 ? fdopen(fd, "w") : NULL;
  if (!f) {
    vn_error("%s: cannot create a temporary file beside it (%s)", path,
             strerror(errno));
    if (fd >= 0) {
      close(fd);
      unlink(temp);
    }
    free(temp);
    return VN_EXIT_OUTPUT;
  }
  vn_interrupt_set_temp(temp); // a second signal removes it at once
  errno = 0;
  bool ok = write(f, ctx) && fchmod(fd, vn_place_mode(mode)) == 0 &&
            !ferror(f) && fflush(f) == 0 && fsync(fd) == 0;
  const int err = errno;
  ok = fclose(f) == 0 && ok;
  int rc = VN_EXIT_OK;
  if (!ok) {
    vn_error("%s: write failed (%s)", path,
             err ? strerror(err) : "its content could not be made");
    rc = VN_EXIT_OUTPUT;
  } else {
    rc = vn_place(temp, path, overwrite, quiet);
  }
  if (rc != VN_EXIT_OK) {
    unlink(temp);
  }
  vn_interrupt_set_temp(NULL);
  free(temp);
  return rc;
}
