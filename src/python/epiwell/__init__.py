"""epiwell — confined levels, wavefunctions and lines of III-V quantum-well stacks.

    import epiwell
    r = epiwell.solve("examples/detector_well.cfg", temperature_K=300)
    for s in r.states: print(s.label, s.energy_eV)
    r.z_nm, r.edge_eV("e"), r.wavefunction("e1")     # numpy arrays on the grid nodes
    sw = epiwell.sweep("examples/detector_well.cfg", "well.thickness=4:12:0.1")
    sw["well.thickness"], sw["e1-e2_um"]               # numpy arrays, one value per point
    m = epiwell.match("examples/detector_well.cfg", "well.thickness=4:12", "e1-e2", "9.0um")
    m.values                                           # (solutions, unknowns) array

A thin layer over the C library libepiwell.so (ctypes): every number is the library's own,
copied out of the C result, which is freed before solve() returns.  Calls release the GIL,
so solves in several threads run in parallel.
"""
import ctypes
import json
import math
import os
import threading

import numpy as np

from . import _lib
from ._lib import lib

__all__ = ["solve", "sweep", "match", "Result", "Sweep", "Match", "State", "Line", "Warning",
           "EpiwellError", "version", "BANDS", "STATUS"]

BANDS = ("e", "hh", "lh")
STATUS = {0: "ok", 1: "usage", 2: "input", 3: "catalogue", 4: "nomem", 5: "io", 6: "numeric",
          7: "cancelled"}


def version():
    """The run-time version of the loaded library ("MAJOR.MINOR.PATCH")."""
    return lib.ew_version().decode()


class EpiwellError(Exception):
    """A library error: code (the ew_status, = the CLI's exit code), status (its name), file
    and line of the input when known (line 0 otherwise), message."""

    def __init__(self, code, file, line, message):
        self.code, self.status = code, STATUS.get(code, str(code))
        self.file, self.line, self.message = file, line, message
        where = "%s:%d: " % (file, line) if file and line > 0 else ("%s: " % file if file else "")
        super().__init__(where + message)


def _raise(code, err):
    raise EpiwellError(code, err.file.decode(errors="replace"), err.line,
                       err.message.decode(errors="replace"))


class State:
    """One bound level (fields as ew_state in epiwell.h; error_eV None when not estimated,
    sheet_density_cm2 None unless the stack is solved self-consistently)."""
    __slots__ = ("index", "label", "band", "n", "energy_eV", "error_eV", "edge_eV", "depth_eV",
                 "layer", "layer_index", "layer_probability", "residual", "flagged",
                 "inplane_mass_m0", "sheet_density_cm2")

    def __repr__(self):
        return "State(%s, %.6f eV)" % (self.label, self.energy_eV)


class Line:
    """One transition (fields as ew_line; upper and lower are labels, *_index the indices into
    Result.states; the intersubband-only or interband-only fields are None for the other kind)."""
    __slots__ = ("kind", "upper", "lower", "upper_index", "lower_index", "energy_eV",
                 "wavelength_nm", "dipole_nm", "oscillator_strength", "depolarization_shift_eV",
                 "overlap", "allowed", "exciton_binding_eV", "pl_peak_eV", "pl_peak_nm",
                 "te_strength", "tm_strength")

    def __repr__(self):
        return "Line(%s %s-%s, %.6f eV)" % (self.kind, self.upper, self.lower, self.energy_eV)


class Warning:
    """A warning of the result: its stable code (README "Warnings") and its text."""
    __slots__ = ("code", "text")

    def __init__(self, code, text):
        self.code, self.text = code, text

    def __repr__(self):
        return "Warning(%r, %r)" % (self.code, self.text)

    def __str__(self):
        return self.text


def _opt(x):
    return None if x is None or (isinstance(x, float) and math.isnan(x)) else x


