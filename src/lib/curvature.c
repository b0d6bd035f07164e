/*
 * curvature.c - does the Arrhenius plot bend (curvature.h): the quadratic
 * test in 1/T and the local apparent Ea over windows of three neighbouring
 * temperatures.  The series-resistance model, the third look at a bend, is
 * series.c's.
 */
#include "curvature.h"

#include <math.h>
#include <stdlib.h>

#include "arrank/fit.h"
#include "regress.h"
#include "stats.h"

static const double R = ARRANK_R_J_MOL_K;

/* ---- the quadratic test ----------------------------------------------------- */

int arrank_curvature_quad(const arrank_dwork *wk, const size_t *idx, size_t n, arrank_quad_test *q)
{
    arrank_xscale sc;
    if (n < ARRANK_CURVE_MIN_POINTS ||
        arrank_regress_count_temps(wk->pt, idx, n) < ARRANK_CURVE_MIN_TEMPS ||
        arrank_regress_scale(wk, idx, n, &sc) != 0)
        return -1;
    double b[3], cov[9], rss;
    if (arrank_regress_quad(wk, idx, n, &sc, b, cov, &rss) != 3)
        return -1;
    q->dof = (double)n - 3.0;
    double se = sqrt(cov[8]);
    q->t = se > 0 ? b[2] / se : (b[2] < 0 ? -INFINITY : b[2] > 0 ? INFINITY : 0.0);
    q->p = arrank_stats_t_p(q->t, q->dof);
    q->c_K2 = b[2] / (sc.sx * sc.sx);
    q->c_se_K2 = se / (sc.sx * sc.sx);
    double xmin = INFINITY, xmax = -INFINITY;
    for (size_t k = 0; k < n; k++) {
        xmin = fmin(xmin, wk->x[idx[k]]);
        xmax = fmax(xmax, wk->x[idx[k]]);
    }
    double b1 = b[1] / sc.sx;
    /* E(T) = -R dy/dx = -R (b1 + 2 c (x - xm)) (DOMAIN notes, local slopes) */
    q->ea_cold = -R * (b1 + 2.0 * q->c_K2 * (xmax - sc.xm));
    q->ea_hot = -R * (b1 + 2.0 * q->c_K2 * (xmin - sc.xm));
    return 0;
}

int arrank_curvature_bends_down(const arrank_quad_test *q)
{
    return q->p < ARRANK_CURVE_LEVEL && q->t < 0;
}

/* ---- local apparent Ea ------------------------------------------------------ */

/* Windows of three neighbouring temperatures over sorted idx with groups g. */
void arrank_curvature_local(arrank_dwork *wk, const size_t *idx, const size_t *g, size_t n,
                            size_t n_groups, arrank_curvature *cv)
{
    if (n_groups < 3)
        return;
    size_t nw = n_groups - 2;
    cv->local = calloc(nw, sizeof *cv->local);
    if (!cv->local) {
        wk->nomem = 1;
        return;
    }
    /* g rises along idx, so window k (groups k..k+2) is the run idx[lo..hi):
       two pointers that only move forward keep this linear in n */
    size_t lo = 0, hi = 0;
    for (size_t k = 0; k < nw; k++) {
        while (lo < n && g[lo] < k)
            lo++;
        if (hi < lo)
            hi = lo;
        while (hi < n && g[hi] <= k + 2)
            hi++;
        const size_t *sel = idx + lo, m = hi - lo;
        arrank_local_ea *le = &cv->local[k];
        arrank_line lf;
        le->n_points = m;
        le->temp_lo_K = wk->pt[sel[0]].temp_K;
        le->temp_hi_K = wk->pt[sel[m - 1]].temp_K;
        le->ea_J_mol = le->ea_se_J_mol = le->temp_mid_K = NAN;
        if (arrank_regress_line(wk, sel, m, &lf) == 0) {
            le->ea_J_mol = lf.ea_J_mol;
            le->ea_se_J_mol = lf.dof > 0 ? lf.ea_se_J_mol : NAN;
            le->temp_mid_K = 1.0 / lf.sc.xm;
        }
    }
    cv->n_local = nw;
}

/* Local window index for group gi. */
size_t arrank_curvature_window_of(size_t gi, size_t n_groups)
{
    size_t k = gi > 0 ? gi - 1 : 0;
    return k + 2 < n_groups ? k : n_groups - 3;
}
