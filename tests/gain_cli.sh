#!/bin/sh
# gain_cli.sh [BINARY] — `epiwell gain`: its JSON read by Python's json module (an independent
# parser) against the CSV and the table of the same run, the contract keys, the
# Bernard–Duraffourg sign change read off the written spectra (M. G. A. Bernard,
# G. Duraffourg, Phys. Status Solidi 1, 699 (1961)), the picture, usage and input errors.
# POSIX sh; last line "gain_cli: N passed, M failed".
. "$(dirname "$0")/lib.sh"
use_binary "${1:-build/epiwell}"
cd "$root" || exit 1
make_tmp gaincli "gain_cli: 0 passed, 1 failed"

cat >"$tmp/w.cfg" <<'CFG'
temperature = 300.0;
grid_step = 0.1;
layers = (
  { name = "b1"; material = "AlGaAs"; x = 0.3; thickness = 8.0; },
  { name = "well"; material = "GaAs"; thickness = 6.0; },
  { name = "b2"; material = "AlGaAs"; x = 0.3; thickness = 8.0; }
);
CFG

run "$bin" gain "$tmp/w.cfg" --density 2e12:6e12:2e12 --linewidth 2 --json --csv "$tmp/g.csv" \
  --plot "$tmp/g.svg"
cp "$tmp/out" "$tmp/g.json"
if [ "$rc" -eq 0 ]; then ok "gain --json --csv --plot: exit 0"; else nok "gain: exit 0" "exit $rc: $(head -n 2 "$tmp/err")"; fi
run "$bin" gain "$tmp/w.cfg" --density 2e12:6e12:2e12 --linewidth 2
cp "$tmp/out" "$tmp/g.txt"

