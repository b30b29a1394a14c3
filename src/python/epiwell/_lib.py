"""Loading libepiwell.so and declaring the C functions of epiwell.h that the package calls.

The structs are declared field by field as in epiwell.h and checked against the library's
own sizeof (ew_*_size()): a package and a library that disagree refuse to load.
"""
import ctypes
import os
import sys

ABI_MAJOR = 1  # the soname's major version this package is written for
SONAME = "libepiwell.so.%d" % ABI_MAJOR


class Error(ctypes.Structure):
    _fields_ = [("code", ctypes.c_int), ("file", ctypes.c_char * 512),
                ("line", ctypes.c_int), ("message", ctypes.c_char * 1024)]


# ew_progress_fn: int (*)(void *ctx, size_t done, size_t total)
PROGRESS = ctypes.CFUNCTYPE(ctypes.c_int, ctypes.c_void_p, ctypes.c_size_t, ctypes.c_size_t)


class Options(ctypes.Structure):
    _fields_ = [("grid_step_nm", ctypes.c_double), ("lowest_levels", ctypes.c_int),
                ("error_estimate", ctypes.c_int), ("residual_tol", ctypes.c_double),
                ("excitons", ctypes.c_int), ("sp_max_iterations", ctypes.c_int),
                ("line_min_strength", ctypes.c_double), ("progress", PROGRESS),
                ("progress_ctx", ctypes.c_void_p), ("hole_dos", ctypes.c_int)]


class SweepOptions(ctypes.Structure):
    _fields_ = [("threads", ctypes.c_int), ("shard_k", ctypes.c_size_t),
                ("shard_n", ctypes.c_size_t), ("header", ctypes.c_int),
                ("min_levels", ctypes.c_size_t), ("keep_table", ctypes.c_int),
                ("progress", PROGRESS), ("progress_ctx", ctypes.c_void_p)]


class State(ctypes.Structure):
    _fields_ = [("label", ctypes.c_char * 16), ("band", ctypes.c_int), ("n", ctypes.c_int),
                ("energy_eV", ctypes.c_double), ("error_eV", ctypes.c_double),
                ("edge_eV", ctypes.c_double), ("depth_eV", ctypes.c_double),
                ("layer", ctypes.c_size_t), ("layer_probability", ctypes.c_double),
                ("residual", ctypes.c_double), ("flagged", ctypes.c_int),
                ("inplane_mass", ctypes.c_double), ("dos_mass_m0", ctypes.c_double)]


class Line(ctypes.Structure):
    _fields_ = [("kind", ctypes.c_int), ("upper", ctypes.c_size_t), ("lower", ctypes.c_size_t),
                ("energy_eV", ctypes.c_double), ("wavelength_nm", ctypes.c_double),
                ("dipole_nm", ctypes.c_double), ("oscillator_strength", ctypes.c_double),
                ("overlap", ctypes.c_double), ("allowed", ctypes.c_int),
                ("exciton_binding_eV", ctypes.c_double), ("pl_peak_eV", ctypes.c_double),
                ("te_strength", ctypes.c_double), ("tm_strength", ctypes.c_double)]


def _candidates():
    """Where the library is looked for, in order (README "Python")."""
    env = os.environ.get("EPIWELL_LIBRARY")
    if env:
        return [env]  # explicit: the only place, so that a mistyped path is not hidden
    out = []
    try:  # written by `make python`: the library of that build tree
        from . import _build_path
        out.append(_build_path.LIBRARY)
    except ImportError:
        pass
    out.append(SONAME)  # the loader's search: LD_LIBRARY_PATH, ldconfig's cache
    for prefix in (sys.prefix, "/usr/local", "/usr"):
        out.append(os.path.join(prefix, "lib", SONAME))
    return out


def _load():
    tried = []
    for path in _candidates():
        try:
            return ctypes.CDLL(path)
        except OSError as e:
            tried.append("%s (%s)" % (path, e))
    raise ImportError("epiwell: cannot load %s; tried: %s; set EPIWELL_LIBRARY to its path"
                      % (SONAME, "; ".join(tried)))


