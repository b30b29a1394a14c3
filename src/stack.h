/* stack.h — a layer stack read from a libconfig file, validated, with every layer's band
 * parameters resolved at the stack temperature.  Internal definition of ew_stack. */
#ifndef EW_STACK_H
#define EW_STACK_H

#include "epiwell.h"
#include "materials.h"

#define EW_NAME_MAX 64

typedef struct {
  char name[EW_NAME_MAX];     /* layer name (unique in the stack) */
  char material[EW_NAME_MAX]; /* catalogue or user-defined material */
  double x;                   /* composition (alloys), 0 otherwise */
  int has_x;
  double thickness_nm;        /* > 0 */
  double z_start_nm;          /* position of the layer's first face */
  int line;                   /* line of the layer's entry in the stack file */
  int user_material;          /* 1 if defined in the stack's materials list */
  ew_bands bands;             /* resolved band parameters */
} ew_layer;

struct ew_stack {
  char path[512];          /* file name as given (for messages) */
  double temperature_K;    /* >= 0; default 300 */
  double grid_step_nm;     /* > 0; 0 when not given (the solver picks its default) */
  size_t n_layers;         /* >= 1 */
  ew_layer *layers;
  double total_nm;         /* sum of thicknesses */
};

#endif
