/*
 * fcsr: strengths in compressed rows (the struct and its rules are in
 * include/coterie/fcsr.h).
 */
#include "coterie/fcsr.h"

#include <stdlib.h>
#include <string.h>

void fcsr_release(struct fcsr *f)
{
	if (!f)
		return;
	free(f->off);
	free(f->e);
	free(f->colsum);
	memset(f, 0, sizeof *f);
}
