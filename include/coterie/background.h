/*
 * background: choosing the background probability epsilon of a fit.
 *
 * The default epsilon is the graph's density, and the membership
 * threshold follows from it (delta = sqrt(-ln(1 - epsilon))). On a small
 * dense graph with hubs that leaves most nodes in no community: the
 * relaxed fit gives hubs large strengths and low-degree members fall
 * under delta (karate at the density: 8 of 34 nodes covered). No
 * likelihood measured picks a better epsilon there (DEVELOPERS.md, "The
 * background"): the relaxed likelihood always prefers a smaller one, the
 * AGM likelihood and the held-out pairs prefer covers of dense cores, and
 * they fail in opposite directions on karate and football.
 *
 * So the choice is a rule of ours, a coverage guard, and it is said to be
 * one: on a graph below BACKGROUND_MAX_EDGES edges, fit at the density;
 * if that cover holds at least BACKGROUND_THIN of the nodes with a link,
 * keep the density. Otherwise (the answer is thin) fit at the density
 * times 0.7, 0.5, 0.3, 0.2, 0.1, 0.05, 0.03, 0.01 and 0.001 in turn and
 * keep the first (largest) epsilon whose cover has at least
 * BACKGROUND_COVER of the linked nodes; if none does, the one that covers
 * most (the larger on a tie). Why two thresholds: where the density
 * leaves most nodes out, the known groups of the graphs we measured cover
 * every node (karate, polbooks); where it covers most, the uncovered nodes
 * are often truly in no group (the town sample: 204 of 320 covered at the
 * density, 207 in a group; pushing to 90% drops its ONMI from 0.86 to
 * 0.54). A larger graph keeps the density without a search (its own fit
 * says when few nodes are covered). --epsilon skips all of this.
 */
#ifndef COTERIE_BACKGROUND_H
#define COTERIE_BACKGROUND_H

#include <stdint.h>

struct graph;
struct fit_params;

#define BACKGROUND_MAX_EDGES 20000u /* the guard searches below this */
#define BACKGROUND_THIN 0.5         /* the density is kept when it covers this share */
#define BACKGROUND_COVER 0.9        /* else: share of the linked nodes to cover */
#define BACKGROUND_MAX_CAND 10

enum background_rule {
	BACKGROUND_GIVEN = 0, /* --epsilon */
	BACKGROUND_DENSITY,   /* the density, no search (a large graph, or a resume) */
	BACKGROUND_COVERAGE,  /* the coverage guard chose it */
};

struct background_candidate {
	double multiple;   /* of the density */
	double epsilon;
	uint32_t covered;  /* nodes in a community */
	double loglik;     /* l(F) of the fit at this epsilon */
	double agm_loglik; /* the AGM log-likelihood of its cover */
	uint32_t sweeps;
	double seconds;
};

struct background_choice {
	enum background_rule rule;
	double density;
	double epsilon;   /* the choice */
	uint32_t linked;  /* nodes with at least one link */
	uint32_t ncand;
	uint32_t chosen;  /* the candidate kept (rule coverage) */
	struct background_candidate cand[BACKGROUND_MAX_CAND];
};

/* The rule's name for run.json: "given", "density" or "coverage". */
const char *background_rule_name(enum background_rule r);

/*
 * Choose epsilon for fitting g with the parameters p (borrowed; p->k is
 * the k to fit, p->epsilon > 0 means given) into *out. The candidate fits
 * run with p's threads, starts and seed. stop (may be NULL) is polled
 * between candidates: nonzero ends the search, returning -2. Returns 0,
 * -1 on error (reported), or -2 when stopped.
 */
int background_choose(const struct graph *g, const struct fit_params *p, int (*stop)(void *),
		      void *arg, struct background_choice *out);

#endif
