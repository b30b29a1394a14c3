/* workflow.h — the design workflows built on ew_solve, one header for their users (the CLI):
 *
 *   stack_model.h       a stack file opened for workflows, solved at key values
 *   stack_edit.h        setting numeric keys of a stack in its parsed tree (per thread)
 *   range.h             ranges of a varied key, quantities with units ("9.0um")
 *   line_name.h         level and line names ("e1-hh1"), the main lines
 *   sweep.h             parameter sweeps (OpenMP, shards), CSV and JSON
 *   sweep_plot.h        the pictures of a sweep
 *   sweep_merge.h       the parts of a sharded sweep joined into the one-machine output
 *   match.h             inverse matching: which value puts a line at a target
 *   tolerance.h         growth tolerances and the monolayer ladder
 *   hellmann_feynman.h  level derivatives from the solved state
 *   spectra_workflow.h  absorption spectra of one solve: grids, CSV, peaks, pictures
 *   output_set.h        output files renamed into place together
 *   chart_file.h        companion picture names, charts into an output set
 *   parallel.h          thread counts, the first failure in point order
 *   progress.h          progress callbacks and cancelling, from any thread
 *
 * Everything here is reentrant: no mutable globals; the OpenMP loops share only const data
 * (the model, the catalogue), each thread edits its own copy of the stack's tree and each
 * point is computed alone, so results do not depend on the number of threads.  Built without
 * OpenMP (-fopenmp) everything runs on one thread. */
#ifndef EW_WORKFLOW_H
#define EW_WORKFLOW_H

#include "chart_file.h"
#include "hellmann_feynman.h"
#include "line_name.h"
#include "match.h"
#include "match_part.h"
#include "output_set.h"
#include "parallel.h"
#include "range.h"
#include "spectra_workflow.h"
#include "stack_edit.h"
#include "stack_model.h"
#include "progress.h"
#include "sweep.h"
#include "sweep_merge.h"
#include "sweep_plot.h"
#include "tolerance.h"

#endif
