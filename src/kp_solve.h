/* kp_solve.h — the lowest eigenpairs of a k·p pencil (kp_hamiltonian.h) with a certified
 * count, by shift-invert subspace iteration through a block-tridiagonal LU (kp_blocklu.h;
 * SuperLU's pivoting complex LU, superlu_adapter.h, when the blocks' elements grow).
 *
 * Method.  H − σB is factorised once at a shift σ below the
 * wanted eigenvalues; a block of p = m + guard vectors is iterated X ← (H − σB)⁻¹ B X with a
 * Rayleigh–Ritz step on (H, B) after every solve (LAPACK zhegv for the small p × p pencil)
 * until the m lowest Ritz pairs have B⁻¹-norm residuals ‖Hx − θBx‖ below tol (then
 * |θ − λ| ≤ ‖r‖²/gap, Kato–Temple).  The block converges at the rate (λ_m − σ)/(λ_{p+1} − σ)
 * per solve (Y. Saad, Numerical Methods for Large Eigenvalue Problems, 2nd ed. (SIAM, 2011),
 * ch. 5); a dispersion passes each k∥'s vectors on as the next one's start, so few solves are
 * needed: each Kramers pair is then refined by inverse iteration at its own Rayleigh quotient
 * with a Rayleigh–Ritz step of its own (pairs within 1 meV together; the block's step when
 * two pairs' residual intervals overlap, Kahan's bound).  The count is then certified by the
 * block LDLᴴ inertia (kp_inertia.h) at σ and at a cut just above the m-th Ritz value:
 * exactly m eigenvalues lie between them, so none was missed and none is counted twice
 * (Kramers pairs included).  A higher count (a level the block missed) is located by
 * bisection on the counts and brought in by inverse iteration at it. */
#ifndef EW_KP_SOLVE_H
#define EW_KP_SOLVE_H

#include "kp_inertia.h"
#include "superlu_adapter.h"

typedef struct ew_kp_solver ew_kp_solver;

/* A solver for pencils of n nodes and blocks of nb, keeping up to p vectors; NULL when out of
 * memory. */
ew_kp_solver *ew_kp_solver_create(size_t n, int nb, size_t p);
void ew_kp_solver_free(ew_kp_solver *s);

/* The m lowest eigenpairs of H above lo (m + guard <= p, m >= 1).  The solver's block
 * holds the start vectors (a fixed pseudo-random block after create, the last result after a
 * call) and the result: column j of ew_kp_solver_vectors is eigenvector j (B-normalised).
 * values[m] (out) ascending; *certified (out) = count(cut) − count(lo), which equals m on
 * success.  EW_OK; EW_ERR_NUMERIC when the iteration does not converge or the count
 * disagrees; EW_ERR_NOMEM. */
ew_status ew_kp_lowest(ew_kp_solver *s, const ew_kp_pencil *H, double lo, size_t m,
                       double *values, size_t *certified, ew_error *err);
/* Interior window (the 8-band model, whose spectrum lies on both sides of the gap): the mb
 * highest eigenvalues below ref and the ma lowest above it, shift-invert at sigma (the
 * window's expected centre, so that the window's levels are the ones nearest to it).
 * values[mb + ma] ascending, vectors as above (columns from ew_kp_window_column on).
 * Certified by three counts: with c = count(ref), count(lo) = c − mb and count(hi) = c + ma
 * at cuts just outside the first and last values (*certified = mb + ma then).  EW_OK;
 * EW_ERR_NUMERIC; EW_ERR_NOMEM. */
ew_status ew_kp_around(ew_kp_solver *s, const ew_kp_pencil *H, double ref, size_t mb,
                       size_t ma, double sigma, double *values, size_t *certified,
                       ew_error *err);
/* The block column of the first window value after ew_kp_around. */
size_t ew_kp_window_column(const ew_kp_solver *s);
const double complex *ew_kp_solver_vectors(const ew_kp_solver *s);
/* The residual tolerance of the m wanted pairs (B⁻¹ norm, eV; default 1e-8): the eigenvalue
 * error is at most tol²/gap (Kato–Temple). */
void ew_kp_solver_set_tol(ew_kp_solver *s, double tol_eV);
/* The block (dim × p, column-major) for the caller to write good start vectors into (the
 * next call then begins with a Rayleigh–Ritz step on them instead of the iteration from the
 * pseudo-random block; a wrong start costs time, never the result: the count decides). */
double complex *ew_kp_solver_start(ew_kp_solver *s);

/* Work done so far, for the benchmark. */
void ew_kp_solver_work(const ew_kp_solver *s, size_t *factorizations, size_t *solves,
                       size_t *counts);

#endif
