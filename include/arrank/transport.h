/*
 * arrank/transport.h - the published numbers that tell whether transport
 * limits a catalyst's rate, mass and heat.  The diagnosis (diagnose.h)
 * computes them for every sample whose metadata give the inputs.
 */
#ifndef ARRANK_TRANSPORT_H
#define ARRANK_TRANSPORT_H

/*
 * Weisz-Prater observable, Phi = r_v R_p^2 / (D_e C_s) (Weisz & Prater,
 * Adv. Catal. 6:143, 1954): r_v rate per particle volume, mol/(m3 s); R_p
 * particle radius, m; D_e effective diffusivity, m2/s; C_s surface
 * concentration, mol/m3.  NAN unless every input is finite and positive.
 */
double arrank_transport_weisz_prater(double rate_mol_m3_s, double radius_m, double diff_m2_s,
                                     double conc_mol_m3);

/*
 * Mears number for external mass transfer, r_v R_p n / (k_c C_b) (Mears,
 * Ind. Eng. Chem. Process Des. Dev. 10:541, 1971, as tabulated by Madon &
 * Boudart, Ind. Eng. Chem. Fundam. 21:438, 1982): n reaction order, k_c film
 * coefficient, m/s; C_b bulk concentration, mol/m3.  NAN on bad input.
 */
double arrank_transport_mears(double rate_mol_m3_s, double radius_m, double order,
                              double film_m_s, double conc_mol_m3);

/*
 * Mears' interphase heat number, |dH| r_v R_p E / (h T_b^2 R) (Mears, Ind.
 * Eng. Chem. Process Des. Dev. 10:541, 1971, as tabulated by Madon &
 * Boudart 1982; below 0.15 the film's temperature difference changes the
 * rate by less than about 5 %): dH reaction enthalpy, J/mol (its sign is
 * ignored); r_v rate per particle volume, mol/(m3 s); R_p particle radius,
 * m; E activation energy, J/mol; h particle-to-fluid heat transfer
 * coefficient, W/(m2 K); T_b bulk temperature, K; R the gas constant.  NAN
 * unless dH is finite and every other input finite and positive.
 */
double arrank_transport_heat_mears(double enthalpy_J_mol, double rate_mol_m3_s, double radius_m,
                                   double ea_J_mol, double h_W_m2_K, double temp_K);

/*
 * Anderson's intraparticle heat number, |dH| r_v R_p^2 E / (lambda_e R
 * T_s^2): Anderson's criterion (Chem. Eng. Sci. 18:147, 1963, as tabulated
 * by Madon & Boudart 1982), |dH| r_v R_p^2 / (lambda_e T_s) < 0.75 R T_s / E,
 * divided through by its right-hand side, so the limit is 0.75.  lambda_e
 * effective thermal conductivity of the pellet, W/(m K); T_s surface
 * temperature, K; the rest as arrank_transport_heat_mears.  NAN on bad input.
 */
double arrank_transport_heat_anderson(double enthalpy_J_mol, double rate_mol_m3_s,
                                      double radius_m, double ea_J_mol, double lambda_W_m_K,
                                      double temp_K);

/*
 * Prater's largest temperature difference between a pellet's centre and its
 * surface, (-dH) D_e C_s / lambda_e, K, reached when the centre
 * concentration falls to zero (Prater, Chem. Eng. Sci. 8:284, 1958):
 * positive (centre hotter) for an exothermic reaction, dH < 0.  D_e
 * effective diffusivity, m2/s; C_s surface concentration, mol/m3.  NAN
 * unless dH is finite and the others finite and positive.
 */
double arrank_transport_prater_rise(double enthalpy_J_mol, double diff_m2_s, double conc_mol_m3,
                                    double lambda_W_m_K);

/*
 * Adiabatic temperature rise of the feed at conversion X, (-dH) y_A0 X /
 * c_p, K (an energy balance on the feed; common practice): y_A0 mole
 * fraction of the reactant in the feed, X fractional conversion, c_p molar
 * heat capacity of the feed, J/(mol K).  NAN unless dH is finite, y_A0 in
 * (0, 1], X in [0, 1] and c_p finite and positive.
 */
double arrank_transport_adiabatic_rise(double enthalpy_J_mol, double fraction, double conversion,
                                       double cp_J_mol_K);

#endif
