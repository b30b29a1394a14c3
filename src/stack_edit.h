/* stack_edit.h — setting numeric keys of a stack in its parsed libconfig tree.
 *
 * Any numeric key of a stack can be varied without the stack reader knowing about it: an
 * editor parses the stack file's text once into a tree of its own, a build sets the keys of
 * one point in the tree, has ew_stack_from_config build and validate the stack exactly like
 * the file, and puts the tree back as it was parsed.  Settings keep the lines they have in the
 * file, so an error of a modified stack names the file and the line of the setting, and says
 * which keys were set to which values.  libconfig trees are not safe to modify concurrently:
 * one editor per thread.
 *
 * A key is named
 *   KEY              a top-level setting (temperature, grid_step, field, …)
 *   GROUP.KEY        a setting of a top-level group (surface.barrier)
 *   NAME.KEY         a setting of the layer or user material NAME (well.thickness, barrier.x,
 *                    deep_barrier.Ec); the longest name that prefixes the key (names may
 *                    hold dots)
 *   NAME.GROUP.KEY   a setting of one of its groups (well.grade.x_end, well.doping.donors)
 * For a layer of a repeat group (stack_repeat.h) NAME is its written name, and the key sets
 * every copy (well.thickness), or one copy's name NAME#k, and it sets that copy only
 * (well#3.thickness; set in the written group while that copy is read, then put back).
 * A setting absent from the file is added; it reports the line of its group.  It is created
 * once, when its key is checked, and attached to its group only during builds that set it:
 * a build calls no libconfig allocator (libconfig 1.5 does not survive a failed allocation),
 * so a sweep over a key the file leaves out meets every allocation failure with
 * EW_ERR_NOMEM like any other.  A layer's
 * thickness is given one way: setting thickness removes thickness_ml and the reverse (the new
 * setting reports the line of the one it replaces); so does a number written as an integer,
 * which is replaced by a floating-point setting. */
#ifndef EW_STACK_EDIT_H
#define EW_STACK_EDIT_H

#include <stddef.h>

#include "epiwell.h"

typedef struct ew_stack_editor ew_stack_editor;

/* Parse text (a stack file's contents) for editing.  nominal is the stack read from the same
 * text (it names the layers and, in messages, the file); it and cat must outlive the editor.
 * EW_ERR_IO when the text does not parse (the file changed since it was read). */
ew_status ew_stack_editor_open(const char *text, const ew_stack *nominal,
                               const ew_catalogue *cat, ew_stack_editor **out, ew_error *err);
void ew_stack_editor_free(ew_stack_editor *ed); /* NULL is a no-op */

/* Check that key names a setting (see above) that can take a number.  *nominal receives its
 * value in the file, or NaN when it is absent: the setting is then created, kept out of the
 * tree between builds (builds without the key see the file as it was).  Every key a build
 * sets must have been checked first.  opt_name (e.g. "--vary") starts the message of an
 * EW_ERR_USAGE error. */
ew_status ew_stack_editor_check(ew_stack_editor *ed, const char *key,
                                const char *opt_name, double *nominal, ew_error *err);

/* The stack with keys[i] set to values[i] (i < nkeys), validated by the stack reader; the
 * tree is restored afterwards.  Errors of the modified stack are EW_ERR_INPUT naming the file,
 * the line the stack reader reports and "with KEY = VALUE, …"; a key that names no numeric
 * setting or a value that is not finite is EW_ERR_USAGE. */
ew_status ew_stack_editor_build(ew_stack_editor *ed, size_t nkeys, const char *const *keys,
                                const double *values, ew_stack **out, ew_error *err);

#endif
