/*
 * screen.c - which points are usable (include/arrank/screen.h).
 */
#include "arrank/screen.h"

#include <math.h>

int arrank_screen_usable(const arrank_point *p)
{
    return p->temp_K > 0 && isfinite(p->temp_K) && p->rate > 0 && isfinite(p->rate);
}

size_t arrank_screen_mark(const arrank_sample *s, unsigned char *used)
{
    size_t n = 0;
    for (size_t i = 0; i < s->n_points; i++) {
        used[i] = (unsigned char)arrank_screen_usable(&s->points[i]);
        n += used[i];
    }
    return n;
}
