/*
 * arrank/rates.h - rates from a flow reactor's conversion.
 *
 * The reader derives a sample's rates with this formula when its file has a
 * conversion column and no rate column; it lives here, below the reader, so
 * that the formula is written once.
 */
#ifndef ARRANK_RATES_H
#define ARRANK_RATES_H

#include <stddef.h>

#include "arrank/error.h"

/*
 * Rates from a flow reactor's conversion, per point i < n:
 *   differential (integral = 0):  r = F y X / W
 *   integral, first order plug flow (integral = 1):  r = F y ln(1/(1 - X)) / W,
 * i.e. the first-order rate constant k_w = (Q/W) ln(1/(1 - X)) times the feed
 * concentration (Fogler, Elements of Chemical Reaction Engineering, plug-flow
 * design equation; no volume change).
 * conversion[i]: fraction 0 <= X < 1; flow_mol_s[i]: total molar feed flow,
 * mol/s; mole_fraction[i]: reactant mole fraction in the feed, 0 < y <= 1;
 * mass_kg[i]: catalyst mass, kg.  rate_mol_kg_s[n] receives mol/(kg s).
 * EINVAL naming the first bad entry.
 */
arrank_status arrank_rates_derive(const double *conversion, const double *flow_mol_s,
                                  const double *mole_fraction, const double *mass_kg, size_t n,
                                  int integral, double *rate_mol_kg_s, arrank_error *err);

#endif
