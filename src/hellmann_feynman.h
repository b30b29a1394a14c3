/* hellmann_feynman.h — first derivatives of a level's energy with respect to a layer's
 * thickness and to a layer's composition, from the solved state alone (Hellmann–Feynman
 * for parameters, a shape derivative for moving interfaces; derivation in the .c file). */
#ifndef EW_HELLMANN_FEYNMAN_H
#define EW_HELLMANN_FEYNMAN_H

#include <stddef.h>

#include "epiwell.h"
#include "materials.h" /* ew_bands */

/* Hellmann–Feynman derivatives of state s of a result (absolute energy scale, as reported):
 * dE/dt of layer k's thickness (eV/nm; every later interface and the outer wall move) and
 * dE/dx of layer k's composition given the layer's band parameters lo, hi at two
 * compositions span apart (eV per unit x).  Kane non-parabolic electrons are handled
 * (implicit differentiation of E = λ(H(E))).  NaN when the stack has an applied field or a
 * graded layer (the potential is then not constant in each layer). */
double ew_wf_hf_dthickness(const ew_result *res, size_t s, size_t k);
double ew_wf_hf_dparam(const ew_result *res, size_t s, size_t k, const ew_bands *lo,
                       const ew_bands *hi, double span);

#endif
