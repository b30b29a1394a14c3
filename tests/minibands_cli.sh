#!/bin/sh
# minibands_cli.sh [BINARY] — `epiwell minibands`: its JSON read by Python's json module (an
# independent parser) against the CSV and the table of the same run, field by field; the
# contract keys; the q grid; the mass against the curvature of the printed dispersion; the
# picture; warnings; usage and input errors.  POSIX sh; last line
# "minibands_cli: N passed, M failed".
. "$(dirname "$0")/lib.sh"
use_binary "${1:-build/epiwell}"
cd "$root" || exit 1
make_tmp mbcli "minibands_cli: 0 passed, 1 failed"

run "$bin" minibands examples/miniband_period.cfg --points 11 --grid-step 0.05 --json \
  --csv "$tmp/m.csv" --plot "$tmp/m.svg"
cp "$tmp/out" "$tmp/m.json"
if [ "$rc" -eq 0 ]; then ok "minibands --json --csv --plot: exit 0"; else nok "minibands: exit 0" "exit $rc: $(head -n 2 "$tmp/err")"; fi
run "$bin" minibands examples/miniband_period.cfg --points 11 --grid-step 0.05
cp "$tmp/out" "$tmp/m.txt"
if [ "$rc" -eq 0 ]; then ok "minibands (table): exit 0"; else nok "minibands table: exit 0" "exit $rc"; fi

out=$(python3 - "$tmp/m.json" "$tmp/m.csv" "$tmp/m.txt" <<'PY' 2>&1
import csv, json, math, sys
d = json.load(open(sys.argv[1]))
rows = list(csv.reader(open(sys.argv[2])))
table = open(sys.argv[3]).read().splitlines()
bad = []
for k in ("period_nm", "minibands"):
    if k not in d: bad.append("key %s missing" % k)
want = ["band", "index", "bottom_eV", "top_eV", "width_eV", "q_inv_nm", "energy_eV"]
mbs = d["minibands"]
if abs(d["period_nm"] - 7.0) > 1e-12: bad.append("period_nm %r" % d["period_nm"])
if abs(d["grid_step_nm"] - 0.05) > 1e-12: bad.append("grid_step_nm")
if not mbs: bad.append("no minibands")
bands = [m["band"] for m in mbs]
if bands != sorted(bands, key=["e", "hh", "lh"].index) or bands[0] != "e": bad.append("band order %s" % bands)
for m in mbs:
    for k in want:
        if k not in m: bad.append("%s: key %s missing" % (m.get("label"), k))
    q, e = m["q_inv_nm"], m["energy_eV"]
    if len(q) != 11 or any(abs(x - math.pi / 7.0 * i / 10) > 1e-9 for i, x in enumerate(q)): bad.append("q grid")
    if m["label"] != "%s%d" % (m["band"], m["index"]): bad.append("label %s" % m["label"])
    lo, hi = min(e), max(e)
    bottom, top = (lo, hi) if m["band"] == "e" else (hi, lo)
    if abs(m["bottom_eV"] - bottom) > 1e-12 or abs(m["top_eV"] - top) > 1e-12: bad.append("bottom/top of %s" % m["label"])
    if abs(m["width_eV"] - (hi - lo)) > 1e-9: bad.append("width of %s" % m["label"])  # %.10g each
    # the edges sit at q = 0 and q = pi/d (1D bands are monotonic in q)
    if {e[0], e[-1]} != {lo, hi}: bad.append("%s: extremes not at the ends" % m["label"])
    # mass at the bottom against the curvature of the printed dispersion at its first step
    # (parabolic near the bottom: ~(q d)^2/12 relative at q d = pi/10 for a cosine band)
    s = 1.0 if m["band"] == "e" else -1.0
    i0, i1 = (0, 1) if s * e[0] < s * e[-1] else (10, 9)
    dq = abs(q[i1] - q[i0])
    K = 0.0380998212  # hbar^2/2m0 in eV nm^2, CODATA 2018 (from memory)
    mass = K * dq * dq / abs(e[i1] - e[i0])
    if abs(mass / m["mass_m0"] - 1) > 0.1: bad.append("%s: mass %r vs curvature %r" % (m["label"], m["mass_m0"], mass))
# CSV = JSON, value by value
if rows[0] != ["q_inv_nm"] + [m["label"] + "_eV" for m in mbs]: bad.append("csv header %s" % rows[0])
for i, r in enumerate(rows[1:]):
    if abs(float(r[0]) - mbs[0]["q_inv_nm"][i]) > 1e-12: bad.append("csv q row %d" % i)
    for j, m in enumerate(mbs):
        if abs(float(r[j + 1]) - m["energy_eV"][i]) > 1e-12: bad.append("csv %s row %d" % (m["label"], i))
# the table's summary rows = JSON (printed to 6 decimals, mass to 4)
summ = {l.split()[0]: l.split()[1:] for l in table[2:2 + len(mbs)]}
for m in mbs:
    r = summ.get(m["label"])
    if not r: bad.append("table row %s missing" % m["label"]); continue
    for k, (key, dec) in enumerate((("bottom_eV", 6), ("top_eV", 6), ("width_eV", 6), ("mass_m0", 4))):
        if abs(float(r[k]) - m[key]) > 0.51 * 10 ** -dec: bad.append("table %s %s" % (m["label"], key))
print("; ".join(bad) if bad else "OK")
PY
)
if [ "$out" = OK ]; then ok "JSON contract keys; q grid; bottom/top/width; mass vs curvature; CSV = JSON; table = JSON"; else nok "JSON/CSV/table agreement" "$out"; fi

