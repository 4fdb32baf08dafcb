#!/usr/bin/python3
"""Write sexagesimal_reference.csv: sexagesimal angles and their values in
degrees as parsed by astropy.coordinates.Angle (Debian python3-astropy), the
reference for the catalog reader's sexagesimal parsing. Every angle is invented:
none is the position of a known object.

Run from this folder:  /usr/bin/python3 sexagesimal_reference.py
Generated with Python 3.11.2 and astropy 5.2.1 (Debian packages).
"""
import csv

import astropy.units as u
from astropy.coordinates import Angle

# (kind, text); astropy reads each text as the catalog reader does.
CASES = [
    ("ra", "18:00:00"),
    ("ra", "07 41 18.6"),
    ("ra", "07h41m18.6s"),
    ("ra", "23:59:59.999"),
    ("ra", "00:00:00.001"),
    ("ra", "12h30m"),
    ("ra", "06:30"),
    ("ra", "14:27:51.6183"),
    ("ra", "3h7m11.25s"),
    ("dec", "-05:30:00"),
    ("dec", "+21 37 44"),
    ("dec", "-48d17m25s"),
    ("dec", "-00:30:00"),
    ("dec", "-00:00:36"),
    ("dec", "+89:59:59.9"),
    ("dec", "-10:15.5"),
    ("dec", "-37:48:16.402"),
    ("dec", "45d"),
    ("dec", "-90:00:00"),
]


def main():
    with open("sexagesimal_reference.csv", "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(["kind", "text", "degrees"])
        for kind, text in CASES:
            unit = u.hourangle if kind == "ra" else u.deg
            deg = Angle(text, unit=unit).to_value(u.deg)
            w.writerow([kind, text, repr(float(deg))])


if __name__ == "__main__":
    main()
