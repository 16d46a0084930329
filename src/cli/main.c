/* main: dispatch to a subcommand. */
#include <stdio.h>
#include <string.h>


#include "cli.h"

static const struct {
	const char *name;
	int (*fn)(int, char **);
	const char *what;
} commands[] = {
	{ "fit", cmd_fit, "fit overlapping communities to a graph and write a result folder" },
	{ "show", cmd_show, "print a result's communities, a node or weak edges, as text or JSON" },
	{ "explore", cmd_explore, "fit in the background and browse the communities, or browse a result" },
	{ "simulate", cmd_simulate, "sample a graph with planted overlapping communities (an AGM)" },
	{ "compare", cmd_compare, "score a found cover against a known one (overlapping NMI, Omega, F1)" },
	{ "export", cmd_export, "write a result's fit as graph attributes (GraphML, GML) or a matrix" },
	{ "draw", cmd_draw, "draw a result's figures for a paper (PDF, SVG, PNG)" },
	{ "agree", cmd_agree, "score each community of a result by how well other fits find it" },
};

static void usage(FILE *out)
{
	fprintf(out, "usage: coterie COMMAND [options]\n\ncommands:\n");
	for (size_t i = 0; i < sizeof commands / sizeof commands[0]; i++)
		fprintf(out, "  %-9s %s\n", commands[i].name, commands[i].what);
	fprintf(out, "\n'coterie COMMAND --help' describes a command; man coterie has it all.\n");
}

int main(int argc, char **argv)
{
	int rc = cli_main_begin(argc, argv, "coterie", usage);
	if (rc >= 0)
		return rc;
	for (size_t i = 0; i < sizeof commands / sizeof commands[0]; i++)
		if (!strcmp(argv[1], commands[i].name))
			return commands[i].fn(argc - 1, argv + 1);
	char buf[256];
	error("unknown command '%s'", util_escape(argv[1], buf, sizeof buf, 1));
	usage(stderr);
	return EXIT_USAGE;
}
