/*
 * agm: the fit read back as an Affiliation Graph Model (Yang & Leskovec,
 * ICDM 2012): memberships, and for each community its link probability p_c
 * estimated by maximum likelihood with the memberships held fixed.
 *
 * A pair sharing the set S of communities is linked with probability
 *     P = 1 - (1 - epsilon) prod_{c in S} (1 - p_c) = 1 - exp(-(qeps + sum_S q_c))
 * where q_c = -ln(1 - p_c) and qeps = -ln(1 - epsilon). The log-likelihood
 *     L(q) = sum_{uv in E} log(1 - exp(-Q_uv)) - sum_{uv not in E} Q_uv
 * is concave in q, so p has a unique maximum; agm_estimate_p() finds it by
 * cyclic one-dimensional Newton steps with safeguards.
 *
 * The pairs are every pair of a one-mode graph. Of a two-sided graph
 * (graph.h: the directed and two-mode models) they are a sender with a
 * receiver only, less a directed node's own pair, so a community of
 * s_send senders and s_recv receivers has s_send s_recv pairs (less the
 * nodes that are both); the same formulas hold with those counts.
 *
 * Community ids are the model's column numbers, so they stay the same from
 * sweep to sweep and across a resume; communities are listed largest first
 * (ties by id). Empty columns are not listed.
 */
#ifndef COTERIE_AGM_H
#define COTERIE_AGM_H

#include <stdint.h>

#include "cover.h"

struct graph;
struct fcsr;

#define AGM_QMAX 30.0 /* q is capped here: p <= 1 - 1e-13 */

struct agm_community {
	uint32_t id;             /* model column */
	uint32_t size;           /* members */
	uint64_t internal_edges; /* edges with both ends inside */
	uint64_t volume;         /* sum of member degrees */
	uint64_t cut;            /* edges with one end inside */
	double density;          /* internal / (size choose 2); 0 below 2 members */
	double conductance;      /* cut / min(volume, 2m - volume); 1 if undefined */
	double p;                /* AGM link probability (MLE) */
};

struct agm {
	uint32_t n;
	double epsilon;
	struct cover cover;          /* community i of comms[] is cover community i */
	double *strength;            /* parallel to cover.mem: F[u][c] (1.0 for plain covers) */
	struct agm_community *comms; /* cover.k entries, largest first */
	double loglik;               /* AGM log-likelihood of the answer */
	uint32_t covered;            /* nodes in at least one community */
	uint32_t overlapping;        /* nodes in two or more */
	uint32_t ended_sooner;       /* agm_from_strengths_trimmed(): communities read
					at their own threshold above delta */
	uint32_t dropped;            /* agm_from_strengths_trimmed(): columns left
					out because they did not pay for their
					members' names (code length) */
};

/*
 * The membership rule. Node u is a member of community c when
 *     F_uc >= delta   and   F_uc * colsum_c >= min(AGM_MIN_LINKS, deg(u) / 2)
 * where colsum_c = sum_v F_vc, so F_uc * colsum_c is about the number of
 * links of u that c accounts for. The first test is Yang & Leskovec's
 * (WSDM 2013): delta = sqrt(-ln(1 - epsilon)), the strength two nodes need
 * for c alone to link them as likely as the background does. It shrinks
 * like 1/sqrt(n) with the density, while one stray link into c leaves a
 * strength of about 1/colsum_c at any size (F_uc * colsum_c ~ 1), so on
 * big graphs delta alone makes a membership of every stray link. The
 * second test asks c to account for two links (half the degree for a node
 * of degree 3 or less, which has no more to give). AGM_MIN_LINKS is our
 * rule of thumb, chosen on planted graphs (the figures are in
 * DEVELOPERS.md).
 */
#define AGM_MIN_LINKS 2.0

/* The rule with min_links in place of AGM_MIN_LINKS (the commands pass
 * AGM_MIN_LINKS; 0 is delta alone, the rule of the paper). */
