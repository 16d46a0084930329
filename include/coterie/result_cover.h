/*
 * result_cover: the cover a result folder holds, read back for `coterie
 * show` and the explorer. A fit's memberships.tsv is usually the strengths
 * of the checkpoint read by the membership rule (agm.h), but after `fit
 * --refine` it holds the refined cover, which no threshold on the
 * strengths gives back: run.json's fit.memberships_from says which.
 */
#ifndef COTERIE_RESULT_COVER_H
#define COTERIE_RESULT_COVER_H

#include "agm.h"

struct checkpoint;

/* Where the cover result_cover_read() returned comes from. */
enum result_cover_from {
	RESULT_COVER_STRENGTHS = 0, /* the strengths by the membership rule, which is
				     * what memberships.tsv holds */
	RESULT_COVER_REFINED,       /* memberships.tsv and communities.tsv: the
				     * refined cover of fit --refine */
	RESULT_COVER_UNREFINED,     /* the folder says its cover is refined but its
				     * files could not be used (a warning said why):
				     * the strengths by the rule, NOT what
				     * memberships.tsv holds */
};

/* One line for people: which cover `from` is. Static string. */
const char *result_cover_words(enum result_cover_from from);

/* Does DIR/run.json say memberships.tsv holds a refined cover (fit
 * --refine)? 1 yes, 0 no or unreadable (no message). */
int result_cover_is_refined(const char *dir);

/*
 * The cover of result folder dir whose checkpoint is ck (borrowed; its
 * F->colsum filled), as an AGM into out: memberships.tsv with the p_c of
 * communities.tsv when run.json says the cover was refined, else (and,
 * with a warning, when those files are missing, do not belong to this
 * checkpoint or were edited) the strengths read by the rule with delta.
 * Community ids are model columns and strengths F's (0 for a membership
 * with no strength), as agm_from_strengths() gives. *from says which.
 * Returns 0, or -1 with a message when not even the strengths could be
 * read; release out with agm_release().
 */
int result_cover_read(struct agm *out, const char *dir, struct checkpoint *ck,
		      double delta, enum result_cover_from *from);

/* Warn when the files of result folder dir do not belong with its
 * checkpoint ck (borrowed, read from dir): run.json of another graph
 * (fingerprint) or another fit (sweeps), or, for a cover not refined, a
 * memberships.tsv that is not the strengths' cover by the rule (edited,
 * or of another fit). Missing files are not warned of. The checkpoint
 * carries its own graph and is what readers use; a mix is warned, not
 * refused (coterie-files(5)). rule (borrowed, may be NULL) is the cover
 * the strengths give by the rule when the caller already has it, so it is
 * not built twice. */
void result_cover_check_folder(const char *dir, struct checkpoint *ck,
			       const struct agm *rule);

/* Is node u a member of community a->comms[index] (a binary search of its
 * sorted members)? */
int result_cover_has(const struct agm *a, uint32_t index, uint32_t u);

struct inspect_node;
struct inspect_edge;

/* The node view nv (from inspect_node(), which asks the threshold) with
 * its memberships asked of the cover a instead (both borrowed; nv is
 * changed): member flags and nmember, and a row (strength 0, last) for a
 * membership with no strength. For a cover that is not the strengths'
 * (RESULT_COVER_REFINED). Returns 0 or -1 (out of memory; nv unchanged
 * but for its flags). */
int result_cover_node(const struct agm *a, struct inspect_node *nv);

/* The pair view e (from inspect_edge()) with "both members" and the AGM's
 * probability asked of the cover a (borrowed): every community holding
 * both counts, those without a shared strength too. */
void result_cover_edge(const struct agm *a, struct inspect_edge *e);

#endif
