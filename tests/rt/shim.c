// SPDX-License-Identifier: GPL-3.0-or-later
// The interposed functions of shim.h. Each real function is looked up once,
// before main(), in a constructor. dlsym() may itself call calloc (for its
// error buffer) before the real calloc is known: such early requests are
// served from a small static buffer and never freed (common practice for
// malloc interposers).
#define _GNU_SOURCE
#include "shim.h"

#include <dlfcn.h>
#include <fcntl.h>
#include <pthread.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>
#include <sys/types.h>
#include <unistd.h>

volatile int shim_in_run;
shim_counts_t shim_counts;

static void *(*real_malloc)(size_t);
static void *(*real_calloc)(size_t, size_t);
static void *(*real_realloc)(void *, size_t);
static void (*real_free)(void *);
static int (*real_posix_memalign)(void **, size_t, size_t);
static void *(*real_aligned_alloc)(size_t, size_t);
static void *(*real_memalign)(size_t, size_t);
static void *(*real_valloc)(size_t);
static int (*real_mutex_lock)(pthread_mutex_t *);
static int (*real_mutex_trylock)(pthread_mutex_t *);
static int (*real_mutex_unlock)(pthread_mutex_t *);
static ssize_t (*real_read)(int, void *, size_t);
static ssize_t (*real_write)(int, const void *, size_t);
static int (*real_open)(const char *, int, ...);
static int (*real_open64)(const char *, int, ...);
static int (*real_openat)(int, const char *, int, ...);
static int (*real_close)(int);
static FILE *(*real_fopen)(const char *, const char *);
static FILE *(*real_fopen64)(const char *, const char *);

// dlsym's own early allocations, 16-byte aligned.
static _Alignas(16) unsigned char bootstrap[8192];
static size_t bootstrap_used;

static int in_bootstrap(const void *p) {
  return (const unsigned char *)p >= bootstrap &&
         (const unsigned char *)p < bootstrap + sizeof bootstrap;
}

static void *bootstrap_alloc(size_t n) {
  const size_t at = (bootstrap_used + 15u) & ~(size_t)15u;
  if (n > sizeof bootstrap - at) {
    return NULL;
  }
  bootstrap_used = at + n;
  return bootstrap + at; // static storage: already zero, as calloc wants
}

#define COUNT(kind)                                                            \
  do {                                                                         \
    if (shim_in_run) {                                                         \
      ++shim_counts.kind;                                                      \
    }                                                                          \
  } while (0)

#define RESOLVE(ptr, name) (*(void **)&(ptr) = dlsym(RTLD_NEXT, name))

__attribute__((constructor)) static void shim_resolve(void) {
  RESOLVE(real_calloc, "calloc"); // first: dlsym may need it
  RESOLVE(real_malloc, "malloc");
  RESOLVE(real_realloc, "realloc");
  RESOLVE(real_free, "free");
  RESOLVE(real_posix_memalign, "posix_memalign");
  RESOLVE(real_aligned_alloc, "aligned_alloc");
  RESOLVE(real_memalign, "memalign");
  RESOLVE(real_valloc, "valloc");
  RESOLVE(real_mutex_lock, "pthread_mutex_lock");
  RESOLVE(real_mutex_trylock, "pthread_mutex_trylock");
  RESOLVE(real_mutex_unlock, "pthread_mutex_unlock");
  RESOLVE(real_read, "read");
  RESOLVE(real_write, "write");
  RESOLVE(real_open, "open");
  RESOLVE(real_open64, "open64");
  RESOLVE(real_openat, "openat");
  RESOLVE(real_close, "close");
  RESOLVE(real_fopen, "fopen");
  RESOLVE(real_fopen64, "fopen64");
}

int shim_ready(void) {
  return real_malloc && real_calloc && real_realloc && real_free &&
         real_posix_memalign && real_aligned_alloc && real_memalign &&
         real_valloc && real_mutex_lock && real_mutex_trylock &&
         real_mutex_unlock && real_read && real_write && real_open &&
         real_open64 && real_openat && real_close && real_fopen && real_fopen64;
}

// ------------------------------------------------------------- memory ----

void *malloc(size_t n) {
  COUNT(alloc);
  return real_malloc ? real_malloc(n) : bootstrap_alloc(n); // see calloc
}

void *calloc(size_t n, size_t size) {
  COUNT(alloc);
  if (!real_calloc) { // inside dlsym, resolving calloc itself
    return size && n > (size_t)-1 / size ? NULL : bootstrap_alloc(n * size);
  }
  return real_calloc(n, size);
}

void *realloc(void *p, size_t n) {
  COUNT(alloc);
  if (in_bootstrap(p)) { // move it to the real heap; the old copy stays
    void *q = malloc(n);
    const size_t left =
        (size_t)(bootstrap + sizeof bootstrap - (unsigned char *)p);
    if (q) {
      memcpy(q, p, n < left ? n : left);
    }
    return q;
  }
  return real_realloc(p, n);
}

void free(void *p) {
  COUNT(alloc);
  if (p && !in_bootstrap(p)) {
    real_free(p);
  }
}

int posix_memalign(void **p, size_t align, size_t n) {
  COUNT(alloc);
  return real_posix_memalign(p, align, n);
}

void *aligned_alloc(size_t align, size_t n) {
  COUNT(alloc);
  return real_aligned_alloc(align, n);
}

void *memalign(size_t align, size_t n) {
  COUNT(alloc);
  return real_memalign(align, n);
}

void *valloc(size_t n) {
  COUNT(alloc);
  return real_valloc(n);
}

// ------------------------------------------------------------- mutexes ----

int pthread_mutex_lock(pthread_mutex_t *m) {
  COUNT(lock);
  return real_mutex_lock(m);
}

int pthread_mutex_trylock(pthread_mutex_t *m) {
  COUNT(lock);
  return real_mutex_trylock(m);
}

int pthread_mutex_unlock(pthread_mutex_t *m) {
  COUNT(lock);
  return real_mutex_unlock(m);
}

// --------------------------------------------------------- system calls ----

ssize_t read(int fd, void *buf, size_t n) {
  COUNT(sys);
  return real_read(fd, buf, n);
}

ssize_t write(int fd, const void *buf, size_t n) {
  COUNT(sys);
  return real_write(fd, buf, n);
}

// open's mode argument is there only when O_CREAT or O_TMPFILE asks for it.
static mode_t mode_of(int flags, va_list ap) {
  return (flags & O_CREAT) || (flags & O_TMPFILE) == O_TMPFILE
             ? (mode_t)va_arg(ap, int)
             : 0;
}

int open(const char *path, int flags, ...) {
  COUNT(sys);
  va_list ap;
  va_start(ap, flags);
  const mode_t mode = mode_of(flags, ap);
  va_end(ap);
  return real_open(path, flags, mode);
}

int open64(const char *path, int flags, ...) {
  COUNT(sys);
  va_list ap;
  va_start(ap, flags);
  const mode_t mode = mode_of(flags, ap);
  va_end(ap);
  return real_open64(path, flags, mode);
}

int openat(int dir, const char *path, int flags, ...) {
  COUNT(sys);
  va_list ap;
  va_start(ap, flags);
  const mode_t mode = mode_of(flags, ap);
  va_end(ap);
  return real_openat(dir, path, flags, mode);
}

int close(int fd) {
  COUNT(sys);
  return real_close(fd);
}

FILE *fopen(const char *path, const char *mode) {
  COUNT(sys);
  return real_fopen(path, mode);
}

FILE *fopen64(const char *path, const char *mode) {
  COUNT(sys);
  return real_fopen64(path, mode);
}