static inline int agm_is_member(double strength, double colsum, double delta,
				double min_links, uint64_t degree)
{
	double need = 0.5 * (double)degree;
	if (need > min_links)
		need = min_links;
	return strength >= delta && strength * colsum >= need;
}

/* Is entry j of F (in node u's row) a membership? F->colsum must hold the
 * column sums and g be the graph F describes (for the degree). On a
 * two-sided g with F->sidesum set (agm_side_sums()), the row is read
 * against the other side's sum, as model_directed_member_at() reads it. */
int agm_member_at(const struct graph *g, const struct fcsr *F, uint32_t u, uint64_t j,
		  double delta, double min_links);
/* F->sidesum for a two-sided g (freed and NULL for a one-mode one):
 * agm_from_strengths_trimmed() sets it, as it sets F->thr. 0 or -1. */
int agm_side_sums(const struct graph *g, struct fcsr *F);

/* The Bernoulli log-likelihood of e edges among N pairs at their own
 * density e / N (0 when e is 0 or N): the block term agm_trim() and the
 * merge move (fit_merge.c) compare against the background. */
double agm_block_loglik(double e, double N);

/* The log-likelihood ratio of eX edges among NX pairs at the rate pm (in
 * (0, 1)) against the background bg, given as lbg = ln(bg) and l1bg =
 * ln(1 - bg): whether two blocks are better joined, pm the density of
 * their union (the merge move, fit_merge.c; the seeds' joins,
 * seed_clusters.c). */
double agm_join_lr(double eX, double NX, double pm, double lbg, double l1bg);

/* Where each community of F ends, by the AGM's own likelihood: for each
 * column, its members by the rule at delta in order of strength, the
 * prefix whose edges are most likely as one block at their own density
 * against the background epsilon (each community alone); F->thr gets the
 * strength of the last member kept (0: the whole column), replacing any
 * earlier thresholds. On a two-sided graph the members of both sides in
 * order of the links expected from the other side, the block's pairs
 * senders x receivers, and a threshold per side (2 k; F->sidesum is set
 * if it was not). 0 or -1 (reported). */
int agm_trim(const struct graph *g, struct fcsr *F, double epsilon, double delta,
	     double min_links);

/* agm_from_strengths() read with the thresholds of agm_trim() when the
 * AGM log-likelihood of that cover is not below the one at delta alone,
 * else at delta alone (F->thr is then NULL); then, on a one-mode graph,
 * without the columns that do not pay for their members' names (leaving
 * them out shortens the two-part code length, agm_code_length_of(); their
 * thresholds in F->thr are set above every strength; a->dropped counts
 * them): the membership reading of the commands. F's thresholds are set to match (so agm_member_at() on F
 * agrees with out). Two-sided graphs (g->nsend) are trimmed by side:
 * F->thr then holds 2 k thresholds, the sending rows' then the receiving
 * rows', read with F->sidesum (agm_side_sums()). 0 or
 * -1; release with agm_release(). */
int agm_from_strengths_trimmed(struct agm *out, const struct graph *g, struct fcsr *F,
			       double epsilon, double delta, double min_links);

/* The same reading with every column kept: none left out for its code
 * length (what agm_from_strengths_trimmed() does last). The starts and
 * moves of a fit are judged on it (starts.c), so that leaving columns
 * out changes what a fit reports, not how it climbs: judged with them
 * left out, -k auto's search took other moves and chose 60 of 114 planted
 * communities on a graph of mean degree 8 (ONMI 0.50, against 118 and
 * 0.66; DEVELOPERS.md). 0 or -1; release with agm_release(). */
int agm_from_strengths_every_column(struct agm *out, const struct graph *g, struct fcsr *F,
				    double epsilon, double delta, double min_links);

/* Memberships by agm_is_member() with F->colsum, figures and p for every
 * non-empty column of F. g and F borrowed. Cover labels are the column
 * numbers in decimal. Returns 0 or -1; release with agm_release(). */
int agm_from_strengths(struct agm *out, const struct graph *g, const struct fcsr *F,
		       double epsilon, double delta, double min_links);

