/* ferrocirc — random numbers and toleranced parameters for Monte Carlo studies.
 *
 * Generator: xoshiro256** (Blackman & Vigna 2021, ACM TOMS 47:36) seeded through splitmix64
 * from (seed, point index), so every point has its own stream: a sample does not depend on how
 * the points are split across jobs or shards. Normal deviates by the Box-Muller transform (Box &
 * Muller 1958, Ann. Math. Stat. 29:610). */
#include <math.h>
#include <stdint.h>

#include "study_int.h"

uint64_t fci_rng_mix(uint64_t z)
{
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ull;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBull;
  return z ^ (z >> 31);
}

static uint64_t splitmix64(uint64_t *x) { return fci_rng_mix(*x += 0x9E3779B97F4A7C15ull); }

static uint64_t rotl(uint64_t x, int k) { return (x << k) | (x >> (64 - k)); }

static uint64_t next(fci_rng *r)
{
  uint64_t *s = r->s, res = rotl(s[1] * 5, 7) * 9, t = s[1] << 17;
  s[2] ^= s[0];
  s[3] ^= s[1];
  s[1] ^= s[2];
  s[0] ^= s[3];
  s[2] ^= t;
  s[3] = rotl(s[3], 45);
  return res;
}

void fci_rng_seed(fci_rng *r, uint64_t seed, uint64_t stream)
{
  uint64_t x = seed ^ (stream * 0xD1B54A32D192ED03ull);
  for (int k = 0; k < 4; k++) r->s[k] = splitmix64(&x);
}

double fci_rng_uniform(fci_rng *r) { return (double)(next(r) >> 11) * 0x1.0p-53; }

double fci_rng_normal(fci_rng *r)
{
  double u1 = 1.0 - fci_rng_uniform(r), u2 = fci_rng_uniform(r); /* u1 in (0, 1] */
  return sqrt(-2.0 * log(u1)) * cos(6.283185307179586477 * u2);
}
