/*
 * mpi_group: the MPI side of a fit shared among processes
 * (include/coterie/mpi_group.h). Built into coterie-mpi only.
 *
 * The design is the simplest that keeps the one-machine bits: every
 * process loads the whole graph and holds the whole model, and runs the
 * same fit; sweep.c gives each its share of a block's rows and hands the
 * packed shares to gather() here, which makes every process's bytes
 * every process's (MPI_Allgather of the lengths, then MPI_Allgatherv of
 * the bytes). So each process applies the same rows in the same order
 * and its model is the one-process model bit for bit.
 *
 * Interrupts ride on the first message: each process sends its fit's
 * wish (fit_wish(): none, interrupt, stop) beside its length, and every
 * process acts on the largest at the same block (fit_agree()). A signal
 * to one process (rank 0, or the SIGTERM mpirun sends to all) thus ends
 * every process at the same point, and rank 0 writes the folder.
 *
 * Only standard MPI-3 calls (no Open MPI extensions), so MPICH builds it
 * too. Counts are int in MPI-3: a block's share over 2 GB is refused.
 *
 * The one thing a newcomer gets wrong: the exchanges are made by the
 * fitting thread, agree() and end() by the main thread; MPI allows that
 * at MPI_THREAD_SERIALIZED only because the main thread waits for the
 * fit (fit_wait()) between the last agree() and end().
 */
#include "coterie/mpi_group.h"

#include <limits.h>
#include <mpi.h>
#include <stdlib.h>
#include <string.h>

#include "cli/cli.h"
#include "coterie/fit.h"
#include "coterie/sweep.h"
#include "coterie/util.h"

struct mpi_group {
	MPI_Comm comm;
	int rank, size;
	struct fit *f;           /* the shared fit (its wishes), once share()d */
	struct sweep_group sg;
	struct cli_group cg;
	uint64_t *heads;         /* size x {length, wish} */
	size_t *lens;            /* size */
	int *counts, *displs;    /* size */
	unsigned char *buf;
	size_t cap;
	unsigned agreed;         /* agree() calls that every process passed */
	int ended;
	struct mpi_group_stats st;
};

static int group_gather(void *arg, const void *mine, size_t len, const unsigned char **all,
			const size_t **lens)
{
	struct mpi_group *g = arg;
	double t = MPI_Wtime();
	uint64_t head[2] = { len, g->f ? (uint64_t)fit_wish(g->f) : 0 };
	MPI_Allgather(head, 2, MPI_UINT64_T, g->heads, 2, MPI_UINT64_T, g->comm);
	uint64_t total = 0, wish = 0;
	for (int r = 0; r < g->size; r++) {
		uint64_t n = g->heads[2 * r];
		if (n > INT_MAX || total > (uint64_t)INT_MAX - n)
			return error("a block's rows exceed the 2 GB one MPI exchange can carry");
		g->lens[r] = (size_t)n;
		g->counts[r] = (int)n;
		g->displs[r] = (int)total;
		total += n;
		if (g->heads[2 * r + 1] > wish)
			wish = g->heads[2 * r + 1];
	}
	if (total > g->cap) {
		size_t cap = g->cap ? g->cap : 4096;
		while (cap < total)
			cap *= 2;
		unsigned char *nb = realloc(g->buf, cap);
		if (!nb)
			return error("out of memory exchanging rows");
		g->buf = nb;
		g->cap = cap;
	}
	MPI_Allgatherv(mine, (int)len, MPI_BYTE, g->buf, g->counts, g->displs, MPI_BYTE,
		       g->comm);
	if (wish && g->f)
		fit_agree(g->f, (int)wish);
	*all = g->buf;
	*lens = g->lens;
	g->st.gathers++;
	g->st.bytes_mine += len;
	g->st.bytes_all += total;
	g->st.seconds += MPI_Wtime() - t;
	return 0;
}

static int group_agree(void *arg, int ok)
{
	struct mpi_group *g = arg;
	int mine = ok != 0, all = 0;
	MPI_Allreduce(&mine, &all, 1, MPI_INT, MPI_MIN, g->comm);
	if (all)
		g->agreed++;
	return all;
}

static void group_share(void *arg, struct fit *f)
{
	struct mpi_group *g = arg;
	g->f = f;
	fit_share(f, &g->sg);
}

static int group_end(void *arg, int rc)
{
	struct mpi_group *g = arg;
	MPI_Bcast(&rc, 1, MPI_INT, 0, g->comm);
	g->ended = 1;
	return rc;
}

struct mpi_group *mpi_group_new(void)
{
	struct mpi_group *g = util_calloc(1, sizeof *g);
	if (!g)
		return NULL;
	MPI_Comm_dup(MPI_COMM_WORLD, &g->comm);
	MPI_Comm_rank(g->comm, &g->rank);
	MPI_Comm_size(g->comm, &g->size);
	size_t n = (size_t)g->size;
	g->heads = util_calloc(2 * n, sizeof *g->heads);
	g->lens = util_calloc(n, sizeof *g->lens);
	g->counts = util_calloc(n, sizeof *g->counts);
	g->displs = util_calloc(n, sizeof *g->displs);
	if (!g->heads || !g->lens || !g->counts || !g->displs) {
		mpi_group_free(g);
		return NULL;
	}
	g->sg = (struct sweep_group){ (unsigned)g->rank, (unsigned)g->size, group_gather, g };
	g->cg = (struct cli_group){ (unsigned)g->rank, (unsigned)g->size, group_agree,
				    group_share, group_end, g, &g->sg };
	return g;
}

void mpi_group_free(struct mpi_group *g)
{
	if (!g)
		return;
	MPI_Comm_free(&g->comm);
	UTIL_FREE_ALL(g->heads, g->lens, g->counts, g->displs, g->buf);
	free(g);
}

unsigned mpi_group_rank(const struct mpi_group *g)
{
	return (unsigned)g->rank;
}

unsigned mpi_group_size(const struct mpi_group *g)
{
	return (unsigned)g->size;
}

const struct cli_group *mpi_group_cli(struct mpi_group *g)
{
	return &g->cg;
}

int mpi_group_stranding(const struct mpi_group *g)
{
	return g->agreed >= 2 && !g->ended;
}

void mpi_group_stats(const struct mpi_group *g, struct mpi_group_stats *st)
{
	*st = g->st;
}
