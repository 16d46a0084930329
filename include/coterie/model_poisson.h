/*
 * model_poisson: the Poisson model of Ball, Karrer & Newman, Phys. Rev. E
 * 84, 036103 (2011), for weighted graphs: the weight of a pair is Poisson
 * with mean F_u . F_v + qeps (qeps = model_qeps(epsilon), the background
 * rate). Its strengths live in a struct model (model.h) like BigCLAM's,
 * with the same threshold delta = sqrt(qeps): two members of c alone at
 * strength delta expect delta^2 = qeps of weight, the background's share.
 * The log-likelihood (lgamma(w + 1) standing for log(w!), so non-integer
 * weights have a value and l(F) <= 0):
 *     l(F) = sum_{uv in E} [w_uv log(x_uv + qeps) - lgamma(w_uv + 1)]
 *            - sum_{u < v} (x_uv + qeps),        x_uv = F_u . F_v,
 * held-out pairs (model.excl) in neither sum. On a two-sided model
 * (model.nsend > 0; directed and two-mode graphs) x_uv = F_u . H_v and the
 * pairs are the (sending, receiving) ones. The weights are the graph's
 * (graph_weight(): 1 in an unweighted graph, where this is the Poisson
 * reading of a simple graph). The derivation of the row update is at the
 * top of src/model_poisson.c.
 */
#ifndef COTERIE_MODEL_POISSON_H
#define COTERIE_MODEL_POISSON_H

#include <stddef.h>
#include <stdint.h>

struct graph;
struct model;
struct objective_ops;

/* The whole-graph log-likelihood above, in O(m nnz + n nnz) (the
 * engine's recompute sums the same terms over fixed node ranges through
 * the ops' part_range/part_combine). */
double model_poisson_loglik(const struct model *m, const struct graph *g);

/* The Poisson model as the sweep engine sees it (objective.h): rows
 * coupled through -F_u . F_v (coupling 1), gains exact. Static; never
 * NULL. */
const struct objective_ops *model_poisson_objective(void);

/* The same likelihood on a two-sided model (model_directed.h; the
 * derivation at the top of src/model_poisson.c): the weight of the arc
 * u -> v is Poisson with mean F_u . H_v + qeps, every (sending,
 * receiving) pair pays F_u . H_v + qeps, rows read the other side's
 * column sums, and a block's rows couple only across sides
 * (OBJECTIVE_COUPLING_SIDES). model_poisson_loglik() is its
 * log-likelihood too (it reads model.nsend). Static; never NULL. */
const struct objective_ops *model_poisson_sided_objective(void);

#endif