if [ -s "$tmp/m.svg" ] && grep -q '<svg' "$tmp/m.svg" && grep -q 'e1' "$tmp/m.svg" && grep -q 'hh1' "$tmp/m.svg"; then
  ok "--plot writes an SVG naming the minibands"
else
  nok "--plot SVG" "missing or without labels"
fi
run "$bin" minibands examples/miniband_period.cfg --points 5 --plot "$tmp/m.png"
if [ "$rc" -eq 0 ] && [ "$(head -c 4 "$tmp/m.png" | od -An -tx1 | tr -d ' \n')" = 89504e47 ]; then
  ok "--plot FILE.png writes a PNG"
else
  nok "--plot PNG" "exit $rc"
fi

# the Kane electron mass where solve uses it (the example switches it off)
sed 's/^nonparabolic = false;.*$//' examples/miniband_period.cfg >"$tmp/kane.cfg"
run "$bin" minibands "$tmp/kane.cfg" --points 3 --json
if [ "$rc" -eq 0 ] && grep -q '"electron_mass":"kane"' "$tmp/out" && grep -q '"electron_mass":"parabolic"' "$tmp/m.json"; then
  ok "electron_mass: kane where solve uses it, parabolic with nonparabolic = false"
else
  nok "electron_mass" "exit $rc: $(head -n 2 "$tmp/err")"
fi
# a doped period: flat bands, warned on stderr and in the JSON
sed 's/thickness = 4.0; }/thickness = 4.0; doping = { donors = 1e17; }; }/' examples/miniband_period.cfg >"$tmp/doped.cfg"
run "$bin" minibands "$tmp/doped.cfg" --points 3 --json
if [ "$rc" -eq 0 ] && grep -q 'miniband-doping-ignored' "$tmp/err" && grep -q '"code":"miniband-doping-ignored"' "$tmp/out"; then
  ok "doped period: warning on stderr and in the JSON"
else
  nok "doping warning" "exit $rc: $(head -n 2 "$tmp/err")"
fi

run "$bin" minibands examples/miniband_period.cfg --points 1
if [ "$rc" -eq 1 ] && grep -q -- '--points' "$tmp/err"; then ok "--points 1: exit 1 naming the option"; else nok "--points 1" "exit $rc"; fi
run "$bin" minibands examples/miniband_period.cfg --grid-step -1
if [ "$rc" -eq 1 ]; then ok "--grid-step -1: exit 1"; else nok "--grid-step -1" "exit $rc"; fi
run "$bin" minibands
if [ "$rc" -eq 1 ]; then ok "no stack: exit 1"; else nok "no stack" "exit $rc"; fi
run "$bin" minibands examples/miniband_period.cfg --plot "$tmp/m.gif"
if [ "$rc" -eq 1 ]; then ok "--plot FILE.gif: exit 1"; else nok "--plot gif" "exit $rc"; fi
# a field breaks the period; a bulk layer confines nothing: input errors (exit 2)
sed 's/^temperature = 300.0;.*$/temperature = 300.0; field = 10.0;/' examples/miniband_period.cfg >"$tmp/field.cfg"
run "$bin" minibands "$tmp/field.cfg" --points 3
if [ "$rc" -eq 2 ] && grep -q 'field' "$tmp/err"; then ok "applied field: exit 2 naming it"; else nok "field" "exit $rc: $(head -n 2 "$tmp/err")"; fi
printf 'layers = ( { name = "bulk"; material = "GaAs"; thickness = 20.0; } );\n' >"$tmp/bulk.cfg"
run "$bin" minibands "$tmp/bulk.cfg" --points 3
if [ "$rc" -eq 2 ]; then ok "no miniband below the window top: exit 2"; else nok "no miniband" "exit $rc"; fi
run "$bin" --help
if grep -q 'epiwell minibands' "$tmp/out"; then ok "epiwell --help lists minibands"; else nok "--help lists minibands"; fi

