/*
 * result_weight: the weight figures of a weighted (Poisson) fit's
 * communities.tsv: the weight observed on the edges among a community's
 * members, and the weight the fitted model expects there (model_poisson.h:
 * a pair's weight has mean F_u . F_v + qeps), so a reader sees where the
 * model falls short of a community's weight or overshoots it.
 */
#ifndef COTERIE_RESULT_WEIGHT_H
#define COTERIE_RESULT_WEIGHT_H

#include <stdint.h>

struct cover;
struct fcsr;
struct graph;

/* For every community i of cv (a cover of g's nodes, g one-mode and
 * weighted or not; F the strengths of g's rows): observed[i] = the sum of
 * the weights of the edges whose two ends are members of i, expected[i] =
 * the sum over unordered pairs of members u != v of F_u . F_v + qeps.
 * observed and expected: cv->k values each (borrowed). Returns 0, or -1
 * (rows and cover differ, out of memory) with a message. */
int result_weight_figures(const struct graph *g, const struct fcsr *F, const struct cover *cv,
			  double qeps, double *observed, double *expected);

/* The same two figures for a two-sided weighted fit (directed or two-mode
 * Poisson; model_directed.h): sided is the per-side cover of g's rows
 * (model_directed_cover(): a directed node's sending row u and receiving
 * row nsend + u are members apart), F the strengths of g's rows. For every
 * community i: observed[i] = the sum of the weights of the arcs (two-mode:
 * links) from a sending member to a receiving member, expected[i] = the
 * sum over those (sending member u, receiving member v) pairs, a directed
 * node's own pair left out, of F_u . H_v + qeps. observed and expected:
 * sided->k values each (borrowed). Returns 0, or -1 (g not two-sided, rows
 * and cover differ, out of memory) with a message. */
int result_weight_sided_figures(const struct graph *g, const struct fcsr *F,
				const struct cover *sided, double qeps, double *observed,
				double *expected);

#endif
