/* api_stack.c — the layers of a stack as the public API shows them (epiwell.h): read-only
 * queries, so that a script or the command need not know struct ew_stack. */
#include <math.h>
#include <string.h>

#include "epiwell.h"
#include "error.h"
#include "stack.h"

static const ew_layer *layer_at(const ew_stack *st, size_t i) {
  return st && i < st->n_layers ? &st->layers[i] : NULL;
}

size_t ew_stack_layer_count(const ew_stack *st) { return st ? st->n_layers : 0; }

const char *ew_stack_layer_name(const ew_stack *st, size_t i) {
  const ew_layer *L = layer_at(st, i);
  return L ? L->name : NULL;
}

const char *ew_stack_layer_material(const ew_stack *st, size_t i) {
  const ew_layer *L = layer_at(st, i);
  return L ? L->material : NULL;
}

double ew_stack_layer_thickness_nm(const ew_stack *st, size_t i) {
  const ew_layer *L = layer_at(st, i);
  return L ? L->thickness_nm : NAN;
}

double ew_stack_layer_start_nm(const ew_stack *st, size_t i) {
  const ew_layer *L = layer_at(st, i);
  return L ? L->z_start_nm : NAN;
}

double ew_stack_layer_x(const ew_stack *st, size_t i) {
  const ew_layer *L = layer_at(st, i);
  return L && L->has_x ? L->x : NAN;
}

double ew_stack_layer_y(const ew_stack *st, size_t i) {
  const ew_layer *L = layer_at(st, i);
  return L && L->has_y ? L->y : NAN;
}

ew_status ew_stack_layer_index(const ew_stack *st, const char *name, size_t *index, ew_error *err) {
  if (!st || !name || !index)
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_stack_layer_index: NULL argument");
  size_t k = ew_stack_find_layer(st, name);
  if (k < st->n_layers) {
    *index = k;
    return EW_OK;
  }
  return ew_fail(err, EW_ERR_INPUT, st->path, 0, "no layer called '%s'", name);
}

double ew_stack_temperature_K(const ew_stack *st) { return st ? st->temperature_K : NAN; }

double ew_stack_total_nm(const ew_stack *st) { return st ? st->total_nm : NAN; }
