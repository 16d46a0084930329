/*
 * benchtool: the measuring half of `make bench`, linked with libcoterie.a.
 * It prints figures as `key<TAB>value` lines on stdout and asserts nothing
 * (STYLE.md 5: a benchmark measures).
 *
 *   benchtool fit GRAPH [-k K] [-j T] [--seed S] [--starts N] [--no-reseed]
 *                       [--max-sweeps N] [--past-plateau] [--truth FILE]
 *                       [--renumber] [--yardstick] [--weighted] [--directed]
 *                       [--full-sweeps] [--seeding clusters|ego-nets]
 *       load GRAPH (timed), fit it with the engine of `coterie fit`, print
 *       load time and MB/s, seeding time, seconds per sweep, sweeps, the
 *       split of the fitting thread's time, peak RSS, ns per neighbour
 *       visit and (--yardstick) the same for a bare loop, ONMI against
 *       --truth (max form, McDaid et al. 2011; src/score.c). --weighted
 *       reads the third column and fits the Poisson model, --directed the
 *       lines as arcs and the directed model (both: arc weights), as
 *       `coterie fit` does; a directed graph's ONMI is not computed (its
 *       node names are the tagged copies).
 *   benchtool load GRAPH      load time, MB/s of file, peak RSS
 *   benchtool zlib FILE.gz    zlib's inflate speed on the file (MB/s of input)
 *   benchtool leiden GRAPH
 *       time igraph's Leiden (igraph C API, modularity, beta 0.01, two
 *       iterations) on the same graph, loaded by our reader.
 *
 * A neighbour visit is one (u, v) adjacency handled in a sweep: the fit's
 * ns per visit is its sweep time over 2m per sweep, so it includes the
 * gradient pass, every line-search trial and the arithmetic. The yardstick
 * is a bare loop over the same graph, the same final strengths and a
 * random node order, doing per visit only the memory accesses a visit
 * needs: read v's row, a sparse dot product with u's row held densely,
 * and a scatter of v's row into a dense accumulator. Both run on one
 * thread when the fit has -j 1. The yardstick reads the final strengths,
 * which are sparser than those of the first sweeps (rows fill up after
 * seeding and thin out again), so the like-for-like figure is the last
 * sweep's (last_ns_per_visit) against the yardstick's mean on the
 * strengths at the start and at the end of that sweep
 * (last_visit_ratio); the entries per neighbour row met on either side
 * are printed beside them.
 */
#include <igraph.h>
#include <zlib.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <poll.h>
#include <sys/resource.h>
#include <sys/stat.h>
#include <time.h>

#include "coterie/agm.h"
#include "coterie/cover.h"
#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/model.h"
#include "coterie/names.h"
#include "coterie/order.h"
#include "coterie/rng.h"
#include "coterie/score.h"
#include "coterie/util.h"

static double thread_cpu(void)
{
	struct timespec ts;
	if (clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts))
		return 0.0;
	return (double)ts.tv_sec + ts.tv_nsec / 1e9;
}

static long peak_rss_kb(void)
{
	struct rusage ru;
	return getrusage(RUSAGE_SELF, &ru) == 0 ? ru.ru_maxrss : -1;
}

static double cpu_seconds(void)
{
	struct rusage ru;
	if (getrusage(RUSAGE_SELF, &ru))
		return 0.0;
	return ru.ru_utime.tv_sec + ru.ru_stime.tv_sec +
	       (ru.ru_utime.tv_usec + ru.ru_stime.tv_usec) / 1e6;
}

static double file_mb(const char *path)
{
	struct stat st;
	return stat(path, &st) == 0 ? (double)st.st_size / 1e6 : 0.0;
}

static struct graph *load_timed_with(const char *path, const struct graph_load_opts *o)
{
	double t = util_now();
	struct graph *g = graph_load_with(path, o);
	double dt = util_now() - t;
	if (!g)
		return NULL;
	double mb = file_mb(path);
	printf("nodes\t%u\nedges\t%llu\n", g->n, (unsigned long long)g->m);
	printf("file_mb\t%.1f\nload_s\t%.3f\nload_mbps\t%.1f\n", mb, dt, dt > 0 ? mb / dt : 0.0);
	return g;
}

static struct graph *load_timed(const char *path)
{
	struct graph_load_opts o = { .fmt = GRAPH_FORMAT_AUTO };
	return load_timed_with(path, &o);
}

/* The bare loop: per adjacency (u, v) read v's row, dot it with u's dense
 * row, scatter it into acc. Returns ns per visit (best of reps). */
