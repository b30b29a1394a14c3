/* superlu_adapter.h — the one door to SuperLU: factor a shifted tridiagonal pencil H − σB once
 * and solve with it many times, and solve a general tridiagonal system.
 *
 * SuperLU 5 is given only valid input here (square, finite, tridiagonal).  Its memory and its
 * ABORT are routed back to this adapter (see superlu_adapter.c), so every failure inside
 * SuperLU comes back as a status: EW_ERR_NOMEM for memory, never an exit. */
#ifndef EW_SUPERLU_ADAPTER_H
#define EW_SUPERLU_ADAPTER_H

#include "hamiltonian.h"
#include "kp_hamiltonian.h"

/* A factorization workspace for the pencils of one pattern (n × n tridiagonal). */
typedef struct ew_shift_lu ew_shift_lu;

/* Workspace for pencils of size n (column order and elimination tree computed once: the
 * pattern never changes between shifts).  NULL when out of memory. */
ew_shift_lu *ew_shift_lu_create(size_t n);
void ew_shift_lu_free(ew_shift_lu *s);

/* Factor H − σB of p (p->n must be the workspace's n).
 * EW_OK; EW_ERR_NUMERIC when U has an exactly zero pivot (σ is an eigenvalue to working
 * precision: the caller perturbs σ); EW_ERR_NOMEM when SuperLU ran out of memory. */
ew_status ew_shift_lu_factor(ew_shift_lu *s, const ew_pencil *p, double sigma, ew_error *err);

/* x ← (H − σB)⁻¹ x in place with the last successful factorization.  EW_OK or EW_ERR_NOMEM. */
ew_status ew_shift_lu_solve(ew_shift_lu *s, double *x, ew_error *err);

/* Solve the general (not necessarily symmetric) tridiagonal system A x = rhs (partial
 * pivoting, natural column order): lower[i] = A(i+1, i), diag[i] = A(i, i),
 * upper[i] = A(i, i+1) (lower and upper have n − 1 entries).  rhs_inout is overwritten with x.
 * EW_OK, EW_ERR_NOMEM, or EW_ERR_NUMERIC (non-finite input, exactly singular matrix). */
ew_status ew_sparse_tridiag_solve(size_t n, const double *lower, const double *diag,
                                  const double *upper, double *rhs_inout, ew_error *err);

/* ---- complex Hermitian block-tridiagonal pencils (the k·p model, kp_hamiltonian.h) ----------
 * The same shift-invert service for H − σB of an ew_kp_pencil: SuperLU's complex LU (zgstrf,
 * partial pivoting, natural column order: the matrix is banded), solved with zgstrs for
 * several right-hand sides at once. */
typedef struct ew_zshift_lu ew_zshift_lu;
/* Workspace for pencils of n nodes with blocks of nb (the pattern is fixed); NULL when out of
 * memory or too large. */
ew_zshift_lu *ew_zshift_lu_create(size_t n, int nb);
void ew_zshift_lu_free(ew_zshift_lu *s);
/* Factor H − σB.  EW_OK; EW_ERR_NUMERIC for an exactly singular shift; EW_ERR_NOMEM. */
ew_status ew_zshift_lu_factor(ew_zshift_lu *s, const ew_kp_pencil *H, double sigma,
                              ew_error *err);
/* The same service for any fixed complex pattern (the periodic tridiagonal of miniband.c,
 * whose Bloch corners e^{±iqd} leave the block-tridiagonal pattern): dim × dim in compressed
 * columns, colptr[dim + 1] (colptr[0] = 0, colptr[dim] = nnz), rowind[nnz] (rows ascending
 * in each column; copied).  nb = 1.  NULL when out of memory or malformed. */
ew_zshift_lu *ew_zshift_lu_create_pattern(size_t dim, size_t nnz, const int *colptr,
                                          const int *rowind);
/* Factor the matrix with values[nnz] in the pattern's order (the caller has subtracted σB;
 * sigma only names the shift in messages).  Status as ew_zshift_lu_factor. */
ew_status ew_zshift_lu_factor_values(ew_zshift_lu *s, const double complex *values,
                                     double sigma, ew_error *err);
/* X ← (H − σB)⁻¹ X for nrhs columns of n·nb (column-major).  EW_OK or EW_ERR_NOMEM. */
ew_status ew_zshift_lu_solve(ew_zshift_lu *s, double complex *X, size_t nrhs, ew_error *err);

#endif
