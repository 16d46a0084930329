/*
 * An experiment, not part of the build: climb the relaxed model from a
 * given cover (strengths sqrt(-ln(1 - p_c)) with p_c estimated on it), print
 * l(F) as it climbs and the AGM read back, and write that cover.
 * Build from the repository root after make:
 *   cc -O2 -std=c11 -D_GNU_SOURCE -Iinclude -o warm tests/bench/epsilon-study/warm.c \
 *      build/libcoterie.a $(pkg-config --libs igraph jansson zlib) -lm -lpthread
 * Run: ./warm EDGES COVER EPSILON OUT.tsv [MAX_SWEEPS]
 * (DEVELOPERS.md, "The background", for what it showed.)
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "coterie/graph.h"
#include "coterie/cover.h"
#include "coterie/model.h"
#include "coterie/agm.h"
#include "coterie/sweep.h"
#include "coterie/fcsr.h"
int main(int argc, char **argv)
{
	struct graph *g = graph_load(argv[1], 0);
	struct cover c;
	if (!g || cover_load(&c, argv[2], g)) return 1;
	double eps = atof(argv[3]);
	const char *out = argv[4];
	int sweeps = argc > 5 ? atoi(argv[5]) : 60;
	double *p = calloc(c.k, sizeof *p);
	agm_estimate_p(g, &c, eps, p);
	printf("truth AGM ll (ML p) %.1f\n", agm_loglik(g, &c, p, eps));
	struct model m;
	model_init(&m, g->n, c.k, eps);
	/* rows from the cover */
	uint32_t *cnt = calloc(g->n, 4);
	for (uint32_t j = 0; j < c.k; j++) for (uint64_t i = c.off[j]; i < c.off[j+1]; i++) cnt[c.mem[i]]++;
	struct fentry **rows = calloc(g->n, sizeof *rows); uint32_t *fill = calloc(g->n, 4);
	for (uint32_t u = 0; u < g->n; u++) rows[u] = calloc(cnt[u] + 1, sizeof(struct fentry));
	for (uint32_t j = 0; j < c.k; j++) for (uint64_t i = c.off[j]; i < c.off[j+1]; i++) {
		uint32_t u = c.mem[i]; double q = -log1p(-(p[j] < 0.999 ? p[j] : 0.999));
		rows[u][fill[u]].c = j; rows[u][fill[u]].v = sqrt(q); fill[u]++; }
	for (uint32_t u = 0; u < g->n; u++) { /* sort by c */
		for (uint32_t a = 1; a < fill[u]; a++) for (uint32_t b = a; b > 0 && rows[u][b-1].c > rows[u][b].c; b--) { struct fentry t = rows[u][b]; rows[u][b] = rows[u][b-1]; rows[u][b-1] = t; }
		model_set_row(&m, u, rows[u], fill[u]); }
	model_recount(&m);
	printf("relaxed ll at planted F %.1f\n", model_loglik(&m, g));
	struct sweep *s = sweep_new(&m, g, model_objective(), 2);
	sweep_pool_start(s);
	double prev = model_loglik(&m, g);
	for (int t = 0; t < sweeps; t++) {
		double dl = 0; sweep_run(s, 1000 + t, NULL, NULL, &dl);
		double ll = model_loglik(&m, g);
		if (t % 5 == 4 || t < 3) printf("sweep %d ll %.1f\n", t + 1, ll);
		if (fabs(ll - prev) < 1e-5 * fabs(ll) && t > 5) { printf("plateau at %d ll %.1f\n", t + 1, ll); break; }
		prev = ll;
	}
	sweep_free(s);
	struct fcsr F; model_export(&m, &F);
	struct agm a; agm_from_strengths(&a, g, &F, eps, m.delta, AGM_MIN_LINKS);
	printf("found AGM ll %.1f covered %u overlapping %u\n", a.loglik, a.covered, a.overlapping);
	FILE *fo = fopen(out, "w");
	fprintf(fo, "node\tcommunity\n");
	for (uint32_t j = 0; j < a.cover.k; j++) for (uint64_t i = a.cover.off[j]; i < a.cover.off[j+1]; i++)
		fprintf(fo, "%s\t%u\n", graph_name(g, a.cover.mem[i]), j);
	fclose(fo);
	return 0;
}
