/* api_version.c — the run-time version, the sizes of the public structs (how a caller or a
 * language binding detects a header/library mismatch), and a stack read from text with
 * settings changed (what a script's keyword arguments map to). */
#include "epiwell.h"

#include "error.h"
#include "stack_edit.h"

/* the header's macros and string must agree: one version, three spellings */
#define EW_STR2(x) #x
#define EW_STR(x) EW_STR2(x)
_Static_assert(sizeof EW_VERSION ==
                   sizeof(EW_STR(EW_VERSION_MAJOR) "." EW_STR(EW_VERSION_MINOR) "." EW_STR(
                       EW_VERSION_PATCH)),
               "EW_VERSION disagrees with EW_VERSION_MAJOR/MINOR/PATCH");

const char *ew_version(void) {
  return EW_STR(EW_VERSION_MAJOR) "." EW_STR(EW_VERSION_MINOR) "." EW_STR(EW_VERSION_PATCH);
}

size_t ew_error_size(void) { return sizeof(ew_error); }
size_t ew_options_size(void) { return sizeof(ew_options); }
size_t ew_state_size(void) { return sizeof(ew_state); }
size_t ew_line_size(void) { return sizeof(ew_line); }
size_t ew_sweep_options_size(void) { return sizeof(ew_sweep_options); }
size_t ew_dispersion_options_size(void) { return sizeof(ew_dispersion_options); }
size_t ew_gain_options_size(void) { return sizeof(ew_gain_options); }
size_t ew_hole_absorption_options_size(void) { return sizeof(ew_hole_absorption_options); }

ew_status ew_stack_read_string_set(const char *text, const char *display_name,
                                   const ew_catalogue *cat, size_t nkeys,
                                   const char *const *keys, const double *values,
                                   ew_stack **out, ew_error *err) {
  if (out) *out = NULL;
  if (!text || !display_name || !cat || !out || (nkeys && (!keys || !values)))
    return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_stack_read_string_set: NULL argument");
  for (size_t i = 0; i < nkeys; i++)
    if (!keys[i])
      return ew_fail(err, EW_ERR_USAGE, NULL, 0, "ew_stack_read_string_set: key %zu is NULL", i);
  ew_stack *nominal = NULL;
  ew_status rc = ew_stack_read_string(text, display_name, cat, &nominal, err);
  if (rc != EW_OK || nkeys == 0) {
    *out = nominal;
    return rc;
  }
  ew_stack_editor *ed = NULL;
  rc = ew_stack_editor_open(text, nominal, cat, &ed, err);
  for (size_t i = 0; rc == EW_OK && i < nkeys; i++) {
    double ignored;
    rc = ew_stack_editor_check(ed, keys[i], "set", &ignored, err);
  }
  if (rc == EW_OK) rc = ew_stack_editor_build(ed, nkeys, keys, values, out, err);
  ew_stack_editor_free(ed);
  ew_stack_free(nominal);
  return rc;
}
