/* result.h — internal definition of ew_result, one solved stack, and of its self-consistent
 * part.  Every pass fills or reads it in one direction: the Schrödinger pass (schrodinger.c)
 * builds grid, states, observables and lines; the self-consistent loop (self_consistent.c)
 * attaches the Poisson quantities; passes over a finished result (exciton.c) fill the
 * line fields that need the finished states. */
#ifndef EW_RESULT_H
#define EW_RESULT_H

#include "grid.h"

/* Self-consistent Schrödinger–Poisson quantities of a result (see poisson.h for the model;
 * everything here in the cm units named in the fields). */
struct ew_sp_info {
  double fermi_eV;          /* Fermi level (with a bias: of the first face), absolute eV */
  double fermi_last_eV;     /* Fermi level of the last face (= fermi_eV without bias) */
  double temperature_K;     /* temperature used for the occupations (floored at 1 K) */
  int iterations;           /* outer iterations done */
  double residual_eV;       /* max |ΔU| of the last outer iteration */
  size_t n_states;
  double *sheet_cm2;        /* [n_states] electrons (e) or holes (hh, lh) per state, cm^-2 */
  size_t n_lines;
  double *depol_eV;         /* [n_lines] depolarisation shift Ẽ − E, eV (NAN: interband) */
  size_t n;                 /* nodes */
  double *prof[EW_SP_PROFILE_COUNT]; /* [n] each: see ew_sp_profile in epiwell.h */
  double electrons_cm2, holes_cm2;   /* ∫ n dz, ∫ p dz over the stack */
  double electrons_bound_cm2, holes_bound_cm2; /* in the subbands (sum of sheet_cm2) */
  double donors_ion_cm2, acceptors_ion_cm2;    /* ∫ N_D⁺ dz, ∫ N_A⁻ dz */
};
typedef struct ew_sp_info ew_sp_info;

struct ew_result {
  const ew_stack *stack;   /* borrowed: must outlive the result */
  ew_options opt;
  double step_nm;          /* requested step (cells are at most this long) */
  ew_grid *grid;           /* fine grid */
  size_t n_states;
  ew_state *states;        /* e…, hh…, lh…, each band ascending in confinement */
  double *psi;             /* [grid->n × n_states] */
  double *mean_inv_mass;   /* [n_states] ⟨m0/m⟩ in the discrete Thomas–Reiche–Kuhn form
                              (ew_obs_inverse_mass_M; Kane electrons: the masses at the
                              state's own energy), for oscillator strengths */
  size_t n_lines;
  ew_line *lines;
  size_t band_count[EW_BAND_COUNT];
  double window_eV[EW_BAND_COUNT]; /* upper end of the bound window, absolute eV */
  size_t work_factorizations, work_solves, work_counts;
  int nonparabolic;                /* electrons solved with the Kane mass */
  size_t unestimated;              /* states the coarse grid could not hold (no estimate) */
  size_t dropped[EW_BAND_COUNT];   /* box states of a field-tilted continuum left out */
  size_t n_warnings;
  char (*warnings)[EW_WARNING_MAX];
  const char **warning_codes;      /* [n_warnings] stable kebab-case codes (static strings;
                                      README "Warnings" lists them) */
  ew_sp_info *sp;                  /* self-consistent Schrödinger–Poisson results (owned;
                                      NULL for a plain solve) */
};

/* Append a printf-formatted warning with its machine-readable code (a string with static
 * storage, kebab-case, listed in README "Warnings") to r; returns 0 when out of memory. */
int ew_result_warn_code(ew_result *r, const char *code, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 3, 4)))
#endif
    ;
/* The same with the code "self-consistent": the entry of the self-consistent solve's
 * warnings (poisson.c), which do not name a finer code yet. */
int ew_result_warn(ew_result *r, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;

/* Room for a result's distinct warning codes joined by ';' (sweeps, matches, tolerances). */
#define EW_WARNING_CODES_MAX 256
/* The distinct codes of r's warnings in order of first appearance, joined by ';' ("" when
 * none); a code that would not fit whole is left out. */
void ew_result_warning_codes_join(const ew_result *r, char *buf, size_t size);

/* Release a result's self-consistent information; NULL is a no-op. */
void ew_sp_info_free(ew_sp_info *sp);

#endif