# --model 8band on the long-wave infrared example: the JSON (Python's json) against the two
# CSVs and the table of the same run, value by value; the gap against the JSON's e1 and hh1
run "$bin" minibands examples/periods/lwir_superlattice.cfg --model 8band --points 5 --kpoints 3 \
  --kmax 0.2 --json --csv "$tmp/k.csv" --csv-k "$tmp/kk.csv"
cp "$tmp/out" "$tmp/k.json"
if [ "$rc" -eq 0 ]; then ok "minibands --model 8band --json --csv --csv-k: exit 0"; else nok "8band: exit 0" "exit $rc: $(head -n 2 "$tmp/err")"; fi
run "$bin" minibands examples/periods/lwir_superlattice.cfg --model 8band --points 5 --kpoints 3 --kmax 0.2
cp "$tmp/out" "$tmp/k.txt"
out=$(python3 - "$tmp/k.json" "$tmp/k.csv" "$tmp/kk.csv" "$tmp/k.txt" <<'PY' 2>&1
import csv, json, math, sys
d = json.load(open(sys.argv[1]))
rows = list(csv.reader(open(sys.argv[2])))
krows = list(csv.reader(open(sys.argv[3])))
table = open(sys.argv[4]).read().splitlines()
bad = []
if d.get("model") != "8band": bad.append("model %r" % d.get("model"))
if d.get("electron_mass") != "kp": bad.append("electron_mass")
mbs = d["minibands"]
labels = [m["label"] for m in mbs]
if labels[0] != "e1" or "hh1" not in labels: bad.append("labels %s" % labels)
if d["k_inv_nm"] != [0, 0.1, 0.2]: bad.append("k_inv_nm %s" % d["k_inv_nm"])
if rows[0] != ["q_inv_nm"] + [l + "_eV" for l in labels]: bad.append("csv header %s" % rows[0])
if krows[0] != ["k_inv_nm"] + [l + "_eV" for l in labels]: bad.append("csv-k header %s" % krows[0])
for j, m in enumerate(mbs):
    for i in range(5):
        if abs(float(rows[1 + i][1 + j]) - m["energy_eV"][i]) > 1e-9 * max(1, abs(m["energy_eV"][i])): bad.append("csv %s q %d" % (m["label"], i))
        if abs(float(rows[1 + i][0]) - m["q_inv_nm"][i]) > 1e-12: bad.append("csv q %d" % i)
    for i in range(3):
        if abs(float(krows[1 + i][1 + j]) - m["energy_k_eV"][i]) > 1e-9 * max(1, abs(m["energy_k_eV"][i])): bad.append("csv-k %s k %d" % (m["label"], i))
    lo, hi = min(m["energy_eV"]), max(m["energy_eV"])
    e = m["band"] == "e"
    if abs(m["bottom_eV"] - (lo if e else hi)) > 1e-9 or abs(m["width_eV"] - (hi - lo)) > 1e-9: bad.append("bottom/width %s" % m["label"])
    line = [t for t in table if t.split() and t.split()[0] == m["label"]]
    if not line or abs(float(line[0].split()[1]) - m["bottom_eV"]) > 1e-6: bad.append("table %s" % m["label"])
e1 = mbs[labels.index("e1")]
h1 = mbs[labels.index("e1") + len([m for m in mbs if m["band"] == "e"])]
if abs(d["gap_eV"] - (min(e1["energy_eV"]) - max(h1["energy_eV"]))) > 1e-9: bad.append("gap_eV")
gl = [t for t in table if t.startswith("superlattice gap")]
if not gl or abs(float(gl[0].split(":")[1].split()[0]) - d["gap_eV"]) > 1e-6: bad.append("table gap")
print("\n".join(bad) if bad else "ok")
PY
)
if [ "$out" = ok ]; then ok "8band JSON = CSV = --csv-k = table, gap = e1 - hh1"; else nok "8band outputs agree" "$out"; fi
run "$bin" minibands examples/periods/lwir_superlattice.cfg --kmax 0.2
if [ "$rc" -eq 1 ] && grep -q -- '--model' "$tmp/err"; then ok "--kmax without a k.p model: exit 1"; else nok "--kmax single-band" "exit $rc"; fi
run "$bin" minibands examples/periods/lwir_superlattice.cfg --model 7band
if [ "$rc" -eq 1 ] && grep -q -- '--model' "$tmp/err"; then ok "--model 7band: exit 1"; else nok "--model 7band" "exit $rc"; fi

finish minibands_cli
