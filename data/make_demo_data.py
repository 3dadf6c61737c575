#!/usr/bin/env python3
"""Writes the invented demo data of scatterprop's spring scenario.

A maker of helical compression springs for a valve actuator inspects
incoming wire, the wound coils, torsion coupons of the wire, and logs the
assembly load at the line.  Every number here is INVENTED for the demo: it
is drawn from the distributions below with a fixed seed, and is not a
measurement of anything.

    python3 data/make_demo_data.py [OUTDIR]     (default: the data/ folder)

Uses only Python's standard library (random.Random with a fixed seed; its
Mersenne Twister stream and gauss/gammavariate algorithms are stable across
Python 3 releases), so the files are the same on every machine.
"""
import os
import random
import sys

SEED = 20261201


def fmt(v, decimals):
    return f"{v:.{decimals}f}"


def write(path, header_lines, columns, rows):
    with open(path, "w", newline="") as f:
        for h in header_lines:
            f.write(f"# {h}\n")
        f.write(",".join(columns) + "\n")
        for r in rows:
            f.write(",".join(r) + "\n")


def main():
    out = sys.argv[1] if len(sys.argv) > 1 else os.path.dirname(os.path.abspath(__file__))
    rng = random.Random(SEED)
    invented = "invented demo data (scatterprop spring scenario, make_demo_data.py, seed %d)" % SEED

    # Wire diameter by micrometer, two wire lots with a small shift.
    rows = []
    part = 1
    for lot, mean, n in (("W24-117", 2.0005, 61), ("W24-131", 2.0035, 59)):
        for _ in range(n):
            d = rng.gauss(mean, 0.0040)
            rows.append([f"S{part:04d}", lot, fmt(d, 4)])
            part += 1
    # One suspicious reading: a digit slip on the gauge log (2.0311 for ~2.011).
    rows[87][2] = "2.0311"
    write(os.path.join(out, "wire_d.csv"),
          [invented, "gauge: MC-07 outside micrometer, resolution 0.0001 mm",
           "characteristic: wire diameter d, measured at mid-coil", "unit_note: millimetres"],
          ["part", "lot", "wire_d [mm]"], rows)

    # Mean coil diameter on the wound spring (optical comparator).
    rows = []
    for i in range(80):
        dm = rng.gauss(16.00, 0.075)
        rows.append([f"S{i + 1:04d}", fmt(dm, 3)])
    rows[23][1] = ""  # a reading that was not taken: missing, not zero
    write(os.path.join(out, "coil_dm.csv"),
          [invented, "gauge: OC-2 optical comparator, resolution 0.001 mm",
           "characteristic: mean coil diameter Dm"],
          ["part", "Dm [mm]"], rows)

    # Torsion coupons of the wire: shear modulus, few and costly.
    rows = []
    for i in range(15):
        g = rng.gauss(79.3, 0.9)
        lot = "W24-117" if i < 8 else "W24-131"
        rows.append([f"T{i + 1:02d}", lot, fmt(g, 2)])
    write(os.path.join(out, "shear_modulus.csv"),
          [invented, "test: torsion of wire coupons, 20 degC",
           "characteristic: shear modulus G"],
          ["coupon", "lot", "G [GPa]"], rows)

    # Assembly load logged at the line: skewed to the right (a floor set by
    # the fixture preload plus gamma-distributed variation).
    rows = []
    for i in range(200):
        f = 96.0 + rng.gammavariate(3.0, 6.5)
        station = "A" if i % 2 == 0 else "B"
        rows.append([f"2026-11-{3 + i // 40:02d}T{8 + (i % 40) // 5:02d}:{(i * 7) % 60:02d}",
                     station, fmt(f, 1)])
    rows[141][2] = "NA"  # a logger dropout
    write(os.path.join(out, "assembly_load.csv"),
          [invented, "logger: line 3 press, load cell LC-500, resolution 0.1 N",
           "characteristic: spring load at assembled length"],
          ["timestamp", "station", "load [N]"], rows)


if __name__ == "__main__":
    main()
