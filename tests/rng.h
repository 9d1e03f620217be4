/* rng.h: test-only deterministic random numbers: splitmix64 (Steele, Lea & Flood 2014, OOPSLA)
 * for uniforms and the Box-Muller transform (Box & Muller 1958, Ann Math Stat 29:610) for normals. */
#ifndef CPD_TEST_RNG_H
#define CPD_TEST_RNG_H

#include <math.h>
#include <stdint.h>

typedef struct {
    uint64_t s;
} rng;

static inline uint64_t rng_next(rng *r)
{
    uint64_t z = (r->s += 0x9E3779B97F4A7C15ull);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ull;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBull;
    return z ^ (z >> 31);
}

/* Uniform on (0, 1): 53 random bits, never exactly 0. */
static inline double rng_uniform(rng *r)
{
    return ((double)(rng_next(r) >> 11) + 0.5) / 9007199254740992.0;
}

/* Standard normal. */
static inline double rng_normal(rng *r)
{
    double u1 = rng_uniform(r), u2 = rng_uniform(r);
    return sqrt(-2 * log(u1)) * cos(6.283185307179586 * u2);
}

#endif
