"""Tests of the Python package (pytest; run by tests/python.sh inside `make check`).

References: the command `epiwell solve --json` (the same library, reached through the CLI's
own code path: values must agree to the last printed digit, %.10g); the line numbers planted
in the test stacks; the even-parity finite-well equation of BenDaniel and Duke, Phys. Rev.
152, 683 (1966), solved here by bisection; CODATA 2018 for ħ²/2m0.
"""
import ctypes
import glob
import json
import math
import os
import re
import subprocess
import threading

import numpy as np
import pytest

import epiwell

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
BIN = os.environ.get("EPIWELL_BIN", os.path.join(ROOT, "build", "epiwell"))
EXAMPLES = sorted(glob.glob(os.path.join(ROOT, "examples", "*.cfg")))
DETECTOR = os.path.join(ROOT, "examples", "detector_well.cfg")


def cli_json(path, *args):
    out = subprocess.run([BIN, "solve", path, "--json", *args], check=True,
                         stdout=subprocess.PIPE).stdout
    return json.loads(out)


def printed(v):
    """v as the JSON writer prints it (%.10g, null for non-finite), read back."""
    if v is None or (isinstance(v, float) and not math.isfinite(v)):
        return None
    if isinstance(v, bool):
        return v
    return float("%.10g" % v)


def same(got, want, what):
    if isinstance(want, str) or isinstance(want, bool) or want is None:
        assert printed(got) == want if not isinstance(want, str) else got == want, what
    else:
        assert printed(got) == float(want), "%s: %r (printed %r) != %r" % (what, got, printed(got), want)


STATE_KEYS = {"label": "label", "band": "band", "n": "n", "energy_eV": "energy_eV",
              "error_eV": "error_eV", "edge_eV": "edge_eV", "depth_eV": "depth_eV",
              "layer": "layer", "layer_probability": "layer_probability",
              "residual": "residual", "flagged": "flagged",
              "inplane_mass_m0": "inplane_mass_m0", "sheet_density_cm2": "sheet_density_cm2"}


def compare_with_cli(r, d):
    same(r.temperature_K, d["temperature_K"], "temperature_K")
    same(r.grid_step_nm, d["grid_step_nm"], "grid_step_nm")
    assert r.z_nm.shape == (d["nodes"],)
    assert r.model == d["model"]
    assert [w.text for w in r.warnings] == d["warnings"]
    assert [w.code for w in r.warnings] == d["warning_codes"]
    for b in epiwell.BANDS:
        assert r.band_count[b] == d["bands"][b]["count"], b
        same(r.window_eV[b], d["bands"][b]["window_eV"], "window " + b)
    assert len(r.states) == len(d["states"])
    for s, js in zip(r.states, d["states"]):
        for attr, key in STATE_KEYS.items():
            same(getattr(s, attr), js[key], "%s.%s" % (s.label, key))
    assert len(r.lines) == len(d["transitions"])
    for ln, jt in zip(r.lines, d["transitions"]):
        what = "%s %s-%s" % (ln.kind, ln.upper, ln.lower)
        for key, val in jt.items():
            if key == "wavelength_um":
                same(ln.wavelength_nm / 1e3, val, what + " wavelength_um")
            elif key == "depolarization_shift_eV":
                same(ln.depolarization_shift_eV, val, what + " " + key)
            else:
                same(getattr(ln, key), val, what + " " + key)
    same(r.fermi_energy_eV, d["fermi_energy_eV"], "fermi_energy_eV")
    same(r.sp_residual_eV, d["residual_eV"], "residual_eV")
    assert (r.sp_iterations or None) == d["iterations"]


@pytest.mark.parametrize("path", EXAMPLES, ids=os.path.basename)
def test_values_equal_cli_json(path):
    compare_with_cli(epiwell.solve(path), cli_json(path))


def test_grid_step_equals_cli_option():
    compare_with_cli(epiwell.solve(DETECTOR, grid_step_nm=0.1), cli_json(DETECTOR, "--grid-step", "0.1"))