P = ctypes.c_void_p
_SIG = {
    "ew_version": (ctypes.c_char_p, []),
    "ew_error_size": (ctypes.c_size_t, []),
    "ew_options_size": (ctypes.c_size_t, []),
    "ew_state_size": (ctypes.c_size_t, []),
    "ew_line_size": (ctypes.c_size_t, []),
    "ew_sweep_options_size": (ctypes.c_size_t, []),
    "ew_error_text": (ctypes.c_char_p, [ctypes.POINTER(Error), ctypes.c_char_p, ctypes.c_size_t]),
    "ew_band_name": (ctypes.c_char_p, [ctypes.c_int]),
    "ew_catalogue_load": (ctypes.c_int, [ctypes.c_char_p, ctypes.POINTER(P), ctypes.POINTER(Error)]),
    "ew_catalogue_free": (None, [P]),
    "ew_stack_read_file": (ctypes.c_int, [ctypes.c_char_p, P, ctypes.POINTER(P), ctypes.POINTER(Error)]),
    "ew_stack_read_string_set": (ctypes.c_int, [ctypes.c_char_p, ctypes.c_char_p, P, ctypes.c_size_t,
                                                ctypes.POINTER(ctypes.c_char_p),
                                                ctypes.POINTER(ctypes.c_double), ctypes.POINTER(P),
                                                ctypes.POINTER(Error)]),
    "ew_stack_free": (None, [P]),
    "ew_stack_layer_count": (ctypes.c_size_t, [P]),
    "ew_stack_layer_name": (ctypes.c_char_p, [P, ctypes.c_size_t]),
    "ew_stack_temperature_K": (ctypes.c_double, [P]),
    "ew_options_default": (None, [ctypes.POINTER(Options)]),
    "ew_solve": (ctypes.c_int, [P, ctypes.POINTER(Options), ctypes.POINTER(P), ctypes.POINTER(Error)]),
    "ew_result_free": (None, [P]),
    "ew_result_state_count": (ctypes.c_size_t, [P]),
    "ew_result_state": (ctypes.POINTER(State), [P, ctypes.c_size_t]),
    "ew_result_wavefunction": (ctypes.POINTER(ctypes.c_double), [P, ctypes.c_size_t]),
    "ew_result_line_count": (ctypes.c_size_t, [P]),
    "ew_result_line": (ctypes.POINTER(Line), [P, ctypes.c_size_t]),
    "ew_result_node_count": (ctypes.c_size_t, [P]),
    "ew_result_z_nm": (ctypes.POINTER(ctypes.c_double), [P]),
    "ew_result_edge_eV": (ctypes.POINTER(ctypes.c_double), [P, ctypes.c_int]),
    "ew_result_mass": (ctypes.POINTER(ctypes.c_double), [P, ctypes.c_int]),
    "ew_result_grid_step_nm": (ctypes.c_double, [P]),
    "ew_result_band_count": (ctypes.c_size_t, [P, ctypes.c_int]),
    "ew_result_window_eV": (ctypes.c_double, [P, ctypes.c_int]),
    "ew_result_warning_count": (ctypes.c_size_t, [P]),
    "ew_result_warning": (ctypes.c_char_p, [P, ctypes.c_size_t]),
    "ew_result_warning_code": (ctypes.c_char_p, [P, ctypes.c_size_t]),
    "ew_result_model": (ctypes.c_char_p, [P]),
    "ew_result_fermi_energy_eV": (ctypes.c_double, [P]),
    "ew_result_sp_iterations": (ctypes.c_int, [P]),
    "ew_result_sp_residual_eV": (ctypes.c_double, [P]),
    "ew_result_state_sheet_density_cm2": (ctypes.c_double, [P, ctypes.c_size_t]),
    "ew_result_line_depolarization_eV": (ctypes.c_double, [P, ctypes.c_size_t]),
    "ew_line_pl_peak_nm": (ctypes.c_double, [P]),
    # workflows (FILE * passed as pointers from the C library's open_memstream)
    "ew_sweep_options_default": (None, [ctypes.POINTER(SweepOptions)]),
    "ew_sweep_create": (ctypes.c_int, [ctypes.POINTER(P), ctypes.POINTER(Error)]),
    "ew_sweep_free": (None, [P]),
    "ew_sweep_vary": (ctypes.c_int, [P, ctypes.c_char_p, ctypes.POINTER(Error)]),
    "ew_sweep_open": (ctypes.c_int, [P, ctypes.c_char_p, P, ctypes.POINTER(Options),
                                     ctypes.POINTER(Error)]),
    "ew_sweep_compute": (ctypes.c_int, [P, ctypes.POINTER(SweepOptions), P, P,
                                        ctypes.POINTER(Error)]),
    "ew_match_create": (ctypes.c_int, [ctypes.POINTER(P), ctypes.POINTER(Error)]),
    "ew_match_free": (None, [P]),
    "ew_match_vary": (ctypes.c_int, [P, ctypes.c_char_p, ctypes.POINTER(Error)]),
    "ew_match_line": (ctypes.c_int, [P, ctypes.c_char_p, ctypes.POINTER(Error)]),
    "ew_match_target": (ctypes.c_int, [P, ctypes.c_char_p, ctypes.POINTER(Error)]),
    "ew_match_tolerance": (ctypes.c_int, [P, ctypes.c_char_p, ctypes.POINTER(Error)]),
    "ew_match_progress": (ctypes.c_int, [P, PROGRESS, P, ctypes.POINTER(Error)]),
    "ew_match_compute": (ctypes.c_int, [P, ctypes.c_char_p, P, ctypes.POINTER(Options),
                                        ctypes.c_int, ctypes.c_size_t, ctypes.POINTER(Error)]),
    "ew_match_solution_count": (ctypes.c_size_t, [P]),
    "ew_match_solution_value": (ctypes.c_double, [P, ctypes.c_size_t, ctypes.c_size_t]),
    "ew_match_message": (ctypes.c_char_p, [P]),
    "ew_match_write_json": (ctypes.c_int, [P, P, ctypes.POINTER(Error)]),
}

# open_memstream(3) of the C library: the workflows write their JSON into memory
libc = ctypes.CDLL(None)
libc.open_memstream.restype = P
libc.open_memstream.argtypes = [ctypes.POINTER(P), ctypes.POINTER(ctypes.c_size_t)]
libc.fclose.restype = ctypes.c_int
libc.fclose.argtypes = [P]
libc.free.restype = None
libc.free.argtypes = [P]


def _declare(lib):
    for name, (res, args) in _SIG.items():
        f = getattr(lib, name)
        f.restype = res
        f.argtypes = args
    for struct, fn in ((Error, "ew_error_size"), (Options, "ew_options_size"),
                       (State, "ew_state_size"), (Line, "ew_line_size"),
                       (SweepOptions, "ew_sweep_options_size")):
        if ctypes.sizeof(struct) != getattr(lib, fn)():
            raise ImportError("epiwell: %s has %d bytes in the library, %d here: the package "
                              "and the library are of different versions"
                              % (struct.__name__, getattr(lib, fn)(), ctypes.sizeof(struct)))
    major = int(lib.ew_version().decode().split(".")[0])
    if major != ABI_MAJOR:
        raise ImportError("epiwell: library version %s, package written for %d.x"
                          % (lib.ew_version().decode(), ABI_MAJOR))
    return lib


lib = _declare(_load())
