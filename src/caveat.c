/*
 * caveat: when the answer is thin (see caveat.h).
 *
 * Pure functions of figures the caller already has (the search's
 * result, the cover's counts), so the batch command, run.json and the
 * explorer say the same thing from the same numbers. The one thing a
 * newcomer gets wrong: a caveat is not an error; the result is written
 * and the exit status is 0. Its text must say what to try, not only what
 * is wrong.
 */
#include "coterie/caveat.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#include "coterie/model.h"
#include "coterie/select.h"
#include "coterie/util.h"

void caveats_init(struct caveats *cv)
{
	memset(cv, 0, sizeof *cv);
}

static void add(struct caveats *cv, const char *code, const char *fmt, ...)
{
	if (cv->n == CAVEAT_MAX)
		return;
	struct caveat *c = &cv->c[cv->n++];
	c->code = code;
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(c->text, sizeof c->text, fmt, ap);
	va_end(ap);
}

void caveats_of_selection(struct caveats *cv, const struct select_result *sel, uint32_t n)
{
	if (sel->edge > 0) {
		uint32_t most = n / 4 < MODEL_MAX_K ? n / 4 : MODEL_MAX_K;
		const char *why = sel->list ? "the grid was a list, --k-grid" :
				  sel->bound >= most ? "no k above n/4 is tried: communities of "
				  "four nodes or fewer" : "a larger k would not fit in memory";
		add(cv, "k_at_grid_edge",
		    "-k auto chose k = %u, the largest k it scored, and tried none larger (%s): "
		    "the best k may be larger, so k is uncertain; try --k-grid reaching further, "
		    "or give -k from what you know of the graph", sel->best, why);
	} else if (sel->edge < 0) {
		add(cv, "k_at_grid_edge",
		    "-k auto chose k = %u, the smallest k it scored (the grid was a list): the best "
		    "k may be smaller; try --k-grid starting at 2", sel->best);
	}
	uint32_t folds = sel->folds ? sel->folds : 1;
	uint64_t scored = sel->held_edges * folds;
	if (scored < CAVEAT_FEW_HELD_OUT)
		add(cv, "few_held_out",
		    "-k auto scored each k on only %llu held-out edges and as many non-edges "
		    "(%u split%s of %llu): too few for the scores of different k to differ by "
		    "more than chance, so the chosen k = %u is weakly supported; try a larger "
		    "--holdout, or give -k from what you know of the graph",
		    (unsigned long long)scored, folds, folds == 1 ? "" : "s",
		    (unsigned long long)sel->held_edges, sel->best);
}

void caveats_of_cover(struct caveats *cv, uint32_t covered, uint32_t n)
{
	if (n > 0 && 2 * (uint64_t)covered < n)
		add(cv, "few_covered",
		    "only %u of %u nodes (%.0f%%) are in a community: the rest are explained by "
		    "the background alone, so the communities describe a minority of the graph; "
		    "try a smaller --epsilon (the background), --refine, or another k",
		    covered, n, floor(100.0 * covered / n));
}

void caveats_of_links(struct caveats *cv, uint64_t held_edges)
{
	if (held_edges < CAVEAT_FEW_HELD_OUT)
		add(cv, "few_check_pairs",
		    "--check-links held out only %llu edges and as many non-edges: the link AUC "
		    "and held-out log-likelihood are rough; try a larger --check-links share",
		    (unsigned long long)held_edges);
}

void caveats_print(const struct caveats *cv)
{
	for (uint32_t i = 0; i < cv->n; i++)
		warning("%s", cv->c[i].text);
}