class Result:
    """What ew_solve found, copied into Python objects and numpy arrays."""

    def __init__(self, res, stack):
        nn = lib.ew_result_node_count(res)
        arr = lambda p: np.ctypeslib.as_array(p, (nn,)).copy()  # noqa: E731
        self.temperature_K = lib.ew_stack_temperature_K(stack)
        self.grid_step_nm = lib.ew_result_grid_step_nm(res)
        self.model = lib.ew_result_model(res).decode()
        self.z_nm = arr(lib.ew_result_z_nm(res))
        self._edge = {b: arr(lib.ew_result_edge_eV(res, i)) for i, b in enumerate(BANDS)}
        self._mass = {b: arr(lib.ew_result_mass(res, i)) for i, b in enumerate(BANDS)}
        self.band_count = {b: lib.ew_result_band_count(res, i) for i, b in enumerate(BANDS)}
        self.window_eV = {b: lib.ew_result_window_eV(res, i) for i, b in enumerate(BANDS)}
        layers = [lib.ew_stack_layer_name(stack, i).decode()
                  for i in range(lib.ew_stack_layer_count(stack))]
        self.states = [self._state(res, i, layers) for i in range(lib.ew_result_state_count(res))]
        self.wavefunctions = np.empty((len(self.states), nn))
        for i in range(len(self.states)):
            self.wavefunctions[i] = np.ctypeslib.as_array(lib.ew_result_wavefunction(res, i), (nn,))
        self.lines = [self._line(res, j) for j in range(lib.ew_result_line_count(res))]
        self.warnings = [Warning(lib.ew_result_warning_code(res, i).decode(),
                                 lib.ew_result_warning(res, i).decode())
                         for i in range(lib.ew_result_warning_count(res))]
        self.sp_iterations = lib.ew_result_sp_iterations(res)
        self.fermi_energy_eV = _opt(lib.ew_result_fermi_energy_eV(res))
        self.sp_residual_eV = _opt(lib.ew_result_sp_residual_eV(res))
        self._by_label = {s.label: s for s in self.states}

    @staticmethod
    def _state(res, i, layers):
        c = lib.ew_result_state(res, i).contents
        s = State()
        s.index, s.label, s.band, s.n = i, c.label.decode(), BANDS[c.band], c.n
        s.energy_eV, s.edge_eV, s.depth_eV = c.energy_eV, c.edge_eV, c.depth_eV
        s.error_eV = c.error_eV if c.error_eV >= 0 else None
        s.layer_index, s.layer = c.layer, layers[c.layer]
        s.layer_probability, s.residual, s.flagged = c.layer_probability, c.residual, bool(c.flagged)
        s.inplane_mass_m0 = c.inplane_mass
        s.sheet_density_cm2 = _opt(lib.ew_result_state_sheet_density_cm2(res, i))
        return s

    def _line(self, res, j):
        c = lib.ew_result_line(res, j).contents
        ln = Line()
        isb = c.kind == 0
        ln.kind = "intersubband" if isb else "interband"
        ln.upper_index, ln.lower_index = c.upper, c.lower
        ln.upper, ln.lower = self.states[c.upper].label, self.states[c.lower].label
        ln.energy_eV, ln.wavelength_nm = c.energy_eV, c.wavelength_nm
        ln.dipole_nm = c.dipole_nm if isb else None
        ln.oscillator_strength = c.oscillator_strength if isb else None
        ln.depolarization_shift_eV = _opt(lib.ew_result_line_depolarization_eV(res, j)) if isb else None
        for f in ("overlap", "exciton_binding_eV", "pl_peak_eV", "te_strength", "tm_strength"):
            setattr(ln, f, None if isb else getattr(c, f))
        ln.allowed = None if isb else bool(c.allowed)
        ln.pl_peak_nm = None if isb else _opt(lib.ew_line_pl_peak_nm(ctypes.byref(c)))
        return ln

    def state(self, label):
        """The state called label ("e1", "hh2", …); KeyError when there is none."""
        return self._by_label[label]

    def edge_eV(self, band):
        """Band edge of band ("e", "hh", "lh") on the grid nodes, absolute eV."""
        return self._edge[band]

    def mass(self, band):
        """Growth-axis mass of band on the grid nodes, m0."""
        return self._mass[band]

    def wavefunction(self, label):
        """ψ of the state called label on the grid nodes (1/sqrt(nm), ∫|ψ|² dz = 1)."""
        return self.wavefunctions[self._by_label[label].index]


# One catalogue per directory, loaded on first use and shared (read-only) by every solve.
_catalogues = {}
_catalogue_lock = threading.Lock()