static double yardstick(const struct graph *g, const struct fcsr *F, uint64_t seed, int reps,
			const char *tag)
{
	uint32_t n = g->n;
	double *dense = calloc(F->k, sizeof *dense), *acc = calloc(F->k, sizeof *acc);
	uint32_t *perm = malloc((size_t)n * sizeof *perm);
	if (!dense || !acc || !perm)
		return -1.0;
	struct rng r;
	rng_init(&r, seed);
	for (uint32_t i = 0; i < n; i++)
		perm[i] = i;
	rng_shuffle_u32(&r, perm, n);
	double best = -1.0, check = 0.0;
	for (int rep = 0; rep < reps; rep++) {
		double t = thread_cpu();
		for (uint32_t i = 0; i < n; i++) {
			uint32_t u = perm[i];
			const struct fentry *eu = F->e + F->off[u];
			uint32_t nu = (uint32_t)(F->off[u + 1] - F->off[u]);
			for (uint32_t j = 0; j < nu; j++)
				dense[eu[j].c] = eu[j].v;
			for (uint64_t a = g->off[u]; a < g->off[u + 1]; a++) {
				uint32_t v = g->adj[a];
				const struct fentry *ev = F->e + F->off[v];
				uint32_t nv = (uint32_t)(F->off[v + 1] - F->off[v]);
				double x = 0.0;
				for (uint32_t j = 0; j < nv; j++)
					x += dense[ev[j].c] * ev[j].v;
				for (uint32_t j = 0; j < nv; j++)
					acc[ev[j].c] += ev[j].v * x;
			}
			for (uint32_t j = 0; j < nu; j++)
				dense[eu[j].c] = 0.0;
		}
		double ns = (thread_cpu() - t) * 1e9 / (2.0 * (double)g->m);
		if (best < 0 || ns < best)
			best = ns;
	}
	for (uint32_t c = 0; c < F->k; c++)
		check += acc[c];
	printf("yardstick_check\t%g\n", check); /* keeps the loop from being optimised away */
	double ent = 0.0;
	for (uint32_t v = 0; v < n; v++)
		ent += (double)graph_degree(g, v) * (double)(F->off[v + 1] - F->off[v]);
	printf("yard%s_entries_per_visit\t%.3f\n", tag, g->m ? ent / (2.0 * (double)g->m) : 0.0);
	free(dense);
	free(acc);
	free(perm);
	return best;
}

/* ONMI (max form) of the fitted cover fc (borrowed) against the cover in
 * the file truth, over the union of the graph's nodes and the file's: a
 * planted node with no edge is absent from the graph (so uncovered by the
 * fit) but in the truth. Returns -1.0 on failure. */
static double onmi_against(const char *truth, const struct graph *g, const struct cover *fc)
{
	struct names *nm = names_new(g->n);
	struct cover tc;
	double r = -1.0;
	if (!nm)
		return r;
	for (uint32_t u = 0; u < g->n; u++) { /* the graph's ids first, in order */
		const char *name = graph_name(g, u);
		int added;
		if (names_intern(nm, name, strlen(name), &added) != (int64_t)u)
			goto out;
	}
	if (cover_read(&tc, truth, nm) == 0) {
		struct cover f = *fc; /* borrowed arrays, n raised to the union */
		tc.n = f.n = names_count(nm);
		r = score_onmi_max(&tc, &f);
		cover_release(&tc);
	}
out:
	names_free(nm);
	return r;
}