out=$(python3 - "$tmp/g.json" "$tmp/g.csv" "$tmp/g.txt" <<'PY' 2>&1
import csv, json, math, sys
d = json.load(open(sys.argv[1]))
rows = list(csv.DictReader(open(sys.argv[2])))
table = open(sys.argv[3]).read().split("\n")
bad = []
if "transparency_density_cm2" not in d: bad.append("no transparency_density_cm2")
if d["lineshape"] != "sech" or d["linewidth_meV"] != 2: bad.append("lineshape %s %s" % (d["lineshape"], d["linewidth_meV"]))
ds = d["densities"]
if [x["density_cm2"] for x in ds] != [2e12, 4e12, 6e12]: bad.append("densities")
need = ["density_cm2", "fermi_separation_eV", "energy_eV", "gain_te_cm", "gain_tm_cm", "spontaneous"]
for x in ds:
    if list(x.keys())[:6] != need: bad.append("the issue's keys first, in order: %s" % list(x.keys()))
# CSV = JSON value by value (one row per density and energy, densities outer)
n = len(ds[0]["energy_eV"])
if len(rows) != n * len(ds): bad.append("csv rows %d" % len(rows))
for r, row in enumerate(rows):
    x = ds[r // n]; i = r % n
    want = {"density_cm2": x["density_cm2"], "fermi_separation_eV": x["fermi_separation_eV"],
            "energy_eV": x["energy_eV"][i], "gain_te_cm": x["gain_te_cm"][i],
            "gain_tm_cm": x["gain_tm_cm"][i], "spontaneous": x["spontaneous"][i]}
    for k, v in want.items():
        if abs(float(row[k]) - v) > 1e-9 * abs(v) + 1e-300: bad.append("csv %s row %d" % (k, r)); break
# the table's peak row per density (%.2f / %.6f) = the JSON's
rows_t = [l.split() for l in table if l[:1] == " " and len(l.split()) == 5]
if len(rows_t) != len(ds): bad.append("table rows %d" % len(rows_t))
for x, t in zip(ds, rows_t):
    if abs(float(t[1]) - x["fermi_separation_eV"]) > 6e-7: bad.append("table dF")
    if abs(float(t[2]) - x["peak_gain_te_cm"]) > 0.006: bad.append("table peak TE")
    if abs(float(t[2]) - max(x["gain_te_cm"])) > 0.006: bad.append("peak TE is not the spectrum's maximum")
# Bernard-Duraffourg: the TE gain changes sign within 2 meV (the 2 meV line) of dF
for x in ds:
    e, g = x["energy_eV"], x["gain_te_cm"]
    cross = [e[i] + (e[i + 1] - e[i]) * g[i] / (g[i] - g[i + 1]) for i in range(len(e) - 1) if g[i] > 0 >= g[i + 1]]
    if max(g) > 0 and (not cross or abs(cross[-1] - x["fermi_separation_eV"]) > 0.002):
        bad.append("sign change %s vs dF %s" % (cross[-1:] , x["fermi_separation_eV"]))
    if max(g) > 0 and any(v > 0 for v, en in zip(g, e) if en > x["fermi_separation_eV"] + 0.01): bad.append("gain above dF")
print("; ".join(bad) if bad else "OK")
PY
)
if [ "$out" = OK ]; then ok "JSON = CSV = table; contract keys; sign change at Fc - Fv"; else nok "JSON/CSV/table agreement" "$out"; fi

if [ -s "$tmp/g.svg" ] && grep -q '<svg' "$tmp/g.svg" && grep -q 'cm^-2' "$tmp/g.svg"; then
  ok "--plot writes an SVG naming the densities"
else
  nok "--plot SVG" "missing or without labels"
fi

run "$bin" gain "$tmp/w.cfg"
if [ "$rc" -eq 1 ] && grep -q -- '--density' "$tmp/err"; then ok "no --density: exit 1 naming it"; else nok "no --density" "exit $rc"; fi
run "$bin" gain "$tmp/w.cfg" --density 5e12:1e12:1e12
if [ "$rc" -eq 1 ]; then ok "--density TO < FROM: exit 1"; else nok "--density reversed" "exit $rc"; fi
run "$bin" gain "$tmp/w.cfg" --density 1e12:2e12:1e12 --lineshape gauss
if [ "$rc" -eq 1 ] && grep -q -- '--lineshape' "$tmp/err"; then ok "--lineshape gauss: exit 1"; else nok "--lineshape gauss" "exit $rc"; fi
run "$bin" gain "$tmp/w.cfg" --density 1e12:2e12:1e12 --linewidth 0
if [ "$rc" -eq 1 ]; then ok "--linewidth 0: exit 1"; else nok "--linewidth 0" "exit $rc"; fi

sed 's/thickness = 6.0; }/thickness = 6.0; doping = { donors = 1e17; }; }/' "$tmp/w.cfg" >"$tmp/doped.cfg"
run "$bin" gain "$tmp/doped.cfg" --density 1e12:2e12:1e12
if [ "$rc" -eq 2 ] && grep -q 'doped' "$tmp/err"; then ok "doped stack: exit 2"; else nok "doped stack" "exit $rc: $(head -n 1 "$tmp/err")"; fi

# user materials give no Kane energy: an input error naming the layer's line
cat >"$tmp/user.cfg" <<'CFG'
temperature = 300.0;
grid_step = 0.1;
materials = (
  { name = "bar"; Ec = 1.0; Ev = -0.3; me = 0.09; mhh = 0.40; mlh = 0.10; },
  { name = "wel"; Ec = 0.7; Ev = -0.1; me = 0.067; mhh = 0.35; mlh = 0.09; }
);
layers = (
  { name = "b1"; material = "bar"; thickness = 8.0; },
  { name = "well"; material = "wel"; thickness = 6.0; },
  { name = "b2"; material = "bar"; thickness = 8.0; }
);
CFG
run "$bin" gain "$tmp/user.cfg" --density 1e12:1e12:1e12
if [ "$rc" -eq 2 ] && grep -q 'user.cfg:9:.*Ep' "$tmp/err"; then ok "user material without Ep: exit 2 at the layer's line"; else nok "user material" "exit $rc: $(head -n 1 "$tmp/err")"; fi

finish gain_cli
