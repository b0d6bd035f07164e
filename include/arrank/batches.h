/*
 * arrank/batches.h - several campaigns read as one: batches tested months
 * apart, or on two rigs, ranked together (README "Several campaigns").
 *
 * arrank_batches_merge takes campaigns loaded one by one
 * (arrank_campaign_load_with) and makes one campaign of them: the samples in
 * the order of the campaigns, each campaign's in its own order; rates in the
 * first campaign's report unit; a sample whose id occurs in more than one
 * campaign is renamed "CAMPAIGN/ID" (its own id stays in part_ids).  Which
 * campaign each sample came from is in part_of and part_names
 * (arrank/campaign.h).
 */
#ifndef ARRANK_BATCHES_H
#define ARRANK_BATCHES_H

#include <stddef.h>

#include "arrank/campaign.h"
#include "arrank/error.h"
#include "arrank/units.h"

/* Campaigns in one run, at most. */
#define ARRANK_BATCHES_MAX 64

/*
 * Merge parts[n] (n >= 2) into *out.  The parts are taken over: on return,
 * success or not, each parts[i] has been freed and set to NULL.  Rates of a
 * campaign whose report unit differs are converted to the first one's with
 * the unit database; a campaign whose rates have another dimension (per
 * mass against turnover frequency, per area) is EDATA naming both.  Two
 * campaigns giving different reference ids in campaign.ini are EDATA.  The
 * operating temperature and confidence are the first campaign's that sets
 * them (a note names any other value); title "A + B"; name "A+B".
 */
arrank_status arrank_batches_merge(arrank_campaign **parts, size_t n, arrank_units *units,
                                   arrank_campaign **out, arrank_error *err);

#endif
