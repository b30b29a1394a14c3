/* kp_inertia.h — the number of eigenvalues of a block-tridiagonal Hermitian pencil below a
 * shift, from the inertia of a block LDLᴴ factorisation of H − σB (Sylvester's law of
 * inertia; for the Schur complements of a block tridiagonal, E. V. Haynsworth, Linear
 * Algebra Appl. 1, 73 (1968): inertia(H − σB) = Σ inertia(D_i) with
 *   D_0 = A_0 − σ w_0,   D_{i+1} = A_{i+1} − σ w_{i+1} − C_iᴴ D_i⁻¹ C_i.
 * Each nb × nb pivot block D_i is factorised by LAPACK's zhetrf (Bunch–Kaufman), whose block
 * diagonal factor has D_i's inertia: a 1×1 pivot counts by its sign, a 2×2 pivot by its
 * determinant (< 0: one negative eigenvalue) and trace.  The block recurrence has no pivoting
 * between blocks; it is used at shifts placed between computed eigenvalues, away from them,
 * and an exactly singular block is reported so that the caller moves the shift. */
#ifndef EW_KP_INERTIA_H
#define EW_KP_INERTIA_H

#include "kp_hamiltonian.h"

typedef struct ew_kp_inertia ew_kp_inertia;

/* Workspace for blocks of nb (<= EW_KP_MAX_NB); NULL when out of memory. */
ew_kp_inertia *ew_kp_inertia_create(int nb);
void ew_kp_inertia_free(ew_kp_inertia *w);

/* *count = number of eigenvalues of (H, B) below sigma.  EW_OK, or EW_ERR_NUMERIC when a
 * pivot block is exactly singular (sigma is an eigenvalue of a leading section). */
ew_status ew_kp_count_below(ew_kp_inertia *w, const ew_kp_pencil *H, double sigma,
                            size_t *count, ew_error *err);

#endif
