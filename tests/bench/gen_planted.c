/*
 * gen_planted: a planted affiliation graph (AGM, Yang & Leskovec 2012) for
 * the benchmarks, written fast enough for ten million edges.
 *
 *   gen_planted N C DEG SEED DIR     writes DIR/edges.tsv and DIR/truth.tsv
 *
 * N nodes, C communities. Every node joins one community, and one node in
 * five a second (so about 1.2 N memberships); members are drawn uniformly,
 * so community sizes are about 1.2 N / C each and a community's members
 * are scattered over the node ids (no locality for free). Each community
 * links each pair of its members with probability p, chosen so that the
 * mean degree is about DEG; pairs are drawn by geometric skips, so the cost
 * is proportional to the edges written. Background: DEG / 20 random edges
 * per node, so epsilon is small but not zero. Edges may repeat (two shared
 * communities); the loader merges them. Lines are shuffled, so the ids the
 * loader gives (order of first appearance) carry no locality either. The random numbers are
 * xoshiro256** seeded by splitmix64 from SEED, so the bytes depend on the
 * arguments only.
 *
 * A bench helper: not part of coterie. truth.tsv is `node<TAB>community`.
 */
#include <errno.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static uint64_t s[4];

static uint64_t rotl(uint64_t x, int k)
{
	return (x << k) | (x >> (64 - k));
}

static uint64_t next(void)
{
	uint64_t r = rotl(s[1] * 5, 7) * 9, t = s[1] << 17;
	s[2] ^= s[0];
	s[3] ^= s[1];
	s[1] ^= s[2];
	s[0] ^= s[3];
	s[2] ^= t;
	s[3] = rotl(s[3], 45);
	return r;
}

static double unif(void)
{
	return ((next() >> 11) + 0.5) * 0x1.0p-53;
}

static uint64_t below(uint64_t n)
{
	return next() % n;
}

static void seed(uint64_t x)
{
	for (int i = 0; i < 4; i++) {
		uint64_t z = (x += 0x9e3779b97f4a7c15ULL);
		z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
		z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
		s[i] = z ^ (z >> 31);
	}
}

static char *put_u(char *p, uint64_t v)
{
	char tmp[24];
	int n = 0;
	do
		tmp[n++] = (char)('0' + v % 10);
	while (v /= 10);
	while (n)
		*p++ = tmp[--n];
	return p;
}

