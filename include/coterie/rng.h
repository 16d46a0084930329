/*
 * rng: a small seeded generator (xoshiro256** seeded by splitmix64), so
 * results depend only on --seed and never on libc or the thread count.
 */
#ifndef COTERIE_RNG_H
#define COTERIE_RNG_H

#include <stdint.h>

struct rng {
	uint64_t s[4];
};

void rng_init(struct rng *r, uint64_t seed);
uint64_t rng_next(struct rng *r);
/* Uniform integer in [0, bound); bound > 0. */
uint64_t rng_below(struct rng *r, uint64_t bound);
/* Uniform double in [0, 1). */
double rng_uniform(struct rng *r);
/* Fisher-Yates shuffle of a[0..n). */
void rng_shuffle_u32(struct rng *r, uint32_t *a, uint32_t n);

#endif