/* Figures and p for a given cover (copied; borrowed c is not changed).
 * The copy is reordered largest first and loses empty communities;
 * comms[i].id is the index in c, labels are kept, strengths are 1.0.
 * Returns 0 or -1; release with agm_release(). */
int agm_from_cover(struct agm *out, const struct graph *g, const struct cover *c, double epsilon);

/* As agm_from_cover(), with the link probabilities given instead of
 * estimated: p (c->k values in [0, 1], borrowed; p[i] for community i of
 * c). Returns 0 or -1. */
int agm_from_cover_p(struct agm *out, const struct graph *g, const struct cover *c,
		     double epsilon, const double *p);

/* Maximum-likelihood p for fixed memberships into p (c->k values,
 * borrowed). Returns 0 or -1. */
int agm_estimate_p(const struct graph *g, const struct cover *c, double epsilon, double *p);

/* The same maximum, climbed to from the p given on entry (c->k values in
 * [0, 1], borrowed, overwritten): every coordinate step rises, so the
 * answer is never less likely than the start. Returns 0 or -1. */
int agm_improve_p(const struct graph *g, const struct cover *c, double epsilon, double *p);

/* The AGM log-likelihood of graph g under cover c with probabilities p
 * (c->k values in [0, 1], borrowed), in O(m * overlap + n + k). -INFINITY
 * when some edge has probability 0 (epsilon = 0 and its ends share no
 * community with p > 0); NAN (with error()) on bad input. */
double agm_loglik(const struct graph *g, const struct cover *c, const double *p, double epsilon);

/* The two-part code length, in nats, of a graph under the cover of a: the
 * cover itself (each community names its s members among n nodes,
 * ln C(n, s)) plus the graph given the cover (-a->loglik). Lower is a
 * shorter description (minimum description length, Rissanen 1978). Unlike
 * the log-likelihood alone it does not reward a cover for holding more
 * memberships than its links pay for. +INFINITY when a->loglik is. */
double agm_code_length(const struct agm *a, uint32_t n);
/* ln C(n, s), the nats of naming s members among n, from ln Gamma
 * (relative error near 1e-15 at any size); 0 unless 0 < s < n. */
double agm_ln_choose(double n, double s);
/* (agm_code_length() names members among n nodes of one kind; the
 * commands call agm_code_length_of() below, which also knows two sides.) */
/* The same code for cover c of graph g given the AGM log-likelihood
 * loglik of g under it. On a two-sided graph (graph.h) a community names
 * its senders among the senders and its receivers among the receivers:
 * ln C(nsend, s_send) + ln C(n - nsend, s_recv). */
double agm_code_length_of(const struct cover *c, double loglik, const struct graph *g);
/* The AGM's background fitted with the cover: epsilon and every p_c at
 * their joint maximum likelihood, memberships held (cyclic coordinate
 * steps: Newton on qeps = -ln(1 - epsilon), whose derivative is
 * sum_edges 1/expm1(Q_e) - (n(n-1)/2 - m), then p by agm_estimate_p's
 * steps; L is concave in (qeps, q) and every step rises). *epsilon is the
 * start on entry and the estimate on return; *loglik gets the maximum.
 * Without overlaps it is the share of linked pairs among the pairs that
 * share no community (the p_c absorb the rest). 0 or -1 (reported). */
int agm_fit_background(const struct graph *g, const struct cover *c, double *epsilon,
		       double *loglik);

/* A deep copy of src into dst (all owned by dst). Returns 0 or -1. */
int agm_copy(struct agm *dst, const struct agm *src);

void agm_release(struct agm *a);

/* The coverage said to the user, in nodes as given: for a directed graph
 * (g->paired) a node is covered when its sending or its receiving copy is
 * (a community counted once per node), else a->covered and a->overlapping
 * as they are. *nodes gets the nodes as given. 0, or -1 (no memory). */
int agm_coverage_as_given(const struct agm *a, const struct graph *g, uint32_t *covered,
			  uint32_t *overlapping, uint32_t *nodes);

#endif
