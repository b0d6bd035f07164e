/*
 * transport_internal.h - the diagnosis's transport step (transport.c).
 * Inside the library.
 */
#ifndef ARRANK_TRANSPORT_INTERNAL_H
#define ARRANK_TRANSPORT_INTERNAL_H

#include "arrank/units.h"
#include "verdict_work.h"

/* The transport criteria of the sample from its metadata: d->weisz_prater
   and d->mears at its hottest point; d->heat: Mears' interphase and
   Anderson's intraparticle heat numbers at every point of the final fit
   (the points of d->order not excluded), ea_J_mol being the final fit's
   apparent Ea, Prater's rise, the hot-spot caution (d->n_high_conversion
   and d->conversion_limit already set).  Rates in rate_unit (NULL: the
   sample's own unit).  u is the caller's unit database (NULL: skipped with
   a note saying units_why).  A metadata entry that cannot be read gets a
   note.  Sets wk->nomem when out of memory. */
void arrank_transport_criteria(arrank_dwork *wk, double ea_J_mol, const char *rate_unit,
                               arrank_units *u, const char *units_why);

/* The heat checks in plain words, appended to d->findings (a heat criterion
   above its limit, the hot-spot caution) and d->notes (the others, and the
   entries a check needs).  After arrank_transport_criteria. */
void arrank_transport_describe(arrank_dwork *wk);

/* Frees the texts the transport step wrote into d (not d itself). */
void arrank_transport_free(arrank_diagnosis *d);

#endif
