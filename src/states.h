/* states.h — from a band's eigenpairs to the states of a result: the field box-state
 * filter, the sign convention, Richardson's extrapolation with its error estimate, labels,
 * the layer each state lives in, and the in-plane masses. */
#ifndef EW_STATES_H
#define EW_STATES_H

#include "eigen.h"
#include "result.h"

/* Richardson needs the asymptotic regime: a coarse value further than this fraction of the
 * level's height above the potential minimum from the fine one gives no estimate (states.c). */
#define EW_RICHARDSON_MAX_REL 0.02

/* Fill r->states, r->psi, r->mean_inv_mass, r->n_states, r->band_count, r->dropped,
 * r->unestimated (and a warning per band with dropped box states) from the fine eigenpairs
 * of each band and, where r->opt.error_estimate, their coarse-grid values
 * coarse[b][0 … n_coarse[b] − 1] (NULL, 0: none).  The vectors move into r->psi band by band
 * while each band's block is shrunk and freed behind the copy (peak memory: about one set
 * of vectors, not two); every fine[b].vectors moved is NULL on return (the caller still
 * frees the rest of fine[] as before). */
/* The sign convention: psi's largest lobe positive, so that pictures and overlaps repeat.
 * Lobes within EW_SIGN_TIE_REL of the largest count as equal and the first of them (nearest
 * the first node) decides: an odd state of a symmetric well has two lobes equal to rounding,
 * and the larger of the two would be a coin toss (a change of 1e-13 eV in the eigenvalue
 * flipped a picture's e2). */
#define EW_SIGN_TIE_REL 1e-6
void ew_fix_sign(double *psi, size_t n);

ew_status ew_states_build(ew_result *r, ew_eigenpairs fine[EW_BAND_COUNT],
                          double *const coarse[EW_BAND_COUNT],
                          const size_t n_coarse[EW_BAND_COUNT], ew_error *err);

#endif
