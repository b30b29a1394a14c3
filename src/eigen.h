/* eigen.h — every eigenpair of a symmetric tridiagonal pencil (H, B), B diagonal positive,
 * in an energy window, with a certified count.
 *
 * Method (spectrum slicing + shift-invert):
 *  1. Count.  The number of eigenvalues below σ is the number of negative pivots of the
 *     unpivoted LDLᵀ factorization of T − σI, T = B^{−1/2} H B^{−1/2} (Sylvester's law of
 *     inertia; the Sturm sequence of a tridiagonal).  count(hi) − count(lo) certifies how
 *     many eigenvalues the window holds, independently of the eigen-solve.
 *  2. Isolate.  Bisection on the count splits the window into intervals holding one
 *     eigenvalue each (or a cluster narrower than the count can resolve, ~16 ε‖T‖).
 *  3. Shift-invert.  Inside each single-eigenvalue interval Newton's method on det(T − σ)
 *     (count and step from one pass of the recurrence, bisection when a step would leave the
 *     interval) brings σ within ~1e-12 eV of the eigenvalue; H − σB is factorized once by
 *     SuperLU there and inverse iteration x ← (H − σB)⁻¹ B x (one triangular solve pair per
 *     step) converges at the rate |λ − σ| / gap; the eigenvalue is the Rayleigh quotient.
 *     Clusters use the interval's midpoint and their vectors are B-orthogonalized.
 *  Values-only mode stops after step 2, bisecting each interval to 1e-12 eV.
 *  ew_eigen_values_near() serves the coarse grid of the error estimate: given good
 *  approximate vectors (the fine-grid eigenvectors sampled on the coarse nodes), each
 *  eigenvalue is the Rayleigh quotient θ, certified by the inertia (exactly one eigenvalue,
 *  the expected one, in (θ − γ, θ + γ)) and by the Kato–Temple bound |θ − λ| ≤ ‖r‖²/γ
 *  (T. Kato, J. Phys. Soc. Japan 4, 334 (1949)); where that bound is not tight enough the
 *  eigenvalue is bisected instead.
 *  Eigenvalues degenerate to working precision (decoupled identical wells) get the basis that
 *  is localised along z (see localise_degenerate in eigen.c).
 * The factorizations and solves go through superlu_adapter.h. */
#ifndef EW_EIGEN_H
#define EW_EIGEN_H

#include "hamiltonian.h"
#include "helper_thread.h"
#include "superlu_adapter.h" /* ew_sparse_tridiag_solve, for the callers of eigen.h */

typedef struct {
  size_t n;          /* problem size */
  size_t count;      /* eigenpairs returned == certified */
  size_t certified;  /* count(hi) − count(lo) from the inertia */
  double *values;    /* [count] ascending, eV */
  double *vectors;   /* [n × count] column j = eigenvector j, Bᵀ-normalised (xᵀBx = 1);
                        NULL in values-only mode */
  size_t factorizations, solves, counts; /* work done, for the benchmark */
  double *residual;  /* [count] relative residuals when the producer computed them (the
                        energy-dependent pencils of non-parabolic levels), else NULL */
} ew_eigenpairs;

/* All eigenpairs with lo < λ < hi.  want_vectors = 0: values only (bisection).
 * (input)  p: the pencil; lo < hi: window in eV
 * (output) out: filled; release with ew_eigenpairs_free.
 * Returns EW_OK, EW_ERR_NOMEM, or EW_ERR_NUMERIC (inverse iteration failed to converge to
 * the isolated eigenvalue: the message says which and how close it got). */
ew_status ew_eigen_window(const ew_pencil *p, double lo, double hi, int want_vectors,
                          ew_eigenpairs *out, ew_error *err);
/* The same with the caller's factorization workspace lu (ew_shift_lu_create(p->n); kept
 * between calls, so that the pencils of one grid share one pattern analysis and one L/U
 * storage); lu == NULL or of another size: a workspace of its own, as ew_eigen_window. */
ew_status ew_eigen_window_lu(const ew_pencil *p, double lo, double hi, int want_vectors,
                             ew_shift_lu *lu, ew_eigenpairs *out, ew_error *err);
/* The same with vectors, the single eigenvalues' inverse iterations offered to the idle
 * threads of a pass through assist (helper_thread.h; NULL: all on this thread); the same
 * bits. */
ew_status ew_eigen_window_assist(const ew_pencil *p, double lo, double hi, ew_shift_lu *lu,
                                 ew_assist *assist, ew_eigenpairs *out, ew_error *err);
void ew_eigenpairs_free(ew_eigenpairs *e);

/* The k lowest eigenvalues of p above lo, from approximate vectors guess[j·n …] (see
 * above).  values[k] receives them (NAN for an index the pencil does not have: a coarse grid
 * with fewer nodes than states); tol_eV is the accuracy wanted.  counts (may be NULL)
 * is incremented by the inertia counts used.  EW_OK or EW_ERR_NOMEM. */
ew_status ew_eigen_values_near(const ew_pencil *p, double lo, const double *guess, size_t k,
                               double tol_eV, double *values, size_t *counts, ew_error *err);

/* The k eigenvalues of p with 0-based indices first … first + k − 1 counted from −∞, all at
 * once: one bisection on the count isolates them (from the window lo < hi, widened when it
 * does not hold them), then Newton on the LDLᵀ recurrence inside each one's interval
 * (bisection for an unresolvable cluster), accurate to tol_eV.  values[k]; NAN for an index
 * the pencil does not have.  counts (may be NULL) is incremented by the counts used.
 * EW_OK or EW_ERR_NOMEM. */
ew_status ew_eigen_indices(const ew_pencil *p, size_t first, size_t k, double lo, double hi,
                           double tol_eV, double *values, size_t *counts, ew_error *err);

/* The same with the guesses read off fine-grid vectors instead of copied: guess j at coarse
 * node i is fine[j·nf + 2i + 1] (the coarse grid of every second node, nf >= 2 p->n + 1), so
 * that no copy of k coarse vectors is held (the superlattice's peak memory).  Same values
 * as ew_eigen_values_near on the sampled copy; EW_ERR_NUMERIC when nf is too small. */
ew_status ew_eigen_values_near_fine(const ew_pencil *p, double lo, const double *fine,
                                    size_t nf, size_t k, double tol_eV, double *values,
                                    size_t *counts, ew_error *err);

/* Number of eigenvalues of the pencil below sigma (inertia of H − σB). */
size_t ew_eigen_count_below(const ew_pencil *p, double sigma);

/* The eigenvalue of p with 0-based index idx counted from −∞ (Newton on the LDLᵀ
 * recurrence, guarded by the count), starting near guess; accurate to tol_eV.  NAN when
 * idx >= n. */
double ew_eigen_index(const ew_pencil *p, size_t idx, double guess, double tol_eV,
                      size_t *counts);

#endif