int main(int argc, char **argv)
{
	if (argc != 6) {
		fprintf(stderr, "usage: gen_planted N C DEG SEED DIR\n");
		return 2;
	}
	uint64_t n = strtoull(argv[1], NULL, 10), c = strtoull(argv[2], NULL, 10);
	double deg = strtod(argv[3], NULL);
	seed(strtoull(argv[4], NULL, 10));
	if (n < 2 || c < 1 || c > n || !(deg > 0) || n > 100000000) {
		fprintf(stderr, "gen_planted: bad sizes\n");
		return 2;
	}
	/* memberships: node u in community a[u], and one in five also in b[u] */
	uint64_t *cnt = calloc(c + 1, sizeof *cnt);
	uint32_t *a = malloc(n * sizeof *a), *b = malloc(n * sizeof *b);
	if (!cnt || !a || !b)
		return 1;
	for (uint64_t u = 0; u < n; u++) {
		a[u] = (uint32_t)below(c);
		b[u] = UINT32_MAX;
		cnt[a[u] + 1]++;
		if (below(5) == 0) {
			uint32_t x = (uint32_t)below(c);
			if (x != a[u]) {
				b[u] = x;
				cnt[x + 1]++;
			}
		}
	}
	for (uint64_t i = 0; i < c; i++)
		cnt[i + 1] += cnt[i];
	uint64_t total = cnt[c];
	uint32_t *mem = malloc(total * sizeof *mem);
	uint64_t *fill = malloc(c * sizeof *fill);
	if (!mem || !fill)
		return 1;
	memcpy(fill, cnt, c * sizeof *fill);
	for (uint64_t u = 0; u < n; u++) {
		mem[fill[a[u]]++] = (uint32_t)u;
		if (b[u] != UINT32_MAX)
			mem[fill[b[u]]++] = (uint32_t)u;
	}
	/* p from the mean degree: sum_c p s_c (s_c - 1) = n deg (background aside) */
	double pairs2 = 0;
	for (uint64_t i = 0; i < c; i++) {
		double sz = (double)(cnt[i + 1] - cnt[i]);
		pairs2 += sz * (sz - 1);
	}
	double p = n * deg * 0.95 / pairs2;
	if (p > 0.9)
		p = 0.9;
	char path[4096];
	snprintf(path, sizeof path, "%s/truth.tsv", argv[5]);
	FILE *t = fopen(path, "w");
	snprintf(path, sizeof path, "%s/edges.tsv", argv[5]);
	FILE *e = fopen(path, "w");
	if (!t || !e) {
		fprintf(stderr, "gen_planted: %s: %s\n", path, strerror(errno));
		return 1;
	}
	static char buf[1 << 16];
	char *q = buf;
#define FLUSH(F)                                                                   \
	do {                                                                       \
		if (q - buf > (long)sizeof buf - 64) {                             \
			fwrite(buf, 1, (size_t)(q - buf), F);                      \
			q = buf;                                                   \
		}                                                                  \
	} while (0)
	for (uint64_t i = 0; i < c; i++)
		for (uint64_t j = cnt[i]; j < cnt[i + 1]; j++) {
			q = put_u(q, mem[j]);
			*q++ = '\t';
			q = put_u(q, i);
			*q++ = '\n';
			FLUSH(t);
		}
	fwrite(buf, 1, (size_t)(q - buf), t);
	q = buf;
	double lq = log1p(-p);
	uint64_t bg = (uint64_t)(n * deg / 20.0 / 2.0);
	uint64_t cap = (uint64_t)(n * deg / 2.0 * 1.2) + bg + 1024, m = 0;
	uint32_t *pairs = malloc(2 * cap * sizeof *pairs);
	if (!pairs)
		return 1;
	for (uint64_t i = 0; i < c; i++) {
		uint64_t sz = cnt[i + 1] - cnt[i];
		uint64_t np = sz * (sz - 1) / 2;
		const uint32_t *mm = mem + cnt[i];
		/* pair index k -> (x, y), x < y, by walking rows */
		uint64_t k = 0, x = 0, rowend = sz - 1; /* pairs (x, x+1..sz-1) */
		for (;;) {
			k += (uint64_t)floor(log(unif()) / lq);
			if (k >= np)
				break;
			while (k >= rowend) {
				x++;
				rowend += sz - 1 - x;
			}
			uint64_t y = sz - (rowend - k);
			if (m == cap) {
				cap *= 2;
				pairs = realloc(pairs, 2 * cap * sizeof *pairs);
				if (!pairs)
					return 1;
			}
			pairs[2 * m] = mm[x];
			pairs[2 * m + 1] = mm[y];
			m++;
			k++;
		}
	}
	for (uint64_t i = 0; i < bg && m < cap; i++) {
		uint64_t x = below(n), y = below(n);
		if (x == y)
			continue;
		pairs[2 * m] = (uint32_t)x;
		pairs[2 * m + 1] = (uint32_t)y;
		m++;
	}
	/* lines in random order, ends in random order: the file's order of
	 * first appearance (the loader's ids) then carries no locality */
	for (uint64_t i = m; i > 1; i--) {
		uint64_t j = below(i);
		uint32_t a0 = pairs[2 * (i - 1)], a1 = pairs[2 * (i - 1) + 1];
		pairs[2 * (i - 1)] = pairs[2 * j];
		pairs[2 * (i - 1) + 1] = pairs[2 * j + 1];
		pairs[2 * j] = a0;
		pairs[2 * j + 1] = a1;
	}
	for (uint64_t i = 0; i < m; i++) {
		int flip = (int)(next() >> 63);
		q = put_u(q, pairs[2 * i + flip]);
		*q++ = '\t';
		q = put_u(q, pairs[2 * i + 1 - flip]);
		*q++ = '\n';
		FLUSH(e);
	}
	fwrite(buf, 1, (size_t)(q - buf), e);
	free(pairs);
	if (fclose(e) || fclose(t)) {
		fprintf(stderr, "gen_planted: write failed\n");
		return 1;
	}
	fprintf(stderr, "gen_planted: %llu nodes, %llu communities, %llu edge lines, p = %.4f\n",
		(unsigned long long)n, (unsigned long long)c, (unsigned long long)m, p);
	free(cnt);
	free(a);
	free(b);
	free(mem);
	free(fill);
	return 0;
}
