/*
 * rates.c - rates from conversion (include/arrank/rates.h).
 */
#include "arrank/rates.h"

#include <math.h>

arrank_status arrank_rates_derive(const double *conversion, const double *flow_mol_s,
                                  const double *mole_fraction, const double *mass_kg, size_t n,
                                  int integral, double *rate_mol_kg_s, arrank_error *err)
{
    for (size_t i = 0; i < n; i++) {
        double X = conversion[i], F = flow_mol_s[i], y = mole_fraction[i], W = mass_kg[i];
        if (!(isfinite(X) && X >= 0.0 && X < 1.0))
            return arrank_errorf(err, ARRANK_EINVAL,
                                 "conversion %g at point %zu is not a fraction in [0, 1)", X,
                                 i + 1);
        if (!(isfinite(F) && F > 0.0))
            return arrank_errorf(err, ARRANK_EINVAL, "feed flow %g at point %zu is not positive",
                                 F, i + 1);
        if (!(isfinite(y) && y > 0.0 && y <= 1.0))
            return arrank_errorf(err, ARRANK_EINVAL,
                                 "mole fraction %g at point %zu is not in (0, 1]", y, i + 1);
        if (!(isfinite(W) && W > 0.0))
            return arrank_errorf(err, ARRANK_EINVAL,
                                 "catalyst mass %g at point %zu is not positive", W, i + 1);
        /* differential: r = F_A0 X / W; integral first order: -ln(1 - X) in
           place of X (plug-flow design equation; DOMAIN notes, rate data) */
        double ext = integral ? -log1p(-X) : X;
        rate_mol_kg_s[i] = F * y * ext / W;
    }
    return ARRANK_OK;
}