/* cmd_fit()'s options into p, lo, *path, *truth, *yard; 0, or 2 (said why). */
static int fit_args(int argc, char **argv, struct fit_params *pp, struct graph_load_opts *plo,
		    const char **path_out, const char **truth_out, int *yard_out)
{
	struct fit_params p;
	fit_params_default(&p);
	p.starts = 1;
	const char *path = NULL, *truth = NULL;
	int yard = 0;
	struct graph_load_opts lo = { .fmt = GRAPH_FORMAT_AUTO };
	for (int i = 2; i < argc; i++) {
		const char *a = argv[i];
		const char *v = i + 1 < argc ? argv[i + 1] : "0";
		if (!strcmp(a, "-k"))
			p.k = (uint32_t)strtoul(v, NULL, 10), i++;
		else if (!strcmp(a, "-j"))
			p.threads = (unsigned)strtoul(v, NULL, 10), i++;
		else if (!strcmp(a, "--seed"))
			p.seed = strtoull(v, NULL, 10), i++;
		else if (!strcmp(a, "--starts"))
			p.starts = (unsigned)strtoul(v, NULL, 10), i++;
		else if (!strcmp(a, "--max-sweeps"))
			p.max_sweeps = (unsigned)strtoul(v, NULL, 10), i++;
		else if (!strcmp(a, "--truth"))
			truth = v, i++;
		else if (!strcmp(a, "--no-reseed"))
			p.no_reseed = 1;
		else if (!strcmp(a, "--seeding") && v) {
			if (seed_kind_parse(v, &p.seeding))
				return 2;
			i++;
		}
		else if (!strcmp(a, "--past-plateau"))
			p.past_plateau = 1;
		else if (!strcmp(a, "--renumber"))
			p.renumber = 1;
		else if (!strcmp(a, "--full-sweeps"))
			p.full_sweeps = 1; /* every row every sweep (sweep.h) */
		else if (!strcmp(a, "--yardstick"))
			yard = 1;
		else if (!strcmp(a, "--weighted"))
			lo.weighted = 1;
		else if (!strcmp(a, "--directed"))
			lo.directed = 1;
		else if (a[0] == '-') {
			fprintf(stderr, "benchtool: unknown option '%s'\n", a);
			return 2;
		} else
			path = a;
	}
	if (!path) {
		fprintf(stderr, "benchtool fit: no graph\n");
		return 2;
	}
	*pp = p;
	*plo = lo;
	*path_out = path;
	*truth_out = truth;
	*yard_out = yard;
	return 0;
}

