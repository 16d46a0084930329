/*
 * caveat: saying when the answer is thin. A fit can end well and still
 * describe little: most nodes in no community, a k chosen at the edge of
 * what was tried, a choice made on too few held-out pairs to mean much.
 * Each such case is a caveat: a fixed machine-readable code and a text
 * that says what it means and what to try. `fit` prints them as warnings
 * (not silenced by -q), run.json lists them under "warnings"
 * (coterie-files(5)), the explorer's search screen shows the search's.
 *
 * The codes, stable for scripts:
 *   few_covered      fewer than half the nodes are in a community
 *   k_at_grid_edge   -k auto chose the largest (or smallest above 2) k it
 *                    scored, and could try none further
 *   few_held_out     -k auto scored each k on fewer than
 *                    CAVEAT_FEW_HELD_OUT held-out edges (all folds)
 *   few_check_pairs  --check-links held out fewer than that many edges
 */
#ifndef COTERIE_CAVEAT_H
#define COTERIE_CAVEAT_H

#include <stdint.h>

struct select_result;

/* "A few dozen pairs": below this many held-out edges (and as many
 * non-edges) the scores differ between k or splits by more than between
 * models (dolphins, 16 edges a split: seeds 1-3 chose k 8, 2 and 15). */
#define CAVEAT_FEW_HELD_OUT 50
#define CAVEAT_MAX 6

struct caveat {
	const char *code; /* one of the codes above (static) */
	char text[480];   /* what it means and what to try, one line */
};

struct caveats {
	uint32_t n;
	struct caveat c[CAVEAT_MAX];
};

/* Empty cv. */
void caveats_init(struct caveats *cv);

/* Add the caveats of a -k auto search (sel borrowed) on a graph of n
 * nodes: k_at_grid_edge, few_held_out. */
void caveats_of_selection(struct caveats *cv, const struct select_result *sel, uint32_t n);

/* Add few_covered when fewer than half of n nodes are covered. */
void caveats_of_cover(struct caveats *cv, uint32_t covered, uint32_t n);

/* Add few_check_pairs when --check-links held out fewer than
 * CAVEAT_FEW_HELD_OUT edges. */
void caveats_of_links(struct caveats *cv, uint64_t held_edges);

/* Print each caveat through warning() (shown even with -q). */
void caveats_print(const struct caveats *cv);

#endif