def test_temperature_and_set_equal_an_edited_file(tmp_path):
    text = open(DETECTOR).read()
    edited = text.replace("temperature = 77.0;", "temperature = 300.0;")
    edited = edited.replace("thickness = 6.2;", "thickness = 7.1;")
    assert edited.count("300.0") == 1 and "7.1" in edited
    p = tmp_path / "edited.cfg"
    p.write_text(edited)
    r = epiwell.solve(DETECTOR, temperature_K=300, set={"well.thickness": 7.1})
    compare_with_cli(r, cli_json(str(p)))
    # the same from text
    compare_with_cli(epiwell.solve(text, temperature_K=300, set={"well.thickness": 7.1}), cli_json(str(p)))


def test_warnings_with_codes_equal_cli(tmp_path):
    # Al0.7Ga0.3As barriers are indirect (X minimum below Γ above x ≈ 0.4: Vurgaftman et al.,
    # J. Appl. Phys. 89, 5815 (2001)), which the result warns about
    text = open(DETECTOR).read().replace("x = 0.28", "x = 0.7")
    p = tmp_path / "indirect.cfg"
    p.write_text(text)
    r = epiwell.solve(str(p))
    d = cli_json(str(p))
    assert d["warning_codes"], "the reference stack must have warnings"
    compare_with_cli(r, d)
    assert all(isinstance(w, epiwell.Warning) and w.code for w in r.warnings)


def test_arrays_have_the_right_shapes():
    r = epiwell.solve(DETECTOR)
    n = r.z_nm.shape[0]
    assert r.wavefunctions.shape == (len(r.states), n)
    for b in epiwell.BANDS:
        assert r.edge_eV(b).shape == (n,) and r.mass(b).shape == (n,)
        assert r.edge_eV(b).dtype == np.float64
    assert r.wavefunction("e1").shape == (n,)
    # the nodes are the interior ones of 0 … 30 + 6.2 + 30 nm (ψ = 0 on both outer faces)
    h = r.grid_step_nm
    assert n == round(66.2 / h) - 1
    assert abs(r.z_nm[0] - h) < 1e-12 and abs(r.z_nm[-1] - (66.2 - h)) < 1e-9
    assert np.all(np.diff(r.z_nm) > 0)
    # ∫|ψ|² dz = 1 (the header's normalisation), trapezoid rule at h = 0.05 nm: O(h²) ~ 1e-4
    psi = r.wavefunction("e1")
    assert abs(np.trapz(psi * psi, r.z_nm) - 1.0) < 1e-3
    # the edge in the well is the well's Ec: the layer table of the CLI
    d = cli_json(DETECTOR)
    well = d["layers"][1]
    mid = np.argmin(abs(r.z_nm - (well["z_start_nm"] + well["thickness_nm"] / 2)))
    same(r.edge_eV("e")[mid], well["Ec_eV"], "Ec in the well")
    with pytest.raises(KeyError):
        r.wavefunction("e9")


HBAR2_2M0 = 0.0380998212  # ħ²/(2 m0), eV nm², CODATA 2018


def finite_well_ground(V0, a, mw, mb):
    """Even ground state of a finite well with the BenDaniel-Duke condition
    (k/mw) tan(k a/2) = κ/mb, by bisection on (0, min(V0, first tan pole))."""
    def f(E):
        k = math.sqrt(mw * E / HBAR2_2M0)
        kap = math.sqrt(mb * (V0 - E) / HBAR2_2M0)
        return k / mw * math.tan(k * a / 2) - kap / mb
    hi = min(V0, HBAR2_2M0 * (math.pi / a) ** 2 / mw) * (1 - 1e-12)
    lo = 1e-12
    for _ in range(200):
        mid = (lo + hi) / 2
        lo, hi = (mid, hi) if f(mid) < 0 else (lo, mid)
    return (lo + hi) / 2


def test_finite_well_analytic():
    r = epiwell.solve(os.path.join(ROOT, "tests", "data", "stack_user.cfg"))
    e1 = r.state("e1")
    want = 0.9 + finite_well_ground(0.3, 6.0, 0.067, 0.09)
    # Richardson-extrapolated; allow a few times its own estimate plus the 30 nm barriers'
    # tunnelling (exp(-2κ·30 nm) ~ 1e-20, negligible)
    assert abs(e1.energy_eV - want) < max(5 * e1.error_eV, 2e-6), (e1.energy_eV, want)


