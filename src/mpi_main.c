/*
 * mpi_main: `mpirun -np P coterie-mpi fit GRAPH -k N -o DIR`, the fit
 * shared among P processes (src/mpi_group.c). Built beside coterie when
 * mpicc is found; the main binary links no MPI (DEVELOPERS.md has why).
 *
 * Every process runs `fit` with the same command line (cli_fit_in_group())
 * and loads the whole graph; rank 0 takes the folder, prints and writes,
 * the others say only their errors, each named by its rank. `fit` is the
 * one command: the others gain nothing from more processes.
 *
 * The one thing a newcomer gets wrong: a process that leaves after the
 * processes agreed to fit strands the others in an exchange, so it ends
 * the whole job with MPI_Abort() instead.
 */
#include <mpi.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>


#include "cli/cli.h"
#include "coterie/mpi_group.h"

static unsigned sink_rank;

/* The messages of ranks other than 0: errors only (their warnings and
 * notices repeat rank 0's), named by rank. */
static void follower_sink(int level, const char *msg)
{
	if (level == UTIL_ERROR)
		fprintf(stderr, "coterie-mpi: rank %u: %s\n", sink_rank, msg);
}

static void usage(FILE *out)
{
	fprintf(out, "usage: mpirun -np P coterie-mpi fit GRAPH -k N -o DIR [fit options]\n\n"
		     "The fit of 'coterie fit', its sweeps shared among P processes (MPI); the\n"
		     "result folder is the one 'coterie fit' writes with the same seed.\n"
		     "Every process loads the whole graph; -k auto spreads its fits over the\n"
		     "processes. 'coterie-mpi fit --help' lists the options.\n");
}

/* COTERIE_MPI_STATS set: what this process exchanged, on stderr. */
static void print_stats(const struct mpi_group *g)
{
	const char *want = getenv("COTERIE_MPI_STATS");
	if (!want || !*want)
		return;
	struct mpi_group_stats st;
	mpi_group_stats(g, &st);
	fprintf(stderr,
		"coterie-mpi: rank %u of %u: %llu exchanges, %llu bytes sent, %llu bytes "
		"gathered, %.3f s in exchanges\n",
		mpi_group_rank(g), mpi_group_size(g), (unsigned long long)st.gathers,
		(unsigned long long)st.bytes_mine, (unsigned long long)st.bytes_all, st.seconds);
}

int main(int argc, char **argv)
{
	int rc = cli_main_begin(argc, argv, "coterie-mpi", usage);
	if (rc >= 0)
		return rc;
	if (strcmp(argv[1], "fit")) {
		char buf[256];
		error("coterie-mpi runs only 'fit'; use coterie for '%s'",
		      util_escape(argv[1], buf, sizeof buf, 1));
		return EXIT_USAGE;
	}
	int provided = 0;
	if (MPI_Init_thread(&argc, &argv, MPI_THREAD_SERIALIZED, &provided) != MPI_SUCCESS)
		return error("cannot start MPI"), 1;
	if (provided < MPI_THREAD_SERIALIZED) {
		error("this MPI cannot take calls from the fitting thread "
		      "(MPI_THREAD_SERIALIZED not provided)");
		MPI_Finalize();
		return 1;
	}
	struct mpi_group *g = mpi_group_new();
	if (!g) {
		error("out of memory");
		MPI_Abort(MPI_COMM_WORLD, 1);
	}
	sink_rank = mpi_group_rank(g);
	if (sink_rank > 0)
		util_set_sink(follower_sink);
	rc = cli_fit_in_group(argc - 1, argv + 1, mpi_group_cli(g));
	if (mpi_group_stranding(g)) {
		error("rank %u failed during the fit; ending every process", sink_rank);
		MPI_Abort(MPI_COMM_WORLD, rc ? rc : 1);
	}
	print_stats(g);
	mpi_group_free(g);
	MPI_Finalize();
	return rc;
}
