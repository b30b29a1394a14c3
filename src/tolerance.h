/* tolerance.h — growth tolerances: how far every level and main line moves for one monolayer
 * more or less of each layer and for a composition step of each alloy layer, with dE/dt and
 * dE/dx by Hellmann–Feynman and by central differences; and the monolayer ladder of one
 * layer (its main lines at −2 … +2 monolayers). */
#ifndef EW_TOLERANCE_H
#define EW_TOLERANCE_H

#include <stddef.h>
#include <stdio.h>

#include "epiwell.h"
#include "result.h"
#include "stack_model.h"

/* GaAs half lattice constant (a = 0.56533 nm at 300 K, Vurgaftman et al., J. Appl. Phys. 89,
 * 5815 (2001), Table III; from memory): the monolayer used for layers whose material has no
 * lattice constant (user-defined materials). */
#define EW_WF_DEFAULT_ML_NM 0.2827

typedef struct {
  char name[40];   /* "e1", "hh2" (levels) or "e1-e2", "e1-hh1" (main lines) */
  int is_line;
  int interband;
  double energy_eV; /* nominal */
  double wavelength_nm;
} ew_wf_item;

typedef struct {
  size_t layer;        /* index in the stack */
  char name[64], material[64];
  double thickness_nm;
  double ml_nm;        /* one monolayer: a/2 of the layer's material */
  int ml_default;      /* 1 when the material has no lattice constant: EW_WF_DEFAULT_ML_NM */
  int has_x;           /* alloy: composition rows present */
  double x, dx;
  double fd_dt_nm, fd_dx; /* steps of the central finite differences */
  /* per item (arrays of n_items), eV; NaN when the item is not bound at that variation */
  double *ml_minus, *ml_plus;   /* E(t − ML) − E(t), E(t + ML) − E(t) */
  double *dx_minus, *dx_plus;   /* E(x − dx) − E(x), E(x + dx) − E(x) */
  double *dEdt_hf, *dEdt_fd;    /* eV/nm: Hellmann–Feynman, central difference */
  double *dEdx_hf, *dEdx_fd;    /* eV per unit x */
  /* the stack's warning codes (';'-joined) at t − ML, t + ML, x − dx, x + dx */
  char warn_ml_minus[EW_WARNING_CODES_MAX], warn_ml_plus[EW_WARNING_CODES_MAX];
  char warn_dx_minus[EW_WARNING_CODES_MAX], warn_dx_plus[EW_WARNING_CODES_MAX];
} ew_wf_tol_layer;

typedef struct {
  char stack[512];
  size_t n_items;
  ew_wf_item *items;   /* levels first, then main lines */
  size_t n_layers;
  ew_wf_tol_layer *layers;
  char warnings[EW_WARNING_CODES_MAX]; /* the nominal stack's warning codes, ';'-joined */
  double rate_percent; /* stated growth-rate uncertainty (all thicknesses together), for the
                          spread; 0 = none (ew_wf_tolerance_run sets 0) */
} ew_wf_tolerance;

/* The spread of item i (a level or a main line) from the stated growth tolerances, to first
 * order in the Hellmann–Feynman derivatives: every layer's thickness ±1 of its monolayers and
 * every alloy layer's x ± dx, each independently, and the growth rate ± rate_percent, which
 * scales every thickness together.  All in eV, >= 0 (NaN when a derivative is missing). */
typedef struct {
  double thickness_eV;   /* sqrt(Σ_k (dE/dt_k · ML_k)²) */
  double composition_eV; /* sqrt(Σ_k (dE/dx_k · dx)²) over alloy layers */
  double rate_eV;        /* |Σ_k dE/dt_k · t_k| · rate_percent / 100 */
  double rss_eV;         /* the three in quadrature: independent errors */
  double worst_eV;       /* Σ|dE/dt_k · ML_k| + Σ|dE/dx_k · dx| + rate_eV: all at once, aligned */
} ew_wf_spread;
ew_wf_spread ew_wf_tolerance_spread(const ew_wf_tolerance *t, size_t i);

/* Shifts of every level and main line for ±1 monolayer of every layer and ±dx of every alloy
 * layer's composition, and dE/dt, dE/dx by Hellmann–Feynman and by central differences. */
ew_status ew_wf_tolerance_run(const ew_wf_model *m, double dx, int threads,
                              ew_wf_tolerance **out, ew_error *err);
void ew_wf_tolerance_free(ew_wf_tolerance *t);
void ew_wf_tolerance_print(const ew_wf_tolerance *t, FILE *out);
void ew_wf_tolerance_print_json(const ew_wf_tolerance *t, FILE *out);

/* Monolayer ladder: main lines at the nominal width of layer and at ±1, ±2 monolayers. */
typedef struct {
  size_t layer;
  double ml_nm;
  int ml_default;
  double thickness_nm[5];  /* offsets −2 … +2 monolayers */
  size_t n_items;
  ew_wf_item *items;       /* main lines at nominal */
  double *energy_eV;       /* [5 × n_items], NaN when not bound */
  double *pl_peak_eV;      /* [5 × n_items]: interband lines' PL peak (line − exciton
                              binding, as the interband table); NaN for the others */
  char warnings[5][EW_WARNING_CODES_MAX]; /* warning codes at each offset, ';'-joined */
} ew_wf_ladder;

ew_status ew_wf_ladder_run(const ew_wf_model *m, const char *layer, int threads,
                           ew_wf_ladder **out, ew_error *err);
void ew_wf_ladder_free(ew_wf_ladder *l);
void ew_wf_ladder_print(const ew_wf_ladder *l, const ew_stack *st, FILE *out);
void ew_wf_ladder_print_json(const ew_wf_ladder *l, const ew_stack *st, FILE *out);

#endif
