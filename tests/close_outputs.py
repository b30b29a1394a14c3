#!/usr/bin/env python3
"""close_outputs.py A B — are two outputs of the program the same up to rounding noise?

For a change that moves the last bits of the numbers (a Newton iteration started elsewhere
converges to the same root to 1e-13 eV, not to the same bits).  Both files are split into
numbers and the text between them; the text must be identical and every pair of numbers
close: |a - b| <= max(one unit in the last printed digit of either, 1e-8 |a|, 1e-11).  In a
JSON file every number whose key names an energy (`_eV`, `energy`) must in addition differ
by less than the smallest `error_eV` the file reports (the issue's "within the reported
error_eV").  Prints one line: "close" with the largest differences, or "FAR" with the first
pair that is not close.  Exit status 0 when close, 1 when not.
"""
import json
import re
import sys

NUMBER = re.compile(r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?|nan|inf", re.IGNORECASE)


def last_digit_unit(token):
    """one unit in the last printed digit of a decimal token ('125.45' -> 0.01)"""
    mant, _, exp = token.lower().partition("e")
    frac = mant.split(".")[1] if "." in mant else ""
    return 10.0 ** (int(exp or 0) - len(frac))


def split(text):
    parts, numbers, pos = [], [], 0
    for m in NUMBER.finditer(text):
        parts.append(text[pos:m.start()])
        numbers.append(m.group(0))
        pos = m.end()
    parts.append(text[pos:])
    return parts, numbers


def close_pair(ta, tb):
    a, b = float(ta), float(tb)
    if a == b or (a != a and b != b):
        return True, 0.0
    d = abs(a - b)
    allowed = max(last_digit_unit(ta), last_digit_unit(tb), 1e-8 * max(abs(a), abs(b)), 1e-11)
    return d <= allowed * (1 + 1e-6), d  # the decimal digit's unit is not exact in binary


def energy_leaves(node, key=""):
    """(key, value) of every number in a JSON tree, with the key it sits under"""
    if isinstance(node, dict):
        for k, v in node.items():
            yield from energy_leaves(v, k)
    elif isinstance(node, list):
        for v in node:
            yield from energy_leaves(v, key)
    elif isinstance(node, (int, float)) and not isinstance(node, bool):
        yield key, float(node)


def json_check(text_a, text_b):
    """None, or why the energies differ by more than the smallest error_eV"""
    try:
        ja, jb = json.loads(text_a), json.loads(text_b)
    except ValueError:
        return None
    la, lb = list(energy_leaves(ja)), list(energy_leaves(jb))
    errors = [v for k, v in la if k == "error_eV" and v > 0]
    if not errors or len(la) != len(lb):
        return None
    floor = min(errors)
    for (ka, va), (kb, vb) in zip(la, lb):
        if ka != "error_eV" and ("_eV" in ka or "energy" in ka) and abs(va - vb) >= floor:
            return "%s: %r vs %r, more than the smallest error_eV %g" % (ka, va, vb, floor)
    return None


def main(path_a, path_b):
    with open(path_a, encoding="utf-8") as f:
        text_a = f.read()
    with open(path_b, encoding="utf-8") as f:
        text_b = f.read()
    parts_a, nums_a = split(text_a)
    parts_b, nums_b = split(text_b)
    if parts_a != parts_b or len(nums_a) != len(nums_b):
        print("FAR - the text around the numbers differs")
        return 1
    worst_abs, worst_rel = 0.0, 0.0
    for ta, tb in zip(nums_a, nums_b):
        ok, d = close_pair(ta, tb)
        if not ok:
            print("FAR - %s vs %s" % (ta, tb))
            return 1
        worst_abs = max(worst_abs, d)
        size = max(abs(float(ta)), abs(float(tb)))
        if size >= 1e-6:  # relative change of the values that are not rounding noise
            worst_rel = max(worst_rel, d / size)
    why = json_check(text_a, text_b)
    if why:
        print("FAR - " + why)
        return 1
    print("close - largest difference %.2g, largest relative %.2g (values >= 1e-6)" % (worst_abs, worst_rel))
    return 0


if __name__ == "__main__":
    if len(sys.argv) != 3:
        sys.exit("usage: close_outputs.py A B")
    sys.exit(main(sys.argv[1], sys.argv[2]))
