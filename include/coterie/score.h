/*
 * score: agreement between two covers of the same nodes: the overlapping
 * NMIs, the Omega index, the best-match F1, plain NMI, and counts.
 *
 * Overlapping NMI in the max-normalised form (McDaid, Greene & Hurley,
 * arXiv:1110.2515, 2011) and in the form of Lancichinetti, Fortunato &
 * Kertesz (New J. Phys. 11, 033015, 2009). Both treat each community as a
 * binary variable over the n nodes; empty communities are ignored, and so
 * are communities of all n nodes (both are constant: zero entropy). Values
 * are in [0, 1]; 1 for identical covers. Two covers with nothing left
 * score 1 when they have the same non-empty communities (none, or the
 * whole node set), 0 otherwise; 0 when only one of them has nothing left.
 */
#ifndef COTERIE_SCORE_H
#define COTERIE_SCORE_H

#include <stdint.h>

struct cover;

/* -1.0 (with error()) when a and b have different n. */
double score_onmi_max(const struct cover *a, const struct cover *b);
double score_onmi_lfk(const struct cover *a, const struct cover *b);

/*
 * The measures below count every non-empty community, one of all n nodes
 * included, and all fail with -1 (-1.0) and error() when a and b have
 * different n. Both covers are borrowed; out pointers too.
 */

/* The Omega index (Collins & Dent 1988) over the n(n-1)/2 pairs of nodes:
 * (observed - expected) / (1 - expected) agreement on how many communities
 * a pair shares, into *out. At most 1 (identical covers), about 0 by
 * chance, and below 0 (possibly below -1) for less agreement than chance;
 * 1 when n < 2 or when expected agreement is 1 (so observed is too).
 * Returns 0 or -1. */
int score_omega(const struct cover *a, const struct cover *b, double *out);

/* The average best-match F1 of Yang & Leskovec (WSDM 2013): the mean of
 * (mean over a's communities of the best F1 with one of b's) and (the
 * same from b to a). Those two halves go to *a_to_b and *b_to_a when not
 * NULL. 1 when neither cover has a community, 0 when one has none. */
double score_f1(const struct cover *a, const struct cover *b, double *a_to_b, double *b_to_a);

/* Plain NMI, arithmetic normalisation (as scikit-learn's
 * normalized_mutual_info_score): returns 1 and sets *out when both covers
 * are partitions of the n nodes (every node in exactly one community of
 * each), 0 when one is not (out untouched), -1 on failure. */
int score_nmi(const struct cover *a, const struct cover *b, double *out);

/* Counts for one side of a comparison. */
struct score_side {
	uint32_t communities; /* non-empty communities */
	uint32_t covered;     /* nodes in at least one */
	uint32_t overlapping; /* nodes in two or more */
	uint32_t only;        /* nodes in a community here and in none of the other cover */
};

/* Fill *sa for a and *sb for b. Returns 0 or -1. */
int score_sides(const struct cover *a, const struct cover *b, struct score_side *sa,
		struct score_side *sb);

#endif
