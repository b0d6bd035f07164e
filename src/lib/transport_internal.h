/*
 * transport_internal.h - the diagnosis's transport step (transport.c).
 * Inside the library.
 */
#ifndef ARRANK_TRANSPORT_INTERNAL_H
#define ARRANK_TRANSPORT_INTERNAL_H

#include "arrank/units.h"
#include "verdict_work.h"

/* d->weisz_prater and d->mears of the sample from its metadata, at its
   hottest point; rates in rate_unit (NULL: the sample's own unit).  u is
   the caller's unit database (NULL: skipped with a note saying units_why).
   A metadata entry that cannot be read gets a note.  Sets wk->nomem when
   out of memory. */
void arrank_transport_criteria(arrank_dwork *wk, const char *rate_unit, arrank_units *u,
                               const char *units_why);

#endif
