#!/usr/bin/env python3
"""The demo data stay what data/README.md and README.md say they are.

Usage: demo_data_check.py SOURCE_DIR PATH_TO_SCATTERPROP

1. data/make_demo_data.py (fixed seed) rewrites every CSV of data/ byte for
   byte, so the committed files are the script's output.
2. Every CSV of data/ starts with the line '# invented demo data ...'.
3. The features built into the scenario are there, read back through
   'scatterprop summary --json': two wire lots of about 60 readings with a
   small lot-to-lot shift (0.001 to 0.006 mm) and one suspicious reading
   (2.0311 mm, which skews its lot); one missing coil diameter; about 15
   shear-modulus coupons in GPa; about 200 assembly loads in N, one missing
   and skewed to the right.

Exit status: 0 all hold, 1 otherwise.
"""
import glob
import json
import os
import subprocess
import sys
import tempfile

failures = []


def check(cond, what):
    if not cond:
        failures.append(what)


def summary(sp, path, *args):
    out = subprocess.run([sp, "summary", path, "--json", *args], check=True,
                         capture_output=True, text=True).stdout
    return json.loads(out)


def groups(doc, column):
    for c in doc["columns"]:
        if c["name"] == column:
            return {g["group"]: g for g in c["groups"]}, c["unit"]
    raise KeyError(column)


def main():
    src, sp = sys.argv[1], sys.argv[2]
    data = os.path.join(src, "data")
    committed = sorted(glob.glob(os.path.join(data, "*.csv")))
    check(len(committed) == 4, f"data/ holds {len(committed)} CSV files, want 4")
    with tempfile.TemporaryDirectory() as tmp:
        subprocess.run([sys.executable, os.path.join(data, "make_demo_data.py"), tmp], check=True)
        made = sorted(os.path.basename(p) for p in glob.glob(os.path.join(tmp, "*.csv")))
        check(made == [os.path.basename(p) for p in committed],
              f"the script writes {made}, data/ holds others")
        for p in committed:
            q = os.path.join(tmp, os.path.basename(p))
            with open(p, "rb") as a:
                mine = a.read()
            check(os.path.exists(q) and open(q, "rb").read() == mine,
                  f"{os.path.basename(p)} differs from make_demo_data.py's output")
            check(mine.startswith(b"# invented demo data"),
                  f"{os.path.basename(p)} does not start with '# invented demo data'")

    wire = summary(sp, os.path.join(data, "wire_d.csv"), "--by", "lot")
    g, unit = groups(wire, "wire_d")
    check(unit == "mm", f"wire_d unit {unit}")
    lots = [k for k in g if k is not None]
    check(len(lots) == 2, f"wire lots {lots}")
    check(all(55 <= g[k]["n"] <= 65 for k in lots), "wire lots of about 60 readings")
    shift = abs(g[lots[1]]["mean"] - g[lots[0]]["mean"])
    check(0.001 <= shift <= 0.006, f"wire lot shift {shift} mm")
    check(g[None]["max"] == 2.0311, f"wire maximum {g[None]['max']}, want the suspicious 2.0311")
    check(max(g[k]["skewness"] for k in lots) > 1.5, "the suspicious reading skews its lot")
    check(any(m["key"] == "gauge" for m in wire["metadata"]), "wire gauge metadata")

    coil = summary(sp, os.path.join(data, "coil_dm.csv"))
    g, unit = groups(coil, "Dm")
    check(unit == "mm" and g[None]["missing"] == 1, "coil diameter in mm, one missing")

    shear = summary(sp, os.path.join(data, "shear_modulus.csv"))
    g, unit = groups(shear, "G")
    check(unit == "GPa" and 12 <= g[None]["n"] <= 18, "about 15 coupons in GPa")

    load = summary(sp, os.path.join(data, "assembly_load.csv"))
    g, unit = groups(load, "load")
    check(unit == "N" and g[None]["rows"] == 200 and g[None]["missing"] == 1,
          "200 assembly loads in N, one missing")
    check(g[None]["skewness"] > 0.5, f"load skewness {g[None]['skewness']}, want right-skewed")

    for f in failures:
        print("demo data:", f)
    if not failures:
        print("demo data: the script's output, headed as invented, with the features described")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