static int cmd_fit(int argc, char **argv)
{
	struct fit_params p;
	struct graph_load_opts lo;
	const char *path, *truth;
	int yard;
	int rc = fit_args(argc, argv, &p, &lo, &path, &truth, &yard);
	if (rc)
		return rc;
	p.model = lo.directed ? MODEL_DIRECTED : MODEL_BIGCLAM;
	if (lo.weighted)
		p.model = model_kind_with_weights(p.model);
	printf("model\t%s\n", model_kind_name(p.model));
	struct graph *g = load_timed_with(path, &lo);
	if (!g)
		return 1;
	double t = util_now(), cpu = cpu_seconds();
	struct fit *f = fit_new(g, &p, NULL);
	if (!f || fit_start(f))
		return 1;
	/* Follow the snapshots to keep the figures of the last sweep apart:
	 * rows are densest in the first sweeps, and the yardstick reads the
	 * final strengths, so only the last sweep's cost per visit is
	 * measured on the same rows as the yardstick. (A snapshot missed by
	 * this loop widens the window to the last few sweeps; it is printed.) */
	struct fit_stats prev, last;
	memset(&prev, 0, sizeof prev);
	memset(&last, 0, sizeof last);
	/* with --yardstick, the snapshots at both ends of that window too:
	 * rows still thin out during the last sweep of a short run, so the
	 * yardstick runs on the strengths at its start and at its end */
	struct snapshot *psnap = NULL, *lsnap = NULL;
	for (;;) {
		struct pollfd pfd = { fit_wake_fd(f), POLLIN, 0 };
		poll(&pfd, 1, 100);
		fit_drain_wake(f);
		struct snapshot *sn = fit_snapshot(f);
		if (sn && sn->stats.sweeps != last.sweeps) {
			prev = last;
			last = sn->stats;
			if (yard) {
				snapshot_release(psnap);
				psnap = lsnap;
				lsnap = sn;
				sn = NULL;
			}
		}
		snapshot_release(sn);
		if (fit_state_ended(fit_get_state(f)))
			break;
	}
	enum fit_state st = fit_wait(f);
	double fit_s = util_now() - t;
	cpu = cpu_seconds() - cpu;
	struct snapshot *s = fit_snapshot(f);
	const struct fit_stats *x = &s->stats;
	printf("k\t%u\nthreads\t%u\nstate\t%s\n", p.k, p.threads, fit_state_name(st));
	printf("fit_s\t%.3f\nfit_cpu_s\t%.3f\nseed_s\t%.3f\n", fit_s, cpu, x->seed_seconds);
	printf("sweeps\t%u\nplateau_sweep\t%u\n", x->sweeps, s->plateau_sweep);
	printf("seeding\t%s\nseed_clusters_found\t%u\nseed_from_clusters\t%u\n",
	       seed_kind_name(p.seeding), s->seeds.clusters, s->seeds.used_clusters);
	printf("sweep_s\t%.4f\n", x->sweeps ? x->sweep_seconds / x->sweeps : 0.0);
	printf("sweeps_s_total\t%.3f\nloglik_s_total\t%.3f\npublish_s_total\t%.3f\n",
	       x->sweep_seconds, x->loglik_seconds, x->publish_seconds);
	/* mostly the final snapshot and its AGM estimate */
	printf("other_s\t%.3f\n", fit_s - x->seed_seconds - x->sweep_seconds - x->loglik_seconds -
					 x->publish_seconds);
	double adj = 2.0 * (double)g->m * x->sweeps;
	printf("trials_per_row\t%.3f\n", x->rows ? (double)x->trials / (double)x->rows : 0.0);
	printf("rows_skipped\t%.4f\n", x->rows + x->rows_skipped
					       ? (double)x->rows_skipped / (double)(x->rows + x->rows_skipped)
					       : 0.0);
	printf("reads_per_visit\t%.3f\n", adj > 0 ? (double)x->visits / adj : 0.0);
	printf("moves_local\t%u\nmoves_plain\t%u\n", x->moves_local, x->moves_plain);
	/* strength entries per neighbour row met by the fit, to set beside
	 * the yardstick's (its rows are the final ones) */
	printf("entries_per_visit\t%.3f\n", adj > 0 ? (double)x->entries / (adj) : 0.0);
	/* per visit in CPU time of the fitting thread: all of a sweep with
	 * -j 1, and blind to other programs on a shared machine */
	double ns = adj > 0 ? x->sweep_cpu_seconds * 1e9 / adj : 0.0;
	printf("ns_per_visit\t%.2f\n", ns);
	printf("ns_per_visit_wall\t%.2f\n", adj > 0 ? x->sweep_seconds * 1e9 / adj : 0.0);
	if (x->sweeps != last.sweeps) {
		prev = last;
		last = *x;
		snapshot_release(psnap);
		psnap = lsnap;
		lsnap = NULL;
	}
	snapshot_release(lsnap);
	double ladj = 2.0 * (double)g->m * (last.sweeps - prev.sweeps);
	double lns = ladj > 0 ? (last.sweep_cpu_seconds - prev.sweep_cpu_seconds) * 1e9 / ladj : 0.0;
	printf("last_sweeps\t%u\n", last.sweeps - prev.sweeps);
	printf("last_ns_per_visit\t%.2f\n", lns);
	printf("last_entries_per_visit\t%.3f\n",
	       ladj > 0 ? (double)(last.entries - prev.entries) / ladj : 0.0);
	printf("loglik\t%.10g\n", s->ntrace ? s->trace[s->ntrace - 1].loglik : 0.0);
	printf("communities\t%u\n", s->agm.cover.k);
	printf("strength_entries\t%llu\n", (unsigned long long)s->F.off[s->F.n]);
	printf("peak_rss_mb\t%.1f\n", peak_rss_kb() / 1024.0);
	if (truth && !g->nsend) {
		double onmi = onmi_against(truth, g, &s->agm.cover);
		if (onmi >= 0)
			printf("onmi\t%.4f\n", onmi);
	}
	if (yard) {
		double y = yardstick(g, &s->F, p.seed, 3, "");
		printf("yard_ns_per_visit\t%.2f\n", y);
		printf("visit_ratio\t%.2f\n", y > 0 ? ns / y : 0.0);
		/* the fair one: the last sweep against the yardstick on the
		 * strengths it started from and those it ended with */
		double y0 = psnap ? yardstick(g, &psnap->F, p.seed, 3, "_start") : y;
		printf("yard_start_ns_per_visit\t%.2f\n", y0);
		double ym = 0.5 * (y0 + y);
		printf("last_visit_ratio\t%.2f\n", ym > 0 ? lns / ym : 0.0);
	}
	snapshot_release(psnap);
	snapshot_release(s);
	fit_free(f);
	graph_free(g);
	return st == FIT_FAILED;
}

static int cmd_leiden(const char *path)
{
	struct graph *g = load_timed(path);
	if (!g)
		return 1;
	igraph_set_error_handler(igraph_error_handler_printignore);
	igraph_vector_int_t edges, membership;
	igraph_vector_int_init(&edges, (igraph_integer_t)(2 * g->m));
	igraph_integer_t k = 0;
	for (uint32_t u = 0; u < g->n; u++)
		for (uint64_t i = g->off[u]; i < g->off[u + 1]; i++)
			if (g->adj[i] > u) {
				VECTOR(edges)[k++] = u;
				VECTOR(edges)[k++] = g->adj[i];
			}
	igraph_t ig;
	double t0 = util_now();
	if (igraph_create(&ig, &edges, g->n, IGRAPH_UNDIRECTED) != IGRAPH_SUCCESS)
		return 1;
	double t1 = util_now();
	igraph_vector_int_init(&membership, g->n);
	/* modularity: node weights are degrees, resolution 1 / (2m) */
	igraph_vector_t deg;
	igraph_vector_init(&deg, g->n);
	for (uint32_t u = 0; u < g->n; u++)
		VECTOR(deg)[u] = graph_degree(g, u);
	igraph_rng_seed(igraph_rng_default(), 1);
	igraph_integer_t nc = 0;
	igraph_real_t q = 0;
	if (igraph_community_leiden(&ig, NULL, &deg, 1.0 / (2.0 * (double)g->m), 0.01, 0, 2,
				    &membership, &nc, &q) != IGRAPH_SUCCESS)
		return 1;
	double t2 = util_now();
	printf("leiden_create_s\t%.3f\nleiden_s\t%.3f\nleiden_clusters\t%lld\n", t1 - t0, t2 - t1,
	       (long long)nc);
	igraph_vector_destroy(&deg);
	igraph_vector_int_destroy(&membership);
	igraph_vector_int_destroy(&edges);
	igraph_destroy(&ig);
	graph_free(g);
	return 0;
}

