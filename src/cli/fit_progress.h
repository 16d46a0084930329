/*
 * cli/fit_progress: the progress line `coterie fit` prints while it
 * watches the fit (src/cli/fit_progress.c). Private to src/cli/.
 */
#ifndef COTERIE_CLI_FIT_PROGRESS_H
#define COTERIE_CLI_FIT_PROGRESS_H

#include <stdint.h>

#include "coterie/fit.h"

/* The state between two lines; set tty (stderr is a terminal) and quiet
 * (print nothing), the rest zero. */
struct fit_progress {
	int tty;
	int quiet;
	double last_print;
	uint32_t last_sweep;
	uint32_t last_start;
	int line_open;
};

/* Show snapshot s (borrowed): redraw the line on a terminal, else print a
 * line when due; final: the fit has ended (the line is always shown, and
 * names the start kept). Nothing when quiet or before the first sweep. */
void fit_progress_show(struct fit_progress *pr, const struct snapshot *s, int final);
/* End a line left open on the terminal, before another message. */
void fit_progress_break(struct fit_progress *pr);

#endif
