/*
 * cli: the command layer. One file per subcommand; each returns an exit
 * status. Only this layer (and main.c) may exit, through die().
 *
 * Exit status: 0 success, 1 failure, 2 bad usage, 130 interrupted (with
 * the results saved first; EXIT_INTERRUPTED is in coterie/proc.h).
 */
#ifndef COTERIE_CLI_H
#define COTERIE_CLI_H

#include <stdint.h>
#include <stdio.h>

#include <jansson.h>

#include "coterie/fit.h"
#include "coterie/graph.h"
#include "coterie/proc.h"
#include "coterie/select.h"
#include "coterie/util.h"

#define EXIT_USAGE 2

#define COTERIE_VERSION "0.1.0"

/* Print "coterie: MSG" and exit with status. Runs proc_run_exit_hook()
 * first (the explorer restores the terminal there). */
COTERIE_NORETURN void die(int status, const char *fmt, ...) COTERIE_PRINTF(2, 3);

/* Number parsing for options: the whole string must be a number in range,
 * else a usage message naming the option, and exit 2. */
uint32_t cli_u32(const char *opt, const char *s, uint32_t lo, uint32_t hi);
uint64_t cli_u64(const char *opt, const char *s);
double cli_double(const char *opt, const char *s, double lo, double hi);

/* getopt's own messages print the argument raw: commands set opterr = 0,
 * pass a leading ':' in the option string, and on '?' or ':' call this,
 * which reports the offending option escaped. */
void cli_option_error(int c, char **argv);
/* Before a command's getopt_long() loop: start at argv[1] (a command may
 * run more than once in a process, as in the tests) with getopt's own
 * messages off (see cli_option_error()). */
void cli_getopt_reset(void);
/* cli_option_error(), then "try 'coterie CMD --help'": returns EXIT_USAGE. */
int cli_option_usage(int c, char **argv, const char *cmd);

/* A loaded graph must have an edge to be fitted: 0, or -1 with a message
 * "FILE:LINE: expected ..., found ..." (the line where the edge list
 * ended, for edge lists). */
int cli_graph_fittable(const struct graph *g, const char *path);
/* -k must not exceed the node count: else a usage message and exit 2. */
void cli_k_fits(uint32_t k, const struct graph *g);

/* The options fit and explore share: -k N|auto, -j N and these long ones.
 * A command numbers its own long options from CLI_OPT_OWN. */
enum {
	CLI_OPT_SEED = 256,
	CLI_OPT_TOL,
	CLI_OPT_PATIENCE,
	CLI_OPT_MAX_SWEEPS,
	CLI_OPT_EPSILON,
	CLI_OPT_FORMAT,
	CLI_OPT_STARTS,
	CLI_OPT_NO_RESEED,
	CLI_OPT_K_GRID,
	CLI_OPT_HOLDOUT,
	CLI_OPT_CHECKPOINT_EVERY,
	CLI_OPT_SKIP_LINES,
	CLI_OPT_NO_HEADER,
	CLI_OPT_WEIGHTED,
	CLI_OPT_WEIGHT_ATTR,
	CLI_OPT_DIRECTED,
	CLI_OPT_TWO_MODE,
	CLI_OPT_SEEDING,
	CLI_OPT_OWN,
};

/* Below this many edges a fit makes 3 starts by default, above it 1. */
#define CLI_MANY_STARTS_BELOW 100000u

struct option;

struct cli_fit_opts {
	struct fit_params p;
	enum graph_format fmt;
	int have_k, have_tol, have_pat, have_max, have_eps, have_seed, have_starts;
	int have_seeding;          /* --seeding was given */
	int k_auto;                /* -k auto */
	struct select_params sp;   /* --k-grid and --holdout for -k auto */
	int have_grid;             /* --k-grid was given */
	double checkpoint_every;   /* --checkpoint-every; 0: not given */
	const char *out;           /* -o DIR; NULL: not given */
	uint64_t skip_lines;       /* --skip-lines */
	int no_header;             /* --no-header, or --skip-lines given */
	int weighted;              /* --weighted or --weight-attr: model_kind_weighted(p.model) */
	const char *weight_attr;   /* --weight-attr NAME; NULL: "weight" */
	int sided;                 /* --directed or --two-mode: model_kind_sided(p.model) */
};

/* The getopt_long() entries fit and explore share (the options handled by
 * cli_fit_opts_take() and -h); each command adds its own. */
