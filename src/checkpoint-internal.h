/*
 * What the checkpoint writer (checkpoint.c) and reader (checkpoint_read.c)
 * share: the layout's sizes and the validators. Each validator returns
 * NULL when all is well, or a description of the first problem written
 * into why (cap bytes). Not for other modules.
 */
#ifndef COTERIE_CHECKPOINT_INTERNAL_H
#define COTERIE_CHECKPOINT_INTERNAL_H

#include <stddef.h>
#include <stdint.h>

#include "coterie/checkpoint.h"

#define CK_MAGIC "COTERIE\x1a"
#define CK_MAGIC_LEN 8
#define CK_HEADER_LEN 24   /* magic, version, reserved, fingerprint */
#define CK_SUM_LEN 8
#define CK_SECTION_HEAD 12 /* tag and u64 length */
#define CK_PARM_LEN_V1 44
#define CK_PARM_LEN 52
#define CK_STAT_LEN 28
#define CK_TRACE_POINT 20
#define CK_ENTRY 12
#define CK_MAX_THREADS 65536u /* a sanity bound on a stored thread count */
#define CK_MAX_STARTS 1000000u /* and on a stored start count */
#define CK_RSUM_HEAD 16      /* start, phase, sweep, plateau_sweep */
#define CK_RSUM_BEST 24      /* best sweep, plateau, refined, state, loglik */

#define CK_LOGLIK_SLACK 1e-9 /* a log-likelihood above this is not one (it is <= 0) */

/* Parameters: each field in its range (epsilon 0 means "the default"). */
const char *checkpoint_check_params(const struct fit_params *p, char *why, size_t cap);
/* The STAT section against p: sweep <= p->max_sweeps, plateau_sweep <=
 * sweep, a known state, seconds finite >= 0, epsilon in (0, 1). */
const char *checkpoint_check_state(const struct fit_params *p, uint32_t sweep,
				   uint32_t plateau_sweep, uint32_t state, double seconds,
				   double epsilon, char *why, size_t cap);
/* A trace of n points ending at sweep (when not empty), its sweeps
 * increasing, times finite >= 0, log-likelihoods finite and <= 0. */
const char *checkpoint_check_trace(const struct trace_point *t, uint32_t n, uint32_t sweep,
				   char *why, size_t cap);
/* Strengths: shape, offsets, and every entry. colsum is not read. */
const char *checkpoint_check_strengths(const struct fcsr *F, char *why, size_t cap);
/* A savepoint of a graph of n nodes fitted with p: each part's sweeps
 * within p->max_sweeps, its trace and strengths as above. */
const char *checkpoint_check_resume(const struct fit_savepoint *r, uint32_t n,
				    const struct fit_params *p, char *why, size_t cap);

#endif
