#!/usr/bin/env python3
"""plot_well.py — the band diagram of a stack and a well-width sweep chart with matplotlib.

    PYTHONPATH=build/python python3 examples/plot_well.py [STACK] [OUTDIR]

STACK defaults to examples/detector_well.cfg, OUTDIR to the current directory; writes
OUTDIR/band_diagram.png (the band edges along z, each level drawn across the layer it lives
in with |psi|^2 on top of it) and OUTDIR/sweep.png (every level of the stack as the well
thickness goes from 4 to 10 nm).  Runs headless (matplotlib's Agg backend).  The functions
return the figures, so that a notebook can show them or change them.
"""
import os
import sys

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402

import epiwell  # noqa: E402

HERE = os.path.dirname(os.path.abspath(__file__))
BAND_COLOUR = {"e": "tab:blue", "hh": "tab:red", "lh": "tab:orange"}


def band_diagram(stack, psi_scale_eV=0.05):
    """Band edges of every band and each level with its |psi|^2 (scaled to psi_scale_eV at
    its peak) drawn at its energy; one Line2D labelled by the level for each level."""
    r = epiwell.solve(stack)
    fig, ax = plt.subplots(figsize=(7, 5))
    for b in epiwell.BANDS:
        ax.plot(r.z_nm, r.edge_eV(b), color=BAND_COLOUR[b], lw=1.2, label="edge " + b,
                gid="edge-" + b)
    for s in r.states:
        p = r.wavefunction(s.label) ** 2
        sign = 1 if s.band == "e" else -1  # hole densities hang below their level
        ax.plot(r.z_nm, s.energy_eV + sign * psi_scale_eV * p / p.max(), color=BAND_COLOUR[s.band],
                lw=0.6, alpha=0.7, gid="psi-" + s.label)
        ax.axhline(s.energy_eV, color=BAND_COLOUR[s.band], lw=0.5, ls="--", gid="level-" + s.label)
    ax.set_xlabel("z (nm)")
    ax.set_ylabel("energy (eV)")
    ax.set_title(os.path.basename(os.fspath(stack)))
    ax.legend(loc="center right", fontsize=8)
    return fig, r


def sweep_chart(stack, key="well.thickness", start=4.0, stop=10.0, step=0.25):
    """Every level column of a sweep of key against its value; one Line2D per column, its
    gid the column name (NaN where the level is not bound: a gap in the curve)."""
    sw = epiwell.sweep(stack, {key: (start, stop, step)}, grid_step_nm=0.1)
    fig, ax = plt.subplots(figsize=(7, 5))
    x = sw[key]
    for c in sw.columns:
        if c.endswith("_eV") and "-" not in c:  # levels, not lines
            band = c[:-3].rstrip("0123456789")
            ax.plot(x, sw[c], color=BAND_COLOUR[band], marker=".", ms=3, lw=1, gid=c, label=c)
    ax.set_xlabel(key + " (nm)")
    ax.set_ylabel("level energy (eV)")
    ax.legend(fontsize=7, ncol=2)
    return fig, sw


def main(argv):
    stack = argv[1] if len(argv) > 1 else os.path.join(HERE, "detector_well.cfg")
    out = argv[2] if len(argv) > 2 else "."
    fig, _ = band_diagram(stack)
    fig.savefig(os.path.join(out, "band_diagram.png"), dpi=100)
    fig, _ = sweep_chart(stack)
    fig.savefig(os.path.join(out, "sweep.png"), dpi=100)
    print("wrote %s and %s" % (os.path.join(out, "band_diagram.png"), os.path.join(out, "sweep.png")))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
