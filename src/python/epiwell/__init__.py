"""epiwell — confined levels, wavefunctions and lines of III-V quantum-well stacks.

    import epiwell
    r = epiwell.solve("examples/detector_well.cfg", temperature_K=300)
    for s in r.states: print(s.label, s.energy_eV)
    r.z_nm, r.edge_eV("e"), r.wavefunction("e1")     # numpy arrays on the grid nodes

A thin layer over the C library libepiwell.so (ctypes): every number is the library's own,
copied out of the C result, which is freed before solve() returns.  Calls release the GIL,
so solves in several threads run in parallel.
"""
import ctypes
import math
import os
import threading

import numpy as np

from . import _lib
from ._lib import lib

__all__ = ["solve", "Result", "State", "Line", "Warning", "EpiwellError", "version",
           "BANDS", "STATUS"]

BANDS = ("e", "hh", "lh")
STATUS = {0: "ok", 1: "usage", 2: "input", 3: "catalogue", 4: "nomem", 5: "io", 6: "numeric"}


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


def solve(path_or_text, grid_step_nm=None, temperature_K=None, *, set=None, lowest_levels=None,
          error_estimate=True, excitons=True, residual_tol=None, sp_max_iterations=None,
          materials=None, name=None):
    """Solve a stack and return a Result.

    path_or_text: a stack file's path (str or os.PathLike), or its text (a str holding a
    newline or "=").  grid_step_nm overrides the stack's grid step (as `--grid-step`);
    temperature_K its temperature; set={"well.thickness": 6.5, …} any numeric key (as
    `epiwell sweep --vary`).  lowest_levels: lines from the lowest K levels of each band
    (default 3, as `epiwell solve`; 0 for all pairs).  materials: a catalogue directory
    (default: the library's search, README "Material catalogue").  name: the file name error
    messages give for text (default "<string>").  Errors raise EpiwellError with file, line
    and message."""
    settings = dict(set or {})
    if temperature_K is not None:
        settings["temperature"] = temperature_K
    cat = _catalogue(materials)
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
    st = _read_stack(path_or_text, cat, settings, name)
    try:
        res, err = ctypes.c_void_p(), _lib.Error()
        rc = lib.ew_solve(st, ctypes.byref(opt), ctypes.byref(res), ctypes.byref(err))
        if rc:
            _raise(rc, err)
        try:
            return Result(res, st)
        finally:
            lib.ew_result_free(res)
    finally:
        lib.ew_stack_free(st)
