/*
 * mpi_group: the processes of one `coterie-mpi fit` (src/mpi_group.c, built
 * into coterie-mpi only; this header names no MPI type). It is the
 * transport behind sweep.h's struct sweep_group and cli.h's struct
 * cli_group: every exchange is a collective over MPI_COMM_WORLD, made
 * by one thread at a time (MPI_THREAD_SERIALIZED): the main thread
 * before and after the fit, the fitting thread during it.
 */
#ifndef COTERIE_MPI_GROUP_H
#define COTERIE_MPI_GROUP_H

#include <stdint.h>

struct cli_group;
struct fit;
struct mpi_group;

/* What this process has exchanged so far. */
struct mpi_group_stats {
	uint64_t gathers;       /* row and part exchanges */
	uint64_t bytes_mine;    /* bytes this process contributed */
	uint64_t bytes_all;     /* bytes every process received (all shares) */
	double seconds;         /* wall time inside the exchanges */
};

/* The group of every process of the job (call after MPI_Init_thread());
 * NULL when out of memory. Free with mpi_group_free(). */
struct mpi_group *mpi_group_new(void);
void mpi_group_free(struct mpi_group *g);
unsigned mpi_group_rank(const struct mpi_group *g);
unsigned mpi_group_size(const struct mpi_group *g);
/* The hooks cli_fit_in_group() takes (owned by g). */
const struct cli_group *mpi_group_cli(struct mpi_group *g);
/* 1 once the processes agreed to fit but the fit has not ended on this
 * one: leaving now would strand the others in an exchange. */
int mpi_group_stranding(const struct mpi_group *g);
void mpi_group_stats(const struct mpi_group *g, struct mpi_group_stats *st);

#endif
