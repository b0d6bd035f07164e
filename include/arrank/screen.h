/*
 * arrank/screen.h - which points of a sample can enter an Arrhenius fit.
 *
 * One rule for the pipeline and the diagnosis: a point is usable when its
 * temperature is finite and above absolute zero and its rate is finite and
 * positive (its logarithm exists).  The reader refuses a file with a point
 * that is not, so every point of a sample without a problem is usable.
 */
#ifndef ARRANK_SCREEN_H
#define ARRANK_SCREEN_H

#include <stddef.h>

#include "arrank/campaign.h"

/* 1 when the point can enter a fit of ln r on 1/T. */
int arrank_screen_usable(const arrank_point *p);

/* used[i] = 1 for each usable point of s, 0 for the others
   (used: s->n_points bytes).  Returns the number of usable points. */
size_t arrank_screen_mark(const arrank_sample *s, unsigned char *used);

#endif
