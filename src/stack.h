/* stack.h — a layer stack read from a libconfig file, validated, with every layer's band
 * parameters resolved at the stack temperature.  Internal definition of ew_stack. */
#ifndef EW_STACK_H
#define EW_STACK_H

#include "epiwell.h"
#include "materials.h"

#define EW_NAME_MAX 64

/* Composition grading of a layer (x follows the local position; every parameter follows x). */
typedef enum { EW_GRADE_NONE = 0, EW_GRADE_LINEAR = 1, EW_GRADE_PARABOLIC = 2 } ew_grade;

/* Samples of a graded layer's band parameters: profile[j] at fraction j/(n−1) of the layer. */
#define EW_GRADE_SAMPLES 257

typedef struct {
  char name[EW_NAME_MAX];     /* layer name (unique in the stack) */
  char material[EW_NAME_MAX]; /* catalogue or user-defined material */
  double x;                   /* composition (alloys), 0 otherwise */
  int has_x;
  double thickness_nm;        /* > 0 */
  double z_start_nm;          /* position of the layer's first face */
  int line;                   /* line of the layer's entry in the stack file */
  int user_material;          /* 1 if defined in the stack's materials or alloys list */
  ew_bands bands;             /* resolved band parameters (graded: at the layer's centre) */
  double y;                   /* second composition (quaternaries), 0 otherwise */
  int has_y;
  double thickness_ml;        /* > 0 when given in monolayers (thickness_ml; may be fractional) */
  ew_grade grade;             /* composition grading */
  double x_start, x_end;      /* linear: x at the layer's first and last face */
  double x_centre, x_edge;    /* parabolic: x at the centre and at both faces */
  ew_bands *profile;          /* [EW_GRADE_SAMPLES] when graded, else NULL (owned) */
  /* doping (all >= 0; 0 = none) */
  double donors_cm3, acceptors_cm3;          /* uniform in the layer */
  double donor_sheet_cm2, acceptor_sheet_cm2; /* delta doping at the layer's centre */
  double donor_energy_eV, acceptor_energy_eV; /* ionisation energies; 0 = fully ionised */
  /* conduction_share = S; (0..1): the layer's edges re-split against the offset reference
     (stack offset_reference) so that Ec − Ec_ref = S (Eg − Eg_ref); < 0: not given */
  double conduction_share;
  int conduction_share_line;
  /* repeat groups (stack_repeat.h): the number of the written layer this one is read from
     (depth first through the file) and its copy number k of NAME#k (0: in no repeat group) */
  size_t written, copy;
} ew_layer;

struct ew_stack {
  char path[512];          /* file name as given (for messages) */
  double temperature_K;    /* >= 0; default 300 */
  double grid_step_nm;     /* > 0; 0 when not given (the solver picks its default) */
  size_t n_layers;         /* >= 1 */
  ew_layer *layers;
  double total_nm;         /* sum of thicknesses */
  double field_kV_cm;      /* applied field along +z (raises an electron's energy with z) */
  int nonparabolic;        /* 1: Kane energy-dependent electron mass (default where possible) */
  int nonparabolic_given;  /* 1 when the file set nonparabolic explicitly */
  char substrate[EW_NAME_MAX]; /* "" = no substrate: every layer unstrained */
  double substrate_x, substrate_y;
  double substrate_a_nm;   /* substrate lattice constant (0 without substrate) */
  double sheet_density_cm2; /* electrons per well for absorption spectra, 0 = not given */
  double linewidth_meV;    /* Lorentzian FWHM for spectra (default 10 meV) */
  int doped;               /* 1 when any layer is doped: the solve is self-consistent */
  int surface_given;       /* surface = { barrier = …; }: the first face is pinned */
  double surface_barrier_eV; /* Ec − E_F at the first face (Schottky-pinned surface) */
  int bias_given;          /* bias = …; a fixed applied bias between the two ends */
  double bias_V;           /* V(last face) − V(first face), volts */
  /* designer's band offsets (stack.c, "Band offsets"): a top-level conduction_share for every
     layer (< 0: not given; a layer's own key wins) against the layer offset_reference names
     (index; the first layer by default) */
  double conduction_share;
  size_t offset_reference;
  int offsets_set;         /* 1 when any layer was re-split (the outputs say so) */
};

/* One interface: between layers `first` and first + 1 (growth order) at z_nm, with the edges
 * of each side at the interface (graded layers at their face; no field, no doping potential):
 * dEc_eV = Ec(first) − Ec(second), dEv_eV = Ev_hh(second) − Ev_hh(first) (both > 0 when the
 * first layer is the wider-gap side of a type-I interface; dEc + dEv is the difference of
 * the two Γ–hh gaps) and conduction_share = dEc/(dEc + dEv) (NAN when the gaps are equal). */
typedef struct {
  size_t first;
  double z_nm, dEc_eV, dEv_eV, conduction_share;
} ew_interface;
/* Interface k (0 <= k < n_layers − 1) of stack st. */
void ew_stack_interface(const ew_stack *st, size_t k, ew_interface *out);

/* Build and validate a stack from a libconfig tree that was parsed from a stack file and
 * possibly edited since (stack editing: set a value in the tree, then call this).  Errors
 * name display_name and the line each setting had in the parsed text.  Same checks and
 * ownership as ew_stack_read_string; *out = NULL on error.  The tree is not changed. */
struct config_t;
struct config_setting_t;
/* EW_OK when the reader accepts `key` in `group` of a parsed stack tree (or gives that group
 * no fixed key set); else EW_ERR_USAGE, "OPT FULL_KEY: unknown key ... did you mean": a
 * --vary of a misspelt key is a command-line error, found before any point runs. */
ew_status ew_stack_check_key(const struct config_setting_t *group, const char *key,
                             const char *opt, const char *full_key, ew_error *err);
ew_status ew_stack_from_config(const struct config_t *cfg, const char *display_name,
                               const ew_catalogue *cat, ew_stack **out, ew_error *err);
/* The same with hook->before called before and hook->after after the reading of every
 * expanded layer (by its index): stack_edit.c sets a key of one copy of a repeated layer in
 * the written group that copy is read from and puts it back.  A nonzero status stops the
 * read (after gets err NULL when the layer's read failed, so its message stays). */
typedef struct {
  void *ctx;
  ew_status (*before)(void *ctx, size_t layer, ew_error *err);
  ew_status (*after)(void *ctx, size_t layer, ew_error *err);
} ew_stack_layer_hook;
ew_status ew_stack_from_config_hooked(const struct config_t *cfg, const char *display_name,
                                      const ew_catalogue *cat, const ew_stack_layer_hook *hook,
                                      ew_stack **out, ew_error *err);

/* Band parameters of layer ly at fraction f ∈ [0, 1] of its thickness (graded layers are
 * interpolated linearly between samples). */
void ew_layer_bands_at(const ew_layer *ly, double f, ew_bands *out);

/* The index of the layer called name (the one layer lookup by name); st->n_layers when there
 * is none. */
size_t ew_stack_find_layer(const ew_stack *st, const char *name);

#endif
