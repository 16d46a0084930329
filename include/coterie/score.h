/*
 * score: agreement between two covers of the same nodes.
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

struct cover;

/* -1.0 (with error()) when a and b have different n. */
double score_onmi_max(const struct cover *a, const struct cover *b);
double score_onmi_lfk(const struct cover *a, const struct cover *b);

#endif