def _catalogue(materials):
    key = os.fspath(materials) if materials is not None else None
    with _catalogue_lock:
        if key not in _catalogues:
            cat, err = ctypes.c_void_p(), _lib.Error()
            rc = lib.ew_catalogue_load(key.encode() if key else None, ctypes.byref(cat),
                                       ctypes.byref(err))
            if rc:
                _raise(rc, err)
            _catalogues[key] = cat
        return _catalogues[key]


def _is_text(x):
    return isinstance(x, str) and ("\n" in x or "=" in x)


def _read_stack(path_or_text, cat, settings, name):
    st, err = ctypes.c_void_p(), _lib.Error()
    if not settings and not _is_text(path_or_text):
        rc = lib.ew_stack_read_file(os.fsencode(path_or_text), cat, ctypes.byref(st),
                                    ctypes.byref(err))
    else:
        if _is_text(path_or_text):
            text, name = path_or_text.encode(), name or "<string>"
        else:
            try:
                with open(path_or_text, "rb") as f:
                    text = f.read()
            except OSError as e:
                raise EpiwellError(5, os.fspath(path_or_text), 0, "cannot read: %s" % e.strerror)
            name = name or os.fspath(path_or_text)
        keys = (ctypes.c_char_p * len(settings))(*[k.encode() for k in settings])
        vals = (ctypes.c_double * len(settings))(*[float(v) for v in settings.values()])
        rc = lib.ew_stack_read_string_set(text, name.encode(), cat, len(settings), keys, vals,
                                          ctypes.byref(st), ctypes.byref(err))
    if rc:
        _raise(rc, err)
    return st


def _solve_options(grid_step_nm, lowest_levels, error_estimate, excitons, residual_tol,
                   sp_max_iterations):
    opt = _lib.Options()
    lib.ew_options_default(ctypes.byref(opt))
    if grid_step_nm is not None:
        opt.grid_step_nm = grid_step_nm
    if lowest_levels is not None:
        opt.lowest_levels = lowest_levels
    opt.error_estimate, opt.excitons = int(bool(error_estimate)), int(bool(excitons))
    if residual_tol is not None:
        opt.residual_tol = residual_tol
    if sp_max_iterations is not None:
        opt.sp_max_iterations = sp_max_iterations
    return opt


class _Progress:
    """A Python progress(done, total) callable as an ew_progress_fn: a true return value (or
    an exception, re-raised by check()) cancels.  The library serialises the calls; on a
    sweep they come from its threads (ctypes takes the GIL for them)."""

    def __init__(self, fn):
        self.fn, self.exc = fn, None
        self.c = _lib.PROGRESS(self._call) if fn is not None else _lib.PROGRESS()

    def _call(self, ctx, done, total):
        try:
            return 1 if self.fn(done, total) else 0
        except BaseException as e:  # noqa: B902 - any exception cancels and is re-raised
            self.exc = e
            return 1

    def check(self):
        if self.exc is not None:
            raise self.exc


def _memstream():
    buf, size = ctypes.c_void_p(), ctypes.c_size_t()
    f = _lib.libc.open_memstream(ctypes.byref(buf), ctypes.byref(size))
    if not f:
        raise MemoryError("open_memstream failed")
    return f, buf, size


def _memstream_text(f, buf, size):
    """Close f and return what was written (freeing the buffer)."""
    _lib.libc.fclose(f)
    try:
        return ctypes.string_at(buf, size.value).decode() if buf.value else ""
    finally:
        _lib.libc.free(buf)


def _num(v):
    return math.nan if v is None else float(v)


def _range_spec(key, r, need_step):
    if isinstance(r, str):
        return "%s=%s" % (key, r)
    r = tuple(r)
    if len(r) not in ((3,) if need_step else (2, 3)):
        raise ValueError("%s: give (from, to%s)" % (key, ", step" if need_step else "[, step]"))
    return "%s=%s" % (key, ":".join(repr(float(x)) for x in r))


def _specs(vary, need_step):
    """"KEY=FROM:TO:STEP", a list of them, or {key: (from, to, step)} → list of specs."""
    if isinstance(vary, str):
        return [vary]
    if isinstance(vary, dict):
        return [_range_spec(k, r, need_step) for k, r in vary.items()]
    return list(vary)


