/*
 * arrank/groups.h - groups of ranked samples that cannot be told apart:
 * pairwise tests with Holm's correction.
 *
 * Group rule (arrank_groups_run): the samples are taken in rank order, best
 * first.  Rank 1 leads group 1.  Walking down the ranks, a sample joins the
 * current group when its difference from the group's leader (the group's best
 * member) is not significant after Holm's correction; otherwise it starts and
 * leads a new group.  So every member of a group is indistinguishable from its
 * leader at the stated confidence, and each leader is significantly worse
 * than the leader before it.  Two members of one group may still differ from
 * each other.  Holm's family is every pair among the first
 * ARRANK_GROUP_MAX ranked samples (at most 124,750 tests); samples ranked
 * below that are not grouped (group 0), so a 10,000-sample campaign does not
 * build 5e7 p-values.
 */
#ifndef ARRANK_GROUPS_H
#define ARRANK_GROUPS_H

#include <stddef.h>

#include "arrank/error.h"

/* Ranked samples that take part in the groups (see the rule above). */
#define ARRANK_GROUP_MAX 500

/*
 * Holm's step-down adjusted p-values (Holm, Scand. J. Statist. 6:65, 1979):
 * with p sorted ascending p_(1) <= ... <= p_(m),
 * adj_(k) = max_{j <= k} min(1, (m - j + 1) p_(j)); hypothesis k is rejected at
 * level alpha when adj_(k) <= alpha, which is Holm's procedure.  p[m] in any
 * order, adj[m] in the same order (may alias p).  EINVAL for a p outside
 * [0, 1]; ENOMEM.
 */
arrank_status arrank_groups_holm(const double *p, size_t m, double *adj, arrank_error *err);

/*
 * Groups by the rule at the top of this header.  key[n], key_se[n] and dof[n]
 * (INFINITY for a z test) in rank order, best (largest key) first.  The test
 * of i against j: d = key_i - key_j, se = sqrt(se_i^2 + se_j^2) (independent
 * samples), two-sided p from t with the Welch-Satterthwaite degrees of freedom
 * (Welch, Biometrika 34:28, 1947), or from the normal when both dof are
 * infinite.  alpha = 1 - confidence.  Output group[n] (0 beyond
 * ARRANK_GROUP_MAX); *n_tests (may be NULL) the size of Holm's family.
 */
arrank_status arrank_groups_run(const double *key, const double *key_se, const double *dof,
                                size_t n, double alpha, int *group, size_t *n_tests,
                                arrank_error *err);

#endif
