/* A fixed pseudo-random stream for tests, so a failure reproduces. */
#ifndef FC_TEST_RNG_H
#define FC_TEST_RNG_H

#include <stdint.h>

/* xorshift64* (Vigna 2016, "An experimental exploration of Marsaglia's
 * xorshift generators, scrambled", ACM TOMS 42(4)). The state must be
 * non-zero. */
static inline uint64_t test_rng_next(uint64_t *s)
{
  *s ^= *s >> 12;
  *s ^= *s << 25;
  *s ^= *s >> 27;
  return *s * 0x2545f4914f6cdd1du;
}

#endif