def test_stack_errors_raise_with_file_and_line():
    text = "temperature = 300.0;\nlayers = (\n  { name = \"w\"; material = \"GaAs\"; thickness = 5.0; },\n" \
           "  { name = \"b\"; material = \"GaAs\"; thicknes = 5.0; }\n);\n"
    with pytest.raises(epiwell.EpiwellError) as e:
        epiwell.solve(text, name="typo.cfg")
    assert (e.value.file, e.value.line, e.value.code, e.value.status) == ("typo.cfg", 4, 2, "input")
    assert "thicknes" in e.value.message and str(e.value).startswith("typo.cfg:4: ")
    for f, line in (("syntax_error.cfg", 5), ("unknown_key.cfg", 5)):
        path = os.path.join(ROOT, "tests", "data", "cli", f)
        with pytest.raises(epiwell.EpiwellError) as e:
            epiwell.solve(path)
        assert (e.value.file, e.value.line) == (path, line)
        # the same words as the command
        cli = subprocess.run([BIN, "solve", path], stderr=subprocess.PIPE).stderr.decode()
        assert cli.strip() == "epiwell: " + str(e.value)
    with pytest.raises(epiwell.EpiwellError) as e:  # an error of a setting names its line
        epiwell.solve(DETECTOR, set={"well.thickness": -1.0})
    assert e.value.file == DETECTOR and e.value.line == 6 and e.value.code == 2
    with pytest.raises(epiwell.EpiwellError) as e:
        epiwell.solve(DETECTOR, set={"no_such_layer.thickness": 1.0})
    assert e.value.code == 1
    with pytest.raises(epiwell.EpiwellError) as e:
        epiwell.solve(os.path.join(ROOT, "no_such_file.cfg"))
    assert e.value.code == 5


def test_version_matches_header():
    hdr = open(os.path.join(ROOT, "src", "epiwell.h")).read()
    nums = [re.search(r"#define EW_VERSION_%s (\d+)" % k, hdr).group(1) for k in ("MAJOR", "MINOR", "PATCH")]
    assert epiwell.version() == ".".join(nums)
    assert '#define EW_VERSION "%s"' % epiwell.version() in hdr


def rss_kB():
    with open("/proc/self/statm") as f:
        return int(f.read().split()[1]) * os.sysconf("SC_PAGE_SIZE") // 1024


def test_many_solves_do_not_grow_memory():
    text = open(DETECTOR).read()
    for _ in range(30):  # warm-up: allocator pools, the catalogue
        epiwell.solve(text, grid_step_nm=0.1)
    before = rss_kB()
    for i in range(400):
        epiwell.solve(text, grid_step_nm=0.1, set={"well.thickness": 5.0 + (i % 7) * 0.3})
        try:
            epiwell.solve(text + "oops", grid_step_nm=0.1)
        except epiwell.EpiwellError:
            pass
    grown = rss_kB() - before
    # one leaked result per solve would be ≥ 400 × ~50 kB = 20 MB
    assert grown < 4096, "RSS grew by %d kB over 800 calls" % grown


def test_threads_give_the_serial_values():
    widths = [4.0 + 0.5 * i for i in range(8)]
    serial = [epiwell.solve(DETECTOR, set={"well.thickness": w}).state("e1").energy_eV for w in widths]
    got = [None] * len(widths)
    errors = []

    def work(k):
        try:
            for i in range(k, len(widths), 4):
                got[i] = epiwell.solve(DETECTOR, set={"well.thickness": widths[i]}).state("e1").energy_eV
        except Exception as e:  # noqa: BLE001 - reported below
            errors.append(e)
    ts = [threading.Thread(target=work, args=(k,)) for k in range(4)]
    for t in ts:
        t.start()
    for t in ts:
        t.join()
    assert not errors and got == serial
    # and the widths matter (a wider well binds e1 deeper: Bastard, Wave Mechanics Applied to
    # Semiconductor Heterostructures, 1988, ch. II)
    assert all(a > b for a, b in zip(serial, serial[1:]))


def test_struct_sizes_checked_against_library():
    from epiwell import _lib
    assert ctypes.sizeof(_lib.Options) == _lib.lib.ew_options_size()
    assert ctypes.sizeof(_lib.State) == _lib.lib.ew_state_size()
    assert ctypes.sizeof(_lib.Line) == _lib.lib.ew_line_size()
    assert ctypes.sizeof(_lib.Error) == _lib.lib.ew_error_size()
