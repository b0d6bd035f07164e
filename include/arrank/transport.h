/*
 * arrank/transport.h - the published numbers that tell whether transport
 * limits a catalyst's rate.  The diagnosis (diagnose.h) computes both for
 * every sample whose metadata give the inputs.
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

#endif