class Sweep:
    """A sweep's table, as `epiwell sweep --json` prints it: columns (names), varied (the
    varied keys), points_total, shard (k, n, first, count); sweep[column] a numpy array with
    one value per point of this part (NaN where the JSON has null); warnings the codes of
    every point (lists of str)."""

    def __init__(self, d):
        self.stack, self.varied = d["stack"], list(d["varied"])
        self.points_total, self.shard = d["points_total"], dict(d["shard"])
        self.columns = list(d["columns"])
        pts = d["points"]
        self._data = {c: np.array([_num(p[c]) for p in pts], dtype=float)
                      for c in self.columns if c != "warnings"}
        self.warnings = [list(p["warnings"]) for p in pts]

    def __getitem__(self, column):
        return self._data[column]

    def __len__(self):
        return len(self.warnings)

    def __repr__(self):
        return "Sweep(%s over %s, %d points)" % (self.stack, ", ".join(self.varied), len(self))


def sweep(path, vary, *, grid_step_nm=None, error_estimate=True, threads=0, shard=None,
          levels=0, progress=None, materials=None):
    """Sweep one or two keys of the stack file at path and return a Sweep.

    vary: "KEY=FROM:TO:STEP", a list of one or two such strings (the first the outer loop),
    or {key: (from, to, step)}; keys as `epiwell sweep --vary`.  grid_step_nm,
    error_estimate: as `--grid-step`, `--no-estimate`; threads: 0 every core (the values do
    not depend on it); shard=(k, n): part k of n (`--shard K/N`); levels: `--levels`.
    progress(done, total): called after each point (from the sweep's threads, one call at a
    time); a true return value cancels the sweep (EpiwellError, status "cancelled").  The
    values are those of `epiwell sweep --json` to the last digit."""
    cat = _catalogue(materials)
    opt = _solve_options(grid_step_nm, None, error_estimate, False, None, None)
    sw, err = ctypes.c_void_p(), _lib.Error()
    rc = lib.ew_sweep_create(ctypes.byref(sw), ctypes.byref(err))
    if rc:
        _raise(rc, err)
    try:
        for spec in _specs(vary, True):
            rc = lib.ew_sweep_vary(sw, spec.encode(), ctypes.byref(err))
            if rc:
                _raise(rc, err)
        rc = lib.ew_sweep_open(sw, os.fsencode(path), cat, ctypes.byref(opt), ctypes.byref(err))
        if rc:
            _raise(rc, err)
        so = _lib.SweepOptions()
        lib.ew_sweep_options_default(ctypes.byref(so))
        so.threads, so.min_levels = int(threads), int(levels)
        if shard is not None:
            so.shard_k, so.shard_n = int(shard[0]), int(shard[1])
        pg = _Progress(progress)
        so.progress = pg.c
        f, buf, size = _memstream()
        try:
            rc = lib.ew_sweep_compute(sw, ctypes.byref(so), None, f, ctypes.byref(err))
        finally:
            text = _memstream_text(f, buf, size)
        pg.check()
        if rc:
            _raise(rc, err)
        return Sweep(json.loads(text))
    finally:
        lib.ew_sweep_free(sw)


class Match:
    """What `epiwell match --json` prints: keys (the unknowns), lines (line, target_eV,
    target_nm, reached_eV), solutions (dicts: value, energy_eV, wavelength_nm, residual_eV,
    warnings and, with a tolerance, uncertainty and the values at target -/+ tolerance),
    message ("" unless nothing matched); values: a (solutions, unknowns) numpy array of the
    library's values at full precision (ew_match_solution_value)."""

    def __init__(self, d, values):
        self.keys, self.lines = list(d["keys"]), d["lines"]
        self.solutions, self.message = d["solutions"], d["message"]
        self.values = values

    def __len__(self):
        return len(self.solutions)

    def __repr__(self):
        return "Match(%s: %d solutions)" % (", ".join(self.keys), len(self))


