/*
 * What the pieces of the result module share (result.c writes the folder,
 * runjson.c builds run.json). Not for other modules.
 */
#ifndef COTERIE_RESULT_INTERNAL_H
#define COTERIE_RESULT_INTERNAL_H

#include "coterie/result.h"

/* The text of run.json for model m of a fit of g with parameters p (all
 * borrowed; meta may be NULL). Caller frees with free(); NULL with a
 * message when out of memory. */
char *result_run_json(const struct graph *g, const struct fit_params *p,
		      const struct result_model *m, const struct result_meta *meta);

/* Node u of a two-sided g as a TSV field, by its name as given (without
 * the tag of its side; result_directed.c). */
struct atomicfile;
void result_side_name(struct atomicfile *w, const struct graph *g, uint32_t u);

/* Stage memberships.tsv and communities.tsv of a two-sided fit (g two-sided,
 * m's strengths; result_directed.c) into c; st (NULL: none) gives the
 * stability column, by column of m->F (stability_score_sided()). All
 * borrowed. 0 or -1. */
struct result_commit;
struct stability;
int result_directed_stage(struct result_commit *c, const struct graph *g,
			  const struct result_model *m, const struct stability *st);

#endif
