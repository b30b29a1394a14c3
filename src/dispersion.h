/* dispersion.h — hole subband dispersions E(k∥) of a stack in the 4-band or 6-band k·p
 * model (kp_hamiltonian.h), certified at every k∥ (kp_solve.h), each subband labelled by its
 * character at k∥ = 0; the 8-band model's electron and hole subbands in dispersion_kane.c
 * (its own header comment).  Internal definition of the public ew_dispersion.
 *
 * Which subbands: those bound at k∥ = 0, i.e. the eigenvalues (hole picture) below the hole
 * window top of bound.h (the lower of the heavy- and light-hole windows); at every k∥ the
 * same number of lowest eigenvalues is followed in energy order (a subband that disperses
 * into the barrier continuum stays on the list as the corresponding box state).  Every level
 * of the Luttinger–Kohn model is a Kramers pair (time reversal); pairs are the consecutive
 * eigenvalues 2j, 2j + 1 and a subband's energy is the pair's mean (both branches are kept:
 * a stack without inversion symmetry splits them at k∥ > 0).  Labels: the k∥ = 0 pair's
 * weights in the |3/2, ±3/2> (hh), |3/2, ±1/2> (lh) and |1/2, ±1/2> (so) components; the
 * largest names it, numbered from the band edge within its character (hh1, hh2, lh1, …). */
#ifndef EW_DISPERSION_H
#define EW_DISPERSION_H

#include "kp_hamiltonian.h"

struct ew_dispersion {
  ew_kp_model model;
  int direction;           /* 100 or 110 */
  int axial;
  size_t points;           /* k∥ samples */
  double *k_inv_nm;        /* [points] */
  size_t subbands;         /* Kramers pairs followed */
  char (*label)[16];       /* [subbands] "hh1", "lh1", "so1", … */
  int *character;          /* [subbands] 0 hh, 1 lh, 2 so, 3 e */
  double *weight;          /* [subbands × EW_DISP_CHARACTERS] k∥ = 0 weights of hh, lh, so, e */
  double *branch_eV;       /* [subbands × 2 × points] absolute energies (electron scale) */
  double *energy_eV;       /* [subbands × points] the pair means */
  size_t *certified;       /* [points] eigenvalues counted by the inertia at each k∥ */
  double window_eV;        /* absolute energy of the hole window top at k∥ = 0 */
  /* 8-band (0 otherwise): electron-side subbands (listed first, e1 upwards, then the hole
     side from the top down), the electron window top (absolute eV) and the k∥ = 0 gap
     reference between the two sides (absolute eV) */
  size_t electron_subbands;
  double window_e_eV, gap_ref_eV;
  double grid_step_nm;
  size_t nodes;
  size_t factorizations, solves, counts;
};

/* Compute d (cleared first; on failure left empty) for stack st with options o (checked
 * here: EW_ERR_USAGE). */
ew_status ew_dispersion_run(ew_dispersion *d, const ew_stack *st,
                            const ew_dispersion_options *o, ew_error *err);
/* The same, calling fn (may be NULL) after every k∥ point i with the eigenvectors there:
 * X column-major, 2 × d->subbands columns of dim = nodes × nb (B-normalised: Σ w |x|² = 1
 * with w the dual-cell lengths, nm), the Kramers pairs 2j, 2j + 1 (gain.c takes its momentum
 * matrix elements from them).  A nonzero return stops the run with that status. */
typedef ew_status (*ew_dispersion_vectors_fn)(void *ctx, size_t i, const double complex *X,
                                              size_t dim, int nb, const double *w,
                                              ew_error *err);
ew_status ew_dispersion_run_vectors(ew_dispersion *d, const ew_stack *st,
                                    const ew_dispersion_options *o,
                                    ew_dispersion_vectors_fn fn, void *ctx, ew_error *err);
/* Free d's arrays and zero it. */
void ew_dispersion_clear(ew_dispersion *d);

/* "hh", "lh", "so", "e" for a character 0, 1, 2, 3 */
const char *ew_dispersion_character_name(int c);
#define EW_DISP_CHARACTERS 4

/* shared by dispersion.c and dispersion_kane.c: the result arrays (EW_ERR_NOMEM), and the
 * label, character and weights of subband j from its k∥ = 0 Kramers pair X (two columns of
 * dim), numbered within its character by seen[] */
ew_status ew_dispersion_alloc(ew_dispersion *d, size_t points, size_t sub);
void ew_dispersion_label_pair(ew_dispersion *d, size_t j, const double complex *X, size_t dim,
                              int nb, const double *w, int seen[EW_DISP_CHARACTERS]);
/* The 8-band model (dispersion_kane.c): electron- and hole-side subbands around the gap. */
ew_status ew_dispersion_run_kane(ew_dispersion *d, const ew_stack *st,
                                 const ew_dispersion_options *o, ew_error *err);

#endif