/* zlib's own speed on FILE.gz: inflate to nowhere, MB of compressed input
 * per second (the ceiling for loading a .gz edge list). */
static int cmd_zlib(const char *path)
{
	gzFile z = gzopen(path, "rb");
	if (!z)
		return 1;
	gzbuffer(z, 1 << 17);
	static char buf[1 << 17];
	double t = util_now();
	long long out = 0;
	int r;
	while ((r = gzread(z, buf, sizeof buf)) > 0)
		out += r;
	double dt = util_now() - t;
	gzclose(z);
	double mb = file_mb(path);
	printf("zlib_s\t%.3f\nzlib_mbps\t%.1f\nzlib_out_mbps\t%.1f\n", dt, dt > 0 ? mb / dt : 0.0,
	       dt > 0 ? out / 1e6 / dt : 0.0);
	return 0;
}

/* The yardstick on strengths made from a cover (each member 1.0), in the
 * file's ids and in the breadth-first order the fit uses: what node order
 * alone does to the memory-bound loop. */
static int cmd_yard(const char *path, const char *truth)
{
	struct graph *g = load_timed(path);
	struct cover c;
	if (!g || cover_load(&c, truth, g))
		return 1;
	struct model m;
	if (model_init(&m, g->n, c.k, 0.01))
		return 1;
	for (uint32_t i = 0; i < c.k; i++)
		for (uint64_t j = c.off[i]; j < c.off[i + 1]; j++) {
			uint32_t u = c.mem[j];
			struct fentry e[64];
			uint32_t nnz = m.rows[u].nnz;
			if (nnz >= 63)
				continue;
			memcpy(e, m.rows[u].e, nnz * sizeof *e);
			e[nnz].c = i; /* columns come in increasing order */
			e[nnz].v = 1.0;
			model_set_row(&m, u, e, nnz + 1);
		}
	struct fcsr F;
	if (model_export(&m, &F))
		return 1;
	printf("yard_file_order_ns\t%.2f\n", yardstick(g, &F, 1, 3, "_file"));
	uint32_t *inner = malloc((size_t)g->n * sizeof *inner);
	struct graph h;
	if (!inner || order_bfs(g, inner) || order_graph(g, inner, &h))
		return 1;
	struct fcsr Fh;
	struct model mh;
	if (model_init(&mh, g->n, c.k, 0.01))
		return 1;
	/* model row inner[u] = row u of F */
	if (model_import_order(&mh, &F, inner) || model_export(&mh, &Fh))
		return 1;
	printf("yard_bfs_order_ns\t%.2f\n", yardstick(&h, &Fh, 1, 3, "_bfs"));
	fcsr_release(&F);
	fcsr_release(&Fh);
	model_release(&m);
	model_release(&mh);
	order_graph_release(&h);
	free(inner);
	cover_release(&c);
	graph_free(g);
	return 0;
}

int main(int argc, char **argv)
{
	if (argc == 4 && !strcmp(argv[1], "yard"))
		return cmd_yard(argv[2], argv[3]);
	if (argc == 3 && !strcmp(argv[1], "load")) {
		struct graph *g = load_timed(argv[2]);
		printf("peak_rss_mb\t%.1f\n", peak_rss_kb() / 1024.0);
		graph_free(g);
		return !g;
	}
	if (argc == 3 && !strcmp(argv[1], "zlib"))
		return cmd_zlib(argv[2]);
	if (argc >= 3 && !strcmp(argv[1], "fit"))
		return cmd_fit(argc, argv);
	if (argc == 3 && !strcmp(argv[1], "leiden"))
		return cmd_leiden(argv[2]);
	fprintf(stderr, "usage: benchtool fit|load|zlib|leiden GRAPH [options]\n");
	return 2;
}