def match(path, vary, line, target, *, tolerance=None, samples=0, grid_step_nm=None,
          error_estimate=True, threads=0, progress=None, materials=None):
    """Which value of a key (or pair of keys) puts a line (pair of lines) at a target.

    vary: "KEY=FROM:TO[:STEP]", a list of two, or {key: (from, to)}; line: "e1-e2",
    "e1-hh1:pl", … (or a list of two); target: a quantity with its unit, "9.0um",
    "1.548eV" (or a list of two); tolerance: a quantity (one unknown only), as `epiwell
    match`.  progress(done, total): after each solve (total 0: not known in advance); a true
    return value cancels.  No solution is not an error: len() == 0 and message says what the
    range reaches."""
    specs = _specs(vary, False)
    lines = [line] if isinstance(line, str) else list(line)
    targets = [target] if isinstance(target, str) else list(target)
    cat = _catalogue(materials)
    pl = any(ln.endswith(":pl") for ln in lines)  # only a PL target needs the excitons
    opt = _solve_options(grid_step_nm, None, error_estimate, pl, None, None)
    mt, err = ctypes.c_void_p(), _lib.Error()
    rc = lib.ew_match_create(ctypes.byref(mt), ctypes.byref(err))
    if rc:
        _raise(rc, err)
    try:
        calls = [(lib.ew_match_vary, s) for s in specs] + [(lib.ew_match_line, s) for s in lines]
        calls += [(lib.ew_match_target, s) for s in targets]
        if tolerance is not None:
            calls.append((lib.ew_match_tolerance, tolerance))
        for fn, arg in calls:
            rc = fn(mt, arg.encode(), ctypes.byref(err))
            if rc:
                _raise(rc, err)
        pg = _Progress(progress)
        lib.ew_match_progress(mt, pg.c, None, ctypes.byref(err))
        rc = lib.ew_match_compute(mt, os.fsencode(path), cat, ctypes.byref(opt), int(threads),
                                  int(samples), ctypes.byref(err))
        pg.check()
        if rc:
            _raise(rc, err)
        f, buf, size = _memstream()
        try:
            rc = lib.ew_match_write_json(mt, f, ctypes.byref(err))
        finally:
            text = _memstream_text(f, buf, size)
        if rc:
            _raise(rc, err)
        n, nk = lib.ew_match_solution_count(mt), len(specs)
        values = np.array([[lib.ew_match_solution_value(mt, i, k) for k in range(nk)]
                           for i in range(n)], dtype=float).reshape(n, nk)
        return Match(json.loads(text), values)
    finally:
        lib.ew_match_free(mt)


def solve(path_or_text, grid_step_nm=None, temperature_K=None, *, set=None, lowest_levels=None,
          error_estimate=True, excitons=True, residual_tol=None, sp_max_iterations=None,
          materials=None, name=None, progress=None):
    """Solve a stack and return a Result.

    path_or_text: a stack file's path (str or os.PathLike), or its text (a str holding a
    newline or "=").  grid_step_nm overrides the stack's grid step (as `--grid-step`);
    temperature_K its temperature; set={"well.thickness": 6.5, …} any numeric key (as
    `epiwell sweep --vary`).  lowest_levels: lines from the lowest K levels of each band
    (default 3, as `epiwell solve`; 0 for all pairs).  materials: a catalogue directory
    (default: the library's search, README "Material catalogue").  name: the file name error
    messages give for text (default "<string>").  progress(done, total): after the
    Schrödinger pass and the exciton pass (a doped stack: after each outer iteration too,
    ew_options.progress in epiwell.h), on this thread; a true return value cancels
    (EpiwellError, status "cancelled").  Errors raise EpiwellError with file, line and
    message."""
    settings = dict(set or {})
    if temperature_K is not None:
        settings["temperature"] = temperature_K
    cat = _catalogue(materials)
    opt = _solve_options(grid_step_nm, lowest_levels, error_estimate, excitons, residual_tol,
                         sp_max_iterations)
    pg = _Progress(progress)
    opt.progress = pg.c
    st = _read_stack(path_or_text, cat, settings, name)
    try:
        res, err = ctypes.c_void_p(), _lib.Error()
        rc = lib.ew_solve(st, ctypes.byref(opt), ctypes.byref(res), ctypes.byref(err))
        pg.check()
        if rc:
            _raise(rc, err)
        try:
            return Result(res, st)
        finally:
            lib.ew_result_free(res)
    finally:
        lib.ew_stack_free(st)
