/*
 * cli/agree: `coterie agree DIR1 DIR2 [DIR ...] [--json]`.
 *
 * How well each community of the first result folder comes back in the
 * others (fits of the same graph from other seeds, other k, other
 * options): its best-match Jaccard in each, and their mean, the stability
 * fit --repeats writes (stability.h). It prints and writes nothing: the
 * folders may belong to other runs, and a score depends on which folders
 * were asked, so it is not a fact of DIR1 to be stored there.
 *
 * The folders' memberships.tsv are read (through result_file(), so a
 * commit in progress is read as the commit would leave it) into one name
 * table; folders whose run.json or manifest name different graphs are
 * refused (exit 1).
 */
#include <getopt.h>
#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <jansson.h>

#include "cli.h"
#include "coterie/cover.h"
#include "coterie/jsonout.h"
#include "coterie/names.h"
#include "coterie/stability.h"

/* The usage line, and with full the whole text. */
static void agree_usage(FILE *out, int full)
{
	fputs("usage: coterie agree DIR1 DIR2 [DIR ...] [--json]\n", out);
	if (!full)
		return;
	fputs("\n"
	      "Score every community of the result folder DIR1 by how well the other\n"
	      "folders (fits of the same graph) find it again: its best-match Jaccard\n"
	      "index |a & b| / |a | b| in each, and their mean (its stability, as\n"
	      "fit --repeats writes). Folders of different graphs are refused.\n"
	      "\n"
	      "      --json    the scores as JSON\n"
	      "  -h, --help    this text\n", out);
}

static void print_text(char **dirs, uint32_t nd, const struct cover *c, const double *score,
		       const double *each)
{
	char buf[256];
	const struct cover *x = &c[0];
	printf("communities of %s against %u other folder%s\n",
	       util_escape(dirs[0], buf, sizeof buf, 1), nd - 1, nd == 2 ? "" : "s");
	for (uint32_t r = 1; r < nd; r++)
		printf("  [%u] %s\n", r, util_escape(dirs[r], buf, sizeof buf, 1));
	printf("\n%-16s %8s %9s", "community", "size", "stability");
	for (uint32_t r = 1; r < nd; r++)
		printf("  %6s[%u]", "best", r);
	printf("\n");
	double sum = 0;
	uint32_t scored = 0;
	for (uint32_t a = 0; a < x->k; a++) {
		util_escape(x->label[a], buf, sizeof buf, 1);
		printf("%-16s %8" PRIu32 " %9.3f", buf, cover_size(x, a), score[a]);
		for (uint32_t r = 1; r < nd; r++)
			printf("  %9.3f", each[(size_t)a * (nd - 1) + r - 1]);
		printf("\n");
		if (!isnan(score[a])) {
			sum += score[a];
			scored++;
		}
	}
	printf("\nmean stability %.3f over %u communities\n", scored ? sum / scored : NAN, scored);
}

static int print_json(char **dirs, uint32_t nd, const struct cover *c, const double *score,
		      const double *each)
{
	int bad = 0;
	const struct cover *x = &c[0];
	json_t *root = json_object(), *others = json_array(), *comms = json_array();
	for (uint32_t r = 1; r < nd; r++)
		jsonout_append(others, jsonout_str(dirs[r]), &bad);
	double sum = 0;
	uint32_t scored = 0;
	for (uint32_t a = 0; a < x->k; a++) {
		json_t *jc = json_object(), *best = json_array();
		for (uint32_t r = 1; r < nd; r++)
			jsonout_append(best, jsonout_real(each[(size_t)a * (nd - 1) + r - 1]), &bad);
		jsonout_set(jc, "community", jsonout_str(x->label[a]), &bad);
		jsonout_set(jc, "size", jsonout_uint(cover_size(x, a)), &bad);
		jsonout_set(jc, "stability", jsonout_real(score[a]), &bad);
		jsonout_set(jc, "best_jaccard", best, &bad);
		jsonout_append(comms, jc, &bad);
		if (!isnan(score[a])) {
			sum += score[a];
			scored++;
		}
	}
	jsonout_set(root, "folder", jsonout_str(dirs[0]), &bad);
	jsonout_set(root, "against", others, &bad);
	jsonout_set(root, "score", jsonout_str("mean best-match Jaccard in the other folders"),
		    &bad);
	jsonout_set(root, "mean", jsonout_real(scored ? sum / scored : NAN), &bad);
	jsonout_set(root, "communities", comms, &bad);
	if (bad) {
		json_decref(root);
		return -1;
	}
	return jsonout_print(root, stdout, CLI_JSON_FLAGS); /* takes root */
}

int cmd_agree(int argc, char **argv)
{
	static const struct option opts[] = {
		{ "json", no_argument, NULL, 'J' },
		{ "help", no_argument, NULL, 'h' },
		{ NULL, 0, NULL, 0 },
	};
	int json = 0;
	cli_getopt_reset();
	for (int c; (c = getopt_long(argc, argv, ":h", opts, NULL)) != -1;) {
		if (c == 'h') {
			agree_usage(stdout, 1);
			return 0;
		}
		if (c != 'J')
			return cli_option_usage(c, argv, "agree");
		json = 1;
	}
	int nd = argc - optind;
	if (nd < 2) {
		error("agree takes two result folders or more, not %d", nd);
		agree_usage(stderr, 0);
		return EXIT_USAGE;
	}
	char **dirs = argv + optind;
	struct names *nodes = names_new(0);
	struct cover *cv = util_calloc((size_t)nd, sizeof *cv);
	double *score = NULL, *each = NULL;
	int rc = 1;
	if (!nodes || !cv ||
	    stability_read_folders((const char *const *)dirs, (uint32_t)nd, nodes, cv))
		goto out;
	uint32_t k = cv[0].k ? cv[0].k : 1;
	score = util_malloc(k, sizeof *score);
	each = util_malloc((size_t)k * (uint32_t)(nd - 1), sizeof *each);
	if (!score || !each || stability_score(&cv[0], cv + 1, (uint32_t)nd - 1, score, each))
		goto out;
	if (json)
		rc = print_json(dirs, (uint32_t)nd, cv, score, each) ? 1 : 0;
	else {
		print_text(dirs, (uint32_t)nd, cv, score, each);
		rc = 0;
	}
out:
	for (int r = 0; cv && r < nd; r++)
		cover_release(&cv[r]);
	UTIL_FREE_ALL(cv, score, each);
	names_free(nodes);
	return rc;
}
