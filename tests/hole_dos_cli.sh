#!/bin/sh
# hole_dos_cli.sh [BINARY] — `epiwell solve --hole-dos`: the JSON (read by Python's json
# module, an independent parser) names the model and gives every hole level's "dos_mass_m0",
# the same values as levels.csv and the table's m_dos column; the default run has them null
# and empty; a p-doped well's Fermi level moves away from the band with the k·p density of
# states (heavier: band mixing, README "Doped structures"); a bad value is a usage error.
# POSIX sh; last line "hole_dos_cli: N passed, M failed".
. "$(dirname "$0")/lib.sh"
use_binary "${1:-build/epiwell}"
cd "$root" || exit 1
make_tmp holedoscli "hole_dos_cli: 0 passed, 1 failed"

cat >"$tmp/w.cfg" <<'CFG'
temperature = 300.0;
grid_step = 0.1;
layers = (
  { name = "b1"; material = "AlGaAs"; x = 0.3; thickness = 6.0; },
  { name = "well"; material = "GaAs"; thickness = 6.0; },
  { name = "b2"; material = "AlGaAs"; x = 0.3; thickness = 6.0; }
);
CFG
sed 's/thickness = 6.0; }/thickness = 6.0; doping = { acceptors = 5e18; }; }/' "$tmp/w.cfg" >"$tmp/p.cfg"

run "$bin" solve "$tmp/w.cfg" --hole-dos kp --json -o "$tmp/kp"
cp "$tmp/out" "$tmp/kp.json"
if [ "$rc" -eq 0 ]; then ok "solve --hole-dos kp --json -o: exit 0"; else nok "solve --hole-dos kp" "exit $rc: $(head -n 2 "$tmp/err")"; fi
run "$bin" solve "$tmp/w.cfg" --hole-dos kp
cp "$tmp/out" "$tmp/kp.txt"
run "$bin" solve "$tmp/w.cfg" --json -o "$tmp/par"
cp "$tmp/out" "$tmp/par.json"
run "$bin" solve "$tmp/p.cfg" --json
cp "$tmp/out" "$tmp/p_par.json"
run "$bin" solve "$tmp/p.cfg" --json --hole-dos kp-axial
cp "$tmp/out" "$tmp/p_kp.json"

out=$(python3 - "$tmp" <<'PY' 2>&1
import csv, json, sys
t = sys.argv[1]
kp, par = json.load(open(t + "/kp.json")), json.load(open(t + "/par.json"))
rows = list(csv.DictReader(open(t + "/kp/levels.csv")))
prow = list(csv.DictReader(open(t + "/par/levels.csv")))
table = [l.split() for l in open(t + "/kp.txt").read().split("\n")]
bad = []
if kp.get("hole_dos") != "kp" or par.get("hole_dos") != "parabolic": bad.append("hole_dos names")
n = 0
for s, r in zip(kp["states"], rows):
    m = s["dos_mass_m0"]
    if r["label"] != s["label"]: bad.append("csv order")
    if s["band"] == "e" and m is not None: bad.append("electron %s has a DOS mass" % s["label"])
    if m is None:
        if r["dos_mass_m0"] != "": bad.append("csv %s not empty" % s["label"])
        continue
    n += 1
    if not (0.05 < m < 5): bad.append("%s mass %g" % (s["label"], m))
    if abs(float(r["dos_mass_m0"]) - m) > 5e-7: bad.append("csv %s" % s["label"])
    row = [x for x in table if x and x[0] == s["label"]]
    if not row or abs(float(row[0][-1]) - m) > 5e-5: bad.append("table m_dos %s" % s["label"])
if n < 2: bad.append("only %d DOS masses" % n)
for s in par["states"]:
    if s["dos_mass_m0"] is not None: bad.append("parabolic run has a DOS mass")
for r in prow:
    if r["dos_mass_m0"] != "": bad.append("parabolic levels.csv not empty")
pp, pk = json.load(open(t + "/p_par.json")), json.load(open(t + "/p_kp.json"))
if pk.get("hole_dos") != "kp-axial": bad.append("kp-axial name")
def x(d):
    h = [s for s in d["states"] if s["label"] == "hh1"][0]
    return h["energy_eV"] - d["fermi_energy_eV"]
if not (x(pk) < x(pp) - 0.01): bad.append("E_hh1 - E_F: parabolic %g, k.p %g" % (x(pp), x(pk)))
if abs(pk["holes_cm2"] - pk["acceptors_ionised_cm2"]) > 1e-3 * pk["acceptors_ionised_cm2"]: bad.append("neutrality")
print("; ".join(bad) if bad else "OK")
PY
)
if [ "$out" = OK ]; then ok "JSON = levels.csv = table; null/empty without the option; p-doped E_F moves off the band"; else nok "hole DOS outputs" "$out"; fi

run "$bin" solve "$tmp/w.cfg" --hole-dos kp6
if [ "$rc" -eq 1 ] && grep -q -- '--hole-dos' "$tmp/err"; then ok "--hole-dos kp6: exit 1 naming it"; else nok "--hole-dos kp6" "exit $rc"; fi
run "$bin" solve "$tmp/w.cfg" --hole-dos
if [ "$rc" -eq 1 ]; then ok "--hole-dos without a value: exit 1"; else nok "--hole-dos without a value" "exit $rc"; fi
run "$bin" solve examples/ingan_led.cfg --hole-dos kp
if [ "$rc" -eq 2 ] && grep -q 'wurtzite' "$tmp/err"; then ok "wurtzite stack with --hole-dos kp: exit 2"; else nok "wurtzite --hole-dos kp" "exit $rc"; fi
finish hole_dos_cli
