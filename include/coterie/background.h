/*
 * background: choosing the background probability epsilon of a fit.
 *
 * The default epsilon is the graph's density, and the membership
 * threshold follows from it (delta = sqrt(-ln(1 - epsilon))). On a graph
 * below BACKGROUND_MAX_EDGES edges a search chooses it; a larger graph
 * keeps the density (its own fit says when few nodes are covered), and
 * --epsilon skips all of this. The search fits at the density first.
 *
 * When that cover holds at least BACKGROUND_THIN of the nodes with a link,
 * the rule is the code length (BigCLAM): it fits at the density
 * times 0.7, 0.5, 0.3, 0.2, 0.1, 0.05, 0.03, 0.01 and 0.001, reads each
 * fit's cover, fits the AGM's background to it (agm_fit_background():
 * epsilon and the p_c at their joint maximum likelihood, memberships
 * held) and keeps the epsilon whose cover has the shortest code length
 * there (agm_code_length_of(): minimum description length, Rissanen
 * 1978; the first on a tie). So the fits' epsilon is a search device and
 * the covers are judged at their own maximum-likelihood background, not
 * at the epsilon they were fitted with (at the density a cover explains
 * its outside links badly, whatever the cover). The weighted and
 * two-sided models keep the density there (the weighted have no code
 * length; on the two-sided ones the rule was measured worse: the
 * Serengeti food web and a planted two-mode graph, DEVELOPERS.md).
 *
 * When the density's cover is thin (most nodes out: karate at the density
 * covers 8 of 34), the covers admitted must hold BACKGROUND_COVER of the
 * linked nodes instead, a share of ours, said to be one (if none does,
 * the one that covers most is kept, the larger epsilon on a tie): with
 * half, measured on karate and polbooks, the code prefers covers of their
 * dense cores (karate: 18 of 34 nodes covered at two seeds of six), and
 * their known groups cover every node (DEVELOPERS.md, "The background by
 * code length").
 *
 * The weighted and two-sided models keep the older coverage guard: the
 * density when its cover is not thin, else the first (largest) multiple
 * whose cover holds BACKGROUND_COVER of the linked nodes.
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
	BACKGROUND_COVERAGE,  /* the coverage guard chose it (weighted, two-sided models) */
	BACKGROUND_CODE,      /* the shortest code length chose it (BigCLAM) */
};

struct background_candidate {
	double multiple;   /* of the density */
	double epsilon;
	uint32_t covered;  /* nodes in a community */
	double loglik;     /* l(F) of the fit at this epsilon */
	double agm_loglik; /* the AGM log-likelihood of its cover */
	uint32_t sweeps;
	double seconds;
	double background;  /* rule code: the cover's own maximum-likelihood epsilon */
	double code_length; /* rule code: its code length there, nats (else NAN) */
};

struct background_choice {
	enum background_rule rule;
	double density;
	double epsilon;   /* the choice */
	uint32_t linked;  /* nodes with at least one link */
	uint32_t ncand;
	uint32_t chosen;  /* the candidate kept (rules coverage and code) */
	struct background_candidate cand[BACKGROUND_MAX_CAND];
};

/* The rule's name for run.json: "given", "density", "coverage" or "code". */
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
