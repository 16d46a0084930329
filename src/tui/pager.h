/*
 * tui/pager: pages of the weak-edge and missing-link lists, fetched on a
 * worker thread (see pager.c). No curses.
 */
#ifndef COTERIE_TUI_PAGER_H
#define COTERIE_TUI_PAGER_H

#include <pthread.h>
#include <stddef.h>
#include <stdint.h>

struct graph;
struct snapshot;

enum edges_mode { EDGES_WEAK = 0, EDGES_MISSING };

struct page_row {
	uint32_t u, v;  /* u the member; v its neighbour (or the other member) */
	double prob;
	int outside;    /* v is not a member (weak edges only) */
};

struct page_req {
	unsigned long id;
	struct snapshot *snap;   /* a reference the worker releases */
	const struct graph *g;   /* borrowed */
	uint32_t comm_id;
	enum edges_mode mode;
	size_t off, limit;
	unsigned long gen;       /* the view's snapshot generation at the time */
};

struct page_res {
	unsigned long id;
	struct page_row *rows;   /* n rows; the taker frees with free() */
	size_t n, total, off;
	uint32_t comm_id;
	enum edges_mode mode;
	unsigned long gen;
	int failed;
};

struct pager {
	pthread_t thread;
	int running;
	pthread_mutex_t lock;
	pthread_cond_t cond;
	int quit;
	int has_req;
	struct page_req req;
	int has_res;
	struct page_res res;
	int fd[2];
};

/* Start the worker. Returns 0 or -1 (reported). */
int pager_start(struct pager *p);
/* Stop and join it, releasing whatever is pending. */
void pager_stop(struct pager *p);
/* Ask for a page; takes ownership of rq->snap. Replaces a request that
 * has not started yet. */
void pager_submit(struct pager *p, const struct page_req *rq);
/* The newest answer, if one came (1); the caller owns out->rows. */
int pager_take(struct pager *p, struct page_res *out);
/* Readable when an answer is waiting. */
int pager_fd(const struct pager *p);
/* Answer a request on the calling thread (rq->snap borrowed); the caller
 * frees res->rows with free(). */
void pager_answer(const struct page_req *rq, struct page_res *res);

#endif
