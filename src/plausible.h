/* plausible.h — the one table of plausibility limits for material parameters: the values a
 * catalogue file may give (catalogue.c, exit 3 with the file:line of the value) and the
 * resolved band parameters of every layer after alloy bowing, temperature and strain
 * (stack.c, exit 2 with the layer's file:line).  Limits are far outside every III–V value of
 * the catalogue's source (I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, J. Appl. Phys. 89,
 * 5815 (2001)) and far inside what breaks the arithmetic: a mass of 1e307 m0 or a
 * permittivity of 1e308 gave NaNs and "bound" levels by the hundred (issue 18).  Internal. */
#ifndef EW_PLAUSIBLE_H
#define EW_PLAUSIBLE_H

#include <stddef.h>

#include "alloy.h"
#include "catalogue.h"

/* Band edges on the absolute scale (the GaAs valence-band maximum is at -0.80 eV), eV. */
#define EW_PLAUSIBLE_EDGE_EV 10.0
/* Any effective mass, m0 (InSb's electron 0.0135, the heaviest hole masses below 2). */
#define EW_PLAUSIBLE_MASS_MIN 1e-3
#define EW_PLAUSIBLE_MASS_MAX 100.0
/* Static relative permittivity (III–V: 8.2 AlP to 16.8 InSb). */
#define EW_PLAUSIBLE_EPS_MIN 1.0
#define EW_PLAUSIBLE_EPS_MAX 100.0
/* Lattice constant, nm (III–V zincblende: 0.545 GaP to 0.648 InSb). */
#define EW_PLAUSIBLE_A_MIN_NM 0.3
#define EW_PLAUSIBLE_A_MAX_NM 0.8

/* The range [*lo, *hi] a binary's value of parameter p must lie in (units of catalogue.h). */
void ew_param_range(ew_param p, double *lo, double *hi);

/* 1 when the resolved band parameters are plausible; otherwise 0 with what is wrong in why
 * ("electron mass me = 2.5e+307 m0 is outside [0.001, 100] m0"). */
int ew_bands_plausible(const ew_bands *b, char *why, size_t size);

#endif
