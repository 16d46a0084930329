/*
 * rng: xoshiro256** (Blackman & Vigna, 2018) seeded through splitmix64.
 * Small, fast and the same everywhere, so a seed names one result.
 */
#include "coterie/rng.h"

static uint64_t splitmix64(uint64_t *x)
{
	uint64_t z = (*x += 0x9e3779b97f4a7c15ULL);
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
	z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
	return z ^ (z >> 31);
}

void rng_init(struct rng *r, uint64_t seed)
{
	uint64_t x = seed;
	for (int i = 0; i < 4; i++)
		r->s[i] = splitmix64(&x);
}

static uint64_t rotl(uint64_t x, int k)
{
	return (x << k) | (x >> (64 - k));
}

uint64_t rng_next(struct rng *r)
{
	uint64_t *s = r->s;
	uint64_t result = rotl(s[1] * 5, 7) * 9;
	uint64_t t = s[1] << 17;
	s[2] ^= s[0];
	s[3] ^= s[1];
	s[1] ^= s[2];
	s[0] ^= s[3];
	s[2] ^= t;
	s[3] = rotl(s[3], 45);
	return result;
}

uint64_t rng_below(struct rng *r, uint64_t bound)
{
	/* rejection sampling: no modulo bias */
	uint64_t limit = UINT64_MAX - UINT64_MAX % bound;
	uint64_t x;
	do
		x = rng_next(r);
	while (x >= limit);
	return x % bound;
}

double rng_uniform(struct rng *r)
{
	return (double)(rng_next(r) >> 11) * 0x1.0p-53;
}

void rng_shuffle_u32(struct rng *r, uint32_t *a, uint32_t n)
{
	for (uint32_t i = n; i > 1; i--) {
		uint32_t j = (uint32_t)rng_below(r, i);
		uint32_t t = a[i - 1];
		a[i - 1] = a[j];
		a[j] = t;
	}
}