#define CLI_FIT_OPTIONS \
	{ "communities", required_argument, NULL, 'k' }, \
	{ "output", required_argument, NULL, 'o' }, \
	{ "threads", required_argument, NULL, 'j' }, \
	{ "seed", required_argument, NULL, CLI_OPT_SEED }, \
	{ "tol", required_argument, NULL, CLI_OPT_TOL }, \
	{ "patience", required_argument, NULL, CLI_OPT_PATIENCE }, \
	{ "max-sweeps", required_argument, NULL, CLI_OPT_MAX_SWEEPS }, \
	{ "epsilon", required_argument, NULL, CLI_OPT_EPSILON }, \
	{ "format", required_argument, NULL, CLI_OPT_FORMAT }, \
	{ "starts", required_argument, NULL, CLI_OPT_STARTS }, \
	{ "no-reseed", no_argument, NULL, CLI_OPT_NO_RESEED }, \
	{ "k-grid", required_argument, NULL, CLI_OPT_K_GRID }, \
	{ "holdout", required_argument, NULL, CLI_OPT_HOLDOUT }, \
	{ "checkpoint-every", required_argument, NULL, CLI_OPT_CHECKPOINT_EVERY }, \
	{ "skip-lines", required_argument, NULL, CLI_OPT_SKIP_LINES }, \
	{ "no-header", no_argument, NULL, CLI_OPT_NO_HEADER }, \
	{ "weighted", no_argument, NULL, CLI_OPT_WEIGHTED }, \
	{ "weight-attr", required_argument, NULL, CLI_OPT_WEIGHT_ATTR }, \
	{ "directed", no_argument, NULL, CLI_OPT_DIRECTED }, \
	{ "two-mode", no_argument, NULL, CLI_OPT_TWO_MODE }, \
	{ "seeding", required_argument, NULL, CLI_OPT_SEEDING }, \
	{ "help", no_argument, NULL, 'h' }

/* Defaults: fit_params_default() with one thread per core. */
void cli_fit_opts_init(struct cli_fit_opts *o);
/* Take option c with its argument if it is a shared one: returns 1, or 0
 * for an option the command handles itself. A bad value exits 2. */
int cli_fit_opts_take(struct cli_fit_opts *o, int c, const char *arg);
/* getopt_long() for fit and explore: takes the shared options into o and
 * returns the next option the command handles itself, or -1 at the end. */
int cli_fit_getopt(struct cli_fit_opts *o, int argc, char **argv, const char *shortopts,
		   const struct option *opts);
/* -k auto's grid: the --k-grid given, else select_params_default() for g
 * (minima may be NULL). Returns 0 or -1 (reported). */
int cli_fit_opts_grid(struct cli_fit_opts *o, const struct graph *g, uint32_t *minima);
/* graph_load_with() with --format, --skip-lines and --no-header: the
 * graph, or NULL with error(); caller frees with graph_free(). */
struct graph *cli_graph_load(const struct cli_fit_opts *o, const char *path);
/* The starts default for a graph of m edges, unless --starts was given. */
void cli_fit_opts_starts(struct cli_fit_opts *o, uint64_t m);
/* The parameters for continuing a saved fit: the saved ones, with this
 * machine's threads and the --tol, --patience, --max-sweeps, --no-reseed
 * given; a different -k or --epsilon exits 2 and --seed is ignored with a
 * warning ("when" ends those messages, e.g. "when resuming"). */
void cli_fit_opts_resume(const struct cli_fit_opts *o, const struct fit_params *saved,
			 const char *when, struct fit_params *out);

/* What only the BigCLAM model can do: --refine (the AGM's single-membership
 * moves; a weighted, directed or two-mode fit has no such reading). Exits
 * 2 saying why when p->model is not BigCLAM and refine is set. (-k auto and
 * --check-links score every model by its own likelihood: holdout.h.) */
void cli_model_can(const struct fit_params *p, int refine);

int cmd_fit(int argc, char **argv);

/* What a program's main() does first (coterie, coterie-mpi): locale,
 * igraph's handlers, the command line for run.json; then no command,
 * --help and --version (usage() prints the program's usage). Returns the
 * exit status when that was all, else -1 to go on with argv[1]. */
int cli_main_begin(int argc, char **argv, const char *program, void (*usage)(FILE *out));

/* `fit` run by every process of a group (coterie-mpi: src/mpi_main.c).
 * Every process parses, loads and fits alike; only rank 0 takes the
 * folder, prints and writes. The hooks are collectives that every process
 * calls at the same points: agree() twice before the fit starts (after
 * rank 0 took the folder, then once everything is loaded), share() to
 * hand the fit to the group, end() once after it with rank 0's status. */
struct cli_group {
	unsigned rank, size;
	/* 1 when every process passed ok = 1 */
	int (*agree)(void *arg, int ok);
	/* the fit's sweeps shared with the group (fit_share()) */
	void (*share)(void *arg, struct fit *f);
	/* rank 0's exit status, returned on every process */
	int (*end)(void *arg, int rc);
	void *arg;
	/* the byte exchange -k auto spreads its fits with (select.h) */
	const struct sweep_group *gather;
};
/* cmd_fit() inside a group (borrowed; NULL: cmd_fit() itself). */
int cli_fit_in_group(int argc, char **argv, const struct cli_group *grp);
int cmd_show(int argc, char **argv);
int cmd_explore(int argc, char **argv);
int cmd_simulate(int argc, char **argv);
int cmd_compare(int argc, char **argv);
int cmd_export(int argc, char **argv);
int cmd_draw(int argc, char **argv);
int cmd_agree(int argc, char **argv);

/* The flags of the commands' --json output (jsonout_print()): indented,
 * reals to 17 digits. */
#define CLI_JSON_FLAGS (JSON_INDENT(2) | JSON_REAL_PRECISION(17))

#endif
