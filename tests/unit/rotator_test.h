// SPDX-License-Identifier: GPL-3.0-or-later
// A rotator on the heap, set up (or the test fails), and its disposal. In a
// header because the rotator's three test files (test_hilbert.c,
// test_rotator.c and test_rotate.c) all make them.
#ifndef VERNIER_TESTS_UNIT_ROTATOR_TEST_H
#define VERNIER_TESTS_UNIT_ROTATOR_TEST_H

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <stdlib.h>

#include "dsp/rotator.h"

static inline rotator_t *rotator_new(double rate_hz) {
  rotator_t *r = malloc(sizeof *r);
  assert_non_null(r);
  assert_int_equal(rotator_setup(r, rate_hz), 0);
  return r;
}

static inline void rotator_delete(rotator_t *r) {
  rotator_free(r);
  free(r);
}

#endif
